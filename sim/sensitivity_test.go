package sim

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"pairsmith/sim/device"
)

// TestLUTransposeAgainstGonum: luSolveT solves Aᵀ·x = b from luFactor's
// factors as gonum's mat.Dense.Solve does on the transposed matrix
// (reference library), to 1e-10 relative on random well-conditioned
// systems of 1 to 12 unknowns, within a leading block of a wider array.
func TestLUTransposeAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 3))
	for n := 1; n <= 12; n++ {
		for trial := 0; trial < 20; trial++ {
			a, b := randomSystem(rng, n, trial%4 == 0)
			ld := n + 2
			work := make([]float64, n*ld)
			for i := 0; i < n; i++ {
				copy(work[i*ld:i*ld+n], a[i*n:(i+1)*n])
			}
			piv := make([]int, n)
			if !luFactor(work, n, ld, piv) {
				t.Fatalf("n=%d: singular", n)
			}
			x := append([]float64(nil), b...)
			luSolveT(work, n, ld, piv, x)
			var want mat.VecDense
			if err := want.SolveVec(mat.NewDense(n, n, append([]float64(nil), a...)).T(), mat.NewVecDense(n, append([]float64(nil), b...))); err != nil {
				t.Fatal(err)
			}
			for i := range x {
				if w := want.AtVec(i); math.Abs(x[i]-w) > 1e-10*math.Max(1, math.Abs(w)) {
					t.Fatalf("n=%d trial %d: x[%d] = %g, gonum %g", n, trial, i, x[i], w)
				}
			}
		}
	}
}

// TestSensitivitiesAgainstInjection: the adjoint sensitivities of every
// probe to a current added to each transistor's channel equal the change
// the same current makes when it is a real source across the channel
// (drain to source) and the circuit is solved again, as a central
// difference of ±10 fA (small beside every current of the stage, even a pair nearly off), to 1e-5 of the largest sensitivity (our own
// bound, no source: the difference's truncation error is far below it),
// on the nine-transistor rail-to-rail stage, level 1 and EKV, at three
// common modes across the handover.
func TestSensitivitiesAgainstInjection(t *testing.T) {
	// Tolerances far below the difference's step, so that what is
	// compared is the circuit's response, not the stopping rule.
	tight := Options{RelTol: 1e-13, VnTol: 1e-15, AbsTol: 1e-20}
	events := 0
	defer func() {
		if events == 0 {
			t.Error("no transistor checked")
		}
	}()
	for _, ekv := range []bool{false, true} {
		c := railStage(ekv, 1, 1)
		s, err := NewSolver(c, tight)
		if err != nil {
			t.Fatal(err)
		}
		sp := SweepSpec{Low: 0.5, High: 1.3, Step: 0.4}
		res := &Result{}
		if err := s.Sweep(sp, res); err != nil {
			t.Fatal(err)
		}
		probes := make([]int, len(c.Probes))
		out := make([][]float64, len(probes))
		for p := range probes {
			probes[p] = p
			out[p] = make([]float64, len(c.Mosfets))
		}
		evs := make([]device.Eval, len(c.Mosfets))
		for i := range res.VCM {
			if err := s.Sensitivities(res, i, probes, out, evs); err != nil {
				t.Fatal(err)
			}
			for k, m := range c.Mosfets {
				probe := func(delta float64) []float64 {
					cc := railStage(ekv, 1, 1)
					cc.AddISource("IDELTA", m.D, m.S, Const(delta), false)
					ss, err := NewSolver(cc, tight)
					if err != nil {
						t.Fatal(err)
					}
					pt, err := ss.Solve(res.VCM[i], 0)
					if err != nil {
						t.Fatal(err)
					}
					return pt.Probe
				}
				const h = 1e-14
				up, dn := probe(h), probe(-h)
				events++
				for p := range probes {
					scale := 0.0
					for _, x := range out[p] {
						scale = math.Max(scale, math.Abs(x))
					}
					fd := (up[p] - dn[p]) / (2 * h)
					if math.Abs(fd-out[p][k]) > 1e-5*math.Max(scale, 1) {
						t.Errorf("ekv %v, vcm %g, probe %s, %s: adjoint %g, injected %g", ekv, res.VCM[i], c.Probes[p].Name, m.Name, out[p][k], fd)
					}
				}
			}
		}
	}
}
