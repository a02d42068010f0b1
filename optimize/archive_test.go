package optimize

import (
	"math"
	"math/rand"
	"slices"
	"testing"
)

// batchResult is what the archive replaces: every evaluation sorted at
// the end — the first front of Deb et al. 2002's non-dominated sort over
// the feasible candidates in Key order (duplicate trade-offs keeping the
// first), the infeasible ones by violation (stable over Key order), and
// each family's first best in Key order.
func batchResult(all []Candidate, nfam int, scales []float64) (front, nearest []Candidate, best []FamilyBest, first int) {
	var feas, infeas []Candidate
	for i, c := range all {
		switch {
		case c.Outcome.Feasible():
			if first == 0 {
				first = i + 1
			}
			feas = append(feas, c)
		case !c.Outcome.Failed:
			infeas = append(infeas, c)
		}
	}
	objs := make([][]float64, len(feas))
	for i, c := range feas {
		objs[i] = c.Outcome.Objectives
	}
	if len(feas) > 0 {
		seen := map[string]bool{}
		for _, i := range NonDominatedSort(objs, nil)[0] {
			k := pointKey(feas[i].Outcome.Objectives)
			if !seen[k] {
				seen[k] = true
				front = append(front, feas[i])
			}
		}
		slices.SortStableFunc(front, func(a, b Candidate) int {
			sa, sb := Score(a.Outcome.Objectives, scales, nil), Score(b.Outcome.Objectives, scales, nil)
			switch {
			case sa < sb:
				return -1
			case sb < sa:
				return 1
			}
			return 0
		})
	}
	// Nearest misses: without a hard violation first, then by violation.
	slices.SortStableFunc(infeas, func(a, b Candidate) int {
		ha, hb := a.Outcome.Hard > 0, b.Outcome.Hard > 0
		if ha != hb {
			if hb {
				return -1
			}
			return 1
		}
		va, vb := a.Outcome.Violation(), b.Outcome.Violation()
		switch {
		case va < vb:
			return -1
		case vb < va:
			return 1
		}
		return 0
	})
	nearest = infeas[:min(len(infeas), NearestKept)]
	best = make([]FamilyBest, nfam)
	for f := range best {
		best[f].Family = f
	}
	for _, c := range all {
		fb := &best[c.Point.Family]
		if !c.Outcome.Failed && (!fb.OK || better(c.Outcome, fb.Candidate.Outcome, scales)) {
			fb.Candidate, fb.OK = c, true
		}
	}
	return front, nearest, best, first
}

func keysOf(cs []Candidate) []Key {
	ks := make([]Key, len(cs))
	for i, c := range cs {
		ks[i] = c.Key
	}
	return ks
}

// randomEvaluations makes n evaluations of nfam families with objectives
// on a coarse grid (so that duplicate trade-offs and ties occur), some
// infeasible with grid violations (some of them hard: Outcome.Hard) and
// some failed, in Key order.
func randomEvaluations(rng *rand.Rand, n, nfam, nobj int) []Candidate {
	all := make([]Candidate, n)
	for i := range all {
		o := Outcome{Objectives: make([]float64, nobj)}
		for k := range o.Objectives {
			o.Objectives[k] = float64(rng.Intn(12)) / 4
		}
		switch r := rng.Float64(); {
		case r < 0.1:
			o = Outcome{Failed: true}
		case r < 0.3:
			o.Violations = []float64{float64(rng.Intn(6)) / 2}
		case r < 0.5: // a hard violation beside a soft one
			o.Violations = []float64{float64(rng.Intn(3)) / 2, float64(1+rng.Intn(3)) / 4}
			o.Hard = o.Violations[1]
		}
		all[i] = Candidate{Key: Key{Phase: i / 97, Gen: i / 7 % 5, Island: i % 3, Slot: i}, Point: Point{Family: rng.Intn(nfam)}, Outcome: o}
	}
	slices.SortFunc(all, func(a, b Candidate) int {
		if a.Key.less(b.Key) {
			return -1
		}
		return 1
	})
	return all
}

