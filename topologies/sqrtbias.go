package topologies

import (
	"pairsmith/sim/device"
	"pairsmith/units"
)

// sqrtBias sets both tail currents from a square-root bias loop. A
// translinear loop of saturated NMOS transistors, matched in size, holds
// V_GS(Ma) + V_GS(Mb) at the fixed sum of two stacked diodes biased at
// itail/4, so that in strong inversion √I_a + √I_b = 2·√(itail/4) = √itail.
// I_b is the NMOS pair's tail (Mb is that tail); I_a, mirrored 1:1, is the
// PMOS pair's tail. The split is set by a scaled replica of the PMOS pair
// and its tail, whose current (mirrored up by kr) is forced through Ma:
// while the replica, and so the real PMOS pair, has headroom, the PMOS
// pair carries all of itail and the NMOS tail is off; as the common mode
// nears the supply and the replica starves, I_a falls and the loop raises
// I_b so that √I_n + √I_p, and with matched pairs gm, stays constant
// (square-root constant-gm biasing after the translinear principle of
// B. Gilbert, "Translinear circuits: a proposed classification",
// Electronics Letters 11(1), 1975, applied to MOS square-law loops;
// from memory). The square-root law holds in strong inversion only: as
// I_a falls into weak inversion the loop would raise I_b without bound,
// so a PMOS clamp holds the tail's gate node at most at the gate voltage
// of a replica of the tail carrying itail (a quarter-size diode at
// itail/4, shifted by a PMOS diode matched to the clamp). The replica's tail has the real tail's current density,
// so it leaves saturation at the same common mode; a narrower replica
// pair (wq below wp/kr) makes it starve a little earlier, so the handover
// ends while the PMOS pair still works.
type sqrtBias struct{}

var (
	pWL  = Param{Name: "wl", Unit: units.Metre, Min: 0.5e-6, Max: 500e-6, Default: 10e-6, Scale: Log, Doc: "width of the loop transistors (NMOS tail, its partner and the two diodes; length lt)"}
	pKR  = Param{Name: "kr", Unit: units.Dimensionless, Min: 1, Max: 16, Default: 4, Scale: Linear, Doc: "scale of the PMOS replica: it runs at itail/kr"}
	pWCL = Param{Name: "wcl", Unit: units.Metre, Min: 0.5e-6, Max: 2000e-6, Default: 20e-6, Scale: Log, Doc: "width of the PMOS clamp that caps the NMOS tail at itail (length lt)"}
	pWQ  = Param{Name: "wq", Unit: units.Metre, Min: 0.5e-6, Max: 2000e-6, Default: 20e-6, Scale: Log, Doc: "width of each replica PMOS input transistor (length lp)"}
)

func (sqrtBias) Name() string { return "sqrt-bias" }
func (sqrtBias) Summary() string {
	return "a translinear square-root loop steered by a PMOS replica keeps √I_n + √I_p constant"
}
func (sqrtBias) Params() []Param {
	return append(pairParams(true, true), pWL, pKR, pWQ, pWCL)
}

func (f sqrtBias) Build(v Values, cond Conditions) (*Stage, error) {
	b, err := newBuilder(f.Name(), v, cond)
	if err != nil {
		return nil, err
	}
	c := b.c
	lt, kr := v["lt"], v["kr"]
	tn, tp := c.Node("tn"), c.Node("tp")
	s, fs, f1, pa := c.Node("s"), c.Node("fs"), c.Node("f1"), c.Node("pa")
	q, rq := c.Node("q"), c.Node("rq")
	b.nPair(tn)
	b.pPair(tp)
	// The loop's fixed sum: two stacked diodes at itail/4.
	b.mos(device.NMOS, "loop diode", f1, f1, b.gnd, v["wl"], lt)
	b.mos(device.NMOS, "loop diode", fs, fs, f1, v["wl"], lt)
	c.AddISource("IFS", b.vdd, fs, constDrive(v["itail"]/4), false)
	// Mb is the NMOS tail; Ma's current, mirrored 1:1, is the PMOS tail.
	b.mos(device.NMOS, "nmos tail (loop)", tn, s, b.gnd, v["wl"], lt)
	b.mos(device.NMOS, "loop partner", pa, fs, s, v["wl"], lt)
	b.mos(device.PMOS, "pmos mirror input", pa, pa, b.vdd, v["wtp"], lt)
	b.mos(device.PMOS, "pmos tail (mirror output)", tp, pa, b.vdd, v["wtp"], lt)
	// The PMOS replica at itail/kr, its current mirrored ×kr out of node s.
	bp := b.pBias("bp", v["itail"]/v["kbias"], v["wtp"]/v["kbias"])
	b.mos(device.PMOS, "replica tail", q, bp, b.vdd, v["wtp"]/kr, lt)
	b.mos(device.PMOS, "replica input", rq, b.inp, q, v["wq"], v["lp"])
	b.mos(device.PMOS, "replica input", rq, b.inn, q, v["wq"], v["lp"])
	b.mos(device.NMOS, "replica mirror input", rq, rq, b.gnd, v["wtn"]/kr, lt)
	b.mos(device.NMOS, "replica mirror output", s, rq, b.gnd, v["wtn"], lt)
	// The clamp: node c = V_GS of the tail at itail; cg = c − V_SG; the
	// clamp, matched to that diode, conducts once s rises above c.
	cn, cg := c.Node("c"), c.Node("cg")
	b.mos(device.NMOS, "tail replica diode", cn, cn, b.gnd, v["wl"]/4, lt)
	b.mos(device.PMOS, "clamp level shift", cg, cg, cn, v["wcl"], lt)
	c.AddISource("IC", b.vdd, cn, constDrive(v["itail"]/4+v["itail"]/16), false)
	c.AddISource("ICG", cg, b.gnd, constDrive(v["itail"]/16), false)
	b.mos(device.PMOS, "tail clamp", b.gnd, cg, s, v["wcl"], lt)
	c.Guess[cn] = 0.7
	c.Guess[cg] = 0.1
	c.Guess[fs] = 1.2
	c.Guess[f1] = 0.6
	c.Guess[s] = 0.5
	c.Guess[pa] = cond.Supply - 0.6
	c.Guess[q] = cond.Supply - 0.3
	c.Guess[rq] = 0.5
	return b.finish(), nil
}
