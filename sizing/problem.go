// Package sizing is the input-stage sizing problem handed to the generic
// search of package optimize: a spec sheet's families, their parameters
// mapped onto [0, 1], each candidate measured by objectives, and the
// reported candidates gathered and evaluated again the way `eval` does.
package sizing

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"pairsmith/objectives"
	"pairsmith/optimize"
	"pairsmith/topologies"
)

// CoarseStep is the sweep step of the first, cheap look at a candidate.
const CoarseStep = 50e-3

// CoarseReject is the violation, on any one target or check, beyond which a coarse
// look rejects a candidate without the fine sweep. The coarse sweep can
// miss a narrow gm peak or dip by up to a few per cent of the ripple, so
// only a candidate missing a target by half its limit or more is judged
// on it.
const CoarseReject = 0.5

// Margin is the guard band the search keeps from every target: it judges
// candidates against the spec's targets tightened by this fraction
// (objectives.Targets.Tightened), so that what it reports as feasible
// stays feasible in a simulator whose numbers differ from pairsmith's by
// less than that (ngspice on level-1 decks agrees to about 0.1 %).
const Margin = 0.005

// CheckWeight multiplies the amounts of the always-on checks (geometry,
// saturation, level-1 validity) in the violation the search ranks by, so
// that among infeasible candidates one that cannot be built ranks behind
// one that misses targets by up to ten times as much. A larger weight
// was tried (1000): the islands' judgement of hopeless families then
// retired families before they found buildable sizings (mirror-1to3 on
// the strain-gauge demo), so ten it is (our choice, docs/buildable.md).
const CheckWeight = 10

// Problem is the input-stage design problem of a spec sheet: one family
// of the spec's topologies per island, each parameter mapped from [0, 1]
// onto its bounds (log or linear, as the family declares).
type Problem struct {
	Spec    *objectives.Spec
	fams    []topologies.Family
	params  [][]topologies.Param
	fixed   []topologies.Values // the parameters not searched, at their defaults
	targets objectives.Targets  // the spec's, tightened by Margin
	solvers objectives.SolverCache
	// starts holds each family's reference solution (nil for none): its
	// defaults' first sweep point, where every candidate's first Newton
	// iterations begin (objectives.MeasureStaged).
	starts [][]float64
	// order is the spec's conditions in the order a candidate meets them
	// (conditionOrder).
	order []objectives.Condition
	// extras are the figures beyond the sweep's that the spec bounds or
	// trades on (an offset, the slew): every look estimates those, and
	// only those (each costs solves at every point).
	extras objectives.Extras
	// minSupply says the spec bounds or trades on the lowest working
	// supply, which a candidate its looks keep then gets
	// (objectives.MinSupplyOf, with the tightened targets).
	minSupply bool
}

var (
	_ optimize.Problem = (*Problem)(nil)
	_ optimize.Scaler  = (*Problem)(nil)
	_ optimize.Starter = (*Problem)(nil)
	_ optimize.Namer   = (*Problem)(nil)
)

