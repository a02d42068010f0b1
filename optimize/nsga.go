package optimize

import (
	"errors"
	"math"
	"math/rand"
	"sort"

	"github.com/MaxHalford/eaopt"
)

// nsgaModel is an eaopt.Model that updates a population as NSGA-II does
// (K. Deb, A. Pratap, S. Agarwal, T. Meyarivan, "A fast and elitist
// multiobjective genetic algorithm: NSGA-II", IEEE Trans. Evol. Comput.
// 6(2), 2002): binary tournaments under the crowded comparison, SBX and
// polynomial mutation make as many children as parents; parents and
// children are ranked together by constrained non-dominated sorting (Deb's
// feasibility rules, Deb 2000) and the best fronts survive, the last one
// cut by crowding distance.
type nsgaModel struct {
	run *runner
}

var _ eaopt.Model = (*nsgaModel)(nil)

// Validate implements eaopt.Model.
func (m *nsgaModel) Validate() error {
	if m.run == nil {
		return errors.New("optimize: NSGA-II model without a search")
	}
	return nil
}

// Apply implements eaopt.Model: one generation of one island.
func (m *nsgaModel) Apply(pop *eaopt.Population) error {
	n := len(pop.Individuals)
	if n == 0 {
		return nil
	}
	parents := make([]*genome, n)
	for i, ind := range pop.Individuals {
		g, ok := ind.Genome.(*genome)
		if !ok {
			return errors.New("optimize: foreign genome in a population")
		}
		parents[i] = g
	}
	island := parents[0].pt.Family
	if m.run.idle(island) {
		return nil // the island is retired or resting: it keeps its population
	}
	m.run.evaluateAll(parents) // migrants arrive unevaluated
	if m.run.expired() {
		return nil
	}
	rank, crowd := rankCrowd(parents)
	gen := int(pop.Generations) + 1
	rng := pop.RNG
	pick := func() *genome {
		a, b := rng.Intn(n), rng.Intn(n)
		if crowdedBetter(a, b, rank, crowd, parents) {
			return parents[a]
		}
		return parents[b]
	}
	children := make([]*genome, 0, n)
	for len(children) < n {
		c1 := pick().Clone().(*genome)
		c2 := pick().Clone().(*genome)
		if rng.Float64() < pCrossover {
			c1.Crossover(c2, rng)
		}
		c1.Mutate(rng)
		c2.Mutate(rng)
		for _, c := range []*genome{c1, c2} {
			if len(children) < n {
				c.out = nil // a child is a new candidate, even if unchanged
				c.key = Key{Phase: m.run.phase, Gen: gen, Island: island, Slot: len(children)}
				children = append(children, c)
			}
		}
	}
	m.run.evaluateAll(children)
	union := append(parents, children...)
	survivors := environmental(union, n)
	rank, crowd = rankCrowd(survivors)
	next := make(eaopt.Individuals, n)
	for i, g := range survivors {
		c := 0.0
		if !math.IsInf(crowd[i], 1) {
			c = 1 / (2 + crowd[i])
		}
		next[i] = eaopt.Individual{Genome: g, Fitness: float64(rank[i]) + c, Evaluated: true, ID: pop.Individuals[i%len(pop.Individuals)].ID}
	}
	pop.Individuals = next
	return nil
}

// objectivesOf returns the objectives and violations of genomes for
// constrained sorting: a failed point has violation +Inf, and only
// feasible points carry objectives, so that crowding spreads the feasible
// fronts and leaves every member of an infeasible one (all of equal
// violation) at distance zero.
func objectivesOf(gs []*genome) ([][]float64, []float64) {
	objs := make([][]float64, len(gs))
	viol := make([]float64, len(gs))
	for i, g := range gs {
		o := g.out
		switch {
		case o == nil || o.Failed:
			viol[i] = math.Inf(1)
		default:
			viol[i] = o.Violation()
			if viol[i] == 0 {
				objs[i] = o.Objectives
			}
		}
	}
	return objs, viol
}

// rankCrowd returns each genome's front (0 best) and crowding distance.
func rankCrowd(gs []*genome) ([]int, []float64) {
	objs, viol := objectivesOf(gs)
	rank := make([]int, len(gs))
	crowd := make([]float64, len(gs))
	for fi, front := range NonDominatedSort(objs, viol) {
		for k, d := range CrowdingDistance(objs, front) {
			rank[front[k]], crowd[front[k]] = fi, d
		}
	}
	return rank, crowd
}

