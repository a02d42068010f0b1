package device

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// demoEKV is an invented demo card (nobody's process).
func demoEKV(pol Type, gamma, lambda float64) *EKV {
	s := float64(pol)
	return &EKV{Polarity: pol, VTO: s * 0.45, KP: 200e-6, Gamma: gamma, Phi: 0.75, Lambda: lambda,
		LD: 0.05e-6, TCV: 1e-3, BEX: -1.5, TnomK: ZeroC + 27}
}

// paperEKV evaluates, independently of the model code, the pinch-off
// voltage VP, the slope factor n and the specific current Is of the EKV
// paper (Enz, Krummenacher, Vittoz 1995, eqs. for VP, n and Is) at the
// bulk-referred gate voltage xg (NMOS sense), for VG' > 0.
func paperEKV(c *EKV, g Geometry, tempK, xg float64) (vp, n, is float64) {
	s := float64(c.Polarity)
	ut := ThermalVoltage(tempK)
	vto := s * (c.VTO - s*c.TCV*(tempK-c.TnomK))
	kp := c.KP * math.Pow(tempK/c.TnomK, c.BEX)
	beta := kp * g.Mult() * g.W / (g.L - 2*c.LD)
	vgp := xg - vto + c.Phi + c.Gamma*math.Sqrt(c.Phi)
	vp = vgp - c.Phi - c.Gamma*(math.Sqrt(vgp+c.Gamma*c.Gamma/4)-c.Gamma/2)
	n = 1 + c.Gamma/(2*math.Sqrt(vp+c.Phi+4*ut))
	return vp, n, 2 * n * beta * ut * ut
}

// icArg returns the normalised voltage x with ln²(1 + e^(x/2)) = ic, the
// inverse of the EKV interpolation function.
func icArg(ic float64) float64 { return 2 * math.Log(math.Expm1(math.Sqrt(ic))) }

// gmOverID is (1 − e^(−√IC))/√IC, the EKV gm·n·U_T/ID in saturation
// (Enz, Krummenacher, Vittoz 1995).
func gmOverID(ic float64) float64 { return -math.Expm1(-math.Sqrt(ic)) / math.Sqrt(ic) }

// ekvBias maps bulk-referred NMOS-sense voltages to absolute terminal voltages
// (vd, vg, vs, vb) for a device of polarity pol with its bulk at vb.
func ekvBias(pol Type, vb, xd, xg, xs float64) (float64, float64, float64, float64) {
	s := float64(pol)
	return vb + s*xd, vb + s*xg, vb + s*xs, vb
}

func TestThermalVoltage(t *testing.T) {
	// U_T = kT/q = 0.025852 V at 300 K (from memory), with the exact SI
	// (CODATA 2018) values of k and q.
	if ut := ThermalVoltage(300); math.Abs(ut-0.025852) > 1e-6 {
		t.Errorf("U_T(300 K) = %.7f V, want 0.025852 V", ut)
	}
}

