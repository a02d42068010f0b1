package device

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Compile-time checks that Level1 offers what the solver and the netlist
// export need.
var (
	_ Model       = (*Level1)(nil)
	_ SpiceCarder = (*Level1)(nil)
)

// Constants of the SPICE level-1 temperature law as ngspice applies it
// (ngspice src/spicelib/devices/mos1/mos1temp.c and src/include/ngspice/const.h).
const (
	// spiceRefTemp is the reference temperature of the band-gap terms, 27 °C.
	spiceRefTemp = 27 + ZeroC
	// spiceKoverQ is the k/q of ngspice's const.h (CODATA 2014 values),
	// which the law uses for vt = kT/q. It differs from Boltzmann/Charge
	// (CODATA 2018) by 3.4e-7 relative, which shifts VTO by about 1e-8 V at
	// 125 °C; with ngspice's value, currents from exported decks agree to
	// rounding (measured against ngspice 39: 1e-14 relative instead of 4e-7).
	spiceKoverQ = 1.38064852e-23 / 1.6021766208e-19
	// spiceEgRef is the silicon band gap at the reference temperature that
	// the law subtracts, eV.
	spiceEgRef = 1.1150877
)

// Kind returns "level1".
func (c *Level1) Kind() string { return "level1" }

// Type returns the polarity of the card.
func (c *Level1) Type() Type { return c.Polarity }

// level1Inst is one sized level-1 transistor at one temperature. All
// quantities are in the NMOS frame (already multiplied by the type sign).
type level1Inst struct {
	sign     float64 // +1 NMOS, −1 PMOS
	beta     float64 // KP(T)·M·W/Leff, A/V²
	lambda   float64 // 1/V
	gamma    float64 // √V
	vbi      float64 // type·VBI(T), V
	phi      float64 // PHI(T), V
	sqrtPhi  float64 // √PHI(T)
	invSqrt2 float64 // 1/(2√PHI(T))
}

// temperature returns VBI(T), VTO(T) (SPICE signs), PHI(T) and KP(T).
func (c *Level1) temperature(tempK float64) (vbi, vto, phi, kp float64) {
	typ := float64(c.Polarity)
	if c.LinearTemp {
		vto = c.VTO - typ*c.TCV*(tempK-c.TnomK)
		phi = c.Phi
		kp = c.KP * math.Pow(tempK/c.TnomK, c.BEX)
		vbi = vto - typ*c.Gamma*math.Sqrt(phi)
		return vbi, vto, phi, kp
	}
	// The SPICE law: the surface potential scales with T and follows the
	// band gap Eg(T) = 1.16 − 7.02e-4·T²/(T + 1108) eV; the flat-band part
	// of the threshold moves by half the change of the band gap and of PHI;
	// mobility, and so KP, falls as (T/Tnom)^-1.5.
	eg := func(t float64) float64 { return 1.16 - 7.02e-4*t*t/(t+1108) }
	// pb is the temperature part of the junction potentials:
	// −2·vt·(1.5·ln(T/Tref) + q·(−Eg/(2kT) + Eg,ref/(2k·Tref))).
	pb := func(t float64) float64 {
		return -3*spiceKoverQ*t*math.Log(t/spiceRefTemp) + eg(t) - spiceEgRef*t/spiceRefTemp
	}
	tn := c.TnomK
	ratio := tempK / tn
	kp = c.KP / (ratio * math.Sqrt(ratio)) // (T/Tnom)^spiceMobilityExponent
	phi0 := (c.Phi - pb(tn)) / (tn / spiceRefTemp)
	phi = tempK/spiceRefTemp*phi0 + pb(tempK)
	vbi = c.VTO - typ*c.Gamma*math.Sqrt(c.Phi) + 0.5*(eg(tn)-eg(tempK)) + typ*0.5*(phi-c.Phi)
	vto = vbi + typ*c.Gamma*math.Sqrt(phi)
	return vbi, vto, phi, kp
}

// check validates the card itself.
func (c *Level1) check() error {
	if err := checkCommon(c.Polarity, c.VTO, c.KP, c.Gamma, c.Phi, c.Lambda, c.LD, c.TnomK); err != nil {
		return err
	}
	if c.LinearTemp && (!isFiniteNum(c.TCV) || !isFiniteNum(c.BEX)) {
		return fmt.Errorf("tcv = %g V/K, bex = %g, want finite values", c.TCV, c.BEX)
	}
	return nil
}

