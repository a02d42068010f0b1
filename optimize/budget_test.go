package optimize

import (
	"context"
	"math"
	"math/rand"
	"sync"
	"testing"
)

// tiersProblem has four families of two parameters that differ only in how
// well they can meet the constraints: "meets" always does, "misses" never
// does (violation 1, a target missed by its whole limit), "late" (of six
// parameters) does only once every one is at most 0.02, and "hopeless"
// misses by 20, beyond retireRatio. Its two objectives, (x0, 1 − x0 + x1),
// are those of a simple linear front.
// It counts its evaluations per family and knows defaults for the hybrid.
type tiersProblem struct {
	mu    sync.Mutex
	calls map[int]int
}

const (
	tierMeets = iota
	tierMisses
	tierLate
	tierHopeless
)

func (p *tiersProblem) Families() []Family {
	return []Family{{"meets", 2}, {"misses", 2}, {"late", lateDim}, {"hopeless", 2}}
}
func (p *tiersProblem) Objectives() int { return 2 }

const lateDim = 6

func (p *tiersProblem) Start(f int) ([]float64, bool) {
	x := []float64{0.5, 0.5}
	if f == tierLate {
		x = []float64{0.5, 0.5, 0.5, 0.5, 0.5, 0.5}
	}
	return x, true
}
func (p *tiersProblem) Evaluate(pt Point) Outcome {
	p.mu.Lock()
	if p.calls == nil {
		p.calls = map[int]int{}
	}
	p.calls[pt.Family]++
	p.mu.Unlock()
	v := 0.0
	switch pt.Family {
	case tierMisses:
		v = 1
	case tierLate:
		for _, x := range pt.X {
			v += math.Max(0, x-0.02)
		}
	case tierHopeless:
		v = 20
	}
	return Outcome{Objectives: []float64{pt.X[0], 1 - pt.X[0] + pt.X[1]}, Violations: []float64{v}}
}

// TestFamilyVerdicts checks the two verdicts on families against worked
// cases: hopeless (every outcome misses by more than retireRatio while
// another family meets the spec) and unmet (no feasible outcome while
// another family has one); with no feasible outcome anywhere neither
// applies (common practice, no source: a family is judged only against
// one that works).
func TestFamilyVerdicts(t *testing.T) {
	ok := Outcome{Violations: []float64{0}}
	near := Outcome{Violations: []float64{2}}
	far := Outcome{Violations: []float64{30}}
	failed := Outcome{Failed: true}
	for _, tc := range []struct {
		name             string
		outs             []Outcome
		fams             []int
		hopeless, unmett []bool
	}{
		{"one feasible family", []Outcome{ok, near, far, failed}, []int{0, 1, 2, 3},
			[]bool{false, false, true, true}, []bool{false, true, true, true}},
		{"nothing feasible", []Outcome{near, far, failed}, []int{0, 1, 2},
			[]bool{false, false, false}, []bool{false, false, false}},
		{"one good outcome is enough", []Outcome{far, ok, far, near}, []int{0, 0, 1, 1},
			[]bool{false, false}, []bool{false, true}},
		{"a family never evaluated is neither hopeless nor judged by violation", []Outcome{ok}, []int{0},
			[]bool{false, false}, []bool{false, true}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cands := make([]Candidate, len(tc.outs))
			for i, o := range tc.outs {
				cands[i] = Candidate{Point: Point{Family: tc.fams[i]}, Outcome: o}
			}
			h, u := familyVerdicts(cands, len(tc.hopeless))
			for f := range tc.hopeless {
				if h[f] != tc.hopeless[f] {
					t.Errorf("family %d: hopeless %v, want %v", f, h[f], tc.hopeless[f])
				}
				if u[f] != tc.unmett[f] {
					t.Errorf("family %d: unmet %v, want %v", f, u[f], tc.unmett[f])
				}
			}
		})
	}
}

