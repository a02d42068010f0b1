package topologies

import (
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/units"
)

// sqrtBias sets both tail currents from a square-root bias loop. A
// translinear loop of four matched, saturated PMOS transistors holds
// V_SG(Mb) + V_SG(Ma) at the fixed sum of two stacked diodes biased at
// itail/4, so that in strong inversion √I_a + √I_b = 2·√(itail/4) = √itail.
// Mb is the PMOS pair's tail (I_b); I_a, mirrored 1:1, is the NMOS pair's
// tail. The split is set by a scaled replica of the NMOS pair and its
// tail, whose current (mirrored up by kr) is forced through Ma: while the
// replica, and so the real NMOS pair, has headroom, the NMOS pair carries
// all of itail and the PMOS tail is off; as the common mode nears ground
// and the replica starves, I_a falls and the loop raises I_b so that
// √I_n + √I_p, and with matched pairs gm, stays constant (square-root
// constant-gm biasing after the translinear principle of B. Gilbert,
// "Translinear circuits: a proposed classification", Electronics Letters
// 11(1), 1975, applied to MOS square-law loops; from memory).
//
// The two loop transistors whose sources are not on the supply (the upper
// diode and Ma) sit in wells of their own tied to their sources, as a
// designer lays out a translinear loop, so that body effect does not
// unbalance the loop. The square-root law holds in strong inversion only:
// were I_a to fall to nothing, Ma would sink into weak inversion and the
// loop would raise I_b without bound, so a small source (itail/kkeep,
// mirrored off the loop's upper diode) keeps Ma conducting; at the bottom
// of the range I_b = (√itail − √(itail/kkeep))², a few per cent short of
// itail. The replica's tail has the real tail's current density, so it
// leaves saturation at the same common mode; a narrower replica pair (wq
// below wn/kr) makes it starve a little earlier, so the handover ends
// while the NMOS pair still works.
//
// The method needs the loop in strong inversion and the headroom that
// takes: on demo33-l1 at 3.3 V it holds gm within a few per cent, while on
// demo18 at 1.8 V, where the loop is in moderate inversion and the tails
// have little headroom, its defaults leave a large ripple — which is what
// a designer should learn from comparing the families there.
type sqrtBias struct{}

var (
	pWL   = Param{Name: "wl", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 2000e-6, Default: 8e-6, Scale: Log, Doc: "width of the four PMOS loop transistors (the PMOS tail among them; length lt)"}
	pKR   = Param{Name: "kr", Unit: units.Dimensionless, Min: 1, Max: 16, Default: 4, Scale: Linear, Doc: "scale of the NMOS replica: it runs at itail/kr"}
	pWQ   = Param{Name: "wq", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 500e-6, Default: 1e-6, Scale: Log, Doc: "width of each replica NMOS input transistor (length ln)"}
	pKeep = Param{Name: "kkeep", Unit: units.Dimensionless, Min: 16, Max: 4096, Default: 64, Scale: Log, Doc: "itail over the small current that keeps the loop alive when the replica is off"}
)

func (sqrtBias) Name() string { return "sqrt-bias" }
func (sqrtBias) Summary() string {
	return "a translinear square-root loop steered by an NMOS replica keeps √I_n + √I_p constant"
}
func (sqrtBias) Params() []Param {
	return pairParams(true, true, pWL, pKR, pWQ, pKeep)
}

func (f sqrtBias) Build(v Values, cond Conditions) (*Stage, error) {
	b, err := newBuilder(f, v, cond)
	if err != nil {
		return nil, err
	}
	c := b.c
	lt, kr, wl := b.p(pLT), b.p(pKR), b.p(pWL)
	tn, tp := c.Node("tn"), c.Node("tp")
	s, fs, f1, pa := c.Node("s"), c.Node("fs"), c.Node("f1"), c.Node("pa")
	q, rq := c.Node("q"), c.Node("rq")
	b.nPair(tn)
	b.pPair(tp)
	b.sides[q] = NSide // the replica pair follows the NMOS pair
	// The loop's fixed sum: two stacked PMOS diodes at itail/4.
	b.mos(device.PMOS, "loop diode", Diode, f1, f1, b.vdd, wl, lt)
	b.mosInWell(device.PMOS, "loop diode (own well)", Diode, fs, fs, f1, wl, lt)
	c.AddISource("IFS", fs, b.gnd, sim.Const(b.p(pITail)/4), false)
	// Mb is the PMOS tail; Ma's current, mirrored 1:1, is the NMOS tail.
	b.mos(device.PMOS, "pmos tail (loop)", Saturated, tp, s, b.vdd, wl, lt)
	b.mosInWell(device.PMOS, "loop partner (own well)", Saturated, pa, fs, s, wl, lt)
	b.mos(device.NMOS, "nmos mirror input", Diode, pa, pa, b.gnd, b.p(pWTN), lt)
	b.mos(device.NMOS, "nmos tail (mirror output)", Saturated, tn, pa, b.gnd, b.p(pWTN), lt)
	// The NMOS replica at itail/kr, its current mirrored ×kr into node s.
	bn := b.nBias("bn", b.p(pITail)/b.p(pKBias), b.p(pWTN)/b.p(pKBias))
	b.mos(device.NMOS, "replica tail", Saturated, q, bn, b.gnd, b.p(pWTN)/kr, lt)
	b.mos(device.NMOS, "replica input", Saturated, rq, b.inp, q, b.p(pWQ), b.p(pLN))
	b.mos(device.NMOS, "replica input", Saturated, rq, b.inn, q, b.p(pWQ), b.p(pLN))
	b.mos(device.PMOS, "replica mirror input", Diode, rq, rq, b.vdd, b.p(pWTP)/kr, lt)
	b.mos(device.PMOS, "replica mirror output", Saturated, s, rq, b.vdd, b.p(pWTP), lt)
	// Keep-alive: a small source into s, mirrored off the upper loop diode,
	// so that Ma never leaves the loop when the replica is off.
	b.mos(device.PMOS, "loop keep-alive", Saturated, s, f1, b.vdd, 4*wl/b.p(pKeep), lt)
	sup := cond.Supply
	c.Guess[f1] = sup - 0.7
	c.Guess[fs] = sup - 1.4
	c.Guess[s] = sup - 0.7
	c.Guess[pa] = 0.6
	c.Guess[q] = 0.3
	c.Guess[rq] = sup - 0.6
	return b.finish()
}