// checkCommon validates the parameters every card has.
func checkCommon(pol Type, vto, kp, gamma, phi, lambda, ld, tnomK float64) error {
	switch {
	case pol != NMOS && pol != PMOS:
		return fmt.Errorf("polarity %v, want nmos or pmos", pol)
	case !isFiniteNum(vto):
		return fmt.Errorf("vto = %g V, want a finite value", vto)
	case !(kp > 0) || math.IsInf(kp, 0):
		return fmt.Errorf("kp = %g A/V², want > 0", kp)
	case !(gamma >= 0) || math.IsInf(gamma, 0):
		return fmt.Errorf("gamma = %g √V, want ≥ 0", gamma)
	case !(phi > 0) || math.IsInf(phi, 0):
		return fmt.Errorf("phi = %g V, want > 0", phi)
	case !isFiniteNum(lambda) || lambda < 0:
		return fmt.Errorf("lambda = %g 1/V, want ≥ 0", lambda)
	case !isFiniteNum(ld) || ld < 0:
		return fmt.Errorf("ld = %g m, want ≥ 0", ld)
	case !(tnomK > 0) || math.IsInf(tnomK, 0):
		return fmt.Errorf("tnom = %g K, want > 0 K", tnomK)
	}
	return nil
}

// Instance sizes the card and applies the temperature tempK (kelvin). It
// rejects a card or geometry the equations cannot use, saying which value is
// wrong and why.
//
// The instance evaluates the Shichman–Hodges channel current (H. Shichman,
// D. A. Hodges, "Modeling and simulation of insulated-gate field-effect
// transistor switching circuits", IEEE J. Solid-State Circuits 3, 285–289,
// 1968) in the form of SPICE's level-1 MOSFET, term for term as ngspice's
// MOS1 device computes it. Voltages and current are multiplied by the type
// sign; when VDS < 0 source and drain trade places; with
// β = KP(T)·M·W/(L − 2·LD):
//
//	sarg = √(PHI − VBS) for VBS ≤ 0, else max(√PHI − VBS/(2√PHI), 0)
//	VON  = type·VBI(T) + GAMMA·sarg,   VGST = VGS − VON
//	ID   = 0                                         VGST ≤ 0
//	     = β/2·VGST²·(1 + LAMBDA·VDS)                 VGST ≤ VDS
//	     = β·VDS·(VGST − VDS/2)·(1 + LAMBDA·VDS)      otherwise
//
// The derivatives are those of this current. For VBS ≤ 0 they equal SPICE's
// gm, gds and gmbs = gm·GAMMA/(2·sarg); for a forward-biased source junction
// SPICE keeps that gmbs expression with the linearised sarg, which is not the
// slope of its own current, while Eval returns the slope
// gm·GAMMA/(2·√PHI) that Newton's method and small-signal analysis need.
// Junction diodes are not part of the model; the solver adds its own gmin.
func (c *Level1) Instance(g Geometry, tempK float64) (Instance, error) {
	if err := c.check(); err != nil {
		return nil, fmt.Errorf("level1 %s card: %w", c.Polarity, err)
	}
	leff, err := effectiveLength(g, c.LD)
	if err != nil {
		return nil, fmt.Errorf("level1 %s instance: %w", c.Polarity, err)
	}
	if !(tempK > 0) || math.IsInf(tempK, 0) {
		return nil, fmt.Errorf("level1 %s instance: temperature %g K, want > 0 K", c.Polarity, tempK)
	}
	vbi, _, phi, kp := c.temperature(tempK)
	if !(phi > 0) {
		return nil, fmt.Errorf("level1 %s instance: PHI at %g K is %g V, want > 0 (card phi = %g V)", c.Polarity, tempK, phi, c.Phi)
	}
	typ := float64(c.Polarity)
	sp := math.Sqrt(phi)
	return &level1Inst{
		sign:     typ,
		beta:     kp * g.Mult() * g.W / leff,
		lambda:   c.Lambda,
		gamma:    c.Gamma,
		vbi:      typ * vbi,
		phi:      phi,
		sqrtPhi:  sp,
		invSqrt2: 1 / (sp + sp),
	}, nil
}

