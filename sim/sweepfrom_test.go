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
// models; a guide of another circuit is refused.
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
		if warm.Len() != fresh.Len() {
			t.Fatalf("ekv=%v: %d points from a start, %d fresh", ekv, warm.Len(), fresh.Len())
		}
		for i := range fresh.VCM {
			for j := 0; j < fresh.Unknowns; j++ {
				a, b := warm.X[i*warm.Unknowns+j], fresh.X[i*fresh.Unknowns+j]
				if math.Abs(a-b) > 2*(1e-6*math.Max(math.Abs(a), math.Abs(b))+1e-7) {
					t.Fatalf("ekv=%v point %d unknown %d: %g from a start, %g fresh", ekv, i, j, a, b)
				}
			}
			if g, h := warm.GM[i], fresh.GM[i]; math.Abs(g-h) > 1e-5*math.Abs(h) {
				t.Fatalf("ekv=%v point %d: gm %g from a start, %g fresh", ekv, i, g, h)
			}
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
