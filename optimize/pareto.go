package optimize

import (
	"cmp"
	"fmt"
	"math"
	"math/bits"
	"slices"
)

// This file ranks points with several minimised objectives, following
// K. Deb, A. Pratap, S. Agarwal, T. Meyarivan, "A fast and elitist
// multiobjective genetic algorithm: NSGA-II", IEEE Trans. Evol. Comput.
// 6(2), 182–197, 2002 (cited below as Deb et al. 2002): Pareto dominance,
// constrained dominance (§VI), the fast non-dominated sort (§III-A), the
// crowding distance and the crowded comparison (§III-B). Section numbers
// and pages are from memory.

// Dominates reports whether the objective vector a Pareto-dominates b
// under minimisation: a is no worse than b in every objective and
// strictly better in at least one (Deb et al. 2002).
//
// Vectors of different lengths are incomparable, and so is any pair with
// a NaN objective: Dominates returns false for them, either way round.
func Dominates(a, b []float64) bool { return dominance(a, b) < 0 }

// dominance compares a and b in one pass: −1 when a dominates b, +1 when
// b dominates a, 0 when neither does (equal, mutually non-dominated, of
// different lengths, or holding a NaN).
func dominance(a, b []float64) int {
	if len(a) != len(b) {
		return 0
	}
	aBetter, bBetter := false, false
	for i, x := range a {
		y := b[i]
		switch {
		case x < y:
			aBetter = true
		case y < x:
			bBetter = true
		case x != y: // a NaN on either side
			return 0
		}
		if aBetter && bBetter {
			return 0
		}
	}
	switch {
	case aBetter:
		return -1
	case bBetter:
		return 1
	}
	return 0
}

// cleanViolation maps a total constraint violation onto the values the
// feasibility rules compare: zero or less is feasible (0), NaN counts as
// a point that could not be evaluated (+Inf).
func cleanViolation(v float64) float64 {
	switch {
	case math.IsNaN(v):
		return math.Inf(1)
	case v <= 0:
		return 0
	}
	return v
}

// constrainedDominance is dominance under Deb's feasibility rules: −1
// when (a, va) constrained-dominates (b, vb), +1 the other way round, 0
// otherwise. Objectives are read only when both points are feasible.
func constrainedDominance(a []float64, va float64, b []float64, vb float64) int {
	va, vb = cleanViolation(va), cleanViolation(vb)
	switch {
	case va == 0 && vb == 0:
		return dominance(a, b)
	case va == 0:
		return -1
	case vb == 0:
		return 1
	case va < vb:
		return -1
	case vb < va:
		return 1
	}
	return 0
}

// ConstrainedDominates reports whether point a, with total constraint
// violation va, constrained-dominates point b, with violation vb (Deb et
// al. 2002, §VI): a feasible point beats an infeasible one; of two
// infeasible points the one with the smaller violation wins; two
// feasible points compare by [Dominates].
//
// A violation of zero (or less) means feasible; +Inf (or NaN) marks a
// point that could not be evaluated, which loses to every other point
// and ties with its kind. Objectives are read only when both points are
// feasible, so those of an infeasible point may be nil. Two infeasible
// points with equal violations do not dominate each other, whatever their
// objectives.
func ConstrainedDominates(a []float64, va float64, b []float64, vb float64) bool {
	return constrainedDominance(a, va, b, vb) < 0
}

