package objectives

import (
	"fmt"
	"math"
	"runtime"
	"sync"
)

// ConditionEval is a design measured under one of its conditions.
type ConditionEval struct {
	Condition Condition
	Metrics   Metrics
	// Findings are the always-on checks the stage fails there.
	Findings []Finding
	// Fine says it was measured at the design's own step; a search's
	// coarse looks at the other conditions are not (MeasureWorst).
	Fine bool
	// Mismatch is the mismatch estimate there (nil when not made).
	Mismatch *MismatchResult
	// Curve is the gm and pair-current curve there, as Evaluate measures
	// it (nil for a search's looks); Noise the input noise there.
	Curve []CurvePoint
	Noise *NoiseResult
}

// WorstCase is the worst case of one design's measurements under its
// conditions (docs/conditions.md#worst-case).
type WorstCase struct {
	// Metrics are each figure's worst value (Worst).
	Metrics Metrics
	// At is, per figure key, the index of the condition the worst value
	// was measured at.
	At map[string]int
	// Findings are, per check and device, the finding of the largest
	// amount over the conditions, each naming its condition when there
	// is more than one; in the order they are first found, the nominal
	// condition's first.
	Findings []Finding
}

// WorstOver returns the worst case over cs, at least one, judged with
// targets t (the switchover's worst is the farthest from t's centre). A
// single condition is its own worst case, bit for bit, its findings
// untagged.
func WorstOver(cs []ConditionEval, t Targets) WorstCase {
	ms := make([]Metrics, len(cs))
	for i, c := range cs {
		ms[i] = c.Metrics
	}
	m, idx := worstIndexOf(catalog, ms, t)
	w := WorstCase{Metrics: m, At: map[string]int{}}
	for k, e := range catalog {
		if idx[k] >= 0 && (len(cs) == 1 || bindsAt(e, ms)) {
			w.At[e.Key] = idx[k]
		}
	}
	if len(cs) == 1 {
		w.Findings = cs[0].Findings
		return w
	}
	type key struct{ check, device string }
	where := map[key]int{}
	for _, c := range cs {
		for _, f := range c.Findings {
			f.Condition = c.Condition.String()
			k := key{f.Check, f.Device}
			if i, ok := where[k]; !ok {
				where[k] = len(w.Findings)
				w.Findings = append(w.Findings, f)
			} else if f.Amount > w.Findings[i].Amount {
				w.Findings[i] = f
			}
		}
	}
	return w
}

// bindsAt reports whether figure e's worst over ms is measured at one
// condition rather than none: it has a value, and not the same one
// everywhere (a design's area, its lowest working supply).
func bindsAt(e Entry, ms []Metrics) bool {
	first := e.Value(ms[0])
	if math.IsNaN(first) {
		return false
	}
	for _, m := range ms[1:] {
		if v := e.Value(m); math.Float64bits(v) != math.Float64bits(first) {
			return !math.IsNaN(v)
		}
	}
	return false
}

// Binding returns the condition at which the figure of a target or axis
// key is worst, and whether there is one: none for a figure without a
// value or with the same value at every condition, when there are
// several.
func (w WorstCase) Binding(cs []ConditionEval, key string) (Condition, bool) {
	e, ok := Lookup(key)
	if !ok {
		return Condition{}, false
	}
	i, ok := w.At[e.Key]
	if !ok || i < 0 || i >= len(cs) {
		return Condition{}, false
	}
	return cs[i].Condition, true
}

// ConditionJSON is one condition of `eval --json`'s conditions list:
// where, and the metrics measured there (docs/files.md#eval-json).
type ConditionJSON struct {
	Corner      string  `json:"corner"`
	Supply      float64 `json:"supply"`      // V
	Temperature float64 `json:"temperature"` // K
	Metrics     Metrics `json:"metrics"`
}

// WorstJSON is one figure's worst case in JSON: its value (null for NaN
// or an unbounded ripple, as in Metrics) and the condition where it is
// measured.
type WorstJSON struct {
	Value *float64 `json:"value"`
	// The condition, left out when none binds (WorstCase.Binding).
	Corner      string  `json:"corner,omitempty"`
	Supply      float64 `json:"supply,omitempty"`      // V
	Temperature float64 `json:"temperature,omitempty"` // K
}

// ConditionsJSON returns cs as `eval --json` writes them.
func ConditionsJSON(cs []ConditionEval) []ConditionJSON {
	out := make([]ConditionJSON, len(cs))
	for i, c := range cs {
		out[i] = ConditionJSON{Corner: c.Condition.Corner, Supply: c.Condition.Supply, Temperature: c.Condition.TempK, Metrics: c.Metrics}
	}
	return out
}

