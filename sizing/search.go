package sizing

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"slices"
	"sort"
	"sync"
	"time"

	"pairsmith/objectives"
	"pairsmith/optimize"
)

// Candidate is one reported candidate of a spec's search, evaluated
// again through objectives.Evaluate — the path `eval` takes — so that its
// design file reproduces its metrics exactly.
type Candidate struct {
	ID       string // c01, c02, … (c001, … past 99) in report order
	Topology string
	Design   *objectives.Design
	Eval     *objectives.Evaluation
	// Metrics are the worst case over the spec's conditions, judged with
	// its targets (Worst; Eval's Metrics are the nominal condition's).
	Metrics    objectives.Metrics
	Worst      objectives.WorstCase
	Violations []objectives.Violation // one per target the spec sets, then one per always-on check (objectives.CheckNames)
	Feasible   bool
	Pareto     bool         // on the front of the feasible candidates
	Score      float64      // optimize.Score of its trade-off axes (lower is better)
	Key        optimize.Key // which evaluation of the search found it
	// MonteCarlo is, for a family's best, Monte Carlo samples at its
	// nominal condition beside its sensitivity estimate (nil otherwise,
	// or without mismatch coefficients).
	MonteCarlo *objectives.MismatchResult
}

// Buildable reports whether the candidate passes every always-on check
// (geometry rules, saturation margins, level-1 validity), whatever
// targets it misses.
func (c *Candidate) Buildable() bool {
	for _, v := range c.Violations {
		if e, ok := objectives.Lookup(v.Target); ok && e.Kind == objectives.Constraint && v.Amount > 0 {
			return false
		}
	}
	return true
}

// FamilyRank is one family's place in a search.
type FamilyRank struct {
	Topology string
	Rank     int // 1 best
	Feasible bool
	// Best is nil when every candidate of the family failed, or when
	// none could be built (Blocked).
	Best *Candidate
	// Blocked, when the search found no buildable sizing of the family,
	// is its least violating candidate as evaluated again: not reported
	// (no id, no files), only what stands in its way, its failing checks
	// (Eval.Findings).
	Blocked     *Candidate
	Evaluations int
}

// Result is the outcome of a spec's search.
type Result struct {
	Spec     *objectives.Spec
	Search   *optimize.Result
	Families []FamilyRank
	// Candidates are the front, then each family's best, then the
	// nearest misses: every one buildable (Buildable), as evaluated again.
	Candidates []*Candidate
	// Best is the candidate of lowest Score among those that meet every
	// target with the guard band (Margin) to spare; nil when none does.
	Best *Candidate
	// MonteCarloOf is the candidate (Best, else the first reported one)
	// whose MonteCarlo holds BestSamples samples at its nominal condition
	// (objectives.MonteCarloNominal), for the report beside its
	// sensitivity estimate; nil without a candidate or mismatch
	// coefficients.
	MonteCarloOf *Candidate
	// BindingAt names, for each of Binding, the condition where it binds
	// ("" when the spec has one condition).
	BindingAt []string
	// Binding names, when nothing is feasible, the targets the least
	// violating candidate misses, worst first.
	Binding     []string
	Evaluations int
	Elapsed     time.Duration
	// FrontSize is the number of members of the whole feasible front,
	// of which at most MaxReportedFront are reported.
	FrontSize int
	// Truncated says the search was stopped while the reported
	// candidates were re-evaluated: those not done yet are left out.
	Truncated bool
	// Unreported says why candidates worth reporting were left out: their
	// re-evaluation at the spec's step failed (a point without a DC
	// solution, or an unphysical one between the coarse sweep's samples),
	// in report order.
	Unreported []error
	// Unbuildable counts the candidates worth reporting that were left
	// out because, evaluated again, they fail an always-on check (a
	// family's blocked best among them).
	Unbuildable int
}

// reevaluate evaluates a candidate of the search again at the spec's step
// through objectives.Evaluate, the path `eval` takes. An error leaves it
// out, and is not fatal: a candidate judged on the coarse sweep can fail
// the fine one (no DC solution, or an unphysical point between the coarse
// samples), and one bad candidate must not lose the whole run.
func reevaluate(prob *Problem, c optimize.Candidate, scales []float64) (*Candidate, error) {
	d := prob.Design(c.Point)
	var opt objectives.EvalOptions
	if prob.minSupply {
		opt.Works = &prob.Spec.Targets // the spec's own targets say what works
	}
	ev, err := objectives.EvaluateWith(d, opt)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", d.Topology, err)
	}
	w := ev.WorstFor(prob.Spec.Targets)
	vs := objectives.CheckWorst(w, ev.Conditions, prob.Spec.Targets)
	return &Candidate{
		Topology: d.Topology, Design: d, Eval: ev, Metrics: w.Metrics, Worst: w, Violations: vs,
		Feasible: objectives.TotalViolation(vs) == 0,
		Score:    optimize.Score(prob.Spec.Axes(w.Metrics), scales, nil), Key: c.Key,
	}, nil
}

