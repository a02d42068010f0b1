package optimize

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"sort"
)

// Hypervolume returns the Lebesgue measure of the region dominated by
// points and bounded above by ref, all objectives minimised: the volume of
// the union of the boxes [p, ref] over the points p. Points not strictly
// below ref in every coordinate contribute nothing (nor do points with a
// NaN coordinate); duplicates and dominated points may be present.
//
// The result is exact up to rounding in any dimension. Two objectives take
// a sort and a sum; three or more are sliced one objective at a time, the
// slicing-objectives principle of L. While, P. Hingston, L. Barone,
// S. Huband, "A faster algorithm for calculating hypervolume", IEEE Trans.
// Evol. Comput. 10(1), 2006: sorted on the last objective, the points cut
// the space into slabs, and the cross-section of each slab is the
// hypervolume, one dimension down, of the non-dominated projections of the
// points below it. The slabs only change where a point changes that
// non-dominated set, and in three dimensions the set is a staircase kept
// sorted, so N points take O(N²) time.
//
// Hypervolume panics if a point's length differs from len(ref) (a
// programming error). It returns 0 for an empty ref.
func Hypervolume(points [][]float64, ref []float64) float64 {
	d := len(ref)
	if d == 0 {
		return 0
	}
	in := make([][]float64, 0, len(points))
	for i, p := range points {
		if len(p) != d {
			panic(fmt.Sprintf("optimize: Hypervolume: point %d has %d coordinates, the reference point %d", i, len(p), d))
		}
		if strictlyBelow(p, ref) {
			in = append(in, p)
		}
	}
	return hypervolume(in, ref, d, true)
}

// NormalizedHypervolume maps every coordinate x of the points to
// (x − ideal)/(ref − ideal), clamping values below the ideal to 0, and
// returns the hypervolume of the images against (1, …, 1): the fraction of
// the box [ideal, ref] that the points dominate, in [0, 1]. It returns NaN
// when ideal and ref differ in length or ref is not above ideal in every
// coordinate, and panics, like [Hypervolume], on a point of the wrong
// length.
func NormalizedHypervolume(points [][]float64, ideal, ref []float64) float64 {
	d := len(ref)
	if len(ideal) != d {
		return math.NaN()
	}
	for k := range d {
		if !(ref[k] > ideal[k]) || math.IsInf(ref[k]-ideal[k], 0) {
			return math.NaN()
		}
	}
	return Hypervolume(normalize(points, ideal, ref), ones(d))
}

// normalize maps every coordinate x of the points to (x − ideal)/(ref −
// ideal), clamping values below the ideal to 0 (see NormalizedHypervolume,
// which checks ideal and ref).
func normalize(points [][]float64, ideal, ref []float64) [][]float64 {
	d := len(ref)
	flat := make([]float64, 0, d*len(points))
	scaled := make([][]float64, len(points))
	for i, p := range points {
		if len(p) != d {
			panic(fmt.Sprintf("optimize: NormalizedHypervolume: point %d has %d coordinates, the reference point %d", i, len(p), d))
		}
		start := len(flat)
		for k, x := range p {
			flat = append(flat, max((x-ideal[k])/(ref[k]-ideal[k]), 0))
		}
		scaled[i] = flat[start:len(flat):len(flat)]
	}
	return scaled
}

// ones returns the reference point (1, …, 1) of d coordinates.
func ones(d int) []float64 {
	one := make([]float64, d)
	for k := range one {
		one[k] = 1
	}
	return one
}

// addNonDominated adds p to a set of points none of which weakly
// dominates another in their first n coordinates, unless one of them
// weakly dominates p, and drops those p dominates; it reports whether p
// was added.
func addNonDominated(set [][]float64, p []float64, n int) ([][]float64, bool) {
	if slices.ContainsFunc(set, func(q []float64) bool { return weaklyDominates(q, p, n) }) {
		return set, false
	}
	set = slices.DeleteFunc(set, func(q []float64) bool { return weaklyDominates(p, q, n) })
	return append(set, p), true
}

// strictlyBelow reports whether p < ref in every coordinate.
func strictlyBelow(p, ref []float64) bool {
	for k, r := range ref {
		if !(p[k] < r) {
			return false
		}
	}
	return true
}