// NewProblem sets up the search of a spec.
func NewProblem(spec *objectives.Spec) (*Problem, error) {
	if spec == nil || spec.Process == nil {
		return nil, errors.New("sizing: a spec with a process is needed")
	}
	p := &Problem{Spec: spec, targets: spec.Targets.Tightened(Margin)}
	p.order = conditionOrder(spec.Design("", nil).AllConditions())
	asks := func(target, axis string) bool { return spec.Targets.Has(target) || slices.Contains(spec.Pareto, axis) }
	p.extras.Mismatch = asks(objectives.TargetOffsetMax, objectives.AxisOffset) || asks(objectives.TargetOffsetDriftMax, objectives.AxisOffsetDrift)
	p.extras.Slew = asks(objectives.TargetSlewMin, objectives.AxisSlew)
	p.extras.Noise = asks(objectives.TargetNoiseMax, objectives.AxisNoise)
	p.extras.Coarse = p.extras.Mismatch || p.extras.Slew || p.extras.Noise // from each look's coarse sweep
	p.minSupply = asks(objectives.TargetMinSupplyMax, objectives.AxisMinSupply)
	for _, name := range spec.Topologies {
		f, err := topologies.Lookup(name)
		if err != nil {
			return nil, err
		}
		p.fams = append(p.fams, f)
		ps, err := topologies.ParamsFor(f, spec.Process, spec.Process.Rules.SaturationMargin)
		if err != nil {
			return nil, fmt.Errorf("sizing: %w", err)
		}
		// The reference currents' temperature law changes nothing at a
		// single temperature (every law gives the parameter's current
		// at the nominal one): it is searched only over a range.
		fixed := topologies.Values{}
		if spec.Signoff.Temperature.IsSingle() {
			ps = slices.DeleteFunc(ps, func(q topologies.Param) bool {
				if q.Name == topologies.PBiasLaw.Name {
					fixed[q.Name] = q.Default
					return true
				}
				return false
			})
		}
		p.params = append(p.params, ps)
		p.fixed = append(p.fixed, fixed)
	}
	if len(p.fams) == 0 {
		return nil, errors.New("sizing: the spec names no topology")
	}
	// A family whose defaults do not solve has no reference: its
	// candidates start from the circuit's guess.
	p.starts = make([][]float64, len(p.fams))
	for f, fam := range p.fams {
		if x, err := objectives.FirstSolution(spec.Design(fam.Name(), topologies.Defaults(fam))); err == nil {
			p.starts[f] = x
		}
	}
	return p, nil
}

// Families implements optimize.Problem.
func (p *Problem) Families() []optimize.Family {
	out := make([]optimize.Family, len(p.fams))
	for i, f := range p.fams {
		out[i] = optimize.Family{Name: f.Name(), Dim: len(p.params[i])}
	}
	return out
}

// Family returns the topology family of index i.
func (p *Problem) Family(i int) topologies.Family { return p.fams[i] }

// Objectives implements optimize.Problem: the spec's trade-off axes.
func (p *Problem) Objectives() int { return len(p.Spec.Pareto) }

// Scales implements optimize.Scaler: the spec's natural unit of each axis.
func (p *Problem) Scales() []float64 {
	out := make([]float64, len(p.Spec.Pareto))
	for i, a := range p.Spec.Pareto {
		out[i] = p.Spec.AxisScale(a)
	}
	return out
}

// Start implements optimize.Starter: the family's defaults.
func (p *Problem) Start(f int) ([]float64, bool) {
	return p.Normalize(f, topologies.Defaults(p.fams[f])), true
}

// ParamNames implements optimize.Namer.
func (p *Problem) ParamNames(f int) []string {
	out := make([]string, len(p.params[f]))
	for i, q := range p.params[f] {
		out[i] = q.Name
	}
	return out
}

// Values maps normalised coordinates of family f to parameter values
// (topologies.Param.FromUnit), the parameters the search leaves fixed at
// their defaults.
func (p *Problem) Values(f int, x []float64) topologies.Values {
	v := make(topologies.Values, len(p.params[f])+len(p.fixed[f]))
	for i, q := range p.params[f] {
		v[q.Name] = q.FromUnit(optimize.Clamp01(x[i]))
	}
	for k, x := range p.fixed[f] {
		v[k] = x
	}
	return v
}

// Normalize maps parameter values of family f to [0, 1] coordinates.
func (p *Problem) Normalize(f int, v topologies.Values) []float64 {
	x := make([]float64, len(p.params[f]))
	for i, q := range p.params[f] {
		x[i] = optimize.Clamp01(q.ToUnit(v[q.Name]))
	}
	return x
}

// Design returns the design file of a point: the spec's process and
// conditions, the input range swept at the spec's step.
func (p *Problem) Design(pt optimize.Point) *objectives.Design {
	return p.Spec.Design(p.fams[pt.Family].Name(), p.Values(pt.Family, pt.X))
}

// Outcome is the payload of an evaluated stage.
type Outcome struct {
	Metrics objectives.Metrics
	// Violations are against the tightened targets the search uses.
	Violations []objectives.Violation
	// Measured is how many of the spec's conditions were measured, Fine
	// how many of them had a look at the spec's step
	// (objectives.MeasureWorst).
	Measured, Fine int
	// Err is why an evaluation failed (no DC solution, say).
	Err string
}

