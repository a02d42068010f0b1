package optimize

import (
	"context"
	"math"
	"sync"
	"testing"
	"time"

	"gonum.org/v1/gonum/optimize/functions"
)

// laneCases are test functions from gonum's optimize/functions (reference
// library) over boxes that hold their minima: ExtendedRosenbrock and Wood
// have minimum 0 at (1, …, 1), Beale 0 at (3, 0.5) (gonum's documentation;
// from memory).
var laneCases = []struct {
	name   string
	f      func([]float64) float64
	dim    int
	lo, hi float64
}{
	{"rosenbrock-4", functions.ExtendedRosenbrock{}.Func, 4, -2, 2},
	{"rosenbrock-8", functions.ExtendedRosenbrock{}.Func, 8, -2, 2},
	{"wood", functions.Wood{}.Func, 4, -3, 3},
	{"beale", functions.Beale{}.Func, 2, -4.5, 4.5},
}

// refineOnce runs one refinement run of the given budget on p from the
// centre of the box with pass, and returns every evaluation in Key order.
func refineOnce(t *testing.T, p Problem, budget, workers int, pass func(o *runObjective) func([]float64, float64)) []Candidate {
	t.Helper()
	r, err := newRunner(context.Background(), p, Settings{Evaluations: budget, Seed: 1, Workers: workers})
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float64, p.Families()[0].Dim)
	for i := range x {
		x[i] = 0.3 + 0.05*float64(i%5) // off-centre, off any symmetry of the function
	}
	o := newRunObjective(r, start{pt: Point{X: x}}, budget, 0)
	o.restarts(pass(o))
	return r.result().All
}

// TestLanesOneIsGonum: with one lane, lanesPass takes the steps of
// gonum's NelderMead (reference library): the same points are evaluated
// in the same order, restarts included. The two differ only in how the
// centroid is rounded (gonum updates it vertex by vertex, lanesPass sums
// it afresh), so the points agree to about the rounding of the unit box's
// coordinates, well within 1e-9; a different step would move a point by
// a fraction of the simplex (at least 1e-6 after the restarts shrink it).
func TestLanesOneIsGonum(t *testing.T) {
	const budget = 600
	for _, tc := range laneCases {
		t.Run(tc.name, func(t *testing.T) {
			lo, hi := box(tc.dim, tc.lo, tc.hi)
			p := &boxProblem{name: tc.name, f: tc.f, lo: lo, hi: hi}
			want := refineOnce(t, p, budget, 1, func(o *runObjective) func([]float64, float64) { return o.gonumPass })
			got := refineOnce(t, p, budget, 1, func(o *runObjective) func([]float64, float64) {
				return func(x0 []float64, size float64) { o.lanesPass(x0, size, 1) }
			})
			if len(got) != budget || len(want) != budget {
				t.Fatalf("%d and %d evaluations, want the budget %d each", len(got), len(want), budget)
			}
			for i := range want {
				for k := range want[i].Point.X {
					if d := math.Abs(got[i].Point.X[k] - want[i].Point.X[k]); !(d <= 1e-9) {
						t.Fatalf("evaluation %d: lanesPass at %v, gonum at %v", i, got[i].Point.X, want[i].Point.X)
					}
				}
			}
		})
	}
}

// TestLanesReachMinima: a run of two lanes reaches the minima of the test
// functions as the one-lane run does (both to 1e-6; the budgets are those
// TestNelderMeadOnFunctions gives the Nelder–Mead strategy).
func TestLanesReachMinima(t *testing.T) {
	for _, tc := range laneCases {
		t.Run(tc.name, func(t *testing.T) {
			lo, hi := box(tc.dim, tc.lo, tc.hi)
			budget := 1000 * tc.dim
			for _, lanes := range []int{1, 2} {
				p := &boxProblem{name: tc.name, f: tc.f, lo: lo, hi: hi}
				r, err := newRunner(context.Background(), p, Settings{Evaluations: budget, Seed: 1})
				if err != nil {
					t.Fatal(err)
				}
				x := make([]float64, tc.dim)
				for i := range x {
					x[i] = 0.3 + 0.05*float64(i%5)
				}
				r.nelderMead(start{pt: Point{X: x}}, budget, 0, lanes)
				res := r.result()
				best, c := bestValue(res)
				if best > 1e-6 {
					t.Errorf("%d lanes: best %.3g at %v after %d evaluations, want the minimum 0 to 1e-6", lanes, best, p.real(c.Point.X), res.Evaluations)
				}
				if res.Evaluations > budget || int(p.calls.Load()) != res.Evaluations {
					t.Errorf("%d lanes: %d evaluations recorded, %d made, budget %d", lanes, res.Evaluations, p.calls.Load(), budget)
				}
			}
		})
	}
}

// TestLanesSameWhateverTheWorkers: a two-lane run evaluates the same
// points under the same keys on one worker and on four.
func TestLanesSameWhateverTheWorkers(t *testing.T) {
	lo, hi := box(4, -3, 3)
	lanes := func(o *runObjective) func([]float64, float64) {
		return func(x0 []float64, size float64) { o.lanesPass(x0, size, 2) }
	}
	a := refineOnce(t, &boxProblem{name: "wood", f: functions.Wood{}.Func, lo: lo, hi: hi}, 800, 1, lanes)
	b := refineOnce(t, &boxProblem{name: "wood", f: functions.Wood{}.Func, lo: lo, hi: hi}, 800, 4, lanes)
	if len(a) != len(b) {
		t.Fatalf("%d and %d evaluations", len(a), len(b))
	}
	for i := range a {
		if a[i].Key != b[i].Key || pointKey(a[i].Point.X) != pointKey(b[i].Point.X) {
			t.Fatalf("evaluation %d differs: %+v at %v vs %+v at %v", i, a[i].Key, a[i].Point.X, b[i].Key, b[i].Point.X)
		}
	}
}

// pairProblem's evaluations number first and second wait, each, until
// the other one has started (or ten seconds have passed, a guard that
// only a failing test reaches).
type pairProblem struct {
	boxProblem
	first   int
	mu      sync.Mutex
	calls   int
	arrived chan struct{}
	paired  bool
}

func (p *pairProblem) Evaluate(pt Point) Outcome {
	p.mu.Lock()
	n := p.calls
	p.calls++
	p.mu.Unlock()
	if n == p.first || n == p.first+1 {
		select {
		case p.arrived <- struct{}{}: // the other one is waiting
			p.mu.Lock()
			p.paired = true
			p.mu.Unlock()
		case <-p.arrived:
		case <-time.After(10 * time.Second):
		}
	}
	return p.boxProblem.Evaluate(pt)
}

// TestLanesEvaluateSideBySide: the two lanes' first reflections are under
// way at once on two workers. A run from a known start evaluates its
// initial simplex first (d points), then the reflections of the two worst
// vertices, evaluations d and d+1.
func TestLanesEvaluateSideBySide(t *testing.T) {
	const d = 4
	lo, hi := box(d, -2, 2)
	p := &pairProblem{boxProblem: boxProblem{name: "rosenbrock-4", f: functions.ExtendedRosenbrock{}.Func, lo: lo, hi: hi},
		first: d, arrived: make(chan struct{})}
	r, err := newRunner(context.Background(), p, Settings{Evaluations: 20, Seed: 1, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	st := start{pt: Point{X: []float64{0.3, 0.35, 0.4, 0.45}}}
	o := p.boxProblem.Evaluate(st.pt)
	st.out = &o
	r.nelderMead(st, 20, 0, 2)
	if !p.paired {
		t.Error("the two lanes' first reflections were not under way at once")
	}
}
