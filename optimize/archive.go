package optimize

import (
	"math"
	"slices"
	"sort"
)

// archive keeps, as evaluations arrive in any order, what a Result
// reports: the non-dominated set of the feasible candidates, the nearest
// infeasible ones, each family's best and the first feasible key. Every
// rule breaks ties by Key, so the archive after a set of evaluations is
// the same whatever order they arrived in — the same as sorting them all
// at the end, which it replaces: that all-pairs sort grew as N² (37 % of a
// 100 000-evaluation run and 600 MB), while an insertion here costs one
// pass over the current front.
type archive struct {
	// front holds the feasible candidates no other feasible one
	// dominates, one per objective vector (the smallest Key of those
	// with the same vector, bit for bit), in no particular order.
	front []Candidate
	// nearest holds the NearestKept nearest evaluated infeasible
	// candidates, by (nearer, Key): those without a hard violation first.
	nearest []Candidate
	// best holds each family's best candidate under better, ties to the
	// smaller Key.
	best []FamilyBest
	// firstFeasible is the smallest Key of a feasible candidate, valid
	// when anyFeasible.
	firstFeasible Key
	anyFeasible   bool
	scales        []float64
}

func newArchive(nfam int, scales []float64) *archive {
	a := &archive{best: make([]FamilyBest, nfam), scales: scales}
	for f := range a.best {
		a.best[f].Family = f
	}
	return a
}

// add takes one evaluation into the archive.
func (a *archive) add(c Candidate) {
	o := c.Outcome
	if o.Failed {
		return
	}
	fb := &a.best[c.Point.Family]
	if !fb.OK || Prefer(c, fb.Candidate, a.scales) {
		fb.Candidate, fb.OK = c, true
	}
	if !o.Feasible() {
		a.addNearest(c)
		return
	}
	if !a.anyFeasible || c.Key.less(a.firstFeasible) {
		a.firstFeasible, a.anyFeasible = c.Key, true
	}
	a.addFront(c)
}

// addNearest keeps c if it is among the NearestKept least violating.
func (a *archive) addNearest(c Candidate) {
	before := func(x Candidate) bool {
		return nearer(c.Outcome, x.Outcome) || (!nearer(x.Outcome, c.Outcome) && c.Key.less(x.Key))
	}
	i := len(a.nearest)
	for i > 0 && before(a.nearest[i-1]) {
		i--
	}
	if i >= NearestKept {
		return
	}
	a.nearest = slices.Insert(a.nearest, i, c)
	if len(a.nearest) > NearestKept {
		a.nearest = a.nearest[:NearestKept]
	}
}

// addFront inserts a feasible c into the non-dominated set: it is left
// out when a member dominates it (or has its objectives with a smaller
// Key) and removes the members it dominates.
func (a *archive) addFront(c Candidate) {
	obj := c.Outcome.Objectives
	kept := a.front[:0]
	for i, m := range a.front {
		if sameBits(m.Outcome.Objectives, obj) {
			if c.Key.less(m.Key) {
				a.front[i] = c // the same trade-off found earlier: keep that
			}
			return // nothing c dominates can be left, since m dominates it too
		}
		switch dominance(m.Outcome.Objectives, obj) {
		case -1:
			return // c is dominated; no member it dominates can exist either
		case 1:
			continue // m is dominated by c: drop it
		}
		kept = append(kept, m)
	}
	clear(a.front[len(kept):]) // let the dropped candidates go
	a.front = append(kept, c)
}

// sameBits reports whether two vectors are equal bit for bit.
func sameBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// sortedFront returns a copy of the front sorted by Score, ties by Key.
func (a *archive) sortedFront() []Candidate {
	front := slices.Clone(a.front)
	score := make(map[Key]float64, len(front))
	for _, c := range front {
		score[c.Key] = Score(c.Outcome.Objectives, a.scales, nil)
	}
	slices.SortFunc(front, func(x, y Candidate) int {
		sx, sy := score[x.Key], score[y.Key]
		switch {
		case sx < sy:
			return -1
		case sy < sx:
			return 1
		case x.Key.less(y.Key):
			return -1
		case y.Key.less(x.Key):
			return 1
		}
		return 0
	})
	return front
}

// result returns what the archive holds as a Result over all, the
// evaluations it was given in Key order.
func (a *archive) result(all []Candidate) *Result {
	res := &Result{All: all, Evaluations: len(all), Front: a.sortedFront(),
		Nearest: slices.Clone(a.nearest), BestOf: slices.Clone(a.best)}
	if a.anyFeasible {
		// The first feasible key's place in Key order.
		res.FirstFeasible = sort.Search(len(all), func(i int) bool { return !all[i].Key.less(a.firstFeasible) }) + 1
	}
	return res
}