// TestEKVSaturationClosedForms checks, across IC = 1e-3 … 1e3 in
// saturation, the EKV closed forms (Enz, Krummenacher, Vittoz 1995):
//
//   - ID = Is·IC with the paper's VP, n and Is;
//   - the source transconductance gms·U_T/ID = (1 − e^(−√IC))/√IC exactly;
//   - with GAMMA = 0 (n = 1) the gate form gm·n·U_T/ID equals the same;
//   - with GAMMA > 0 the gate form holds up to two neglected terms, bounded
//     below.
//
// Bound for GAMMA > 0. In saturation ID = Is·F(x), x = (VP − VS)/U_T, and
// gm = ∂ID/∂VG = Is·F'(x)·VP'/U_T + (∂Is/∂VG)·F(x), with VP' = ∂VP/∂VG and
// ∂Is/∂VG = Is·(dn/dVP)·VP'/n. From the VP equation, with A = VP + PHI,
// 1/VP' = n_v = 1 + GAMMA/(2√A), so
//
//	gm·n·U_T/ID = (n/n_v)·g(IC) + U_T·(dn/dVP)/n_v,   g = (1 − e^(−√IC))/√IC.
//
// The model's n = 1 + GAMMA/(2√(A + 4U_T)) is below n_v, and dn/dVP < 0, so
// both terms pull the ratio below g. By the mean-value theorem
// n_v − n ≤ (GAMMA/2)·4U_T·A^(−3/2)/2 = GAMMA·U_T·A^(−3/2), and
// U_T·|dn/dVP| = U_T·GAMMA/(4(A + 4U_T)^(3/2)) ≤ GAMMA·U_T·A^(−3/2)/4; with
// n_v ≥ 1:
//
//	0 < g − gm·n·U_T/ID ≤ GAMMA·U_T·A^(−3/2)·(g + 1/4).
func TestEKVSaturationClosedForms(t *testing.T) {
	g := Geometry{W: 5e-6, L: 1e-6, M: 2}
	const tempK = 330.0
	ut := ThermalVoltage(tempK)
	for _, pol := range []Type{NMOS, PMOS} {
		for _, gamma := range []float64{0, 0.6} {
			c := demoEKV(pol, gamma, 0)
			inst, err := c.Instance(g, tempK)
			if err != nil {
				t.Fatal(err)
			}
			s := float64(pol)
			const vb, xg = 0.3, 3.0
			vp, n, is := paperEKV(c, g, tempK, xg)
			worst := 0.0
			for k := 0; k <= 12; k++ {
				ic := math.Pow(10, -3+0.5*float64(k))
				xs := vp - icArg(ic)*ut
				xd := math.Max(xs, vp) + 1 // iR ≤ e^(−1 V/U_T) ≈ 1e-15 of iF
				e := inst.Eval(ekvBias(pol, vb, xd, xg, xs))
				id := s * e.ID
				what := fmt.Sprintf("%s gamma=%g IC=%.3g", pol, gamma, ic)
				// ID = Is·IC (paper's Is and VP).
				if math.Abs(id/(is*ic)-1) > 1e-9 {
					t.Errorf("%s: ID/Is = %.12g, want %.12g", what, id/is, ic)
				}
				icm := id / is // IC = ID/Is
				gq := gmOverID(icm)
				if gms := -e.GS; math.Abs(gms*ut/id-gq) > 1e-9*gq {
					t.Errorf("%s: gms·U_T/ID = %.12g, (1−e^−√IC)/√IC = %.12g", what, gms*ut/id, gq)
				}
				ratio := e.GG * n * ut / id
				if gamma == 0 {
					if n != 1 || math.Abs(ratio-gq) > 1e-9*gq {
						t.Errorf("%s: n = %g, gm·n·U_T/ID = %.12g, want %.12g", what, n, ratio, gq)
					}
					continue
				}
				bound := gamma * ut * math.Pow(vp+c.Phi, -1.5) * (gq + 0.25)
				if d := gq - ratio; !(d > 0 && d <= bound) {
					t.Errorf("%s: g − gm·n·U_T/ID = %.3g, want in (0, %.3g]", what, d, bound)
				} else {
					worst = math.Max(worst, d/bound)
				}
			}
			if gamma > 0 {
				t.Logf("%s gamma=%g: the gate-form deviation reaches %.0f%% of its derived bound", pol, gamma, 100*worst)
			}
		}
	}
}

// TestEKVWeakInversion checks gm = ID/(n·U_T) in deep weak inversion
// (Enz, Krummenacher, Vittoz 1995; any analog text). From the saturation
// relation above, gm·n·U_T/ID = g(IC) up to GAMMA·U_T·A^(−3/2)·(g + 1/4),
// and 1 − √IC/2 ≤ g(IC) ≤ 1 (series of (1 − e^(−y))/y), so
// |gm·n·U_T/ID − 1| ≤ √IC/2 + 1.25·GAMMA·U_T·A^(−3/2).
func TestEKVWeakInversion(t *testing.T) {
	g := Geometry{W: 20e-6, L: 2e-6}
	const tempK = ZeroC + 27
	ut := ThermalVoltage(tempK)
	for _, pol := range []Type{NMOS, PMOS} {
		for _, gamma := range []float64{0, 0.5} {
			c := demoEKV(pol, gamma, 0.05)
			inst, err := c.Instance(g, tempK)
			if err != nil {
				t.Fatal(err)
			}
			const vb, xg = -0.2, 1.2
			vp, n, _ := paperEKV(c, g, tempK, xg)
			for _, ic := range []float64{1e-8, 1e-6, 1e-4} {
				xs := vp - icArg(ic)*ut
				e := inst.Eval(ekvBias(pol, vb, xs+1.5, xg, xs))
				ratio := e.GG * n * ut / (float64(pol) * e.ID)
				bound := math.Sqrt(ic)/2 + 1.25*gamma*ut*math.Pow(vp+c.Phi, -1.5)
				if math.Abs(ratio-1) > bound {
					t.Errorf("%s gamma=%g IC=%g: gm·n·U_T/ID = %.9f, want 1 ± %.3g", pol, gamma, ic, ratio, bound)
				}
			}
		}
	}
}

