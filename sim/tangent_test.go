package sim

import (
	"math"
	"testing"
)

// TestTangent: the tangent a sweep computes at a point from the last
// factors equals the central difference of fresh solves at vcm ± 0.1 mV
// (whose own error is of order h², far below the bound), every moving
// unknown within 1e-4 of the largest tangent component plus 1e-9 (our
// own bound, no source), for both models at five points of the range.
func TestTangent(t *testing.T) {
	for _, ekv := range []bool{false, true} {
		s, err := NewSolver(railStage(ekv, 1, 1), Options{})
		if err != nil {
			t.Fatal(err)
		}
		const h = 1e-4
		for _, vcm := range []float64{0.1, 0.5, 0.9, 1.3, 1.7} {
			var res Result
			if err := s.Sweep(SweepSpec{Low: vcm - 0.002, High: vcm, Step: 0.001}, &res); err != nil {
				t.Fatal(err)
			}
			m := s.sys.nD
			got := append([]float64(nil), s.tan[0][:m]...)
			up, err := s.Solve(vcm+h, 0)
			if err != nil {
				t.Fatal(err)
			}
			upX := append([]float64(nil), up.V[:m]...)
			dn, err := s.Solve(vcm-h, 0)
			if err != nil {
				t.Fatal(err)
			}
			big := 0.0
			for _, x := range got {
				big = math.Max(big, math.Abs(x))
			}
			for j := range m {
				fd := (upX[j] - dn.V[j]) / (2 * h)
				if math.Abs(got[j]-fd) > 1e-4*big+1e-9 {
					t.Errorf("ekv %v, vcm %g, unknown %d: tangent %g, central difference %g", ekv, vcm, j, got[j], fd)
				}
			}
		}
	}
}

// TestPredictHermite: the predictor through k points with their tangents
// is exact for a polynomial of degree 2k − 1 (the Hermite interpolant's
// defining property; Burden and Faires, Numerical Analysis, §3.4), here
// with uneven steps, for k = 1, 2, 3 points behind and for three behind
// and a guide's point ahead (k = 4); within 1e-12 of the polynomial.
func TestPredictHermite(t *testing.T) {
	s, err := NewSolver(railStage(true, 1, 1), Options{})
	if err != nil {
		t.Fatal(err)
	}
	n, m := s.sys.n, s.sys.nD
	// p_j(v) = Σ_q c_q·(j+1)^q·v^q, degree 2k − 1.
	poly := func(j, deg int, v float64) (p, dp float64) {
		for q := deg; q >= 0; q-- {
			c := math.Pow(float64(j+1), float64(q)) / float64(q+1)
			dp = dp*v + p
			p = p*v + c
		}
		return p, dp
	}
	vs := []float64{0.1, 0.13, 0.14, 0.2} // the last is predicted
	const aheadVCM = 0.25
	for _, c := range []struct{ behind, k int }{{1, 1}, {2, 2}, {3, 3}, {3, 4}} {
		deg := 2*c.k - 1
		res := Result{VCM: vs[:3], X: make([]float64, 3*n), Unknowns: n}
		for a := range 3 {
			for j := range m {
				x, dx := poly(j, deg, vs[a])
				res.X[a*n+j] = x
				if back := 2 - a; back < c.behind {
					s.tan[back][j] = dx
				}
			}
		}
		var ahead *hermiteNode
		if c.k > c.behind {
			ahead = &hermiteNode{vcm: aheadVCM, x: make([]float64, m), t: make([]float64, m)}
			for j := range m {
				ahead.x[j], ahead.t[j] = poly(j, deg, aheadVCM)
			}
		}
		s.predictHermite(vs[3], &res, 3, c.behind, ahead)
		for j := range m {
			want, _ := poly(j, deg, vs[3])
			if math.Abs(s.v[j]-want) > 1e-12*math.Max(1, math.Abs(want)) {
				t.Errorf("k = %d (%d behind), unknown %d: predicted %.15g, the polynomial %.15g", c.k, c.behind, j, s.v[j], want)
			}
		}
	}
}