// Evaluate implements optimize.Problem: the worst case over the spec's
// conditions, measured lazily (objectives.MeasureWorst, the conditions in
// conditionOrder's order): a candidate missing a target or failing a
// check by CoarseReject or more on its coarse looks is judged on them,
// so that a candidate that cannot be built, or is far off, costs no
// sweep at the spec's step.
func (p *Problem) Evaluate(pt optimize.Point) optimize.Outcome {
	d := p.Design(pt)
	cs, fine, err := objectives.MeasureWorst(d, p.order, &p.solvers, CoarseStep, p.starts[pt.Family], p.targets, p.extras, p.rejects)
	if err != nil {
		return optimize.Outcome{Failed: true, Payload: &Outcome{Measured: len(cs), Fine: fine, Err: err.Error()}}
	}
	if p.minSupply && !p.rejects(cs) {
		// The lowest working supply costs a bisection: only for a
		// candidate its looks did not turn down.
		ms := objectives.MinSupplyOf(d, p.targets, &p.solvers)
		for i := range cs {
			cs[i].Metrics.MinSupply = ms
		}
	}
	w := objectives.WorstOver(cs, p.targets)
	vs := objectives.CheckWorst(w, cs, p.targets)
	amounts := make([]float64, len(vs))
	hard := 0.0
	for i, v := range vs {
		amounts[i] = v.Amount
		if e, ok := objectives.Lookup(v.Target); ok && e.Kind == objectives.Constraint {
			amounts[i] *= CheckWeight
			hard += amounts[i]
		}
	}
	return optimize.Outcome{
		Objectives: p.Spec.Axes(w.Metrics),
		Violations: amounts,
		Hard:       hard,
		Payload:    &Outcome{Metrics: w.Metrics, Violations: vs, Measured: len(cs), Fine: fine},
	}
}

// rejects reports whether a candidate measured under cs misses a target
// or fails a check by CoarseReject or more: it is judged on what was
// measured. A figure not estimated yet (the lowest working supply) does
// not count.
func (p *Problem) rejects(cs []objectives.ConditionEval) bool {
	for _, v := range p.Checks(cs, p.targets) {
		if v.Amount >= CoarseReject && !(v.Target == objectives.TargetMinSupplyMax && math.IsNaN(v.Value)) {
			return true
		}
	}
	return false
}

// Checks returns the violations of a stage measured under the conditions
// cs against targets (the worst case, objectives.CheckWorst), followed by
// the evaluator's always-on checks (geometry rules, saturation margins,
// and on a level-1 process the square law's validity) at every one of
// them, which every candidate must pass whatever the spec.
func (p *Problem) Checks(cs []objectives.ConditionEval, t objectives.Targets) []objectives.Violation {
	return objectives.CheckWorst(objectives.WorstOver(cs, t), cs, t)
}

// conditionOrder is the order in which a candidate meets the spec's
// conditions: the nominal one first, then those farthest from it — that
// differ from it in corner, supply and temperature — before those that
// differ in two and then in one, each group in the spec's order. The
// farthest are where a stage most often fails (a slow corner at the low
// supply and the hot end, say), so a failing candidate is stopped early.
func conditionOrder(cs []objectives.Condition) []objectives.Condition {
	nom := cs[0]
	away := func(c objectives.Condition) int {
		n := 0
		if c.Corner != nom.Corner {
			n++
		}
		if c.Supply != nom.Supply {
			n++
		}
		if c.TempK != nom.TempK {
			n++
		}
		return n
	}
	out := append([]objectives.Condition{nom}, cs[1:]...)
	slices.SortStableFunc(out[1:], func(a, b objectives.Condition) int { return away(b) - away(a) })
	return out
}

// String describes the problem.
func (p *Problem) String() string {
	return fmt.Sprintf("%s: %d families on %s at %g V", p.Spec.Name, len(p.fams), p.Spec.Process.Name, p.Spec.Supply)
}