// BestTries is how many more of a family's candidates, in the search's
// order (optimize.Prefer), are evaluated again at the spec's step when
// its best fails an always-on check there: our choice, a few
// milliseconds each.
const BestTries = 16

// nextBuildable returns the first of family f's evaluated candidates
// after the one of key tried, in the search's order, that passes every
// always-on check when evaluated again at the spec's step, trying at
// most BestTries of them that did not fail; a nil *Candidate when none
// does.
func nextBuildable(prob *Problem, res *optimize.Result, f int, tried optimize.Key, scales []float64) (optimize.Candidate, *Candidate) {
	var cs []optimize.Candidate
	for _, c := range res.All {
		if c.Point.Family == f && !c.Outcome.Failed && c.Key != tried {
			cs = append(cs, c)
		}
	}
	sort.Slice(cs, func(i, j int) bool { return optimize.Prefer(cs[i], cs[j], scales) })
	for _, c := range cs[:min(len(cs), BestTries)] {
		if sc, err := reevaluate(prob, c, scales); err == nil && sc.Buildable() {
			return c, sc
		}
	}
	return optimize.Candidate{}, nil
}

// Options tune Search beyond the spec, whose search settings (budget,
// seed, workers, time) it follows.
type Options struct {
	Strategy optimize.Strategy
	Progress func(optimize.Progress)
}

// Search runs the spec's search and gathers the reported candidates.
func Search(ctx context.Context, spec *objectives.Spec, opt Options) (*Result, error) {
	prob, err := NewProblem(spec)
	if err != nil {
		return nil, err
	}
	set := optimize.Settings{
		Evaluations: spec.Search.Evaluations, Seed: spec.Search.Seed, Workers: spec.Search.Workers,
		Strategy: opt.Strategy, Progress: opt.Progress,
	}
	if spec.Search.Time > 0 {
		set.Deadline = time.Now().Add(spec.Search.Time)
	}
	res, err := optimize.Run(ctx, prob, set)
	if err != nil {
		return nil, err
	}
	// The reported candidates are re-evaluated even when ctx or the
	// deadline ended the search — that is what an interrupted run
	// writes — but only for gatherGrace after it ended: past that the
	// rest are left out, so that an interrupt is honoured at once.
	gctx, cancel := context.WithCancel(context.WithoutCancel(ctx))
	defer cancel()
	stopAfter := func() { time.AfterFunc(gatherGrace, cancel) }
	defer context.AfterFunc(ctx, stopAfter)()
	if !set.Deadline.IsZero() {
		t := time.AfterFunc(time.Until(set.Deadline.Add(gatherGrace)), cancel)
		defer t.Stop()
	}
	return gather(gctx, prob, res, set)
}

// gatherGrace is how long the reported candidates are still re-evaluated
// once an interrupt or the time budget has ended the search: enough for
// the best and every family's best at any sweep step the spec allows, and
// short enough that the run ends within a second of the signal.
const gatherGrace = 500 * time.Millisecond

// MaxReportedFront bounds how many members of the front a result reports
// (with design files and netlists); a larger front is thinned to its most
// spread members by crowding distance, the extremes always kept
// (optimize.ThinFront).
const MaxReportedFront = 200