// JSON returns the worst case of every figure by its key, with the
// condition of cs where it is measured.
func (w WorstCase) JSON(cs []ConditionEval) map[string]WorstJSON {
	out := map[string]WorstJSON{}
	for _, e := range catalog {
		if e.Kind != Figure {
			continue
		}
		j := WorstJSON{Value: finite(e.Value(w.Metrics))}
		if c, ok := w.Binding(cs, e.Key); ok {
			j.Corner, j.Supply, j.Temperature = c.Corner, c.Supply, c.TempK
		}
		out[e.Key] = j
	}
	return out
}

// CheckWorst returns the violations of the worst case w over cs against
// targets t, followed by those of the always-on checks
// (CheckViolations of w.Findings), each naming the condition where it is
// measured when there is more than one.
func CheckWorst(w WorstCase, cs []ConditionEval, t Targets) []Violation {
	vs := t.Check(w.Metrics)
	if len(cs) > 1 {
		for i := range vs {
			if c, ok := w.Binding(cs, vs[i].Target); ok {
				vs[i].Condition = c.String()
			}
		}
	}
	return append(vs, CheckViolations(w.Findings)...)
}

// WorstFor returns the evaluation's worst case judged with targets t
// (the switchover farthest from t's window; Worst is judged without
// targets).
func (ev *Evaluation) WorstFor(t Targets) WorstCase { return WorstOver(ev.Conditions, t) }

// MeasureWorst measures d under each of order's conditions (order[0]
// being d's nominal one) as a search judges a candidate over its
// sign-off (docs/conditions.md#in-the-search), lazily:
//
//  1. the nominal condition in two looks (MeasureStaged, from start):
//     a candidate that reject turns down on its coarse look is judged on
//     that look alone;
//  2. every other condition on its coarse look, each from the first
//     solution of the nearest condition measured before it
//     (nearestStart): a candidate that reject turns down on the worst
//     case of these looks is judged on them;
//  3. the conditions where a figure of the worst case (judged with
//     targets t) is measured are looked at again at d's step, from their
//     own first solution, and their fine looks replace their coarse
//     ones; with ex.Coarse, the extra figures are not the fine look's
//     concern: they keep the coarse look's values, and a condition where
//     only an extra figure is worst is not looked at again.
//
// Every condition is measured before a candidate that passes the
// nominal one is judged, so that a candidate's violation is that of its
// worst case, not of the conditions measured before one failed. It
// returns the conditions measured, in order's order, and how many had a
// fine look. A condition whose sweep fails ends it with an error naming
// the condition.
func MeasureWorst(d *Design, order []Condition, cache *SolverCache, coarse float64, start []float64, t Targets, ex Extras, reject func(cs []ConditionEval) bool) (cs []ConditionEval, fine int, err error) {
	cs = make([]ConditionEval, 1, len(order))
	// firsts[i] is the first solution of condition i's coarse look: the
	// start of the conditions measured after it (nearestStart).
	firsts := make([][]float64, 1, len(order))
	keep := &firsts[0]
	if len(order) == 1 {
		keep = nil
	}
	m, fs, nomFine, err := measureStaged(d.Under(order[0]), cache, coarse, start, func(m Metrics, fs []Finding) bool {
		cs[0].Metrics, cs[0].Findings = m, fs
		return reject(cs)
	}, keep, ex)
	if err != nil {
		return cs, 0, err
	}
	cs[0] = ConditionEval{Condition: order[0], Metrics: m, Findings: fs, Fine: nomFine || d.Sweep.Step >= coarse}
	if nomFine {
		fine++
	}
	if len(order) == 1 || (!nomFine && d.Sweep.Step < coarse) {
		return cs, fine, nil
	}
	stop := func(Metrics, []Finding) bool { return true }
	look := func(c Condition, from []float64, first *[]float64, st func(Metrics, []Finding) bool, ex Extras) (ConditionEval, bool, error) {
		m, fs, fine, err := measureStaged(d.Under(c), cache, coarse, from, st, first, ex)
		if err != nil {
			return ConditionEval{}, false, fmt.Errorf("at %s: %w", c, err)
		}
		return ConditionEval{Condition: c, Metrics: m, Findings: fs, Fine: fine || d.Sweep.Step >= coarse}, fine, nil
	}
	for _, c := range order[1:] {
		firsts = append(firsts, nil)
		ce, _, err := look(c, firsts[nearestStart(order, len(cs))], &firsts[len(cs)], stop, ex)
		if err != nil {
			return cs, fine, err
		}
		cs = append(cs, ce)
	}
	if reject(cs) || d.Sweep.Step >= coarse {
		return cs, fine, nil
	}
	w := WorstOver(cs, t)
	again := map[int]bool{}
	for _, e := range catalog {
		if i, ok := w.At[e.Key]; ok && e.Sense != 0 && i > 0 && !(ex.Coarse && e.isExtra()) {
			again[i] = true
		}
	}
	// A fine look starts from its own condition's first solution; with
	// ex.Coarse its extra figures are the coarse look's, already measured.
	fineEx := ex
	if ex.Coarse {
		fineEx = Extras{}
	}
	for i := range cs {
		if !again[i] {
			continue
		}
		ce, ok, err := look(cs[i].Condition, firsts[i], nil, func(Metrics, []Finding) bool { return false }, fineEx)
		if err != nil {
			return cs, fine, err
		}
		if ex.Coarse {
			ce.Metrics.keepExtras(cs[i].Metrics)
		}
		cs[i] = ce
		if ok {
			fine++
		}
	}
	return cs, fine, nil
}

