package optimize

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// inclusionExclusion is the hypervolume by the inclusion–exclusion
// principle over every non-empty subset S of the points below ref: the
// union of the boxes [p, ref] measures Σ (−1)^(|S|+1) Π_k (ref_k − max_{p∈S} p_k),
// the intersection of boxes being the box at their componentwise maximum.
// Exponential in the number of points, but sharing nothing with the code
// under test. Source: the inclusion–exclusion principle (any text on
// measure or combinatorics).
func inclusionExclusion(points [][]float64, ref []float64) float64 {
	var in [][]float64
	for _, p := range points {
		if strictlyBelow(p, ref) {
			in = append(in, p)
		}
	}
	d := len(ref)
	corner := make([]float64, d)
	total := 0.0
	for mask := 1; mask < 1<<len(in); mask++ {
		for k := range corner {
			corner[k] = math.Inf(-1)
		}
		size := 0
		for i, p := range in {
			if mask&(1<<i) == 0 {
				continue
			}
			size++
			for k := range corner {
				corner[k] = max(corner[k], p[k])
			}
		}
		vol := 1.0
		for k := range corner {
			vol *= ref[k] - corner[k]
		}
		if size%2 == 1 {
			total += vol
		} else {
			total -= vol
		}
	}
	return total
}

// sphereFront draws n points on the unit sphere in the positive orthant
// of d dimensions: no two dominate each other (a ≤ b, a ≠ b would give
// |a| < |b|), the hardest case for the slicing.
func sphereFront(rng *rand.Rand, n, d int) [][]float64 {
	pts := make([][]float64, n)
	for i := range pts {
		p := make([]float64, d)
		norm := 0.0
		for k := range p {
			p[k] = math.Abs(rng.NormFloat64())
			norm += p[k] * p[k]
		}
		norm = math.Sqrt(norm)
		for k := range p {
			p[k] /= norm
		}
		pts[i] = p
	}
	return pts
}

func closeRel(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Max(1, math.Abs(want))
}

func TestHypervolumeOnePoint(t *testing.T) {
	// Source: the measure of a box is the product of its sides: one point
	// p dominates the box [p, ref], volume Π (ref_k − p_k).
	cases := []struct {
		p, ref []float64
		want   float64
	}{
		{[]float64{0.25}, []float64{1}, 0.75},
		{[]float64{0.2, 0.3}, []float64{1, 2}, 0.8 * 1.7},
		{[]float64{0.2, 0.3, 0.5}, []float64{1, 2, 3}, 0.8 * 1.7 * 2.5},
		{[]float64{0, 0, 0, 0}, []float64{1, 2, 3, 4}, 24},
		{[]float64{-1, 0, 0.5, 0.5, 0.9}, []float64{1, 1, 1, 1, 1}, 2 * 1 * 0.5 * 0.5 * 0.1},
	}
	for _, c := range cases {
		if got := Hypervolume([][]float64{c.p}, c.ref); !closeRel(got, c.want, 1e-15) {
			t.Errorf("Hypervolume(%v, ref %v) = %v, want %v", c.p, c.ref, got, c.want)
		}
	}
}

