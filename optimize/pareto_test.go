package optimize

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// Source for every check in this file unless noted otherwise: the
// definitions of K. Deb, A. Pratap, S. Agarwal, T. Meyarivan, "A fast and
// elitist multiobjective genetic algorithm: NSGA-II", IEEE Trans. Evol.
// Comput. 6(2), 2002 ("Deb et al. 2002"), applied by hand.

func TestDominates(t *testing.T) {
	// Source: Deb et al. 2002, definition of Pareto dominance under
	// minimisation (no worse everywhere, strictly better somewhere).
	nan := math.NaN()
	cases := []struct {
		name string
		a, b []float64
		want bool
	}{
		{"better in all", []float64{1, 2}, []float64{2, 3}, true},
		{"better in one, equal in other", []float64{1, 3}, []float64{2, 3}, true},
		{"worse in all", []float64{2, 3}, []float64{1, 2}, false},
		{"equal", []float64{1, 2}, []float64{1, 2}, false},
		{"trade-off", []float64{1, 3}, []float64{2, 2}, false},
		{"three objectives, one worse", []float64{1, 1, 3}, []float64{2, 2, 2}, false},
		{"three objectives", []float64{1, 2, 2}, []float64{1, 2, 3}, true},
		{"NaN is incomparable", []float64{1, nan}, []float64{2, 3}, false},
		{"NaN is incomparable, other side", []float64{2, 3}, []float64{1, nan}, false},
		{"different lengths", []float64{1}, []float64{2, 3}, false},
		{"no objectives", nil, nil, false},
	}
	for _, c := range cases {
		if got := Dominates(c.a, c.b); got != c.want {
			t.Errorf("%s: Dominates(%v, %v) = %v, want %v", c.name, c.a, c.b, got, c.want)
		}
	}
}

func TestConstrainedDominates(t *testing.T) {
	inf := math.Inf(1)
	// Source: Deb et al. 2002, §VI, constrained domination: (1) a feasible
	// point beats an infeasible one; (2) of two infeasible points the
	// smaller overall violation wins; (3) two feasible points compare by
	// Pareto dominance. +Inf violation (a failed evaluation) is our
	// convention for "worse than any measured violation"; the failed
	// points here carry nil objectives, which must never be read.
	good, bad := []float64{1, 1}, []float64{5, 5}
	cases := []struct {
		name   string
		a      []float64
		va     float64
		b      []float64
		vb     float64
		want   bool
		wantBA bool
	}{
		{"both feasible, a dominates", good, 0, bad, 0, true, false},
		{"both feasible, trade-off", []float64{1, 5}, 0, []float64{5, 1}, 0, false, false},
		{"feasible beats infeasible with better objectives", bad, 0, good, 0.1, true, false},
		{"smaller violation wins whatever the objectives", bad, 0.1, good, 0.2, true, false},
		{"equal violations: neither, even if objectives dominate", good, 0.3, bad, 0.3, false, false},
		{"feasible beats failed", bad, 0, nil, inf, true, false},
		{"infeasible beats failed", bad, 7, nil, inf, true, false},
		{"two failed: neither", nil, inf, nil, inf, false, false},
		{"NaN violation counts as failed", nil, math.NaN(), bad, 1e9, false, true},
		{"negative violation counts as feasible", good, -1, bad, 0, true, false},
	}
	for _, c := range cases {
		if got := ConstrainedDominates(c.a, c.va, c.b, c.vb); got != c.want {
			t.Errorf("%s: ConstrainedDominates(a, b) = %v, want %v", c.name, got, c.want)
		}
		if got := ConstrainedDominates(c.b, c.vb, c.a, c.va); got != c.wantBA {
			t.Errorf("%s: ConstrainedDominates(b, a) = %v, want %v", c.name, got, c.wantBA)
		}
	}
}