// TestEKVStrongInversion checks the strong-inversion limit
// ID → n·β/2·(VP − VS)² in saturation (Enz, Krummenacher, Vittoz 1995).
// With x = (VP − VS)/U_T, ln(1 + e^(x/2)) = x/2 + ln(1 + e^(−x/2)) lies
// between x/2 and x/2 + e^(−x/2), so the relative excess of ID over the
// limit is below 4·e^(−x/2)/x + 4·e^(−x)/x² < 5·e^(−x/2)/x.
func TestEKVStrongInversion(t *testing.T) {
	g := Geometry{W: 2e-6, L: 0.5e-6, M: 4}
	const tempK = ZeroC + 85
	ut := ThermalVoltage(tempK)
	for _, pol := range []Type{NMOS, PMOS} {
		c := demoEKV(pol, 0.55, 0)
		inst, err := c.Instance(g, tempK)
		if err != nil {
			t.Fatal(err)
		}
		const vb, xg = 0, 4.0
		vp, n, is := paperEKV(c, g, tempK, xg)
		beta := is / (2 * n * ut * ut)
		for _, vov := range []float64{0.4, 0.8, 1.6, 2.4} {
			xs := vp - vov
			e := inst.Eval(ekvBias(pol, vb, vp+1, xg, xs))
			x := vov / ut
			excess := float64(pol)*e.ID/(n*beta/2*vov*vov) - 1
			if bound := 5*math.Exp(-x/2)/x + 1e-12; !(excess >= -1e-12 && excess <= bound) {
				t.Errorf("%s VP−VS=%g: ID/(nβ/2·(VP−VS)²) − 1 = %.3g, want in [0, %.3g]", pol, vov, excess, bound)
			}
		}
	}
}

// TestEKVDerivatives checks every analytic derivative against a central
// finite difference (step 1e-6 V ≪ U_T: truncation (h/U_T)²/6 ≈ 3e-10,
// rounding ε·U_T/h ≈ 6e-12, relative) at random bias points of both
// polarities, with and without body effect, forward and reversed, from below
// VG' = 0 through weak, moderate and strong inversion, at three
// temperatures.
func TestEKVDerivatives(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for _, pol := range []Type{NMOS, PMOS} {
		for _, gamma := range []float64{0, 0.5} {
			c := demoEKV(pol, gamma, 0.1)
			for _, tk := range []float64{250, ZeroC + 27, 400} {
				inst, err := c.Instance(Geometry{W: 3e-6, L: 0.6e-6, M: 2}, tk)
				if err != nil {
					t.Fatal(err)
				}
				for range 300 {
					xg, xs, xd := 4.5*r.Float64()-1.5, 1.8*r.Float64()-0.3, 2.8*r.Float64()-0.3
					vd, vg, vs, vb := ekvBias(pol, 0.4, xd, xg, xs)
					checkDerivatives(t, fmt.Sprintf("ekv %s gamma=%g %g K", pol, gamma, tk), inst, [4]float64{vd, vg, vs, vb}, 1e-6, 1e-6)
				}
			}
		}
	}
}

