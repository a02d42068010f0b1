package topologies

import (
	"pairsmith/sim/device"
	"pairsmith/units"
)

// zener keeps both pairs with their own tails and connects the two tail
// nodes through an electronic zener: a wide PMOS shunt from the PMOS tail
// node to the NMOS tail node whose gate sits one NMOS gate-source voltage
// (a diode-connected replica of the NMOS input device, biased at ir)
// above the NMOS tail node. The shunt conducts only when
// V(tp) − V(tn) exceeds V_GS,replica + |V_T,p|; where both pairs conduct it
// takes the excess tail current and so holds V_GS,n + V_SG,p constant,
// which in strong inversion keeps √I_n + √I_p and hence gm nearly
// constant (R. Hogervorst, R. J. Wiegerink, P. A. L. de Jong, J. Fonderie,
// R. F. Wassenaar, J. H. Huijsing, "CMOS low-voltage operational amplifiers
// with constant-gm rail-to-rail input stage", Analog Integrated Circuits
// and Signal Processing 5, 1994; from memory). The replica tracks the NMOS
// threshold over process and temperature; the shunt's own threshold
// tracks the PMOS one.
type zener struct{}

var (
	pWZ = Param{Name: "wz", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 5000e-6, Default: 1700e-6, Scale: Log, Doc: "width of the zener's PMOS shunt (wide: a sharp knee)"}
	pLZ = Param{Name: "lz", Unit: units.Metre, Size: Length, Min: 0.18e-6, Max: 20e-6, Default: 10e-6, Scale: Log, Doc: "length of the zener's PMOS shunt"}
	pWR = Param{Name: "wr", Unit: units.Metre, Size: Width, Min: 0.25e-6, Max: 500e-6, Default: 0.5e-6, Scale: Log, Doc: "width of the zener's NMOS replica (length ln)"}
	pIR = Param{Name: "ir", Unit: units.Ampere, Min: 0.01e-6, Max: 500e-6, Default: 0.125e-6, Scale: Log, Doc: "bias current of the zener's replica"}
)

func (zener) Name() string { return "zener" }
func (zener) Summary() string {
	return "both tails joined by an electronic zener that holds V_GS,n + V_SG,p constant"
}
func (zener) Params() []Param {
	return pairParams(true, true, pWZ, pLZ, pWR, pIR)
}

func (f zener) Build(v Values, cond Conditions) (*Stage, error) {
	b, err := newBuilder(f, v, cond)
	if err != nil {
		return nil, err
	}
	c := b.c
	tn, tp, gz := c.Node("tn"), c.Node("tp"), c.Node("gz")
	b.nPair(tn)
	b.pPair(tp)
	b.nTail(tn)
	bp := b.pTail(tp)
	b.mos(device.PMOS, "zener shunt", Exempt, tn, gz, tp, b.p(pWZ), b.p(pLZ))
	b.mos(device.NMOS, "zener replica", Diode, gz, gz, tn, b.p(pWR), b.p(pLN))
	// The replica's bias mirrors the PMOS reference: width in proportion
	// to ir / itail.
	b.mos(device.PMOS, "zener bias", Saturated, gz, bp, b.vdd, b.p(pWTP)*b.p(pIR)/b.p(pITail), b.p(pLT))
	c.Guess[gz] = cond.Supply / 2
	return b.finish()
}
