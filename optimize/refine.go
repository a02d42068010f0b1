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
	// simplexSize is the initial simplex's edge in normalised units.
	simplexSize = 0.08
)

// start is a refinement start: a point and the weights of its
// scalarisation.
type start struct {
	pt      Point
	weights []float64
}

// refine spends the budget on Nelder–Mead runs (J. A. Nelder, R. Mead, "A
// simplex method for function minimization", The Computer Journal 7(4),
// 1965; gonum's implementation) from promising starts: each family's best
// candidate, weighted equally, then members of the front, each weighted
// so that its own trade-off lies on the diagonal of its Tchebycheff
// contour (so the run looks for points that dominate it). Without earlier
// candidates (the Nelder–Mead-only strategy) the starts are each family's
// defaults and random points. The refined objective is Score plus a penalty
// on the violation.
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
			r.nelderMead(st, b, i)
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
	outs := make([]Outcome, len(r.fams))
	for f := range r.fams {
		probes[f] = &genome{run: r, key: Key{Phase: r.phase, Gen: -1, Island: f}, pt: Point{Family: f, X: r.startPoint(f, rng)}}
	}
	if r.expired() {
		return nil
	}
	r.evaluateAll(probes)
	for f, g := range probes {
		outs[f] = *g.out
	}
	hopeless := hopelessFamilies(outs, len(r.fams), func(i int) int { return i })
	var starts []start
	for f, g := range probes {
		if !hopeless[f] {
			starts = append(starts, start{pt: g.pt.Clone()})
		}
	}
	return starts
}

// refineStarts chooses the starts for a budget.
func (r *runner) refineStarts(budget int) []start {
	r.mu.Lock()
	all := append([]Candidate(nil), r.all...)
	r.mu.Unlock()
	sort.Slice(all, func(i, j int) bool { return all[i].Key.less(all[j].Key) })
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

	res := summarize(all, len(r.fams), r.scales)
	// Families, best first.
	bests := append([]FamilyBest(nil), res.BestOf...)
	sort.SliceStable(bests, func(i, j int) bool {
		if bests[i].OK != bests[j].OK {
			return bests[i].OK
		}
		return bests[i].OK && better(bests[i].Candidate.Outcome, bests[j].Candidate.Outcome, r.scales)
	})
	used := map[Key]bool{}
	for _, fb := range bests {
		if fb.OK && len(starts) < room {
			starts = append(starts, start{pt: fb.Candidate.Point.Clone()})
			used[fb.Candidate.Key] = true
		}
	}
	// Then the front, spread along its first objective.
	front := append([]Candidate(nil), res.Front...)
	sort.SliceStable(front, func(i, j int) bool { return front[i].Outcome.Objectives[0] < front[j].Outcome.Objectives[0] })
	if free := room - len(starts); free > 0 && len(front) > 0 {
		step := math.Max(1, float64(len(front))/float64(free))
		for x := 0.0; int(x) < len(front) && len(starts) < room; x += step {
			c := front[int(x)]
			if used[c.Key] {
				continue
			}
			used[c.Key] = true
			w := make([]float64, len(c.Outcome.Objectives))
			for i, f := range c.Outcome.Objectives {
				w[i] = 1 / (math.Abs(f/r.scales[i]) + 0.05)
			}
			starts = append(starts, start{pt: c.Point.Clone(), weights: w})
		}
	}
	return starts
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

// nelderMead runs refinement run number run, of at most budget
// evaluations: Nelder–Mead from the start and, each time it converges with
// budget left, again from the best point with a fresh, smaller simplex (a
// restart recovers from a collapsed simplex, a known weakness of the
// method).
func (r *runner) nelderMead(st start, budget, run int) {
	fam := st.pt.Family
	d := len(st.pt.X)
	evals := 0
	best, bestX := math.Inf(1), append([]float64(nil), st.pt.X...)
	cache := map[string]float64{}
	f := func(y []float64) float64 {
		x := make([]float64, d)
		out := 0.0
		for i, v := range y {
			x[i] = clamp01(v)
			out += (v - x[i]) * (v - x[i])
		}
		k := pointKey(x)
		v, ok := cache[k]
		if !ok {
			if evals >= budget || r.expired() {
				return best + boxWeight*out + 1 // out of budget: no better than the best
			}
			o := r.evaluate(Key{Phase: r.phase, Gen: evals, Island: run}, Point{Family: fam, X: x})
			evals++
			v = r.refined(o, st.weights)
			cache[k] = v
		}
		if v < best {
			best = v
			copy(bestX, x)
		}
		return v + boxWeight*out
	}
	size := simplexSize
	for restart := 0; evals < budget && !r.expired() && size > 1e-6; restart++ {
		before, used := best, evals
		settings := &gopt.Settings{
			FuncEvaluations: 4*budget + 8*(d+1), // the budget itself is enforced in f
			Converger:       &gopt.FunctionConverge{Absolute: 1e-12, Relative: 1e-12, Iterations: 10 * (d + 1)},
		}
		x0 := append([]float64(nil), bestX...)
		// An error (a failed start, say) only ends this pass.
		_, _ = gopt.Minimize(gopt.Problem{Func: f}, x0, settings, &gopt.NelderMead{SimplexSize: size})
		if evals == used || (restart > 0 && !(best < before-1e-12*math.Abs(before))) {
			size /= 4 // no progress: look closer
		}
	}
}

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