// TestIslandSpending checks where the genetic search spends its budget.
// Every island evolves in generations 1 to retireAfter. Then the hopeless
// family stops; the family that never meets the spec evolves only in the
// generations that are multiples of restEvery; the family that meets it
// evolves in every one; and the late family is back at every generation
// from the one after its first feasible candidate.
func TestIslandSpending(t *testing.T) {
	p := &tiersProblem{}
	const budget = 6000
	res, err := Run(context.Background(), p, Settings{Evaluations: budget, Seed: 4, Strategy: Genetic})
	if err != nil {
		t.Fatal(err)
	}
	pop := islandPop(budget, 4)
	gens := make([]map[int]int, 4) // per family, evaluations per generation
	for f := range gens {
		gens[f] = map[int]int{}
	}
	firstFeasibleGen := -1
	for _, c := range res.All {
		gens[c.Point.Family][c.Key.Gen]++
		if c.Point.Family == tierLate && c.Outcome.Feasible() && firstFeasibleGen < 0 {
			firstFeasibleGen = c.Key.Gen
		}
	}
	last := 0
	for g := range gens[tierMeets] {
		last = max(last, g)
	}
	if last <= 2*restEvery+retireAfter {
		t.Fatalf("only %d generations: too few to see the resting rule", last)
	}
	for g := 0; g <= last; g++ {
		if n := gens[tierMeets][g]; n != pop {
			t.Errorf("meets, generation %d: %d evaluations, want %d", g, n, pop)
		}
		want := 0
		if g <= retireAfter {
			want = pop
		}
		if n := gens[tierHopeless][g]; n != want {
			t.Errorf("hopeless, generation %d: %d evaluations, want %d", g, n, want)
		}
		if g <= retireAfter || g%restEvery == 0 {
			want = pop
		}
		if n := gens[tierMisses][g]; n != want {
			t.Errorf("misses, generation %d: %d evaluations, want %d", g, n, want)
		}
	}
	if firstFeasibleGen <= retireAfter+1 || firstFeasibleGen >= last {
		t.Fatalf("late family first feasible in generation %d of %d: the test needs it after resting began and before the end", firstFeasibleGen, last)
	}
	t.Logf("population %d, %d generations, late family first feasible in generation %d", pop, last, firstFeasibleGen)
	rested := false
	for g := retireAfter + 1; g <= firstFeasibleGen; g++ {
		rested = rested || gens[tierLate][g] == 0
	}
	if !rested {
		t.Errorf("late family never rested before its first feasible candidate (generation %d)", firstFeasibleGen)
	}
	for g := firstFeasibleGen + 1; g <= last; g++ {
		if n := gens[tierLate][g]; n != pop {
			t.Errorf("late, generation %d after feasibility in %d: %d evaluations, want %d", g, firstFeasibleGen, n, pop)
		}
	}
	if int(p.calls[tierMeets]+p.calls[tierMisses]+p.calls[tierLate]+p.calls[tierHopeless]) != res.Evaluations {
		t.Errorf("%v evaluations made, %d recorded", p.calls, res.Evaluations)
	}
}

// TestHybridReusesEvaluations checks that the hybrid spends no evaluation
// twice on a point it already knows: the islands' first populations take
// up to half their members from the first refinement without evaluating
// them again, and an island retired at the start evaluates nothing. No point is evaluated
// twice in the first refinement and the islands' first generation.
// (TestRefinementSkipsKnownStart covers the refinement's starts.)
func TestHybridReusesEvaluations(t *testing.T) {
	p := &tiersProblem{}
	const budget = 4000
	res, err := Run(context.Background(), p, Settings{Evaluations: budget, Seed: 2, Strategy: Hybrid})
	if err != nil {
		t.Fatal(err)
	}
	first := min(budget/4, hybridFirstPerFamily*4)
	ga := budget - first - min(budget/4, hybridFinalMax)
	pop := islandPop(ga, 4)
	before := map[int]int{} // first refinement, per family
	gen0 := map[int]int{}   // islands' first generation, per family
	seen := map[string]Key{}
	for _, c := range res.All {
		if c.Key.Phase > 1 || (c.Key.Phase == 1 && c.Key.Gen > 0) {
			continue
		}
		k := string(rune(c.Point.Family)) + pointKey(c.Point.X)
		if old, ok := seen[k]; ok {
			t.Errorf("%v evaluated at %+v and again at %+v", c.Point.X, old, c.Key)
		}
		seen[k] = c.Key
		if c.Key.Phase == 0 {
			before[c.Point.Family]++
		} else {
			gen0[c.Point.Family]++
		}
	}
	if before[tierHopeless] != 1 {
		t.Errorf("hopeless family: %d evaluations in the first refinement, want 1 (its defaults, then no run)", before[tierHopeless])
	}
	for f := range 4 {
		want := pop - min(pop/2, before[f])
		if f == tierHopeless {
			want = 0 // retired before the islands start
		}
		if gen0[f] != want {
			t.Errorf("family %d: %d evaluations in the first generation after %d in the refinement, want %d (population %d)", f, gen0[f], before[f], want, pop)
		}
	}
}