// TestArchiveMatchesBatchSort checks the archive, fed the evaluations in
// random orders, against sorting them all at the end (Deb et al. 2002's
// fast non-dominated sort, which the archive replaces): the same front in
// the same order, the same nearest misses, family bests and first
// feasible evaluation — whatever the arrival order.
func TestArchiveMatchesBatchSort(t *testing.T) {
	rng := rand.New(rand.NewSource(3))
	scales := []float64{1, 2, 0.5}
	for trial := range 40 {
		nobj := 2 + trial%2
		all := randomEvaluations(rng, 50+rng.Intn(400), 4, nobj)
		front, nearest, best, first := batchResult(all, 4, scales[:nobj])
		for order := range 3 {
			arrive := slices.Clone(all)
			rng.Shuffle(len(arrive), func(i, j int) { arrive[i], arrive[j] = arrive[j], arrive[i] })
			a := newArchive(4, scales[:nobj])
			for _, c := range arrive {
				a.add(c)
			}
			res := a.result(all)
			if got, want := keysOf(res.Front), keysOf(front); !slices.Equal(got, want) {
				t.Fatalf("trial %d order %d: front %v, batch sort gives %v", trial, order, got, want)
			}
			if got, want := keysOf(res.Nearest), keysOf(nearest); !slices.Equal(got, want) {
				t.Fatalf("trial %d order %d: nearest %v, batch sort gives %v", trial, order, got, want)
			}
			for f := range best {
				if res.BestOf[f].OK != best[f].OK || res.BestOf[f].Candidate.Key != best[f].Candidate.Key {
					t.Fatalf("trial %d order %d: family %d best %+v, batch gives %+v", trial, order, f, res.BestOf[f], best[f])
				}
			}
			if res.FirstFeasible != first {
				t.Fatalf("trial %d order %d: first feasible %d, batch gives %d", trial, order, res.FirstFeasible, first)
			}
		}
	}
}

// TestArchiveFrontIsNonDominated checks the defining property directly on
// a continuous front: with the points of f2 = 1 − √f1 (ZDT1's front,
// Zitzler, Deb, Thiele 2000) mixed with dominated ones, the archive keeps
// exactly the front's points.
func TestArchiveFrontIsNonDominated(t *testing.T) {
	rng := rand.New(rand.NewSource(5))
	a := newArchive(1, []float64{1, 1})
	var onFront []float64
	for i := range 2000 {
		f1 := rng.Float64()
		f2 := 1 - math.Sqrt(f1)
		if i%3 != 0 && len(onFront) > 0 {
			// Above a point already on the front: dominated by it.
			f1 = onFront[rng.Intn(len(onFront))]
			f2 = 1 - math.Sqrt(f1) + 0.01 + rng.Float64()
		} else {
			onFront = append(onFront, f1)
		}
		a.add(Candidate{Key: Key{Slot: i}, Outcome: Outcome{Objectives: []float64{f1, f2}}})
	}
	want := len(onFront)
	if len(a.front) != want {
		t.Fatalf("front holds %d points, want the %d on f2 = 1 − √f1", len(a.front), want)
	}
	for _, c := range a.front {
		if o := c.Outcome.Objectives; o[1] != 1-math.Sqrt(o[0]) {
			t.Fatalf("front holds %v, off f2 = 1 − √f1", o)
		}
	}
}

// BenchmarkArchive measures the insertion of 100 000 evaluations of three
// objectives, a fifth of them on a front of growing size: the cost the
// final all-pairs sort used to have.
func BenchmarkArchive(b *testing.B) {
	rng := rand.New(rand.NewSource(1))
	cands := make([]Candidate, 100_000)
	for i := range cands {
		x, y := rng.Float64(), rng.Float64()
		z := 1 - x - y
		if i%5 != 0 {
			z += rng.Float64()
		}
		cands[i] = Candidate{Key: Key{Slot: i}, Outcome: Outcome{Objectives: []float64{x, y, z}}}
	}
	for b.Loop() {
		a := newArchive(1, []float64{1, 1, 1})
		for _, c := range cands {
			a.add(c)
		}
	}
}