func TestHypervolumeHandWorked(t *testing.T) {
	cases := []struct {
		name   string
		points [][]float64
		ref    []float64
		want   float64
	}{
		{
			// Source: inclusion–exclusion by hand. Boxes against (4,4):
			// A (1,3): 3·1 = 3, B (2,2): 2·2 = 4, C (3,1): 1·3 = 3.
			// A∩B at (2,3): 2·1 = 2; A∩C at (3,3): 1; B∩C at (3,2): 1·2 = 2;
			// A∩B∩C at (3,3): 1. Union 3+4+3 − 2−1−2 + 1 = 6.
			name:   "three points, 2-D",
			points: [][]float64{{1, 3}, {2, 2}, {3, 1}},
			ref:    []float64{4, 4},
			want:   6,
		},
		{
			// Source: inclusion–exclusion by hand. Against (4,4,4):
			// a (1,2,2): 3·2·2 = 12, b (2,1,3): 2·3·1 = 6, a∩b at (2,2,3):
			// 2·2·1 = 4. Union 12 + 6 − 4 = 14.
			name:   "two points, 3-D",
			points: [][]float64{{1, 2, 2}, {2, 1, 3}},
			ref:    []float64{4, 4, 4},
			want:   14,
		},
		{
			// Source: inclusion–exclusion by hand. Against (3,3,4):
			// a (0,2,3): 3·1·1 = 3, b (1,0,2): 2·3·2 = 12, c (2,1,0): 1·2·4 = 8;
			// a∩b at (1,2,3): 2·1·1 = 2; a∩c at (2,2,3): 1·1·1 = 1;
			// b∩c at (2,1,2): 1·2·2 = 4; a∩b∩c at (2,2,3): 1.
			// Union 3+12+8 − 2−1−4 + 1 = 17.
			name:   "three points, 3-D",
			points: [][]float64{{0, 2, 3}, {1, 0, 2}, {2, 1, 0}},
			ref:    []float64{3, 3, 4},
			want:   17,
		},
		{
			// Source: inclusion–exclusion by hand; the symmetric case.
			// Against (4,4,4), each of (1,3,3), (3,1,3), (3,3,1) has 3·1·1 = 3,
			// every pair and the triple meet at (3,3,3): 1. 9 − 3 + 1 = 7.
			name:   "three symmetric points, 3-D",
			points: [][]float64{{1, 3, 3}, {3, 1, 3}, {3, 3, 1}},
			ref:    []float64{4, 4, 4},
			want:   7,
		},
		{
			// Source: this package's contract: points on or beyond ref in
			// any coordinate, or with a NaN, add nothing; duplicates and
			// dominated points add nothing. Only (0.5,0.5) counts: 0.25.
			name: "points that add nothing",
			points: [][]float64{
				{1, 0.5}, {0.5, 1}, {0.2, 3}, {math.NaN(), 0}, {0.5, 0.5}, {0.5, 0.5}, {0.7, 0.6},
			},
			ref:  []float64{1, 1},
			want: 0.25,
		},
		{
			// Source: this package's contract; the same in 3-D, only
			// (0.5,0.5,0.5) counts: 0.125.
			name: "points that add nothing, 3-D",
			points: [][]float64{
				{1, 0.5, 0.5}, {0.5, 0.5, 2}, {0.5, 0.5, 0.5}, {0.5, 0.5, 0.5}, {0.6, 0.5, 0.9},
			},
			ref:  []float64{1, 1, 1},
			want: 0.125,
		},
		{
			name: "no points", // common practice, no source
			ref:  []float64{1, 1, 1},
			want: 0,
		},
		{
			name:   "no dimensions", // this package's contract
			points: [][]float64{{}},
			ref:    []float64{},
			want:   0,
		},
	}
	for _, c := range cases {
		if got := Hypervolume(c.points, c.ref); !closeRel(got, c.want, 1e-15) {
			t.Errorf("%s: Hypervolume = %v, want %v", c.name, got, c.want)
		}
		// The general slicing, without the 2-D and 3-D paths, agrees.
		if len(c.ref) > 0 {
			got := Hypervolume(c.points, c.ref)
			var in [][]float64
			for _, p := range c.points {
				if strictlyBelow(p, c.ref) {
					in = append(in, p)
				}
			}
			if slow := hypervolume(in, c.ref, len(c.ref), false); !closeRel(slow, got, 1e-15) {
				t.Errorf("%s: general slicing %v, fast path %v", c.name, slow, got)
			}
		}
	}
}

func TestHypervolumeLinearFront(t *testing.T) {
	// The front f2 = 1 − f1 sampled at x_i = i·h, h = 1/(n−1), i = 0…n−1,
	// against (1,1). The end points lie on the reference box and add
	// nothing; sorted by f1, point i adds the strip of width
	// x_{i+1} − x_i = h and height 1 − y_i = x_i, so the staircase holds
	// Σ_{i=0}^{n−2} h·i·h = h²(n−1)(n−2)/2 = (n−2)/(2(n−1)), which tends to
	// the triangle's 1/2. Source: closed form derived here.
	for _, n := range []int{2, 3, 4, 10, 101, 1000} {
		h := 1 / float64(n-1)
		pts := make([][]float64, n)
		for i := range pts {
			pts[i] = []float64{float64(i) * h, 1 - float64(i)*h}
		}
		want := float64(n-2) / float64(2*(n-1))
		if got := Hypervolume(pts, []float64{1, 1}); !closeRel(got, want, 1e-12) {
			t.Errorf("n=%d: Hypervolume = %.15g, want %.15g", n, got, want)
		}
	}
}

