package optimize

import (
	"math"
	"math/rand"
	"sort"
	"sync"

	gopt "gonum.org/v1/gonum/optimize"
)

// Refinement settings.
const (
	// penaltyWeight multiplies the total violation in the refined
	// objective (a static exact penalty: continuous across the boundary of
	// the feasible set, and steep enough that a violation of 1 % costs as
	// much as the whole of one budget).
	penaltyWeight = 100
	// boxWeight multiplies the squared distance of a simplex vertex from
	// the unit box; the point evaluated is the vertex clamped into the box,
	// so bounds hold exactly.
	boxWeight = 1e3
	// failedValue is the refined objective of a point that failed.
	failedValue = 1e6
	// evalsPerDim sets the least budget of one run: evalsPerDim·(d+1).
	evalsPerDim = 60
	// maxStarts bounds the number of runs of one refinement.
	maxStarts = 16
	// weightFloor is added to each scaled objective of a start before its
	// inverse becomes the start's weight, so that an objective at zero does
	// not take an infinite weight; the start's trade-off then lies near
	// the diagonal of its Tchebycheff contour rather than exactly on it.
	weightFloor = 0.05
	// simplexSize is the initial simplex's edge in normalised units.
	simplexSize = 0.08
	// refineLanes is the least number of evaluations a refinement keeps
	// under way at once (when it has evaluations left to spend): a single
	// run moves that many simplex vertices a step (lanesPass). Two is the
	// build machine's cores. Measured with scripts/bench-search (hybrid,
	// 10 seeds): the hypervolume medians on strain-gauge moved by at most
	// 0.001 at 1 000, 3 000 and 10 000 evaluations, against up to 0.008
	// lost by splitting the final refinement into two runs of half the
	// budget each instead.
	refineLanes = 2
	// convergeTol and convergeSteps(d) end a pass once the best vertex
	// has not improved by more than convergeTol, relative and absolute,
	// in convergeSteps simplex steps.
	convergeTol = 1e-12
	// contributionFront is the most members of the front whose
	// hypervolume contributions rank the starts (a larger front is
	// thinned first, ThinFront): 200 members of three objectives take
	// milliseconds, BenchmarkContributions.
	contributionFront = 200
)

// start is a refinement start: a point, the weights of its
// scalarisation and, when the point was evaluated before, its outcome
// (the run then does not spend an evaluation on it again).
type start struct {
	pt      Point
	weights []float64
	out     *Outcome
}

// refine spends the budget on Nelder–Mead runs (J. A. Nelder, R. Mead, "A
// simplex method for function minimization", The Computer Journal 7(4),
// 1965; gonum's implementation) from promising starts: the members of the
// front that contribute most to its hypervolume, each weighted so that its
// own trade-off lies near the diagonal of its Tchebycheff contour (so the
// run looks for points that dominate it), or with nothing feasible yet the
// families' nearest misses, weighted equally. Without earlier candidates
// (the Nelder–Mead-only strategy) the starts are each family's defaults
// and random points. The refined objective is Score plus a penalty on the
// violation. The runs proceed side by side; a refinement of a single run
// moves two vertices of its simplex at a time (refineLanes, lanesPass).
func (r *runner) refine(budget int, fromDefaults bool) error {
	if budget <= 0 || r.expired() {
		return nil
	}
	var starts []start
	if fromDefaults {
		starts = r.defaultStarts()
		budget -= len(r.fams) // the probes of the defaults
	} else {
		starts = r.refineStarts(budget)
	}
	if len(starts) == 0 {
		return nil
	}
	// A refinement of fewer runs than refineLanes gives each run
	// refineLanes/runs lanes, so that at least refineLanes evaluations are
	// under way at once. The lanes depend on the starts alone, not on the
	// workers, and so does the result.
	lanes := max(1, refineLanes/len(starts))
	share := budget / len(starts)
	extra := budget % len(starts)
	var wg sync.WaitGroup
	sem := make(chan struct{}, cap(r.sem))
	for i, st := range starts {
		b := share
		if i < extra {
			b++
		}
		wg.Add(1)
		sem <- struct{}{}
		go func(i int, st start, b int) {
			defer wg.Done()
			defer func() { <-sem }()
			r.nelderMead(st, b, i, lanes)
		}(i, st, b)
	}
	wg.Wait()
	return nil
}

