package topologies

import (
	"pairsmith/sim/device"
	"pairsmith/units"
)

// mirror1to3 keeps both pairs with their own tails and adds two current
// switches with 1:3 mirrors (Hogervorst et al., IEEE JSSC 29(12), 1994;
// from memory). Near the supply, a PMOS switch (source on the PMOS pair's
// common source, gate at vrefp) takes the PMOS tail current as that pair
// runs out of headroom and a 1:3 NMOS mirror adds three times it to the
// NMOS tail; near ground an NMOS switch at vrefn does the same for the
// NMOS tail into the PMOS pair. The pair left conducting then carries four
// times the tail current, which in strong inversion gives twice its gm:
// the same as both pairs together in the middle. In the handover
// gm ∝ √(1−x) + √(1+3x), at most 15.5 % above the ends.
type mirror1to3 struct{}

var (
	pVRefN = Param{Name: "vrefn", Unit: units.Volt, Min: 0, Max: 5, Default: 0.78, Scale: Linear, Doc: "gate voltage of the NMOS switch: the lower handover"}
	pVRefP = Param{Name: "vrefp", Unit: units.Volt, Min: 0, Max: 5, Default: 0.89, Scale: Linear, Doc: "gate voltage of the PMOS switch: the upper handover"}
	pWSwN  = Param{Name: "wswn", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 500e-6, Default: 22e-6, Scale: Log, Doc: "width of the NMOS switch (length ln)"}
	pWSwP  = Param{Name: "wswp", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 2000e-6, Default: 92e-6, Scale: Log, Doc: "width of the PMOS switch (length lp)"}
	pWMN   = Param{Name: "wmn", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 500e-6, Default: 5e-6, Scale: Log, Doc: "width of the NMOS 1:3 mirror's input (its output is 3 × wmn)"}
	pWMP   = Param{Name: "wmp", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 2000e-6, Default: 20e-6, Scale: Log, Doc: "width of the PMOS 1:3 mirror's input (its output is 3 × wmp)"}
)

func (mirror1to3) Name() string { return "mirror-1to3" }
func (mirror1to3) Summary() string {
	return "both tails; two current switches feed 1:3 mirrors so one pair alone carries four times the current"
}
func (mirror1to3) Params() []Param {
	return pairParams(true, true, pVRefN, pVRefP, pWSwN, pWSwP, pWMN, pWMP)
}

func (f mirror1to3) Build(v Values, cond Conditions) (*Stage, error) {
	b, err := newBuilder(f, v, cond)
	if err != nil {
		return nil, err
	}
	c := b.c
	tn, tp := c.Node("tn"), c.Node("tp")
	mn, mp := c.Node("mn"), c.Node("mp")
	b.nPair(tn)
	b.pPair(tp)
	b.nTail(tn)
	b.pTail(tp)
	vrefn := b.refVoltage("vrefn", b.p(pVRefN))
	vrefp := b.refVoltage("vrefp", b.p(pVRefP))
	// Lower handover: NMOS switch into the PMOS 1:3 mirror feeding tp.
	b.mos(device.NMOS, "nmos current switch", Saturated, mp, vrefn, tn, b.p(pWSwN), b.p(pLN))
	b.mos(device.PMOS, "pmos mirror input", Diode, mp, mp, b.vdd, b.p(pWMP), b.p(pLT))
	b.mos(device.PMOS, "pmos mirror output (x3)", Saturated, tp, mp, b.vdd, 3*b.p(pWMP), b.p(pLT))
	// Upper handover: PMOS switch into the NMOS 1:3 mirror feeding tn.
	b.mos(device.PMOS, "pmos current switch", Saturated, mn, vrefp, tp, b.p(pWSwP), b.p(pLP))
	b.mos(device.NMOS, "nmos mirror input", Diode, mn, mn, b.gnd, b.p(pWMN), b.p(pLT))
	b.mos(device.NMOS, "nmos mirror output (x3)", Saturated, tn, mn, b.gnd, 3*b.p(pWMN), b.p(pLT))
	c.Guess[mn] = 0.3
	c.Guess[mp] = cond.Supply - 0.3
	return b.finish()
}