// effectiveLength validates g and returns the effective length L − 2·LD.
func effectiveLength(g Geometry, ld float64) (float64, error) {
	switch {
	case !(g.W > 0) || math.IsInf(g.W, 0):
		return 0, fmt.Errorf("width W = %g m, want > 0", g.W)
	case !(g.L > 0) || math.IsInf(g.L, 0):
		return 0, fmt.Errorf("length L = %g m, want > 0", g.L)
	case g.M != 0 && (!(g.M >= 1) || math.IsInf(g.M, 0)):
		return 0, fmt.Errorf("multiplier M = %g, want ≥ 1 (or 0 for 1)", g.M)
	}
	leff := g.L - 2*ld
	if !(leff > 0) {
		return 0, fmt.Errorf("effective length L − 2·LD = %g m (L = %g m, LD = %g m), want > 0", leff, g.L, ld)
	}
	return leff, nil
}

func isFiniteNum(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// body returns √(PHI − vbs) and −∂/∂vbs of it. For a forward-biased
// source junction SPICE continues the square root by its tangent at
// vbs = 0, floored at zero.
func (m *level1Inst) body(vbs float64) (sarg, dsarg float64) {
	if vbs <= 0 {
		sarg = math.Sqrt(m.phi - vbs)
		return sarg, 0.5 / sarg
	}
	sarg = m.sqrtPhi - vbs*m.invSqrt2
	if sarg < 0 {
		return 0, 0
	}
	return sarg, m.invSqrt2
}

// channel evaluates the Shichman–Hodges channel current in the NMOS frame
// with the source and drain already ordered (vds ≥ 0). It returns the current,
// ∂/∂vgs, ∂/∂vds, ∂/∂vbs and the threshold and overdrive.
func (m *level1Inst) channel(vgs, vds, vbs float64) (cd, gm, gds, gmbs, von, vgst float64) {
	von, vgst, dsarg := m.threshold(vgs, vbs)
	if vgst <= 0 {
		return 0, 0, 0, 0, von, vgst
	}
	cd, betap := m.drain(vgst, vds)
	if vgst <= vds { // saturation
		gm = betap * vgst
		gds = 0.5 * m.lambda * m.beta * vgst * vgst
	} else { // linear region
		gm = betap * vds
		gds = betap*(vgst-vds) + m.lambda*m.beta*vds*(vgst-0.5*vds)
	}
	// ∂von/∂vbs = −gamma·dsarg, so ∂cd/∂vbs = gm·gamma·dsarg, which is
	// gm·gamma/(2·sarg) for vbs ≤ 0 (the SPICE gmbs).
	gmbs = gm * m.gamma * dsarg
	return cd, gm, gds, gmbs, von, vgst
}

// threshold returns the threshold von at vbs (the body effect), the
// overdrive vgst = vgs − von and ∂sarg/∂vbs (normal mode, NMOS sense).
func (m *level1Inst) threshold(vgs, vbs float64) (von, vgst, dsarg float64) {
	sarg, dsarg := m.body(vbs)
	von = m.vbi + m.gamma*sarg
	return von, vgs - von, dsarg
}

// drain returns the square law's drain current at overdrive vgst and
// vds ≥ 0 (normal mode, NMOS sense) — 0 in cutoff, saturation (vgst ≤
// vds) and linear region as in SPICE's MOS1 — and β·(1 + λ·vds), of
// which its derivatives are made.
func (m *level1Inst) drain(vgst, vds float64) (cd, betap float64) {
	if vgst <= 0 {
		return 0, 0
	}
	betap = m.beta * (1 + m.lambda*vds)
	if vgst <= vds {
		return 0.5 * betap * vgst * vgst, betap
	}
	return betap * vds * (vgst - 0.5*vds), betap
}

// Eval returns the channel current into the drain and its derivatives with
// respect to the four terminal voltages. Junction diodes are not included.
func (m *level1Inst) Eval(vd, vg, vs, vb float64) Eval { return m.EvalLarge(vd, vg, vs, vb, nil) }

// EvalLarge is Eval that also fills ls, unless it is nil, with
// LargeSignal's fields at the same voltages, bit for bit.
func (m *level1Inst) EvalLarge(vd, vg, vs, vb float64, ls *LargeSignal) Eval {
	s := m.sign
	vds := s * (vd - vs)
	vgs := s * (vg - vs)
	vbs := s * (vb - vs)
	var e Eval
	var von, vgst float64
	if vds >= 0 {
		var cd, gm, gds, gmbs float64
		cd, gm, gds, gmbs, von, vgst = m.channel(vgs, vds, vbs)
		e = Eval{ID: s * cd, GD: gds, GG: gm, GS: -(gm + gds + gmbs), GB: gmbs}
	} else {
		// Inverse mode: the drain acts as the source.
		var cd, gm, gds, gmbs float64
		cd, gm, gds, gmbs, von, vgst = m.channel(vgs-vds, -vds, vbs-vds)
		e = Eval{ID: -s * cd, GD: gm + gds + gmbs, GG: -gm, GS: -gds, GB: -gmbs}
	}
	if ls != nil {
		*ls = LargeSignal{ID: e.ID, VTH: s * von, VDSAT: s * max(vgst, 0), Region: level1Region(vgst, vds)}
	}
	return e
}

// level1Region names the region from the overdrive and VDS (NMOS frame).
func level1Region(vgst, vds float64) Region {
	switch {
	case vgst <= 0:
		return Off
	case vgst <= math.Abs(vds):
		return Saturation
	}
	return Triode
}

// Op returns the operating point at the given terminal voltages. As in
// SPICE, VTH, VDSAT, GM, GDS and GMB refer to the terminal that acts as the
// source (the drain when VDS has the reverse sign).
func (m *level1Inst) Op(vd, vg, vs, vb float64) OpPoint {
	s := m.sign
	vds := s * (vd - vs)
	vgs := s * (vg - vs)
	vbs := s * (vb - vs)
	var cd, gm, gds, gmbs, von, vgst float64
	id := 0.0
	if vds >= 0 {
		cd, gm, gds, gmbs, von, vgst = m.channel(vgs, vds, vbs)
		id = s * cd
	} else {
		cd, gm, gds, gmbs, von, vgst = m.channel(vgs-vds, -vds, vbs-vds)
		id = -s * cd
	}
	op := OpPoint{
		ID: id, VGS: vg - vs, VDS: vd - vs, VBS: vb - vs,
		VTH: s * von, VDSAT: s * max(vgst, 0),
		GM: gm, GDS: gds, GMB: gmbs, Region: level1Region(vgst, vds),
	}
	return op
}

// LargeSignal returns Op's ID, VTH, VDSAT and Region bitwise as Op gives
// them (IC is 0: the square law has none), without the derivatives: the
// square law is cheap enough that they would be a good part of its cost.
func (m *level1Inst) LargeSignal(vd, vg, vs, vb float64) LargeSignal {
	s := m.sign
	vds, vgs, vbs, sign := s*(vd-vs), s*(vg-vs), s*(vb-vs), s
	if vds < 0 { // inverse mode: the drain acts as the source
		vgs, vbs, vds, sign = vgs-vds, vbs-vds, -vds, -s
	}
	von, vgst, _ := m.threshold(vgs, vbs)
	cd, _ := m.drain(vgst, vds)
	return LargeSignal{ID: sign * cd, VTH: s * von, VDSAT: s * max(vgst, 0), Region: level1Region(vgst, vds)}
}

// SpiceCard returns a `.model NAME nmos (level=1 ...)` line that reproduces
// the card in a SPICE simulator whose deck sets `.temp` to tempK − 273.15.
// With the SPICE temperature law it is the card itself with its tnom; with
// LinearTemp it carries VTO and KP adjusted to tempK and tnom equal to the
// simulation temperature, so that the simulator applies no further change.
func (c *Level1) SpiceCard(name string, tempK float64) string {
	vto, kp, tnom := c.VTO, c.KP, c.TnomK
	if c.LinearTemp {
		_, vto, _, kp = c.temperature(tempK)
		tnom = tempK
	}
	var b strings.Builder
	fmt.Fprintf(&b, ".model %s %s (level=1", name, c.Polarity)
	for _, p := range []struct {
		key string
		v   float64
	}{
		{"vto", vto}, {"kp", kp}, {"gamma", c.Gamma}, {"phi", c.Phi},
		{"lambda", c.Lambda}, {"ld", c.LD}, {"tnom", tnom - ZeroC},
	} {
		b.WriteString(" " + p.key + "=" + spiceNumber(p.v))
	}
	b.WriteString(")")
	return b.String()
}

// spiceNumber writes x in the shortest form that reads back as the same
// float64, as a SPICE number (no unit suffix, so none can be misread).
func spiceNumber(x float64) string {
	return strconv.FormatFloat(x, 'g', -1, 64)
}