// hypervolume is the measure dominated by pts, using their first d
// coordinates, against ref[:d]. Every point must be strictly below ref in
// those coordinates. With fast set, two and three dimensions take their
// special paths; without it, everything goes through the general slicing
// (tests compare the two).
func hypervolume(pts [][]float64, ref []float64, d int, fast bool) float64 {
	switch {
	case len(pts) == 0:
		return 0
	case d == 1:
		lo := pts[0][0]
		for _, p := range pts[1:] {
			lo = min(lo, p[0])
		}
		return ref[0] - lo
	case fast && d == 2:
		return hypervolume2(pts, ref)
	case fast && d == 3:
		return hypervolume3(pts, ref)
	}
	return hypervolumeSlices(pts, ref, d, fast)
}

// compareFrom orders points by coordinate c, then lexicographically by
// the coordinates before it: a total order on the values, so the result
// does not depend on the order the points came in.
func compareFrom(c int) func(a, b []float64) int {
	return func(a, b []float64) int {
		if r := cmp.Compare(a[c], b[c]); r != 0 {
			return r
		}
		for k := range c {
			if r := cmp.Compare(a[k], b[k]); r != 0 {
				return r
			}
		}
		return 0
	}
}

// hypervolume2 sorts on the first objective and sums the horizontal
// strips of the staircase: each point that lowers the best second
// objective so far adds the strip between the old and the new best,
// reaching from the point to ref.
func hypervolume2(pts [][]float64, ref []float64) float64 {
	sorted := slices.Clone(pts)
	slices.SortFunc(sorted, func(a, b []float64) int {
		if r := cmp.Compare(a[0], b[0]); r != 0 {
			return r
		}
		return cmp.Compare(a[1], b[1])
	})
	vol, best := 0.0, ref[1]
	for _, p := range sorted {
		if p[1] < best {
			vol += (ref[0] - p[0]) * (best - p[1])
			best = p[1]
		}
	}
	return vol
}

// hypervolume3 slices on the third objective and keeps the non-dominated
// projections onto the first two as a staircase, x strictly increasing
// and y strictly decreasing, whose area is the cross-section.
func hypervolume3(pts [][]float64, ref []float64) float64 {
	sorted := slices.Clone(pts)
	slices.SortFunc(sorted, compareFrom(2))
	xs := make([]float64, 0, len(sorted))
	ys := make([]float64, 0, len(sorted))
	var vol, area float64
	lastZ := sorted[0][2]
	for _, p := range sorted {
		x, y, z := p[0], p[1], p[2]
		// xs[k-1] is the last step at or left of x and the lowest of
		// those; if it is no higher, p's projection is dominated.
		k := sort.Search(len(xs), func(i int) bool { return xs[i] > x })
		if k > 0 && ys[k-1] <= y {
			continue
		}
		vol += area * (z - lastZ)
		lastZ = z
		// p dominates a step at its own x and the steps to its right
		// that are no lower.
		start, end := k, k
		if k > 0 && xs[k-1] == x {
			start = k - 1
		}
		for end < len(xs) && ys[end] >= y {
			end++
		}
		xs = slices.Replace(xs, start, end, x)
		ys = slices.Replace(ys, start, end, y)
		area = 0
		for i, xi := range xs {
			next := ref[0]
			if i+1 < len(xs) {
				next = xs[i+1]
			}
			area += (next - xi) * (ref[1] - ys[i])
		}
	}
	return vol + area*(ref[2]-lastZ)
}

// hypervolumeSlices is the general slicing on coordinate d−1: a slab
// starts at each point that enters the non-dominated set of the
// projections onto the first d−1 coordinates, and its cross-section is
// that set's (d−1)-dimensional hypervolume.
func hypervolumeSlices(pts [][]float64, ref []float64, d int, fast bool) float64 {
	c := d - 1
	sorted := slices.Clone(pts)
	slices.SortFunc(sorted, compareFrom(c))
	front := make([][]float64, 0, len(sorted))
	var vol, area float64
	lastZ := sorted[0][c]
	for _, p := range sorted {
		var added bool
		if front, added = addNonDominated(front, p, c); !added {
			continue
		}
		vol += area * (p[c] - lastZ)
		lastZ = p[c]
		area = hypervolume(front, ref, c, fast)
	}
	return vol + area*(ref[c]-lastZ)
}

// weaklyDominates reports whether a ≤ b in the first n coordinates.
func weaklyDominates(a, b []float64, n int) bool {
	for k := range n {
		if !(a[k] <= b[k]) {
			return false
		}
	}
	return true
}