func TestHypervolumeZDT1Front(t *testing.T) {
	// The exact front of ZDT1, f2 = 1 − √f1 on [0,1] (E. Zitzler, K. Deb,
	// L. Thiele, "Comparison of multiobjective evolutionary algorithms:
	// empirical results", Evolutionary Computation 8(2), 2000), dominates
	// ∫₀¹ √x dx = 2/3 of the box below (1,1).
	//
	// Sampled at x_i = i·h, h = 1/(n−1), the staircase is the left Riemann
	// sum Σ_{i=0}^{n−2} h·√x_i (strip i has width h and height
	// 1 − y_i = √x_i), so the error E = 2/3 − HV = Σ ∫_{x_i}^{x_{i+1}} (√x − √x_i) dx.
	// Upper bound: √x − √x_i ≤ √x_{i+1} − √x_i on the strip, so
	// E ≤ h·Σ(√x_{i+1} − √x_i) = h·(√1 − √0) = h.
	// Lower bound: √ is concave, so on each strip it lies above its chord
	// and ∫(√x − √x_i) ≥ h(√x_{i+1} − √x_i)/2, so E ≥ h/2.
	// Hence 2/3 − h ≤ HV ≤ 2/3 − h/2, approaching 2/3 from below.
	// Source: closed form and bounds derived here.
	rng := rand.New(rand.NewPCG(2000, 8))
	prev := 0.0
	for _, n := range []int{10, 100, 1000, 10000} {
		h := 1 / float64(n-1)
		pts := make([][]float64, n)
		riemann := 0.0
		for i := range pts {
			x := float64(i) * h
			pts[i] = []float64{x, 1 - math.Sqrt(x)}
			if i < n-1 {
				riemann += h * math.Sqrt(x)
			}
		}
		rng.Shuffle(n, func(i, j int) { pts[i], pts[j] = pts[j], pts[i] })
		got := Hypervolume(pts, []float64{1, 1})
		if e := 2.0/3 - got; e < h/2 || e > h {
			t.Errorf("n=%d: 2/3 − HV = %.3g, want in [h/2, h] = [%.3g, %.3g]", n, e, h/2, h)
		}
		if !closeRel(got, riemann, 1e-12) {
			t.Errorf("n=%d: Hypervolume = %.15g, left Riemann sum %.15g", n, got, riemann)
		}
		if got <= prev {
			t.Errorf("n=%d: Hypervolume %.15g not above the coarser sampling's %.15g", n, got, prev)
		}
		prev = got
	}
}

func TestHypervolumeAgainstInclusionExclusion(t *testing.T) {
	// Random small sets in 2 to 5 dimensions, some points dominated or
	// beyond ref, against the exponential inclusion–exclusion sum.
	// Source: the inclusion–exclusion principle (see inclusionExclusion).
	rng := rand.New(rand.NewPCG(11, 2006))
	for trial := range 60 {
		d := 2 + trial%4
		n := 1 + rng.IntN(11)
		pts := make([][]float64, n)
		for i := range pts {
			pts[i] = make([]float64, d)
			for k := range pts[i] {
				pts[i][k] = math.Round(rng.Float64()*12) / 10 // some ties, some ≥ ref
			}
		}
		ref := make([]float64, d) // unequal sides, so that coordinates cannot be mixed up
		for k := range ref {
			ref[k] = 0.8 + 0.1*float64(rng.IntN(5))
		}
		want := inclusionExclusion(pts, ref)
		if got := Hypervolume(pts, ref); !closeRel(got, want, 1e-12) {
			t.Errorf("trial %d (d=%d, n=%d): Hypervolume = %.15g, inclusion–exclusion %.15g", trial, d, n, got, want)
		}
	}
}

