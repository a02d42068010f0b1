package topologies

import (
	"pairsmith/sim/device"
	"pairsmith/units"
)

// currentSwitch is the complementary stage with one tail and a current
// switch: the PMOS tail feeds the PMOS pair; a PMOS switch transistor,
// source on the pair's common source and gate at vref, takes the tail
// current once the common mode rises above about vref, and an NMOS mirror
// of ratio `ratio` hands that current to the NMOS pair as its tail. Only
// one pair conducts at each end, so in strong inversion gm at the two ends
// is equal (with matched pairs and ratio 1); in the handover both carry
// part of the current and gm rises by up to √2 (R. Hogervorst, J. P. Tero,
// R. G. H. Eschauzier, J. H. Huijsing, "A compact power-efficient 3 V CMOS
// rail-to-rail input/output operational amplifier for VLSI cell
// libraries", IEEE JSSC 29(12), 1994, and the current-switch stages it
// builds on; from memory). The switch has the PMOS pair's length; at
// twice the width of one input transistor it matches the pair as a whole,
// which centres the handover on vref.
type currentSwitch struct{}

var (
	pVRef  = Param{Name: "vref", Unit: units.Volt, Min: 0, Max: 5, Default: 0.95, Scale: Linear, Doc: "gate voltage of the current switch: where the handover is centred"}
	pRatio = Param{Name: "ratio", Unit: units.Dimensionless, Min: 0.25, Max: 4, Default: 1, Scale: Linear, Doc: "gain of the mirror from the switch to the NMOS tail"}
	pWSw   = Param{Name: "wsw", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 4000e-6, Default: 160e-6, Scale: Log, Doc: "width of the switch transistor (length lp); twice wp centres the handover on vref"}
	pWM    = Param{Name: "wm", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 500e-6, Default: 10e-6, Scale: Log, Doc: "width of the mirror's input transistor (the output is ratio × wm)"}
)

func (currentSwitch) Name() string { return "current-switch" }
func (currentSwitch) Summary() string {
	return "one PMOS tail; a switch at vref hands its current to the NMOS pair through a mirror"
}
func (currentSwitch) Params() []Param {
	return []Param{pWN, pLN, pWP, pLP, pITail, pWTP, pLT, pKBias, pVHead, pVRef, pRatio, pWSw, pWM, PBiasLaw}
}

func (f currentSwitch) Build(v Values, cond Conditions) (*Stage, error) {
	b, err := newBuilder(f, v, cond)
	if err != nil {
		return nil, err
	}
	c := b.c
	tn, tp, sw := c.Node("tn"), c.Node("tp"), c.Node("sw")
	b.nPair(tn)
	b.pPair(tp)
	b.pTail(tp)
	vref := b.refVoltage("vref", b.p(pVRef))
	b.mos(device.PMOS, "current switch", Saturated, sw, vref, tp, b.p(pWSw), b.p(pLP))
	b.mos(device.NMOS, "mirror input", Diode, sw, sw, b.gnd, b.p(pWM), b.p(pLT))
	b.mos(device.NMOS, "nmos tail (mirror output)", Saturated, tn, sw, b.gnd, b.p(pRatio)*b.p(pWM), b.p(pLT))
	c.Guess[sw] = 0.3
	return b.finish()
}
