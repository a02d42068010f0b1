package optimize

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand"
	"runtime"
	"sort"
	"sync"
	"time"
)

// runner carries one search.
type runner struct {
	ctx      context.Context
	prob     Problem
	fams     []Family
	scales   []float64
	set      Settings
	start    time.Time
	sem      chan struct{}
	mu       sync.Mutex
	all      []Candidate
	arch     *archive
	feasible int
	best     float64
	nearest  float64
	stopped  bool
	// retired marks islands the genetic search no longer spends on, and
	// resting those that sit out the next generation.
	retired, resting []bool
	// phase numbers the keys of the current phase of the strategy.
	phase int
}

// newRunner checks the problem and the settings and prepares a search.
func newRunner(ctx context.Context, prob Problem, set Settings) (*runner, error) {
	fams := prob.Families()
	if len(fams) == 0 {
		return nil, errors.New("optimize: the problem has no families")
	}
	for _, f := range fams {
		if f.Dim < 1 {
			return nil, fmt.Errorf("optimize: family %s has no parameters", f.Name)
		}
	}
	if set.Evaluations < 1 {
		return nil, fmt.Errorf("optimize: budget of %d evaluations, want at least 1", set.Evaluations)
	}
	workers := set.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	if ctx == nil {
		ctx = context.Background()
	}
	r := &runner{
		ctx:  ctx,
		prob: prob, fams: fams, set: set, start: time.Now(),
		sem: make(chan struct{}, workers), best: math.Inf(1), nearest: math.Inf(1),
	}
	r.scales = make([]float64, prob.Objectives())
	for i := range r.scales {
		r.scales[i] = 1
	}
	if sc, ok := prob.(Scaler); ok {
		for i, v := range sc.Scales() {
			if i < len(r.scales) && v > 0 {
				r.scales[i] = v
			}
		}
	}
	r.arch = newArchive(len(fams), r.scales)
	return r, nil
}

// snapshot returns a copy of the evaluations so far, in Key order.
func (r *runner) snapshot() []Candidate {
	r.mu.Lock()
	all := append([]Candidate(nil), r.all...)
	r.mu.Unlock()
	sort.Slice(all, func(i, j int) bool { return all[i].Key.less(all[j].Key) })
	return all
}

// count returns the number of evaluations so far.
func (r *runner) count() int {
	r.mu.Lock()
	defer r.mu.Unlock()
	return len(r.all)
}

// expired reports whether the context or the deadline ends the search.
func (r *runner) expired() bool {
	if r.ctx.Err() != nil {
		return true
	}
	if !r.set.Deadline.IsZero() && time.Now().After(r.set.Deadline) {
		r.mu.Lock()
		r.stopped = true
		r.mu.Unlock()
		return true
	}
	return false
}

// evaluate evaluates one point on a worker slot and records it. Once the
// search has expired it evaluates and records nothing, and returns a
// failed outcome, so that whatever phase is under way winds down at once.
func (r *runner) evaluate(key Key, p Point) Outcome {
	r.sem <- struct{}{}
	if r.expired() {
		<-r.sem
		return Outcome{Failed: true}
	}
	o := r.prob.Evaluate(p)
	<-r.sem
	r.mu.Lock()
	c := Candidate{Key: key, Point: p.Clone(), Outcome: o}
	r.arch.add(c)
	// The record of every evaluation keeps no payload: only the
	// archive's members need theirs, and a payload (a stage's metrics
	// and violations) is most of an evaluation's memory.
	c.Outcome.Payload = nil
	r.all = append(r.all, c)
	if o.Feasible() {
		r.feasible++
		r.best = math.Min(r.best, Score(o.Objectives, r.scales, nil))
	} else if !o.Failed {
		r.nearest = math.Min(r.nearest, o.Violation())
	}
	pr := Progress{Evaluations: len(r.all), Budget: r.set.Evaluations, Feasible: r.feasible,
		Best: r.best, Nearest: r.nearest, Elapsed: time.Since(r.start), Phase: phaseName(key.Phase, r.set.Strategy)}
	r.mu.Unlock()
	if r.set.Progress != nil {
		r.set.Progress(pr)
	}
	return o
}

func phaseName(phase int, s Strategy) string {
	switch s {
	case Random:
		return "random"
	case Genetic:
		return "genetic"
	case NelderMead:
		return "refine"
	}
	return [...]string{"refine (defaults)", "genetic", "refine"}[min(phase, 2)]
}

// evaluateAll evaluates genomes concurrently (up to the worker limit).
func (r *runner) evaluateAll(gs []*genome) {
	var wg sync.WaitGroup
	for _, g := range gs {
		if g.out != nil {
			continue
		}
		wg.Add(1)
		go func(g *genome) {
			defer wg.Done()
			o := r.evaluate(g.key, g.pt)
			g.out = &o
		}(g)
	}
	wg.Wait()
}

// random spends the budget on uniform random points, round robin over
// the families.
func (r *runner) random(budget int) error {
	rng := rand.New(rand.NewSource(r.set.Seed))
	const batch = 64
	for done := 0; done < budget && !r.expired(); done += batch {
		var gs []*genome
		for k := done; k < min(done+batch, budget); k++ {
			f := k % len(r.fams)
			x := make([]float64, r.fams[f].Dim)
			for i := range x {
				x[i] = rng.Float64()
			}
			gs = append(gs, &genome{run: r, key: Key{Phase: r.phase, Gen: k / batch, Island: -1, Slot: k % batch}, pt: Point{Family: f, X: x}})
		}
		r.evaluateAll(gs)
	}
	return nil
}

// result assembles the Result from the archive and every evaluation, in
// Key order.
func (r *runner) result() *Result {
	all := r.snapshot()
	r.mu.Lock()
	defer r.mu.Unlock()
	res := r.arch.result(all)
	res.Elapsed, res.Stopped = time.Since(r.start), r.stopped
	return res
}
