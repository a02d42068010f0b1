package device

import (
	"fmt"
	"math"
)

// Compile-time check that EKV is a Model.
var _ Model = (*EKV)(nil)

// Kind returns "ekv".
func (c *EKV) Kind() string { return "ekv" }

// Type returns the polarity of the card.
func (c *EKV) Type() Type { return c.Polarity }

// Instance sizes the EKV card and applies the temperature tempK (kelvin).
//
// The instance evaluates the EKV all-region model of C. C. Enz,
// F. Krummenacher and E. A. Vittoz, "An analytical MOS transistor model
// valid in all regions of operation and dedicated to low-voltage and
// low-current applications", Analog Integrated Circuits and Signal
// Processing 8, 83–114 (1995). With all voltages referred to the bulk and
// multiplied by the type sign (so a PMOS uses the NMOS equations, with −VTO,
// and its current is negated):
//
//	U_T = kT/q, β = KP(T)·M·W/(L − 2·LD)
//	VG' = VG − VTO(T) + PHI + GAMMA·√PHI
//	VP  = VG' − PHI − GAMMA·(√(VG' + GAMMA²/4) − GAMMA/2)   for VG' > 0, else −PHI
//	n   = 1 + GAMMA/(2·√(VP + PHI + 4·U_T))
//	Is  = 2·n·β·U_T²
//	F(v) = ln²(1 + e^(v/2)),  iF = F((VP − VS)/U_T),  iR = F((VP − VD)/U_T)
//	ID  = Is·(iF − iR)·(1 + LAMBDA·VDS·tanh(VDS/(2·U_T)))
//
// VP is C¹ at VG' = 0 for GAMMA > 0 (its slope 1 − GAMMA/(2√(VG'+GAMMA²/4))
// vanishes there). With GAMMA = 0 the clamp at VG' ≤ 0 is dropped and
// VP = VG' − PHI everywhere: the clamp only keeps the square root real, and
// keeping it would put a kink in VP (slope 1 to 0) where there is no body
// effect to justify one.
//
// Channel-length modulation: the paper's factor (1 + LAMBDA·VDS) is written
// with the smooth magnitude VDS·tanh(VDS/(2·U_T)) in place of |VDS|, so that
// the model keeps the source–drain symmetry ID(VD, VS) = −ID(VS, VD) and is
// continuously differentiable at VDS = 0; away from VDS = 0 (a few U_T) the
// two agree.
//
// All partial derivatives are analytic, including the dependence of Is on
// the gate through n(VP). Junction diodes are not modelled. Eval drops the
// smaller of iF and iR where it is provably below 1e-9 of the larger
// (minorTerm), which moves ID by less than that fraction.
func (c *EKV) Instance(g Geometry, tempK float64) (Instance, error) {
	if err := c.check(); err != nil {
		return nil, fmt.Errorf("ekv %s card: %w", c.Polarity, err)
	}
	leff, err := effectiveLength(g, c.LD)
	if err != nil {
		return nil, fmt.Errorf("ekv %s instance: %w", c.Polarity, err)
	}
	if !(tempK > 0) || math.IsInf(tempK, 0) {
		return nil, fmt.Errorf("ekv %s instance: temperature %g K, want > 0 K", c.Polarity, tempK)
	}
	typ := float64(c.Polarity)
	ut := ThermalVoltage(tempK)
	vto := c.VTO - typ*c.TCV*(tempK-c.TnomK)
	kp := c.KP * math.Pow(tempK/c.TnomK, c.BEX)
	beta := kp * g.Mult() * g.W / leff
	return &ekvInst{
		sign:    typ,
		vto:     typ * vto,
		shift:   -typ*vto + c.Phi + c.Gamma*math.Sqrt(c.Phi),
		phi:     c.Phi,
		sqrtPhi: math.Sqrt(c.Phi),
		gamma:   c.Gamma,
		g2:      c.Gamma * c.Gamma / 4,
		lambda:  c.Lambda,
		ut:      ut,
		invUT:   1 / ut,
		inv2UT:  1 / (2 * ut),
		isn:     2 * beta * ut * ut,
	}, nil
}

// check validates the card.
func (c *EKV) check() error {
	if err := checkCommon(c.Polarity, c.VTO, c.KP, c.Gamma, c.Phi, c.Lambda, c.LD, c.TnomK); err != nil {
		return err
	}
	switch {
	case !isFiniteNum(c.TCV):
		return fmt.Errorf("tcv = %g V/K, want a finite value", c.TCV)
	case !isFiniteNum(c.BEX):
		return fmt.Errorf("bex = %g, want a finite value", c.BEX)
	}
	return nil
}