// nearestStart returns the condition measured before order[k] (one of
// order[:k]) whose first solution is the best start for order[k]'s: the
// nearest in temperature, then in supply, then of the same corner, the
// earliest among equals. Temperature comes first because a node that
// weak-inversion currents set (a pair's common source with the pair
// off, at the sweep's ends) moves by many n·U_T between temperatures,
// and Newton walks down an exponential by about one n·U_T a step.
func nearestStart(order []Condition, k int) int {
	c, best := order[k], 0
	far := func(j int) (float64, float64, bool) {
		o := order[j]
		return math.Abs(o.TempK - c.TempK), math.Abs(o.Supply - c.Supply), o.Corner != c.Corner
	}
	bt, bv, bc := far(0)
	for j := 1; j < k; j++ {
		t, v, cr := far(j)
		if t < bt || (t == bt && (v < bv || (v == bv && !cr && bc))) {
			best, bt, bv, bc = j, t, v, cr
		}
	}
	return best
}

// measureConditions measures d under each of conds (not the nominal
// one) on workers goroutines, each with compiled solvers from cache, into
// out[i] for conds[i]; the first failure, in the conditions' order, is
// returned naming its condition. Condition i's first point starts from
// the first solution of the nearest condition before it (nearestStart
// over the nominal one, of first solution nominal, and conds), so that
// the results do not depend on the workers: a condition waits for that
// solution, which each publishes before it sweeps on.
func measureConditions(d *Design, nominal []float64, conds []Condition, out []ConditionEval, cache *SolverCache, workers int) error {
	order := append([]Condition{d.Nominal()}, conds...)
	firsts := make([][]float64, len(order))
	ready := make([]chan struct{}, len(order))
	for i := range ready {
		ready[i] = make(chan struct{})
	}
	firsts[0] = nominal
	close(ready[0])
	return inParallel(len(conds), workers, func() func(int) error {
		return func(i int) error {
			k := i + 1
			from := nearestStart(order, k)
			<-ready[from] // published by a condition taken earlier
			c := conds[i]
			sw, err := sweep(d.Under(c), cache, firsts[from], func(x []float64) {
				firsts[k] = append([]float64(nil), x...)
				close(ready[k])
			})
			if err != nil {
				return fmt.Errorf("at %s: %w", c, err)
			}
			out[i] = ConditionEval{Condition: c, Metrics: sw.metrics, Findings: sw.findings, Fine: true, Mismatch: sw.mismatch,
				Noise: sw.noise, Curve: Curve(sw.st, sw.res)}
			return nil
		}
	})
}

// inParallel runs job(i) for every i below n, in increasing order of
// taking, on workers goroutines (at least one, at most n), each with the
// job that start makes for it (around its own solver, say), and returns
// the error of the lowest i that failed.
func inParallel(n, workers int, start func() func(i int) error) error {
	errs := make([]error, n)
	next := make(chan int)
	var wg sync.WaitGroup
	for range max(1, min(workers, n)) {
		wg.Go(func() {
			job := start()
			for i := range next {
				errs[i] = job(i)
			}
		})
	}
	for i := range n {
		next <- i
	}
	close(next)
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// conditionWorkers is how many goroutines measure a design's other
// conditions: one per core.
func conditionWorkers() int { return runtime.GOMAXPROCS(0) }