func TestHypervolumeMonteCarlo3D(t *testing.T) {
	// Random 3-D fronts on the unit sphere, against Monte Carlo in the box
	// [0,1]³ (volume V = 1), which holds every point and is bounded by ref
	// (1,1,1). With N uniform samples, the count K of samples dominated by
	// some point is Binomial(N, p), p = HV/V, if HV is right; the estimate
	// V·K/N then has standard deviation V·√(p(1−p)/N). We accept
	// |HV − V·K/N| ≤ 4·V·√(p(1−p)/N): a right HV fails with probability
	// about 6·10⁻⁵ (normal approximation, N·p(1−p) ≫ 1), and the seed is
	// fixed. Source: binomial distribution (any statistics text).
	rng := rand.New(rand.NewPCG(4, 4))
	const samples = 200_000
	ref := []float64{1, 1, 1}
	for _, n := range []int{5, 30, 150} {
		pts := sphereFront(rng, n, 3)
		hv := Hypervolume(pts, ref)
		hits := 0
		z := make([]float64, 3)
		for range samples {
			for k := range z {
				z[k] = rng.Float64()
			}
			if slices.ContainsFunc(pts, func(p []float64) bool { return weaklyDominates(p, z, 3) }) {
				hits++
			}
		}
		p := hv // V = 1
		if !(p > 0 && p < 1) {
			t.Fatalf("n=%d: hypervolume %v outside (0, 1), the test needs it inside", n, hv)
		}
		sd := math.Sqrt(p * (1 - p) / samples)
		est := float64(hits) / samples
		if math.Abs(hv-est) > 4*sd {
			t.Errorf("n=%d: Hypervolume %.5f, Monte Carlo %.5f ± %.5f (1 sd)", n, hv, est, sd)
		}
	}
}

func TestHypervolumeInvariance(t *testing.T) {
	// Source: the hypervolume is a measure of a union of boxes, so it
	// cannot depend on the order of the points, and a point dominated by
	// another (its box inside the other's) or a copy adds nothing.
	rng := rand.New(rand.NewPCG(5, 10))
	for _, d := range []int{2, 3, 4} {
		pts := sphereFront(rng, 60, d)
		ref := slices.Repeat([]float64{1.1}, d)
		want := Hypervolume(pts, ref)

		shuffled := slices.Clone(pts)
		rng.Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
		if got := Hypervolume(shuffled, ref); !closeRel(got, want, 1e-12) {
			t.Errorf("d=%d: permuted %.15g, original %.15g", d, got, want)
		}

		more := slices.Clone(shuffled)
		for _, p := range pts[:30] {
			q := slices.Clone(p)
			for k := range q {
				q[k] += rng.Float64() * 0.3 // dominated by p, perhaps beyond ref
			}
			more = append(more, q, slices.Clone(p))
		}
		rng.Shuffle(len(more), func(i, j int) { more[i], more[j] = more[j], more[i] })
		if got := Hypervolume(more, ref); !closeRel(got, want, 1e-12) {
			t.Errorf("d=%d: with dominated points and copies %.15g, without %.15g", d, got, want)
		}
	}
}

func TestHypervolumeFastPathsAgree(t *testing.T) {
	// The 2-D sort-and-sum and the 3-D staircase against the general
	// slicing recursion (While et al. 2006) run all the way down to one
	// dimension. Source: both compute the same measure exactly, so they
	// may differ only by rounding.
	rng := rand.New(rand.NewPCG(6, 6))
	for _, d := range []int{2, 3} {
		for _, n := range []int{1, 2, 17, 100} {
			pts := sphereFront(rng, n, d)
			for _, p := range pts[:n/2] { // a few dominated points and ties too
				q := slices.Clone(p)
				q[0] += 0.1
				pts = append(pts, q)
			}
			ref := []float64{1, 1.3, 1.1}[:d] // unequal sides
			fast := Hypervolume(pts, ref)
			var in [][]float64
			for _, p := range pts {
				if strictlyBelow(p, ref) {
					in = append(in, p)
				}
			}
			if slow := hypervolume(in, ref, d, false); !closeRel(fast, slow, 1e-12) {
				t.Errorf("d=%d, n=%d: fast path %.15g, general slicing %.15g", d, n, fast, slow)
			}
		}
	}
}