// crowdedBetter is the binary tournament's comparison: lower rank, then
// larger crowding distance, then the earlier candidate.
func crowdedBetter(a, b int, rank []int, crowd []float64, gs []*genome) bool {
	if rank[a] != rank[b] || crowd[a] != crowd[b] {
		return CrowdedLess(rank[a], crowd[a], rank[b], crowd[b])
	}
	return gs[a].key.less(gs[b].key)
}

// environmental keeps the n best of union: whole fronts while they fit,
// then the most crowding-distant members of the next.
func environmental(union []*genome, n int) []*genome {
	objs, viol := objectivesOf(union)
	out := make([]*genome, 0, n)
	for _, front := range NonDominatedSort(objs, viol) {
		if len(out)+len(front) <= n {
			for _, i := range front {
				out = append(out, union[i])
			}
			if len(out) == n {
				break
			}
			continue
		}
		for _, i := range mostSpread(objs, front, n-len(out), func(a, b int) bool { return union[a].key.less(union[b].key) }) {
			out = append(out, union[i])
		}
		break
	}
	return out
}

// mostSpread returns the n members of front (indices into objs) with the
// largest crowding distance, largest first, ties broken by tieLess on the
// indices.
func mostSpread(objs [][]float64, front []int, n int, tieLess func(a, b int) bool) []int {
	cd := CrowdingDistance(objs, front)
	pos := make([]int, len(front))
	for k := range pos {
		pos[k] = k
	}
	sort.SliceStable(pos, func(x, y int) bool {
		if cx, cy := cd[pos[x]], cd[pos[y]]; cx != cy {
			return cx > cy
		}
		return tieLess(front[pos[x]], front[pos[y]])
	})
	out := make([]int, min(n, len(front)))
	for k := range out {
		out[k] = front[pos[k]]
	}
	return out
}

// ThinFront keeps at most n members of a front, those of largest
// crowding distance (K. Deb, A. Pratap, S. Agarwal, T. Meyarivan, "A fast
// and elitist multiobjective genetic algorithm: NSGA-II", IEEE Trans.
// Evol. Comput. 6(2), 2002), ties to the earlier member, in their original
// order; a front of at most n members is returned as it is.
func ThinFront(front []Candidate, n int) []Candidate {
	if len(front) <= n {
		return front
	}
	objs := make([][]float64, len(front))
	idx := make([]int, len(front))
	for i, c := range front {
		objs[i], idx[i] = c.Outcome.Objectives, i
	}
	keep := mostSpread(objs, idx, n, func(a, b int) bool { return a < b })
	sort.Ints(keep)
	out := make([]Candidate, 0, n)
	for _, i := range keep {
		out = append(out, front[i])
	}
	return out
}

// translatingMigrator moves the best candidate of each island to the next
// (a ring), translated into the receiving family: the parameters the two
// families share (by name) take the migrant's values, the others those of
// the receiving island's best. The translated migrant replaces the
// island's worst member and is evaluated with the next generation.
type translatingMigrator struct {
	run   *runner
	names Namer
	round int
}

var _ eaopt.Migrator = (*translatingMigrator)(nil)

// Validate implements eaopt.Migrator.
func (m *translatingMigrator) Validate() error { return nil }

// Apply implements eaopt.Migrator.
func (m *translatingMigrator) Apply(pops eaopt.Populations, _ *rand.Rand) {
	m.round++
	np := len(pops)
	if np < 2 {
		return
	}
	bests := make([]*genome, np)
	for i, p := range pops {
		if len(p.Individuals) == 0 {
			return
		}
		// Populations are sorted by fitness (rank first) after each
		// generation: the first is a best, the last a worst.
		bests[i] = p.Individuals[0].Genome.(*genome)
	}
	for i := range pops {
		if m.run.idle(i) {
			continue // a retired or resting island takes no migrants
		}
		from := bests[(i+np-1)%np]
		to := pops[i]
		host := bests[i]
		src := m.names.ParamNames(from.pt.Family)
		dst := m.names.ParamNames(host.pt.Family)
		at := map[string]int{}
		for k, name := range src {
			at[name] = k
		}
		x := append([]float64(nil), host.pt.X...)
		shared := 0
		for k, name := range dst {
			if j, ok := at[name]; ok && k < len(x) && j < len(from.pt.X) {
				x[k] = from.pt.X[j]
				shared++
			}
		}
		if shared == 0 {
			continue
		}
		last := len(to.Individuals) - 1
		mig := &genome{run: m.run, pt: Point{Family: host.pt.Family, X: x},
			key: Key{Phase: m.run.phase, Gen: int(to.Generations) + 1, Island: host.pt.Family, Slot: -1 - m.round}}
		to.Individuals[last] = eaopt.Individual{Genome: mig, Fitness: math.Inf(1), Evaluated: false, ID: to.Individuals[last].ID}
	}
}