// NonDominatedSort ranks points by the fast non-dominated sort of Deb et
// al. 2002 (§III-A) under constrained domination ([ConstrainedDominates]).
// objs[i] holds the minimised objectives of point i and viol[i] its total
// constraint violation; viol may be nil when every point is feasible, and
// objs[i] may be nil when viol[i] is +Inf.
//
// The result lists the fronts, the first (non-dominated) front first,
// each as ascending indices into objs; together they partition
// 0..len(objs)−1. Each pair of points is compared once, O(M·N²) for N
// points with M objectives, and the domination sets are kept as a bit
// matrix, N²/8 bytes.
//
// NonDominatedSort panics if viol is neither nil nor as long as objs (a
// programming error).
func NonDominatedSort(objs [][]float64, viol []float64) [][]int {
	n := len(objs)
	if n == 0 {
		return nil
	}
	if viol != nil && len(viol) != n {
		panic(fmt.Sprintf("optimize: NonDominatedSort: %d violations for %d points", len(viol), n))
	}
	violation := func(i int) float64 {
		if viol == nil {
			return 0
		}
		return viol[i]
	}

	// Row p of dom has bit q set when p dominates q (the set S_p of Deb
	// et al. 2002); count[q] is the number of points dominating q (n_q).
	words := (n + 63) / 64
	dom := make([]uint64, n*words)
	count := make([]int, n)
	for p := range n {
		vp := violation(p)
		for q := p + 1; q < n; q++ {
			switch constrainedDominance(objs[p], vp, objs[q], violation(q)) {
			case -1:
				dom[p*words+q/64] |= 1 << (q % 64)
				count[q]++
			case 1:
				dom[q*words+p/64] |= 1 << (p % 64)
				count[p]++
			}
		}
	}

	// Peel the fronts off. All of them share one backing array, which is
	// given its full capacity up front so that appending never moves it.
	order := make([]int, 0, n)
	for i, c := range count {
		if c == 0 {
			order = append(order, i)
		}
	}
	var fronts [][]int
	for start := 0; start < len(order); {
		end := len(order)
		fronts = append(fronts, order[start:end:end])
		for _, p := range order[start:end] {
			for w, set := range dom[p*words : (p+1)*words] {
				for set != 0 {
					q := w*64 + bits.TrailingZeros64(set)
					set &= set - 1
					count[q]--
					if count[q] == 0 {
						order = append(order, q)
					}
				}
			}
		}
		slices.Sort(order[end:])
		start = end
	}
	return fronts
}

// CrowdingDistance returns the crowding distance of each member of one
// front (Deb et al. 2002, §III-B), in the order of front, whose entries
// index objs. For each objective the members are sorted by its value; the
// two boundary members get +Inf and each other member adds the gap
// between its two neighbours divided by the objective's range on the
// front.
//
// An objective whose range on the front is zero (or not finite)
// contributes nothing, neither boundaries nor gaps, so a front of one
// point, or of copies of one point, has all distances zero. Equal values
// are ordered by index, which makes the result deterministic and
// independent of the order of front. Members whose objective vector is
// shorter than the longest in the front (nil for a point that could not
// be evaluated) take no part and get zero.
func CrowdingDistance(objs [][]float64, front []int) []float64 {
	dist := make([]float64, len(front))
	m := 0
	for _, i := range front {
		m = max(m, len(objs[i]))
	}
	// pos lists the positions in front of the members taking part.
	pos := make([]int, 0, len(front))
	for k, i := range front {
		if len(objs[i]) == m {
			pos = append(pos, k)
		}
	}
	if len(pos) == 0 {
		return dist
	}
	for j := range m {
		slices.SortFunc(pos, func(a, b int) int {
			if c := cmp.Compare(objs[front[a]][j], objs[front[b]][j]); c != 0 {
				return c
			}
			if c := cmp.Compare(front[a], front[b]); c != 0 {
				return c
			}
			return cmp.Compare(a, b)
		})
		first, last := pos[0], pos[len(pos)-1]
		span := objs[front[last]][j] - objs[front[first]][j]
		if !(span > 0) || math.IsInf(span, 1) {
			continue
		}
		dist[first] = math.Inf(1)
		dist[last] = math.Inf(1)
		for k := 1; k < len(pos)-1; k++ {
			dist[pos[k]] += (objs[front[pos[k+1]]][j] - objs[front[pos[k-1]]][j]) / span
		}
	}
	return dist
}

// CrowdedLess is the crowded comparison operator ≺n of Deb et al. 2002
// (§III-B): a point of rank rankA and crowding distance crowdA is better
// than one of rank rankB and distance crowdB when its rank is lower (its
// front comes earlier) or, in the same front, when its crowding distance
// is larger.
func CrowdedLess(rankA int, crowdA float64, rankB int, crowdB float64) bool {
	if rankA != rankB {
		return rankA < rankB
	}
	return crowdA > crowdB
}