// TestEKVContinuity checks that current and derivatives are continuous
// across VG' = 0 (where VP's square-root branch meets the −PHI clamp) and
// across VDS = 0 (the smooth |VDS| of the length-modulation factor).
func TestEKVContinuity(t *testing.T) {
	const tempK = ZeroC + 27
	ut := ThermalVoltage(tempK)
	for _, pol := range []Type{NMOS, PMOS} {
		c := demoEKV(pol, 0.5, 0.1)
		inst, err := c.Instance(Geometry{W: 4e-6, L: 1e-6}, tempK)
		if err != nil {
			t.Fatal(err)
		}
		s := float64(pol)
		// VG' = 0 at xg0; the source is put 2·U_T below −PHI (bulk-referred)
		// so that the current there is a sizeable part of Is.
		xg0 := s*c.VTO - c.Phi - c.Gamma*math.Sqrt(c.Phi)
		xs := -c.Phi + 2*ut
		const d = 1e-7
		hi := inst.Eval(ekvBias(pol, 0, xs+0.5, xg0+d, xs))
		lo := inst.Eval(ekvBias(pol, 0, xs+0.5, xg0-d, xs))
		// On the clamp VP is constant, so the gate has no pull at all; just
		// above, ∂VP/∂VG ≈ 2·d/GAMMA² (from the VP equation), so gm → 0.
		if lo.GG != 0 || !(hi.GG > 0 && hi.GG < 10*d/(c.Gamma*c.Gamma)*math.Abs(hi.GS)) {
			t.Errorf("%s at VG'=±%g: gm %g / %g, gms %g", pol, d, hi.GG, lo.GG, hi.GS)
		}
		if math.Abs(hi.ID-lo.ID) > 1e-9*math.Abs(hi.ID) || hi.ID == 0 {
			t.Errorf("%s: ID jumps across VG'=0: %g vs %g", pol, hi.ID, lo.ID)
		}
		for k, p := range [][2]float64{{hi.GD, lo.GD}, {hi.GS, lo.GS}, {hi.GB, lo.GB}} {
			if math.Abs(p[0]-p[1]) > 1e-6*math.Abs(hi.GS) {
				t.Errorf("%s: derivative %c jumps across VG'=0: %g vs %g", pol, "dsb"[k], p[0], p[1])
			}
		}

		// VDS = 0 in moderate inversion.
		xg, xs2 := 1.5, 0.3
		const e = 1e-9
		pos := inst.Eval(ekvBias(pol, 0, xs2+e, xg, xs2))
		neg := inst.Eval(ekvBias(pol, 0, xs2-e, xg, xs2))
		scale := math.Abs(pos.GD) + math.Abs(pos.GS)
		for k, p := range [][2]float64{{pos.GD, neg.GD}, {pos.GG, neg.GG}, {pos.GS, neg.GS}, {pos.GB, neg.GB}} {
			if math.Abs(p[0]-p[1]) > 1e-6*scale {
				t.Errorf("%s: derivative %c jumps across VDS=0: %g vs %g", pol, "dgsb"[k], p[0], p[1])
			}
		}
		vd, vgA, vs, vb := ekvBias(pol, 0, xs2, xg, xs2)
		checkDerivatives(t, fmt.Sprintf("ekv %s at VDS=0", pol), inst, [4]float64{vd, vgA, vs, vb}, 1e-6, 1e-6)
		// Derivative tests just beside VG' = 0.
		for _, off := range []float64{-1e-4, 1e-4} {
			vd, vg, vs, vb := ekvBias(pol, 0, xs+0.5, xg0+off, xs)
			checkDerivatives(t, fmt.Sprintf("ekv %s at VG'=%g", pol, off), inst, [4]float64{vd, vg, vs, vb}, 1e-6, 1e-6)
		}
	}
}