// defaultStarts evaluates every family at its defaults (a random point
// for a family without them) and returns a start, weighted equally, for
// each family that is not hopeless: when some default is feasible, the
// families whose default misses by more than retireRatio are left to the
// islands, which will retire them unless they improve.
func (r *runner) defaultStarts() []start {
	rng := rand.New(rand.NewSource(r.set.Seed))
	probes := make([]*genome, len(r.fams))
	tried := make([]Candidate, len(r.fams))
	for f := range r.fams {
		probes[f] = &genome{run: r, key: Key{Phase: r.phase, Gen: -1, Island: f}, pt: Point{Family: f, X: r.startPoint(f, rng)}}
	}
	if r.expired() {
		return nil
	}
	r.evaluateAll(probes)
	for f, g := range probes {
		tried[f] = Candidate{Point: g.pt, Outcome: *g.out}
	}
	hopeless, _ := familyVerdicts(tried, len(r.fams))
	var starts []start
	for f, g := range probes {
		if !hopeless[f] {
			starts = append(starts, start{pt: g.pt.Clone(), out: g.out})
		}
	}
	return starts
}

// refineStarts chooses the starts for a budget.
func (r *runner) refineStarts(budget int) []start {
	all := r.snapshot()
	maxDim := 1
	for _, f := range r.fams {
		maxDim = max(maxDim, f.Dim)
	}
	room := max(1, min(maxStarts, budget/(evalsPerDim*(maxDim+1))))

	var starts []start
	if len(all) == 0 {
		// Multi-start from scratch: defaults first, then random points.
		rng := rand.New(rand.NewSource(r.set.Seed))
		n := max(room, min(len(r.fams), budget))
		for k := 0; k < n; k++ {
			f := k % len(r.fams)
			x := make([]float64, r.fams[f].Dim)
			if k < len(r.fams) {
				x = r.startPoint(f, rng)
			} else {
				for i := range x {
					x[i] = rng.Float64()
				}
			}
			starts = append(starts, start{pt: Point{Family: f, X: x}})
		}
		return starts
	}

	r.mu.Lock()
	res := r.arch.result(all)
	r.mu.Unlock()
	if len(res.Front) > 0 {
		// The front members whose loss would cost the front the most
		// hypervolume, each weighted at its own trade-off. The
		// contributions cost O(F²) hypervolumes of F members, so a front
		// larger than contributionFront is thinned to its most spread
		// members first.
		front := ThinFront(res.Front, contributionFront)
		for _, i := range byContribution(front, r.scales)[:min(room, len(front))] {
			c := front[i]
			w := make([]float64, len(c.Outcome.Objectives))
			for k, f := range c.Outcome.Objectives {
				w[k] = 1 / (math.Abs(f/r.scales[k]) + weightFloor)
			}
			o := c.Outcome
			starts = append(starts, start{pt: c.Point.Clone(), weights: w, out: &o})
		}
		return starts
	}
	// Nothing feasible yet: the families' nearest misses, nearest first.
	bests := append([]FamilyBest(nil), res.BestOf...)
	sort.SliceStable(bests, func(i, j int) bool {
		if bests[i].OK != bests[j].OK {
			return bests[i].OK
		}
		return bests[i].OK && better(bests[i].Candidate.Outcome, bests[j].Candidate.Outcome, r.scales)
	})
	for _, fb := range bests {
		if fb.OK && len(starts) < room {
			o := fb.Candidate.Outcome
			starts = append(starts, start{pt: fb.Candidate.Point.Clone(), out: &o})
		}
	}
	return starts
}