func TestNonDominatedSortHandWorked(t *testing.T) {
	inf := math.Inf(1)
	cases := []struct {
		name string
		objs [][]float64
		viol []float64
		want [][]int
	}{
		{
			// Source: Deb et al. 2002, §III-A, worked by hand. Point 6
			// duplicates point 1.
			//   0 (1,5) dominates 5 (4,5), 7 (5,5)
			//   1 (2,3) dominates 3 (3,4), 5, 7      6 (2,3) the same
			//   2 (4,1) dominates 4 (5,2), 5, 7
			//   3 (3,4) dominates 5, 7;  4 (5,2) dominates 7;  5 dominates 7
			// Domination counts n_p: 0,1,2,6 → 0; 3 → 2 (1, 6); 4 → 1 (2);
			// 5 → 5 (0, 1, 2, 3, 6); 7 → 7.
			// F1 = {0,1,2,6}. Discounting F1: n_3 = 0, n_4 = 0, n_5 = 1,
			// n_7 = 3, so F2 = {3,4}. Then n_5 = 0, n_7 = 1: F3 = {5}, F4 = {7}.
			name: "two objectives with a duplicate",
			objs: [][]float64{{1, 5}, {2, 3}, {4, 1}, {3, 4}, {5, 2}, {4, 5}, {2, 3}, {5, 5}},
			want: [][]int{{0, 1, 2, 6}, {3, 4}, {5}, {7}},
		},
		{
			// Source: Deb et al. 2002, §VI, worked by hand.
			// Feasible: 1 (5,5), 2 (4,6), 7 (6,6). 1 and 2 trade off; 7 is
			// dominated by both: F1 = {1,2}, F2 = {7}.
			// Infeasible, by violation: 3 (0.2) → F3 = {3}, although its
			// objectives (0,0) beat every feasible point; 0 and 5 (0.5 each)
			// do not dominate each other, although (1,1) dominates (3,3):
			// F4 = {0,5}. Failed 4 and 6 (nil objectives, +Inf): F5 = {4,6}.
			name: "feasible, infeasible and failed",
			objs: [][]float64{{1, 1}, {5, 5}, {4, 6}, {0, 0}, nil, {3, 3}, nil, {6, 6}},
			viol: []float64{0.5, 0, 0, 0.2, inf, 0.5, inf, 0},
			want: [][]int{{1, 2}, {7}, {3}, {0, 5}, {4, 6}},
		},
		{
			// Source: Deb et al. 2002, §III-A. Equal points dominate none of
			// each other: a single front.
			name: "all equal",
			objs: [][]float64{{2, 2, 2}, {2, 2, 2}, {2, 2, 2}},
			want: [][]int{{0, 1, 2}},
		},
		{
			// Source: Deb et al. 2002, §III-A. A chain in three objectives:
			// 3 (1,2,1) dominates 1 (2,2,1), which dominates 2 (2,3,1), which
			// dominates 0 (3,3,3); one point per front.
			name: "chain in three objectives",
			objs: [][]float64{{3, 3, 3}, {2, 2, 1}, {2, 3, 1}, {1, 2, 1}},
			want: [][]int{{3}, {1}, {2}, {0}},
		},
		{
			// Source: Deb et al. 2002, §VI. All infeasible, the violations
			// alone order them; ties share a front.
			name: "only infeasible",
			objs: [][]float64{{1}, {2}, {3}, {4}},
			viol: []float64{0.3, 0.1, 0.3, 0.2},
			want: [][]int{{1}, {3}, {0, 2}},
		},
		{
			name: "one point", // Source: Deb et al. 2002, §III-A.
			objs: [][]float64{{1, 2}},
			want: [][]int{{0}},
		},
	}
	for _, c := range cases {
		got := NonDominatedSort(c.objs, c.viol)
		if !slices.EqualFunc(got, c.want, slices.Equal[[]int]) {
			t.Errorf("%s: NonDominatedSort = %v, want %v", c.name, got, c.want)
		}
	}
	if got := NonDominatedSort(nil, nil); len(got) != 0 {
		t.Errorf("NonDominatedSort(nil) = %v, want no fronts", got) // common practice, no source
	}
}

// randomPopulation draws n points with m objectives on a coarse integer
// grid (so that ties and duplicates occur), about 20 % infeasible with
// violations from a small set (ties again) and 10 % failed (nil
// objectives, +Inf violation).
func randomPopulation(rng *rand.Rand, n, m int) ([][]float64, []float64) {
	inf := math.Inf(1)
	objs := make([][]float64, n)
	viol := make([]float64, n)
	for i := range objs {
		switch r := rng.Float64(); {
		case r < 0.1:
			viol[i] = inf
			continue
		case r < 0.3:
			viol[i] = float64(1+rng.IntN(3)) / 10
		}
		objs[i] = make([]float64, m)
		for k := range objs[i] {
			objs[i][k] = float64(rng.IntN(8))
		}
	}
	return objs, viol
}

// naiveFronts is the first, O(M·N³), procedure of Deb et al. 2002,
// §III-A: find the points no remaining point dominates, remove them as a
// front, repeat.
func naiveFronts(objs [][]float64, viol []float64) [][]int {
	left := make([]int, len(objs))
	for i := range left {
		left[i] = i
	}
	var fronts [][]int
	for len(left) > 0 {
		var front, rest []int
		for _, p := range left {
			dominated := false
			for _, q := range left {
				if ConstrainedDominates(objs[q], viol[q], objs[p], viol[p]) {
					dominated = true
					break
				}
			}
			if dominated {
				rest = append(rest, p)
			} else {
				front = append(front, p)
			}
		}
		if len(front) == 0 {
			panic("naiveFronts: every remaining point is dominated; the relation has a cycle")
		}
		fronts = append(fronts, front)
		left = rest
	}
	return fronts
}

func TestNonDominatedSortProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(2002, 6))
	for trial := range 40 {
		n, m := 1+rng.IntN(120), 1+rng.IntN(4)
		objs, viol := randomPopulation(rng, n, m)
		fronts := NonDominatedSort(objs, viol)
		name := fmt.Sprintf("trial %d (n=%d, m=%d)", trial, n, m)

		// The fronts partition the set, each ascending.
		// Source: Deb et al. 2002, §III-A (every point gets one rank);
		// ascending order is this package's contract.
		seen := make([]int, n)
		for _, f := range fronts {
			if len(f) == 0 || !slices.IsSorted(f) {
				t.Errorf("%s: front %v empty or not ascending", name, f)
			}
			for _, i := range f {
				seen[i]++
			}
		}
		for i, s := range seen {
			if s != 1 {
				t.Errorf("%s: point %d appears in %d fronts", name, i, s)
			}
		}
		for k, f := range fronts {
			// No member of a front dominates another member of it.
			// Source: Deb et al. 2002, §III-A.
			for _, p := range f {
				for _, q := range f {
					if ConstrainedDominates(objs[p], viol[p], objs[q], viol[q]) {
						t.Errorf("%s: in front %d, %d dominates %d", name, k, p, q)
					}
				}
			}
			// Every member of front k > 0 is dominated by a member of
			// front k−1. Source: Deb et al. 2002, §III-A.
			if k == 0 {
				continue
			}
			for _, q := range f {
				if !slices.ContainsFunc(fronts[k-1], func(p int) bool {
					return ConstrainedDominates(objs[p], viol[p], objs[q], viol[q])
				}) {
					t.Errorf("%s: %d in front %d is dominated by no member of front %d", name, q, k, k-1)
				}
			}
		}
		// The same fronts as the naive procedure.
		// Source: Deb et al. 2002, §III-A (both procedures give the same
		// fronts; only their cost differs).
		if want := naiveFronts(objs, viol); !slices.EqualFunc(fronts, want, slices.Equal[[]int]) {
			t.Errorf("%s: fast sort %v, naive procedure %v", name, fronts, want)
		}
	}
}

func TestNonDominatedSortNilViolations(t *testing.T) {
	// Source: this package's contract: nil violations mean all feasible,
	// the same as a slice of zeros.
	rng := rand.New(rand.NewPCG(7, 7))
	objs := make([][]float64, 60)
	for i := range objs {
		objs[i] = []float64{float64(rng.IntN(10)), float64(rng.IntN(10))}
	}
	a := NonDominatedSort(objs, nil)
	b := NonDominatedSort(objs, make([]float64, len(objs)))
	if !slices.EqualFunc(a, b, slices.Equal[[]int]) {
		t.Errorf("nil violations give %v, zeros give %v", a, b)
	}
}