// TestRefinementSkipsKnownStart checks that a Nelder–Mead run from a start
// whose outcome is known spends its whole budget on other points, and that
// without the outcome its first evaluation is the start (gonum's
// Nelder–Mead evaluates its initial point first; the check would see it),
// with one lane and with two.
func TestRefinementSkipsKnownStart(t *testing.T) {
	for _, lanes := range []int{1, 2} {
		for _, known := range []bool{true, false} {
			p := &tiersProblem{}
			r, err := newRunner(context.Background(), p, Settings{Evaluations: 100, Seed: 1})
			if err != nil {
				t.Fatal(err)
			}
			st := start{pt: Point{Family: tierLate, X: []float64{0.4, 0.6, 0.1, 0.2, 0.3, 0.9}}}
			if known {
				o := p.Evaluate(st.pt)
				st.out = &o
			}
			const budget = 40
			r.nelderMead(st, budget, 0, lanes)
			res := r.result()
			if res.Evaluations != budget {
				t.Errorf("%d lanes, known start %v: %d evaluations, want the budget %d", lanes, known, res.Evaluations, budget)
			}
			again := false
			for _, c := range res.All {
				again = again || pointKey(c.Point.X) == pointKey(st.pt.X)
			}
			if again == known {
				t.Errorf("%d lanes, known start %v: start evaluated by the run %v", lanes, known, again)
			}
		}
	}
}

// TestByContribution orders a two-objective staircase by exclusive
// hypervolume contribution, checked against the closed form for a sorted
// 2-D front (common practice, no source): member i with neighbours i−1
// and i+1 owns the rectangle (x_{i+1} − x_i)·(y_{i−1} − y_i), the
// reference point standing in for the missing neighbours. For (1, 5),
// (2, 3), (4, 2.5), (5, 1) in the box up to (6, 6) the rectangles are 1,
// 4, 0.5 and 1.5.
func TestByContribution(t *testing.T) {
	var front []Candidate
	for _, o := range [][]float64{{1, 5}, {2, 3}, {4, 2.5}, {5, 1}} {
		front = append(front, Candidate{Outcome: Outcome{Objectives: o}})
	}
	got := byContribution(front, []float64{6, 6})
	want := []int{1, 3, 0, 2}
	for i := range want {
		if got[i] != want[i] {
			t.Fatalf("order %v, want %v", got, want)
		}
	}
}

// TestContributionsMatchRemoval checks the limit-set contributions
// against their definition, the hypervolume of the whole front less that
// of the front without the member (NormalizedHypervolume, itself checked
// against closed forms and Monte Carlo in hypervolume_test.go), on random
// mutually non-dominated fronts of two to five objectives.
func TestContributionsMatchRemoval(t *testing.T) {
	for d := 2; d <= 5; d++ {
		// Points on a simplex do not dominate each other.
		front, pts, scales := simplexFront(40, d, 5)
		ideal := make([]float64, d)
		whole := NormalizedHypervolume(pts, ideal, scales)
		got := contributions(front, scales)
		for i := range pts {
			rest := append(append([][]float64(nil), pts[:i]...), pts[i+1:]...)
			want := whole - NormalizedHypervolume(rest, ideal, scales)
			if math.Abs(got[i]-want) > 1e-12 {
				t.Errorf("%d objectives, member %d: contribution %.15g, want %.15g", d, i, got[i], want)
			}
		}
	}
}

// simplexFront returns n members of a front of d objectives on the simplex
// Σ x_k/s_k = 1 with scales s_k = 1 + k, and the scales.
func simplexFront(n, d int, seed int64) ([]Candidate, [][]float64, []float64) {
	rng := rand.New(rand.NewSource(seed))
	scales := make([]float64, d)
	for k := range scales {
		scales[k] = 1 + float64(k)
	}
	var front []Candidate
	var pts [][]float64
	for range n {
		x := make([]float64, d)
		sum := 0.0
		for k := range x {
			x[k] = rng.ExpFloat64()
			sum += x[k]
		}
		for k := range x {
			x[k] = x[k] / sum * scales[k]
		}
		front = append(front, Candidate{Outcome: Outcome{Objectives: x}})
		pts = append(pts, x)
	}
	return front, pts, scales
}

// BenchmarkContributions times the limit-set contributions of a front of
// 200 members and five objectives, and the same by removing one member at
// a time, the definition they replace.
func BenchmarkContributions(b *testing.B) {
	front, pts, scales := simplexFront(200, 5, 1)
	b.Run("limit-sets", func(b *testing.B) {
		for b.Loop() {
			contributions(front, scales)
		}
	})
	b.Run("removal", func(b *testing.B) {
		ideal := make([]float64, len(scales))
		for b.Loop() {
			whole := NormalizedHypervolume(pts, ideal, scales)
			for i := range pts {
				rest := append(append([][]float64(nil), pts[:i]...), pts[i+1:]...)
				_ = whole - NormalizedHypervolume(rest, ideal, scales)
			}
		}
	})
}