// TestEKVSymmetry checks ID(VD, VS) = −ID(VS, VD) with the derivatives
// swapped accordingly: the EKV model is symmetric in source and drain by
// construction (Enz, Krummenacher, Vittoz 1995).
func TestEKVSymmetry(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	for _, pol := range []Type{NMOS, PMOS} {
		inst, err := demoEKV(pol, 0.5, 0.1).Instance(Geometry{W: 2e-6, L: 1e-6}, 310)
		if err != nil {
			t.Fatal(err)
		}
		for range 500 {
			vd, vg, vs, vb := 3*r.Float64()-0.5, 3*r.Float64()-0.5, 3*r.Float64()-0.5, 3*r.Float64()-0.5
			a, b := inst.Eval(vd, vg, vs, vb), inst.Eval(vs, vg, vd, vb)
			scale := math.Abs(a.GD) + math.Abs(a.GS) + math.Abs(a.GG)
			if a.ID != -b.ID || a.GD != -b.GS || a.GS != -b.GD || a.GG != -b.GG || math.Abs(a.GB+b.GB) > 1e-15*scale {
				t.Fatalf("%s: Eval(%g,%g,%g,%g) = %+v, swapped %+v", pol, vd, vg, vs, vb, a, b)
			}
		}
	}
}

// TestEKVOp checks the operating-point report: at VGS = VTH the pinch-off
// voltage equals the source voltage, so IC = F(0) = ln²2 (Enz,
// Krummenacher, Vittoz 1995); VDSAT follows its documented estimate; the
// regions follow the documented thresholds; conductances are positive in
// either direction of conduction.
func TestEKVOp(t *testing.T) {
	const tempK = ZeroC + 27
	ut := ThermalVoltage(tempK)
	g := Geometry{W: 10e-6, L: 1e-6}
	for _, pol := range []Type{NMOS, PMOS} {
		s := float64(pol)
		c := demoEKV(pol, 0.5, 0.05)
		inst, err := c.Instance(g, tempK)
		if err != nil {
			t.Fatal(err)
		}
		vs, vb := s*0.4, 0.0 // source reverse-biased by 0.4 V
		op := inst.Op(vs+s*1.5, vs+s*0.8, vs, vb)
		th := inst.Op(vs+s*1.5, vs+op.VTH, vs, vb)
		if math.Abs(th.IC-math.Ln2*math.Ln2) > 1e-9 {
			t.Errorf("%s: IC at VGS = VTH (%g V) is %.12g, want ln²2 = %.12g", pol, op.VTH, th.IC, math.Ln2*math.Ln2)
		}
		if want := s * (2*ut*math.Sqrt(th.IC+0.25) + 3*ut); math.Abs(th.VDSAT-want) > 1e-15 {
			t.Errorf("%s: VDSAT %g, want %g", pol, th.VDSAT, want)
		}
		// The threshold rises with reverse body bias (body effect).
		op0 := inst.Op(s*1.5, s*0.8, 0, 0)
		if !(s*op.VTH > s*op0.VTH && math.Abs(op0.VTH-c.VTO) < 1e-15) {
			t.Errorf("%s: VTH %g at VSB=0.4, %g at VSB=0 (VTO %g)", pol, op.VTH, op0.VTH, c.VTO)
		}

		xg := 2.0
		vp, _, _ := paperEKV(c, g, tempK, xg)
		for _, tc := range []struct {
			ic, vds float64
			want    Region
		}{
			{1e-3, 0.5, Weak}, {1e-3, 0.01, Weak}, {1, 0.5, Moderate}, {100, 1.5, Strong},
			{100, 0.05, Triode}, {1, 0.02, Triode},
		} {
			xs := vp - icArg(tc.ic)*ut
			for _, rev := range []bool{false, true} {
				vd, vg, vsA, vbA := ekvBias(pol, 0, xs+tc.vds, xg, xs)
				if rev {
					vd, vsA = vsA, vd
				}
				op := inst.Op(vd, vg, vsA, vbA)
				if op.Region != tc.want || math.Abs(op.IC/tc.ic-1) > 1e-6 {
					t.Errorf("%s IC=%g VDS=%g reversed=%v: region %s IC %g, want %s", pol, tc.ic, tc.vds, rev, op.Region, op.IC, tc.want)
				}
				if !(op.GM > 0 && op.GDS > 0 && op.GMB > 0) || s*op.ID*boolSign(rev) <= 0 {
					t.Errorf("%s IC=%g reversed=%v: ID %g GM %g GDS %g GMB %g", pol, tc.ic, rev, op.ID, op.GM, op.GDS, op.GMB)
				}
			}
		}
	}
}

func boolSign(neg bool) float64 {
	if neg {
		return -1
	}
	return 1
}