// ekvInst is one sized EKV transistor at one temperature, NMOS frame.
type ekvInst struct {
	sign    float64 // +1 NMOS, −1 PMOS
	vto     float64 // type·VTO(T), V
	shift   float64 // VG' − VG = −type·VTO(T) + PHI + GAMMA·√PHI, V
	phi     float64 // V
	sqrtPhi float64 // √PHI
	gamma   float64 // √V
	g2      float64 // GAMMA²/4, V
	lambda  float64 // 1/V
	ut      float64 // U_T, V
	invUT   float64 // 1/U_T
	inv2UT  float64 // 1/(2·U_T)
	isn     float64 // 2·β·U_T², A (Is/n)
}

// pinch returns VP, ∂VP/∂VG, n and ∂n/∂VP at the bulk-referred gate voltage.
func (m *ekvInst) pinch(vg float64) (vp, dvp, n, dn float64) {
	vgp := vg + m.shift
	if m.gamma == 0 {
		return vgp - m.phi, 1, 1, 0
	}
	if vgp > 0 {
		r := math.Sqrt(vgp + m.g2)
		vp = vgp - m.phi - m.gamma*(r-0.5*m.gamma)
		dvp = 1 - 0.5*m.gamma/r
	} else {
		vp, dvp = -m.phi, 0
	}
	q := vp + m.phi + 4*m.ut
	sq := math.Sqrt(q)
	n = 1 + 0.5*m.gamma/sq
	dn = -0.25 * m.gamma / (q * sq)
	return vp, dvp, n, dn
}

// ekvF returns F(x) = ln²(1 + e^(x/2)) and F'(x) = ln(1 + e^(x/2))·σ(x/2),
// with σ the logistic function, without overflow or underflow for any x.
func ekvF(x float64) (f, df float64) {
	h := 0.5 * x
	e := expNeg(-math.Abs(h)) // in [0, 1]
	sp := log1pUnit(e)        // ln(1 + e^h) = max(h, 0) + ln(1 + e^−|h|)
	sig := 1 / (1 + e)        // σ(|h|)
	if h > 0 {
		sp += h
	} else {
		sig = e * sig // σ(−|h|)
	}
	return sp * sp, sp * sig
}

// minorTerm is the fraction of the larger of the forward and reverse
// terms below which Eval drops the smaller one: far below the solver's
// relative tolerance (1e-6), so that dropping it moves no solution.
const minorTerm = 1e-9

// Eval returns the drain current and its derivatives with respect to the
// four terminal voltages.
func (m *ekvInst) Eval(vd, vg, vs, vb float64) Eval { return m.EvalLarge(vd, vg, vs, vb, nil) }

// EvalLarge is Eval that also fills ls, unless it is nil, with
// LargeSignal's fields at the same voltages, bit for bit, for two square
// roots more than Eval.
func (m *ekvInst) EvalLarge(vd, vg, vs, vb float64, ls *LargeSignal) Eval {
	s := m.sign
	xg, xs, xd := s*(vg-vb), s*(vs-vb), s*(vd-vb)
	vp, dvp, n, dn := m.pinch(xg)
	is := m.isn * n
	dis := m.isn * dn * dvp // ∂Is/∂VG
	// iF, dF = ekvF((vp − xs)/U_T) and iR, dR = ekvF((vp − xd)/U_T), as
	// ekvF computes them, written out: the larger term (hb) in full; the
	// smaller (hs) too unless it is below minorTerm of the larger, which
	// for hs < 0 the bound F(2·hs) ≤ e^(2·hs) = es² proves without the
	// logarithm (ln(1 + x) ≤ x; the derivative obeys the same bound).
	hf := 0.5 * (vp - xs) * m.invUT
	hr := 0.5 * (vp - xd) * m.invUT
	ef := expNeg(-math.Abs(hf))
	er := expNeg(-math.Abs(hr))
	hb, eb, hs, es := hf, ef, hr, er
	if hr > hf {
		hb, eb, hs, es = hr, er, hf, ef
	}
	spb, sb := log1pUnit(eb), 1/(1+eb)
	if hb > 0 {
		spb += hb
	} else {
		sb *= eb
	}
	fb, db := spb*spb, spb*sb
	var fs, ds float64
	if !(hs < 0 && es*es < minorTerm*fb) {
		sps, ss := log1pUnit(es), 1/(1+es)
		if hs > 0 {
			sps += hs
		} else {
			ss *= es
		}
		fs, ds = sps*sps, sps*ss
	}
	iF, dF, iR, dR := fb, db, fs, ds
	if hr > hf {
		iF, dF, iR, dR = fs, ds, fb, db
	}
	vds := xd - xs
	u := vds * m.inv2UT
	th, sech2 := m.tanhHalf(u, hf, hr, ef, er)
	clm := 1 + m.lambda*vds*th
	dclm := m.lambda * (th + u*sech2) // ∂clm/∂VDS
	q := iF - iR
	a := is * clm * m.invUT
	b := is * q * dclm
	gg := dis*q*clm + a*(dF-dR)*dvp
	gs := -a*dF - b
	gd := a*dR + b
	id := s * is * q * clm
	if ls != nil {
		// The source is the terminal at the lower potential (NMOS
		// sense); IC the larger term, that of the conducting direction.
		// (Comparisons where Op has math.Min and math.Max, which are
		// not inlined: the same values, NaN included.)
		xsrc := xs
		if xd < xs {
			xsrc = xd
		}
		sb := xsrc + m.phi
		if sb < 0 {
			sb = 0
		}
		vth := m.vto // the source at the bulk's potential: no body effect
		if xsrc != 0 {
			vth += m.gamma * (math.Sqrt(sb) - m.sqrtPhi)
		}
		*ls = LargeSignal{
			ID:     id,
			VTH:    s * vth,
			VDSAT:  s * (2*m.ut*math.Sqrt(fb+0.25) + 3*m.ut),
			IC:     fb,
			Region: ekvRegion(fb, fs),
		}
	}
	return Eval{ID: id, GD: gd, GG: gg, GS: gs, GB: -(gg + gs + gd)}
}