// byContribution returns the indices of the front's members, largest
// exclusive hypervolume contribution first (the hypervolume the front
// loses without the member, in the box from zero to the scales, as
// SMS-EMOA ranks its last front: N. Beume, B. Naujoks, M. Emmerich,
// "SMS-EMOA: Multiobjective selection based on dominated hypervolume",
// European Journal of Operational Research 181(3), 2007); ties keep the
// front's order. Each contribution is the volume of the member's own box
// less the hypervolume of the others limited to that box (the limit sets
// of L. While, L. Bradstreet, L. Barone, "A fast way of calculating exact
// hypervolumes", IEEE Trans. Evol. Comput. 16(1), 2012), which stays
// small: BenchmarkContributions puts 200 mutually non-dominated members
// of five objectives at about 0.1 s, against 13 s by removing one member
// at a time.
func byContribution(front []Candidate, scales []float64) []int {
	contrib := contributions(front, scales)
	idx := make([]int, len(front))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return contrib[idx[a]] > contrib[idx[b]] })
	return idx
}

// contributions returns each front member's exclusive hypervolume
// contribution in the box from zero to the scales, as a fraction of it.
func contributions(front []Candidate, scales []float64) []float64 {
	objs := make([][]float64, len(front))
	for i, c := range front {
		objs[i] = c.Outcome.Objectives
	}
	d := len(scales)
	pts := normalize(objs, make([]float64, d), scales)
	one := ones(d)
	contrib := make([]float64, len(pts))
	var limited [][]float64
	for i, p := range pts {
		own := 1.0
		for k := range d {
			own *= max(1-p[k], 0)
		}
		limited = limited[:0]
		for j, q := range pts {
			if j == i {
				continue
			}
			l := make([]float64, d)
			for k := range d {
				l[k] = max(p[k], q[k])
			}
			limited, _ = addNonDominated(limited, l, d)
		}
		contrib[i] = own - Hypervolume(limited, one)
	}
	return contrib
}

// defaults returns family f's defaults when the problem knows them.
func (r *runner) defaults(f int) ([]float64, bool) {
	st, ok := r.prob.(Starter)
	if !ok {
		return nil, false
	}
	x, ok := st.Start(f)
	return x, ok && len(x) == r.fams[f].Dim
}

// startPoint returns family f's defaults or, without them, a random point.
func (r *runner) startPoint(f int, rng *rand.Rand) []float64 {
	if def, ok := r.defaults(f); ok {
		return append([]float64(nil), def...)
	}
	x := make([]float64, r.fams[f].Dim)
	for i := range x {
		x[i] = rng.Float64()
	}
	return x
}

// refined is the objective a refinement run minimises.
func (r *runner) refined(o Outcome, weights []float64) float64 {
	if o.Failed {
		return failedValue
	}
	return Score(o.Objectives, r.scales, weights) + penaltyWeight*o.Violation()
}

// runObjective is what one refinement run minimises: the refined value
// of the point clamped into the unit box, plus boxWeight times the
// squared distance from the box. It evaluates at most budget points, once
// each (a per-run cache), and keeps the best point it has seen.
type runObjective struct {
	r       *runner
	fam     int
	run     int
	weights []float64
	budget  int
	evals   int
	best    float64
	bestX   []float64
	cache   map[string]float64
}

func newRunObjective(r *runner, st start, budget, run int) *runObjective {
	o := &runObjective{r: r, fam: st.pt.Family, run: run, weights: st.weights, budget: budget,
		best: math.Inf(1), bestX: append([]float64(nil), st.pt.X...), cache: map[string]float64{}}
	if st.out != nil {
		o.best = r.refined(*st.out, st.weights)
		o.cache[pointKey(st.pt.X)] = o.best
	}
	return o
}

// spent reports whether the run can evaluate nothing more.
func (o *runObjective) spent() bool { return o.evals >= o.budget || o.r.expired() }

// value returns the objective at y, evaluating it if need be.
func (o *runObjective) value(y []float64) float64 { return o.values([][]float64{y})[0] }