// gather re-evaluates the candidates worth reporting and ranks the
// families. The re-evaluations run on the search's workers, each reported
// to progress; once ctx is done no more start, and those not re-evaluated
// are left out of the result (Truncated says so). They start in order of
// importance — the front's best, each family's best, the rest of the
// front, the nearest misses — so that an interrupted gather still reports
// the best and every family.
func gather(ctx context.Context, prob *Problem, res *optimize.Result, set optimize.Settings) (*Result, error) {
	out := &Result{Spec: prob.Spec, Search: res, Evaluations: res.Evaluations, Elapsed: res.Elapsed}
	scales := prob.Scales()
	front := optimize.ThinFront(res.Front, MaxReportedFront)
	out.FrontSize = len(res.Front)

	// The candidates to report, once each, in report order (the front,
	// each family's best, the nearest misses), and the order they are
	// re-evaluated in.
	type item struct {
		c   optimize.Candidate
		sc  *Candidate
		err error // why its re-evaluation failed
	}
	var items []*item
	byKey := map[optimize.Key]*item{}
	want := func(c optimize.Candidate) *item {
		if it, ok := byKey[c.Key]; ok {
			return it
		}
		it := &item{c: c}
		byKey[c.Key] = it
		items = append(items, it)
		return it
	}
	for _, c := range front {
		want(c)
	}
	famItem := make([]*item, len(res.BestOf))
	for i, fb := range res.BestOf {
		if fb.OK {
			famItem[i] = want(fb.Candidate)
		}
	}
	for _, c := range res.Nearest {
		want(c)
	}
	order := make([]*item, 0, len(items))
	if len(front) > 0 {
		order = append(order, byKey[front[0].Key])
	}
	for _, it := range famItem {
		if it != nil {
			order = append(order, it)
		}
	}
	order = append(order, items...)

	workers := set.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	var (
		wg    sync.WaitGroup
		mu    sync.Mutex
		done  int
		sem   = make(chan struct{}, workers)
		start = map[*item]bool{}
	)
	for _, it := range order {
		if start[it] {
			continue
		}
		start[it] = true
		sem <- struct{}{}
		if ctx.Err() != nil {
			<-sem
			out.Truncated = true
			break
		}
		wg.Add(1)
		go func(it *item) {
			defer wg.Done()
			defer func() { <-sem }()
			sc, err := reevaluate(prob, it.c, scales)
			mu.Lock()
			defer mu.Unlock()
			it.sc, it.err = sc, err
			done++
			if set.Progress != nil {
				set.Progress(optimize.Progress{Evaluations: res.Evaluations, Budget: set.Evaluations,
					Elapsed: res.Elapsed, Best: math.Inf(1), Nearest: math.Inf(1),
					Phase: optimize.PhaseReport, Reported: done, Reporting: len(items)})
			}
		}(it)
	}
	wg.Wait()
	// A family's best judged on the coarse sweep may fail a check between
	// its samples: the next of the family's candidates in the search's
	// order take its place, the first buildable one at the spec's step.
	for i, fb := range res.BestOf {
		it := famItem[i]
		if ctx.Err() != nil || it == nil || (it.sc != nil && it.sc.Buildable()) {
			continue
		}
		c, sc := nextBuildable(prob, res, fb.Family, it.c.Key, scales)
		if sc == nil {
			continue
		}
		if old, ok := byKey[c.Key]; ok { // reported already, as a nearest miss
			old.sc, famItem[i] = sc, old
			continue
		}
		// In report order where the family's best stood.
		nit := &item{c: c, sc: sc}
		byKey[c.Key], famItem[i] = nit, nit
		at := slices.Index(items, it) + 1
		items = slices.Insert(items, at, nit)
	}
	// A candidate that cannot be built is no result, whatever it meets:
	// left out, with a family's blocked best kept for what blocks it.
	for _, it := range items {
		switch {
		case it.err != nil:
			out.Unreported = append(out.Unreported, it.err)
		case it.sc != nil && !it.sc.Buildable():
			out.Unbuildable++
		case it.sc != nil:
			out.Candidates = append(out.Candidates, it.sc)
		}
	}
	// The front of the feasible candidates on the reported numbers: the
	// search's front was found on its lazier looks, and a candidate it
	// left off can beat a member of it once both are evaluated again at
	// every condition.
	var feasible []*Candidate
	var objs [][]float64
	for _, sc := range out.Candidates {
		if sc.Feasible {
			feasible, objs = append(feasible, sc), append(objs, prob.Spec.Axes(sc.Metrics))
		}
	}
	if fronts := optimize.NonDominatedSort(objs, nil); len(fronts) > 0 {
		for _, i := range fronts[0] {
			feasible[i].Pareto = true
		}
	}
	counts := map[int]int{}
	for _, c := range res.All {
		counts[c.Point.Family]++
	}
	for i, fb := range res.BestOf {
		fr := FamilyRank{Topology: prob.Family(fb.Family).Name(), Evaluations: counts[fb.Family]}
		if it := famItem[i]; it != nil && it.sc != nil {
			if it.sc.Buildable() {
				fr.Best, fr.Feasible = it.sc, it.sc.Feasible
			} else {
				fr.Blocked = it.sc
			}
		}
		out.Families = append(out.Families, fr)
	}
	// A family's best is judged again on the reported numbers: another
	// of its feasible candidates, evaluated again at every condition, can
	// score better than the one the search's lazier looks preferred.
	for i := range out.Families {
		fr := &out.Families[i]
		if fr.Best == nil || !fr.Feasible {
			continue
		}
		for _, sc := range out.Candidates {
			if sc.Topology == fr.Topology && sc.Feasible && sc.Score < fr.Best.Score {
				fr.Best = sc
			}
		}
	}
	// Ids of one width, so that they sort as text too.
	width := max(2, len(fmt.Sprint(len(out.Candidates))))
	for i, sc := range out.Candidates {
		sc.ID = fmt.Sprintf("c%0*d", width, i+1)
	}
	// Families: feasible ones by their best score, then the others by
	// their least violation, then those that could not be built by their
	// least violation, then those that never evaluated.
	sort.SliceStable(out.Families, func(i, j int) bool {
		a, b := out.Families[i], out.Families[j]
		switch {
		case (a.Best != nil) != (b.Best != nil):
			return a.Best != nil
		case a.Best == nil && (a.Blocked != nil) != (b.Blocked != nil):
			return a.Blocked != nil
		case a.Best == nil && a.Blocked != nil:
			return objectives.TotalViolation(a.Blocked.Violations) < objectives.TotalViolation(b.Blocked.Violations)
		case a.Best == nil:
			return false
		case a.Feasible != b.Feasible:
			return a.Feasible
		case a.Feasible:
			return a.Best.Score < b.Best.Score
		}
		return objectives.TotalViolation(a.Best.Violations) < objectives.TotalViolation(b.Best.Violations)
	})
	for i := range out.Families {
		out.Families[i].Rank = i + 1
	}
	// The best is a member of the front, feasible with the guard band.
	for _, sc := range out.Candidates {
		if sc.Pareto && sc.Feasible && (out.Best == nil || sc.Score < out.Best.Score) {
			out.Best = sc
		}
	}
	if out.Best == nil {
		// The targets that bind: those the nearest reported candidate
		// misses or, when none could be built, the nearest blocked one.
		var nearest *Candidate
		pool := out.Candidates
		if len(pool) == 0 {
			for _, f := range out.Families {
				if f.Blocked != nil {
					pool = append(pool, f.Blocked)
				}
			}
		}
		for _, sc := range pool {
			if nearest == nil || objectives.TotalViolation(sc.Violations) < objectives.TotalViolation(nearest.Violations) {
				nearest = sc
			}
		}
		if nearest != nil {
			vs := append([]objectives.Violation(nil), nearest.Violations...)
			sort.SliceStable(vs, func(i, j int) bool { return vs[i].Amount > vs[j].Amount })
			for _, v := range vs {
				if v.Amount > 0 {
					out.Binding = append(out.Binding, v.Target)
					out.BindingAt = append(out.BindingAt, v.Condition)
				}
			}
		}
	}
	b := out.Best
	if b == nil && len(out.Candidates) > 0 {
		b = out.Candidates[0]
	}
	if mc := monteCarloOf(ctx, b, BestSamples, workers); mc != nil {
		b.MonteCarlo, out.MonteCarloOf = mc, b
	}
	// Every family's best is a finalist: its Monte Carlo beside its
	// sensitivity estimate, with fewer samples.
	for _, f := range out.Families {
		if c := f.Best; c != nil && c != b {
			c.MonteCarlo = monteCarloOf(ctx, c, FinalistSamples, workers)
		}
	}
	return out, nil
}

// monteCarloOf draws samples Monte Carlo samples of candidate c at its
// nominal condition (objectives.MonteCarloNominal); nil when c was not
// evaluated, its process has no mismatch coefficients, the run was
// stopped, or a sample fails.
func monteCarloOf(ctx context.Context, c *Candidate, samples, workers int) *objectives.MismatchResult {
	if c == nil || c.Eval == nil || !c.Design.Process.Mismatch.Given || ctx.Err() != nil {
		return nil
	}
	mc, err := objectives.MonteCarloNominal(c.Design, samples, MonteCarloSeed, workers)
	if err != nil {
		return nil
	}
	return mc
}

// BestSamples, FinalistSamples and MonteCarloSeed are the Monte Carlo
// samples a run draws of its best candidate and of every other family's
// best, for the report: 500 give a standard deviation to about 3 %
// (σ/√(2·499)), 200 to about 5 %, each in well under a second (our
// choice).
const (
	BestSamples     = 500
	FinalistSamples = 200
	MonteCarloSeed  = 1
)