// tanhHalf returns tanh(u) and 1 − tanh²(u) for u = VDS/(2·U_T), from
// e^(−|u|), which is the ratio of ef and er (smaller over larger) when hf
// and hr have the same sign and their product otherwise (hf − hr = u): a
// division instead of the exponential inside tanh. Swapping source and
// drain swaps ef and er and negates u, so the symmetry stays exact.
func (m *ekvInst) tanhHalf(u, hf, hr, ef, er float64) (th, sech2 float64) {
	var e1 float64
	if (hf > 0) == (hr > 0) {
		lo, hi := ef, er
		if lo > hi {
			lo, hi = hi, lo
		}
		if hi > 0x1p-500 {
			e1 = lo / hi
		} else { // both near underflow: VP over 17 V from both terminals
			e1 = expNeg(-math.Abs(u))
		}
	} else {
		e1 = ef * er
	}
	e2 := e1 * e1 // e^(−2|u|)
	inv := 1 / (1 + e2)
	th = (1 - e2) * inv
	if u < 0 {
		th = -th
	}
	return th, 4 * e2 * inv * inv
}

// ekvRegion names the region of an inversion coefficient ic with the
// reverse term rev beside it (Op's rules).
func ekvRegion(ic, rev float64) Region {
	switch {
	case ic < 0.1:
		return Weak
	case rev > 0.1*ic:
		return Triode
	case ic > 10:
		return Strong
	}
	return Moderate
}

// LargeSignal returns Op's ID, VTH, VDSAT, IC and Region bitwise as Op
// gives them (Eval's work, the derivatives left unused): what the
// saturation and validity checks read at every point of a sweep.
func (m *ekvInst) LargeSignal(vd, vg, vs, vb float64) LargeSignal {
	var ls LargeSignal
	m.EvalLarge(vd, vg, vs, vb, &ls)
	return ls
}

// Op returns the operating point at the given terminal voltages. The
// terminal at the lower potential (in the NMOS sense) acts as the source for
// VTH, VDSAT, IC, GM, GDS and GMB, as SPICE does for symmetric devices.
//
//   - IC is the inversion coefficient iF of the conducting direction.
//   - VTH is the gate–source voltage at which VP equals the source voltage:
//     VTO + GAMMA·(√(VS + PHI) − √PHI) with VS referred to the bulk (the root
//     taken as 0 for a source forward-biased beyond PHI), in SPICE signs.
//   - VDSAT is the estimate 2·U_T·√(IC + 1/4) + 3·U_T (Enz and Vittoz,
//     from memory), which tends to 4·U_T in weak inversion and to VP − VS
//     (plus 3·U_T) in strong inversion.
//   - Region: Weak for IC < 0.1 whatever VDS; otherwise Triode while the
//     reverse current is more than a tenth of the forward one (VDS below
//     about 2.3·U_T in weak inversion, or about 0.68·(VP − VS) in strong
//     inversion), else Moderate up to IC = 10 and Strong beyond.
func (m *ekvInst) Op(vd, vg, vs, vb float64) OpPoint {
	s := m.sign
	e := m.Eval(vd, vg, vs, vb)
	xg, xs, xd := s*(vg-vb), s*(vs-vb), s*(vd-vb)
	vp, _, _, _ := m.pinch(xg)
	gm, gds, gmb, xsrc := e.GG, e.GD, e.GB, xs
	if xd < xs {
		gm, gds, gmb, xsrc = -e.GG, -e.GS, -e.GB, xd
	}
	ic, _ := ekvF((vp - xsrc) * m.invUT)
	rev, _ := ekvF((vp - math.Max(xs, xd)) * m.invUT)
	vth := m.vto + m.gamma*(math.Sqrt(math.Max(xsrc+m.phi, 0))-m.sqrtPhi)
	op := OpPoint{
		ID: e.ID, VGS: vg - vs, VDS: vd - vs, VBS: vb - vs,
		VTH:   s * vth,
		VDSAT: s * (2*m.ut*math.Sqrt(ic+0.25) + 3*m.ut),
		GM:    gm, GDS: gds, GMB: gmb,
		IC: ic,
	}
	op.Region = ekvRegion(ic, rev)
	return op
}