func TestCrowdingDistanceHandWorked(t *testing.T) {
	inf := math.Inf(1)
	third := 1.0 / 3
	cases := []struct {
		name  string
		objs  [][]float64
		front []int
		want  []float64
	}{
		{
			// Source: Deb et al. 2002, §III-B, worked by hand on the first
			// front of the first sorting example: 0 (1,5), 1 (2,3), 2 (4,1),
			// 6 (2,3), with 1 and 6 tied, ordered by index.
			// f1: order 0,1,6,2; range 3; 0 and 2 boundaries (∞);
			//     1 gets (2−1)/3 = 1/3, 6 gets (4−2)/3 = 2/3.
			// f2: order 2,1,6,0; range 4; 2 and 0 boundaries (∞);
			//     1 gets (3−1)/4 = 1/2, 6 gets (5−3)/4 = 1/2.
			// Totals in the order of front [0 1 2 6]: ∞, 5/6, ∞, 7/6.
			name:  "ties broken by index",
			objs:  [][]float64{{1, 5}, {2, 3}, {4, 1}, {3, 4}, {5, 2}, {4, 5}, {2, 3}, {5, 5}},
			front: []int{0, 1, 2, 6},
			want:  []float64{inf, 1.0/3 + 0.5, inf, 2.0/3 + 0.5},
		},
		{
			// Source: Deb et al. 2002, §III-B, worked by hand; the third
			// objective has zero range and contributes nothing (the paper's
			// formula would divide by zero).
			// f1: 0,1,3,4 (range 4): member 1 gets (3−0)/4, member 2 (4−1)/4.
			// f2: 4,2,1,0 (range 4), ascending order 3,2,1,0: member 2 gets
			//     (2−0)/4, member 1 gets (4−1)/4.
			// Totals: ∞, 3/4+3/4, 3/4+1/2, ∞.
			name:  "zero-range objective",
			objs:  [][]float64{{0, 4, 7}, {1, 2, 7}, {3, 1, 7}, {4, 0, 7}},
			front: []int{0, 1, 2, 3},
			want:  []float64{inf, 1.5, 1.25, inf},
		},
		{
			// Source: Deb et al. 2002, §III-B; the result follows the order
			// of front, here reversed and a subset of objs.
			// f1 on members 3 (3), 1 (1), 0 (0): order 0,1,3, range 3,
			// member 1 gets (3−0)/3 = 1. f2: 0 (4), 1 (2), 3 (0): order
			// 3,1,0, range 4, member 1 gets (4−0)/4 = 1. Total 2.
			name:  "order of front kept",
			objs:  [][]float64{{0, 4}, {1, 2}, {9, 9}, {3, 0}},
			front: []int{3, 1, 0},
			want:  []float64{inf, 2, inf},
		},
		{
			// Source: Deb et al. 2002, §III-B. Four evenly spaced points on
			// f2 = 3 − f1: in each objective the range is 3 and an interior
			// point's neighbours are 2 apart, 2/3 + 2/3 = 4/3.
			name:  "evenly spaced",
			objs:  [][]float64{{0, 3}, {1, 2}, {2, 1}, {3, 0}},
			front: []int{0, 1, 2, 3},
			want:  []float64{inf, 4 * third, 4 * third, inf},
		},
		{
			// Source: Deb et al. 2002, §III-B: two distinct points are both
			// boundaries.
			name:  "two points",
			objs:  [][]float64{{0, 1}, {1, 0}},
			front: []int{1, 0},
			want:  []float64{inf, inf},
		},
		{
			// Source: this package's contract (zero range contributes
			// nothing): one point, or copies of one point.
			name:  "single point",
			objs:  [][]float64{{0.5, 0.5}},
			front: []int{0},
			want:  []float64{0},
		},
		{
			name:  "copies of one point", // this package's contract
			objs:  [][]float64{{1, 2}, {1, 2}, {1, 2}},
			front: []int{0, 1, 2},
			want:  []float64{0, 0, 0},
		},
		{
			// Source: this package's contract: points that could not be
			// evaluated (nil objectives) take no part and get zero.
			name:  "failed points",
			objs:  [][]float64{nil, nil},
			front: []int{0, 1},
			want:  []float64{0, 0},
		},
		{
			name:  "empty front", // common practice, no source
			objs:  [][]float64{{1}},
			front: nil,
			want:  []float64{},
		},
	}
	for _, c := range cases {
		got := CrowdingDistance(c.objs, c.front)
		if len(got) != len(c.want) {
			t.Errorf("%s: %d distances, want %d", c.name, len(got), len(c.want))
			continue
		}
		for k := range got {
			if !(got[k] == c.want[k] || math.Abs(got[k]-c.want[k]) < 1e-14) {
				t.Errorf("%s: distance %d = %v, want %v", c.name, k, got[k], c.want[k])
			}
		}
	}
}

func TestCrowdingDistanceProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 2002))
	for trial := range 30 {
		n, m := 3+rng.IntN(60), 1+rng.IntN(4)
		objs := make([][]float64, n)
		for i := range objs {
			objs[i] = make([]float64, m)
			for k := range objs[i] {
				objs[i][k] = float64(rng.IntN(6)) // coarse: many ties
			}
		}
		front := rng.Perm(n)[:2+rng.IntN(n-1)]
		got := CrowdingDistance(objs, front)

		// Distances follow the members, whatever the order of front.
		// Source: this package's contract (ties ordered by index).
		shuffled := slices.Clone(front)
		rng.Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
		again := CrowdingDistance(objs, shuffled)
		byIndex := map[int]float64{}
		for k, i := range front {
			byIndex[i] = got[k]
		}
		for k, i := range shuffled {
			if again[k] != byIndex[i] {
				t.Errorf("trial %d: member %d gets %v in one order, %v in another", trial, i, byIndex[i], again[k])
			}
		}

		// Each finite distance is at most 1 per objective (the neighbours'
		// gap is at most the range); the members first and last in an
		// objective's order (minimum with the smallest index, maximum with
		// the largest) are +Inf. Source: Deb et al. 2002, §III-B.
		for j := range m {
			lo, hi := -1, -1
			for _, i := range front {
				v := objs[i][j]
				if lo < 0 || v < objs[lo][j] || (v == objs[lo][j] && i < lo) {
					lo = i
				}
				if hi < 0 || v > objs[hi][j] || (v == objs[hi][j] && i > hi) {
					hi = i
				}
			}
			if objs[hi][j] == objs[lo][j] {
				continue
			}
			if !math.IsInf(byIndex[lo], 1) || !math.IsInf(byIndex[hi], 1) {
				t.Errorf("trial %d: objective %d: minimum %d gets %v, maximum %d gets %v, want +Inf", trial, j, lo, byIndex[lo], hi, byIndex[hi])
			}
		}
		for k, d := range got {
			if d < 0 || (!math.IsInf(d, 1) && d > float64(m)+1e-12) {
				t.Errorf("trial %d: distance %d = %v outside [0, m]", trial, k, d)
			}
		}
	}
}

