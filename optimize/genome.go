package optimize

import (
	"math"
	"math/rand"

	"github.com/MaxHalford/eaopt"
)

// Variation operators of real-coded genetic algorithms on [0, 1]^d: the
// simulated binary crossover (K. Deb, R. B. Agrawal, "Simulated binary
// crossover for continuous search space", Complex Systems 9, 1995) and the
// polynomial mutation (K. Deb, M. Goyal, "A combined genetic adaptive
// search (GeneAS) for engineering design", Computer Science and
// Informatics 26(4), 1996), both in the bounded forms NSGA-II uses.
const (
	etaCrossover = 15  // SBX distribution index
	etaMutation  = 20  // polynomial mutation distribution index
	pCrossVar    = 0.5 // chance that SBX touches a variable
	pCrossover   = 0.9 // chance that a pair of parents is crossed
	mutPerGenome = 1.0 // expected number of mutated variables per child
	eps          = 1e-14
)

// genome is an eaopt.Genome: a point of one family, its deterministic
// evaluation key, and once evaluated its outcome.
type genome struct {
	run *runner
	key Key
	pt  Point
	out *Outcome
}

var _ eaopt.Genome = (*genome)(nil)

// Evaluate evaluates the point once (through the runner, which limits
// concurrency and records the candidate) and returns a scalar for eaopt's
// own bookkeeping; the population update ranks by Pareto fronts instead.
func (g *genome) Evaluate() (float64, error) {
	if g.out == nil {
		o := g.run.evaluate(g.key, g.pt)
		g.out = &o
	}
	return scalarFitness(*g.out), nil
}

// scalarFitness orders outcomes for eaopt's sorting before the first
// ranking: failed last, infeasible by violation, feasible by their first
// objective.
func scalarFitness(o Outcome) float64 {
	switch {
	case o.Failed:
		return math.Inf(1)
	case o.Violation() > 0:
		return 1e12 + o.Violation()
	case len(o.Objectives) > 0:
		return o.Objectives[0]
	}
	return 0
}

// Mutate applies the polynomial mutation to each variable with probability
// mutPerGenome/d.
func (g *genome) Mutate(rng *rand.Rand) {
	d := len(g.pt.X)
	if d == 0 {
		return
	}
	p := mutPerGenome / float64(d)
	for i, x := range g.pt.X {
		if rng.Float64() < p {
			g.pt.X[i] = polyMutate(x, rng.Float64())
		}
	}
	g.out = nil
}

// polyMutate is the bounded polynomial mutation of x in [0, 1] for a
// uniform draw u.
func polyMutate(x, u float64) float64 {
	const mpow = 1.0 / (etaMutation + 1)
	d1, d2 := x, 1-x
	var dq float64
	if u < 0.5 {
		v := 2*u + (1-2*u)*math.Pow(1-d1, etaMutation+1)
		dq = math.Pow(v, mpow) - 1
	} else {
		v := 2*(1-u) + 2*(u-0.5)*math.Pow(1-d2, etaMutation+1)
		dq = 1 - math.Pow(v, mpow)
	}
	return Clamp01(x + dq)
}

// Crossover applies SBX between two genomes of the same family; genomes
// of different families are left as they are.
func (g *genome) Crossover(other eaopt.Genome, rng *rand.Rand) {
	o, ok := other.(*genome)
	if !ok || o.pt.Family != g.pt.Family || len(o.pt.X) != len(g.pt.X) {
		return
	}
	for i := range g.pt.X {
		if rng.Float64() >= pCrossVar {
			continue
		}
		a, b := sbx(g.pt.X[i], o.pt.X[i], rng.Float64())
		if rng.Float64() < 0.5 {
			a, b = b, a
		}
		g.pt.X[i], o.pt.X[i] = a, b
	}
	g.out, o.out = nil, nil
}

// sbx returns the two children of the bounded simulated binary crossover
// of x1 and x2 in [0, 1] for a uniform draw u.
func sbx(x1, x2, u float64) (float64, float64) {
	if math.Abs(x1-x2) < eps {
		return x1, x2
	}
	lo, hi := math.Min(x1, x2), math.Max(x1, x2)
	child := func(beta float64) float64 {
		alpha := 2 - math.Pow(beta, -(etaCrossover+1))
		var bq float64
		if u <= 1/alpha {
			bq = math.Pow(u*alpha, 1.0/(etaCrossover+1))
		} else {
			bq = math.Pow(1/(2-u*alpha), 1.0/(etaCrossover+1))
		}
		return bq
	}
	span := hi - lo
	b1 := child(1 + 2*lo/span)
	c1 := 0.5 * ((lo + hi) - b1*span)
	b2 := child(1 + 2*(1-hi)/span)
	c2 := 0.5 * ((lo + hi) + b2*span)
	return Clamp01(c1), Clamp01(c2)
}

// Clone returns a copy sharing nothing but the runner; the copy keeps the
// outcome, so an unchanged copy is not evaluated again.
func (g *genome) Clone() eaopt.Genome {
	c := &genome{run: g.run, key: g.key, pt: g.pt.Clone()}
	if g.out != nil {
		o := *g.out
		c.out = &o
	}
	return c
}

// Clamp01 clamps x into [0, 1], NaN to 0: a coordinate of the unit box
// every problem's parameters are searched in.
func Clamp01(x float64) float64 {
	switch {
	case x < 0 || x != x:
		return 0
	case x > 1:
		return 1
	}
	return x
}