// values returns the objective at every point of ys. The points not seen
// before are evaluated concurrently, their keys given in the order of ys
// (a point that appears twice is evaluated once), so the outcome does not
// depend on which evaluation finishes first. A point beyond the budget is
// not evaluated and counts as no better than the best.
func (o *runObjective) values(ys [][]float64) []float64 {
	d := len(o.bestX)
	out := make([]float64, len(ys))
	xs := make([][]float64, len(ys))
	keys := make([]string, len(ys))
	pens := make([]float64, len(ys))
	refused := make([]bool, len(ys))
	pending := map[string]*float64{}
	var order []int // indices of ys evaluated now, in key order
	for j, y := range ys {
		x := make([]float64, d)
		for i, v := range y {
			x[i] = Clamp01(v)
			pens[j] += (v - x[i]) * (v - x[i])
		}
		xs[j], keys[j] = x, pointKey(x)
		if _, ok := o.cache[keys[j]]; ok {
			continue
		}
		if _, ok := pending[keys[j]]; ok {
			continue
		}
		if o.evals+len(order) >= o.budget || o.r.expired() {
			refused[j] = true
			continue
		}
		pending[keys[j]] = new(float64)
		order = append(order, j)
	}
	var wg sync.WaitGroup
	for n, j := range order {
		wg.Add(1)
		go func(key Key, x []float64, v *float64) {
			defer wg.Done()
			*v = o.r.refined(o.r.evaluate(key, Point{Family: o.fam, X: x}), o.weights)
		}(Key{Phase: o.r.phase, Gen: o.evals + n, Island: o.run}, xs[j], pending[keys[j]])
	}
	wg.Wait()
	o.evals += len(order)
	for k, v := range pending {
		o.cache[k] = *v
	}
	for j := range ys {
		if refused[j] {
			out[j] = o.best + boxWeight*pens[j] + 1 // out of budget: no better than the best
			continue
		}
		v := o.cache[keys[j]]
		if v < o.best {
			o.best = v
			copy(o.bestX, xs[j])
		}
		out[j] = v + boxWeight*pens[j]
	}
	return out
}

// nelderMead runs refinement run number run, of at most budget
// evaluations: Nelder–Mead from the start and, each time it converges with
// budget left, again from the best point with a fresh, smaller simplex (a
// restart recovers from a collapsed simplex, a known weakness of the
// method). With one lane it is gonum's Nelder–Mead, one evaluation at a
// time; with more, the simplex moves that many vertices at once (see
// lanesPass), their evaluations side by side.
func (r *runner) nelderMead(st start, budget, run, lanes int) {
	o := newRunObjective(r, st, budget, run)
	if lanes > 1 {
		o.restarts(func(x0 []float64, size float64) { o.lanesPass(x0, size, lanes) })
	} else {
		o.restarts(o.gonumPass)
	}
}

// restarts runs passes from the best point so far, each from a fresh
// simplex of edge size, until the objective is spent; the simplex is
// four times smaller after a pass that made no progress.
func (o *runObjective) restarts(pass func(x0 []float64, size float64)) {
	size := simplexSize
	for restart := 0; !o.spent() && size > 1e-6; restart++ {
		before, used := o.best, o.evals
		pass(append([]float64(nil), o.bestX...), size)
		if o.evals == used || (restart > 0 && !(o.best < before-convergeTol*math.Abs(before))) {
			size /= 4 // no progress: look closer
		}
	}
}

// gonumPass is one pass of gonum's Nelder–Mead from x0.
func (o *runObjective) gonumPass(x0 []float64, size float64) {
	d := len(x0)
	settings := &gopt.Settings{
		FuncEvaluations: 4*o.budget + 8*(d+1), // the budget itself is enforced by the objective
		Converger:       &gopt.FunctionConverge{Absolute: convergeTol, Relative: convergeTol, Iterations: convergeSteps(d)},
	}
	// An error (a failed start, say) only ends this pass.
	_, _ = gopt.Minimize(gopt.Problem{Func: o.value}, x0, settings, &gopt.NelderMead{SimplexSize: size})
}

// convergeSteps is the number of simplex steps without progress that end
// a pass in d dimensions.
func convergeSteps(d int) int { return 10 * (d + 1) }

// pointKey identifies a point exactly, for the per-run cache.
func pointKey(x []float64) string {
	b := make([]byte, 0, 8*len(x))
	for _, v := range x {
		u := math.Float64bits(v)
		for s := 0; s < 64; s += 8 {
			b = append(b, byte(u>>s))
		}
	}
	return string(b)
}