func TestCrowdedLess(t *testing.T) {
	inf := math.Inf(1)
	// Source: Deb et al. 2002, §III-B, crowded comparison operator: lower
	// rank wins; in the same rank, the larger crowding distance wins.
	cases := []struct {
		ra     int
		ca     float64
		rb     int
		cb     float64
		want   bool
		reason string
	}{
		{0, 0, 1, inf, true, "lower rank wins whatever the distance"},
		{2, inf, 1, 0, false, "higher rank loses whatever the distance"},
		{1, 0.7, 1, 0.3, true, "same rank, larger distance wins"},
		{1, 0.3, 1, 0.7, false, "same rank, smaller distance loses"},
		{1, 0.5, 1, 0.5, false, "equal: neither"},
		{0, inf, 0, inf, false, "two boundaries: neither"},
		{0, inf, 0, 1e300, true, "boundary beats any finite distance"},
	}
	for _, c := range cases {
		if got := CrowdedLess(c.ra, c.ca, c.rb, c.cb); got != c.want {
			t.Errorf("%s: CrowdedLess(%d, %v, %d, %v) = %v", c.reason, c.ra, c.ca, c.rb, c.cb, got)
		}
	}
}

func BenchmarkNonDominatedSort(b *testing.B) {
	rng := rand.New(rand.NewPCG(200, 3))
	const n = 200
	objs := make([][]float64, n)
	viol := make([]float64, n)
	for i := range objs {
		objs[i] = []float64{rng.Float64(), rng.Float64(), rng.Float64()}
		if rng.Float64() < 0.2 {
			viol[i] = rng.Float64()
		}
	}
	b.ReportAllocs()
	for b.Loop() {
		NonDominatedSort(objs, viol)
	}
}

func BenchmarkCrowdingDistance(b *testing.B) {
	rng := rand.New(rand.NewPCG(200, 4))
	const n = 200
	objs := make([][]float64, n)
	front := make([]int, n)
	for i := range objs {
		objs[i] = []float64{rng.Float64(), rng.Float64(), rng.Float64()}
		front[i] = i
	}
	b.ReportAllocs()
	for b.Loop() {
		CrowdingDistance(objs, front)
	}
}

func ExampleNonDominatedSort() {
	objs := [][]float64{{1, 5}, {2, 3}, {3, 4}, {4, 1}, {0, 0}, nil}
	viol := []float64{0, 0, 0, 0, 0.5, math.Inf(1)} // point 4 misses a target, 5 failed
	fmt.Println(NonDominatedSort(objs, viol))
	// Output: [[0 1 3] [2] [4] [5]]
}

func ExampleCrowdingDistance() {
	objs := [][]float64{{0, 3}, {1, 2}, {2.5, 0.5}, {3, 0}}
	fmt.Printf("%.3f\n", CrowdingDistance(objs, []int{0, 1, 2, 3}))
	// Output: [+Inf 1.667 1.333 +Inf]
}

func ExampleCrowdedLess() {
	fmt.Println(CrowdedLess(0, 0.1, 1, math.Inf(1)), CrowdedLess(1, 0.2, 1, 0.9))
	// Output: true false
}

func ExampleDominates() {
	fmt.Println(Dominates([]float64{1, 2}, []float64{1, 3}), Dominates([]float64{1, 3}, []float64{2, 2}))
	// Output: true false
}

func ExampleConstrainedDominates() {
	// A feasible point beats an infeasible one with better objectives.
	fmt.Println(ConstrainedDominates([]float64{5, 5}, 0, []float64{1, 1}, 0.1))
	// Output: true
}