func TestNormalizedHypervolume(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	// Source: the map x → (x − ideal)/(ref − ideal) scales coordinate k by
	// 1/(ref_k − ideal_k), so volumes scale by Π 1/(ref_k − ideal_k).
	pts := sphereFront(rng, 40, 3)
	ideal := []float64{2, -1, 10}
	ref := []float64{5, 1, 14}
	scaled := make([][]float64, len(pts))
	for i, p := range pts {
		scaled[i] = []float64{ideal[0] + 3*p[0], ideal[1] + 2*p[1], ideal[2] + 4*p[2]}
	}
	want := Hypervolume(pts, []float64{1, 1, 1})
	if got := NormalizedHypervolume(scaled, ideal, ref); !closeRel(got, want, 1e-12) {
		t.Errorf("NormalizedHypervolume = %.15g, want %.15g", got, want)
	}
	if got, raw := NormalizedHypervolume(scaled, ideal, ref), Hypervolume(scaled, ref)/24; !closeRel(got, raw, 1e-12) {
		t.Errorf("NormalizedHypervolume = %.15g, Hypervolume/Π(ref − ideal) = %.15g", got, raw)
	}

	cases := []struct {
		name         string
		points       [][]float64
		ideal, ref   []float64
		want         float64
		wantNaN      bool
		sourceRemark string
	}{
		{"point at the ideal fills the box", [][]float64{{0, 0}}, []float64{0, 0}, []float64{2, 3}, 1, false, "this package's contract"},
		{"point below the ideal is clamped", [][]float64{{-5, 1}}, []float64{0, 0}, []float64{2, 2}, 0.5, false, "this package's contract"},
		{"ZDT1 end points add nothing", [][]float64{{0, 1}, {1, 0}}, []float64{0, 0}, []float64{1, 1}, 0, false, "Zitzler et al. 2000 front, this package's contract"},
		{"ref not above ideal", [][]float64{{0, 0}}, []float64{1, 0}, []float64{1, 1}, 0, true, "this package's contract"},
		{"lengths differ", [][]float64{{0, 0}}, []float64{0}, []float64{1, 1}, 0, true, "this package's contract"},
	}
	for _, c := range cases {
		got := NormalizedHypervolume(c.points, c.ideal, c.ref)
		if c.wantNaN != math.IsNaN(got) || (!c.wantNaN && !closeRel(got, c.want, 1e-15)) {
			t.Errorf("%s (%s): NormalizedHypervolume = %v, want %v (NaN %v)", c.name, c.sourceRemark, got, c.want, c.wantNaN)
		}
	}
}

func BenchmarkHypervolume3D(b *testing.B) {
	for _, n := range []int{100, 300} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			pts := sphereFront(rand.New(rand.NewPCG(uint64(n), 3)), n, 3)
			ref := []float64{1, 1, 1}
			b.ReportAllocs()
			for b.Loop() {
				Hypervolume(pts, ref)
			}
		})
	}
}

func BenchmarkHypervolume2D(b *testing.B) {
	pts := sphereFront(rand.New(rand.NewPCG(1000, 2)), 1000, 2)
	ref := []float64{1, 1}
	b.ReportAllocs()
	for b.Loop() {
		Hypervolume(pts, ref)
	}
}

func BenchmarkHypervolume4D(b *testing.B) {
	pts := sphereFront(rand.New(rand.NewPCG(100, 4)), 100, 4)
	ref := []float64{1, 1, 1, 1}
	b.ReportAllocs()
	for b.Loop() {
		Hypervolume(pts, ref)
	}
}

func ExampleHypervolume() {
	front := [][]float64{{1, 3}, {2, 2}, {3, 1}, {3, 3}} // (3,3) is dominated
	fmt.Println(Hypervolume(front, []float64{4, 4}))
	// Output: 6
}

func ExampleNormalizedHypervolume() {
	// Power in µW and area in µm², against ideal (0, 0) and ref (200, 3000).
	front := [][]float64{{50, 1500}, {100, 600}}
	fmt.Printf("%.3f\n", NormalizedHypervolume(front, []float64{0, 0}, []float64{200, 3000}))
	// Output: 0.525
}
