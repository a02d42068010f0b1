package sim

import (
	"math"
	"strings"
	"testing"
)

// TestSweepFrom: a sweep guided by another sweep of the same circuit at
// a coarser step gives the points a fresh sweep gives, within the
// solver's convergence tolerance (RelTol·|v| + VnTol on every unknown,
// defaults 1e-6 and 1e-7 V; its gm to the relative tolerance that moves:
// 1e-5, our own choice, no source), in fewer Newton iterations, for both
// models, taking the guide's own points where the two coincide; a guide of
// another circuit is refused.
func TestSweepFrom(t *testing.T) {
	for _, ekv := range []bool{false, true} {
		c := railStage(ekv, 1, 1)
		s, err := NewSolver(c, Options{})
		if err != nil {
			t.Fatal(err)
		}
		var coarse, fresh, warm Result
		if err := s.Sweep(SweepSpec{Low: 0, High: 1.8, Step: 0.05}, &coarse); err != nil {
			t.Fatal(err)
		}
		fine := SweepSpec{Low: 0, High: 1.8, Step: 0.01}
		it := s.Iterations()
		if err := s.Sweep(fine, &fresh); err != nil {
			t.Fatal(err)
		}
		itFresh := s.Iterations() - it
		it = s.Iterations()
		if err := s.SweepFrom(fine, &warm, &coarse); err != nil {
			t.Fatal(err)
		}
		itWarm := s.Iterations() - it
		t.Logf("ekv=%v: %d iterations fresh, %d guided", ekv, itFresh, itWarm)
		if itWarm >= itFresh {
			t.Errorf("ekv=%v: the guided sweep took %d Newton iterations, the fresh one %d: want fewer", ekv, itWarm, itFresh)
		}
		agree(t, ekv, "from a start", &warm, &fresh)
		// Where the two sweeps' points coincide (every fifth), the guided
		// sweep takes the guide's point as it is: gm, probes and operating
		// points bit for bit.
		taken, nm := 0, len(s.sys.mos)
		for i := 1; i < warm.Len(); i++ {
			for k := range coarse.Len() {
				if math.Abs(coarse.VCM[k]-warm.VCM[i]) > 1e-12 {
					continue
				}
				taken++
				if warm.GM[i] != coarse.GM[k] || warm.Probe[0][i] != coarse.Probe[0][k] || warm.Ops[i*nm].ID != coarse.Ops[k*nm].ID {
					t.Errorf("ekv=%v at vcm %g: gm %g, probe %g, ID %g guided; the guide's %g, %g, %g",
						ekv, warm.VCM[i], warm.GM[i], warm.Probe[0][i], warm.Ops[i*nm].ID, coarse.GM[k], coarse.Probe[0][k], coarse.Ops[k*nm].ID)
				}
			}
		}
		if taken < coarse.Len()-2 {
			t.Errorf("ekv=%v: %d points coincide with the guide's, want %d", ekv, taken, coarse.Len()-1)
		}
		// The start is a converged solution at the first point: the first
		// point costs one iteration, not a fresh solve's dozens.
		it = s.Iterations()
		if err := s.SweepFrom(SweepSpec{Low: 0, High: 0, Step: 0.01}, &warm, &coarse); err != nil {
			t.Fatal(err)
		}
		if n := s.Iterations() - it; n != 1 {
			t.Errorf("ekv=%v: the first point from a converged start took %d iterations, want 1", ekv, n)
		}
		other := coarse
		other.Unknowns--
		if err := s.SweepFrom(fine, &warm, &other); err == nil || !strings.Contains(err.Error(), "want") {
			t.Errorf("ekv=%v: a guide of another circuit gave %v, want an error saying what is wanted", ekv, err)
		}
	}
}

