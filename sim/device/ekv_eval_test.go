package device

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// ekvPaper returns ID of the EKV model written straight from the equations
// of Enz, Krummenacher and Vittoz (1995) as Instance's comment gives them,
// in the NMOS frame (bulk-referred xd, xg, xs), with math.Tanh and no term
// left out, and the forward and reverse terms.
func ekvPaper(c *EKV, g Geometry, tempK, xd, xg, xs float64) (id, iF, iR, is float64) {
	typ := float64(c.Polarity)
	ut := ThermalVoltage(tempK)
	vto := typ * (c.VTO - typ*c.TCV*(tempK-c.TnomK))
	beta := c.KP * math.Pow(tempK/c.TnomK, c.BEX) * g.Mult() * g.W / (g.L - 2*c.LD)
	vgp := xg - vto + c.Phi + c.Gamma*math.Sqrt(c.Phi)
	vp := vgp - c.Phi
	if c.Gamma > 0 {
		vp = -c.Phi
		if vgp > 0 {
			vp = vgp - c.Phi - c.Gamma*(math.Sqrt(vgp+c.Gamma*c.Gamma/4)-c.Gamma/2)
		}
	}
	n := 1.0 // no body effect, no slope factor above 1
	if c.Gamma > 0 {
		n += c.Gamma / (2 * math.Sqrt(vp+c.Phi+4*ut))
	}
	is = 2 * n * beta * ut * ut
	f := func(x float64) float64 { l := math.Log1p(math.Exp(x / 2)); return l * l }
	iF, iR = f((vp-xs)/ut), f((vp-xd)/ut)
	vds := xd - xs
	return is * (iF - iR) * (1 + c.Lambda*vds*math.Tanh(vds/(2*ut))), iF, iR, is
}

// TestEKVEvalAgainstPaper checks Eval's current against the model's
// equations written out directly (Enz, Krummenacher, Vittoz 1995): equal to
// rounding wherever both terms count, and within minorTerm (1e-9) of the
// larger term where Eval drops the smaller one, at random bias points of
// both polarities, with and without body effect, in every region, and at
// drain–source voltages from a microvolt (where tanh is computed from the
// terms' exponentials with the most cancellation) to volts.
func TestEKVEvalAgainstPaper(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	g := Geometry{W: 3e-6, L: 0.6e-6, M: 2}
	dropped := 0
	for _, pol := range []Type{NMOS, PMOS} {
		for _, gamma := range []float64{0, 0.5} {
			c := demoEKV(pol, gamma, 0.1)
			for _, tk := range []float64{250, ZeroC + 27, 400} {
				inst, err := c.Instance(g, tk)
				if err != nil {
					t.Fatal(err)
				}
				for k := range 400 {
					xg, xs := 4.5*r.Float64()-1.5, 1.8*r.Float64()-0.3
					vds := 3 * r.Float64()
					if k%4 == 0 {
						vds = math.Pow(10, -6+4*r.Float64()) // 1 µV … 10 mV
					}
					if k%2 == 1 {
						vds = -vds
					}
					xd := xs + vds
					vd, vg, vs, vb := ekvBias(pol, 0.4, xd, xg, xs)
					got := inst.Eval(vd, vg, vs, vb).ID * float64(pol)
					want, iF, iR, is := ekvPaper(c, g, tk, xd, xg, xs)
					big, small := math.Max(iF, iR), math.Min(iF, iR)
					clm := math.Abs(want) / (is * math.Abs(iF-iR))
					tol := 1e-12 * is * (iF + iR) * clm // rounding
					if small < minorTerm*big {
						tol += minorTerm * is * big * clm
						dropped++
					}
					if d := math.Abs(got - want); !(d <= tol) {
						t.Errorf("%s γ=%g %g K at VG=%g VS=%g VD=%g: ID %.15g, the paper's equations %.15g (|Δ| %.3g > %.3g; iF %.4g iR %.4g)",
							pol, gamma, tk, xg, xs, xd, got, want, d, tol, iF, iR)
					}
				}
			}
		}
	}
	if dropped == 0 {
		t.Error("no point where the smaller term falls below minorTerm: the test does not reach the dropped-term case")
	}
}

// TestEKVSmallTermKept checks, against the same direct equations, that a
// reverse term just above minorTerm of the forward one is kept: a device
// at the edge of saturation in weak inversion, where iR/iF = e^(−VDS/U_T)
// (Enz, Krummenacher, Vittoz 1995), so that the drop would show as a
// relative error of about 1e-8 in ID.
func TestEKVSmallTermKept(t *testing.T) {
	const tk = ZeroC + 27
	c := demoEKV(NMOS, 0.5, 0)
	g := Geometry{W: 10e-6, L: 1e-6}
	inst, err := c.Instance(g, tk)
	if err != nil {
		t.Fatal(err)
	}
	ut := ThermalVoltage(tk)
	for _, ratio := range []float64{1e-8, 3e-9} {
		xs, xg := 0.3, 0.5 // weak inversion: VP well below the source
		xd := xs - ut*math.Log(ratio)
		_, iF, iR, _ := ekvPaper(c, g, tk, xd, xg, xs)
		if iF > 1e-3 || math.Abs(iR/iF/ratio-1) > 0.1 {
			t.Fatalf("set-up: iF %g, iR/iF %g, want weak inversion and %g", iF, iR/iF, ratio)
		}
		vd, vg, vs, vb := ekvBias(NMOS, 0, xd, xg, xs)
		got := inst.Eval(vd, vg, vs, vb).ID
		want, _, _, _ := ekvPaper(c, g, tk, xd, xg, xs)
		if d := math.Abs(got/want - 1); d > 1e-12 {
			t.Errorf("%s: iR/iF = %g: ID %.15g, the paper's equations %.15g (relative %.3g)", fmt.Sprint(c.Polarity), ratio, got, want, d)
		}
	}
}