// TestSweepStart: a sweep whose first point starts from another sizing's
// solution (a reference of the same shape) gives the fresh sweep's points
// within twice the convergence tolerance and its gm within 1e-5 (as
// TestSweepFrom's bounds, our own), and reaches the first point in fewer
// Newton iterations than the fresh solve; a start of the wrong length is
// refused.
func TestSweepStart(t *testing.T) {
	for _, ekv := range []bool{false, true} {
		ref, err := NewSolver(railStage(ekv, 1, 1), Options{})
		if err != nil {
			t.Fatal(err)
		}
		first, err := ref.Solve(0, 0)
		if err != nil {
			t.Fatal(err)
		}
		start := first.V[:ref.Unknowns()]
		s, err := NewSolver(railStage(ekv, 1.6, 0.7), Options{})
		if err != nil {
			t.Fatal(err)
		}
		one := SweepSpec{Low: 0, High: 0, Step: 0.01}
		var fresh, warm Result
		it := s.Iterations()
		if err := s.Sweep(one, &fresh); err != nil {
			t.Fatal(err)
		}
		itFresh := s.Iterations() - it
		it = s.Iterations()
		if err := s.SweepStart(one, &warm, start); err != nil {
			t.Fatal(err)
		}
		if itWarm := s.Iterations() - it; itWarm >= itFresh {
			t.Errorf("ekv=%v: the first point took %d iterations from the reference, %d fresh: want fewer", ekv, itWarm, itFresh)
		}
		sp := SweepSpec{Low: 0, High: 1.8, Step: 0.01}
		if err := s.Sweep(sp, &fresh); err != nil {
			t.Fatal(err)
		}
		if err := s.SweepStart(sp, &warm, start); err != nil {
			t.Fatal(err)
		}
		agree(t, ekv, "from the reference", &warm, &fresh)
		if err := s.SweepStart(sp, &warm, start[1:]); err == nil {
			t.Errorf("ekv=%v: a start one unknown short was accepted", ekv)
		}
	}
}

// agree fails t unless every point of got is fresh's within twice the
// convergence tolerance on every unknown and 1e-5 on gm (the bounds of
// TestSweepFrom's comment).
func agree(t *testing.T, ekv bool, how string, got, fresh *Result) {
	t.Helper()
	if got.Len() != fresh.Len() {
		t.Fatalf("ekv=%v: %d points %s, %d fresh", ekv, got.Len(), how, fresh.Len())
	}
	for i := range fresh.VCM {
		for j := 0; j < fresh.Unknowns; j++ {
			a, b := got.X[i*got.Unknowns+j], fresh.X[i*fresh.Unknowns+j]
			if math.Abs(a-b) > 2*(1e-6*math.Max(math.Abs(a), math.Abs(b))+1e-7) {
				t.Fatalf("ekv=%v point %d unknown %d: %g %s, %g fresh", ekv, i, j, a, how, b)
			}
		}
		if g, h := got.GM[i], fresh.GM[i]; math.Abs(g-h) > 1e-5*math.Abs(h) {
			t.Fatalf("ekv=%v point %d: gm %g %s, %g fresh", ekv, i, g, how, h)
		}
	}
}

// TestLongSweepPredictor: a sweep of SplitPoints points or more predicts
// each point from the last three solutions alone (predictLagrange, no
// tangent solve); its steps are short enough that one Newton iteration a
// point remains the rule (at most 1.02 a point over the sweep, our bound,
// no source: one load a point is the floor), and its points agree with
// fresh solves within twice the solver's tolerance and gm within 1e-5 of
// itself — for both models, across the handover of the rail-to-rail stage.
func TestLongSweepPredictor(t *testing.T) {
	for _, ekv := range []bool{false, true} {
		s, err := NewSolver(railStage(ekv, 1, 1), Options{})
		if err != nil {
			t.Fatal(err)
		}
		sp := SweepSpec{Low: 0, High: 1.8, Step: 1.8 / (SplitPoints + 999)}
		var long Result
		it := s.Iterations()
		if err := s.SweepParallel(sp, &long, 2); err != nil {
			t.Fatal(err)
		}
		if len(long.Tangent) != 0 {
			t.Fatalf("ekv=%v: a sweep of %d points recorded tangents", ekv, long.Len())
		}
		per := float64(s.Iterations()-it) / float64(long.Len())
		t.Logf("ekv=%v: %.4f iterations a point", ekv, per)
		if per > 1.02 {
			t.Errorf("ekv=%v: %.4f Newton iterations a point over %d points, want at most 1.02", ekv, per, long.Len())
		}
		// Every 97th point against a fresh solve there.
		var got, fresh Result
		for i := 0; i < long.Len(); i += 97 {
			p, err := s.Solve(long.VCM[i], 0)
			if err != nil {
				t.Fatal(err)
			}
			got.VCM, got.GM = append(got.VCM, long.VCM[i]), append(got.GM, long.GM[i])
			got.X = append(got.X, long.X[i*long.Unknowns:(i+1)*long.Unknowns]...)
			fresh.VCM, fresh.GM = append(fresh.VCM, p.VCM), append(fresh.GM, p.GM)
			fresh.X = append(fresh.X, p.V[:long.Unknowns]...)
		}
		got.Unknowns, fresh.Unknowns = long.Unknowns, long.Unknowns
		agree(t, ekv, "in a long sweep", &got, &fresh)
	}
}
