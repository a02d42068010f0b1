package topologies

import (
	"fmt"
	"math"
	"strconv"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/units"
)

// Shared parameters. Defaults are sized for the demo18 process at 1.8 V:
// moderate inversion in the pairs, tails of about 0.15 V saturation
// voltage. The PMOS devices are four times wider than the NMOS ones,
// which is demo18's kp ratio, so that the two pairs give equal gm at equal
// current. The bounds of widths and lengths follow the process's rules
// (ParamsFor).
var (
	pWN    = Param{Name: "wn", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 500e-6, Default: 20e-6, Scale: Log, Doc: "width of each NMOS input transistor"}
	pLN    = Param{Name: "ln", Unit: units.Metre, Size: Length, Min: 0.18e-6, Max: 10e-6, Default: 1e-6, Scale: Log, Doc: "length of the NMOS input transistors"}
	pWP    = Param{Name: "wp", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 2000e-6, Default: 80e-6, Scale: Log, Doc: "width of each PMOS input transistor"}
	pLP    = Param{Name: "lp", Unit: units.Metre, Size: Length, Min: 0.18e-6, Max: 10e-6, Default: 1e-6, Scale: Log, Doc: "length of the PMOS input transistors"}
	pITail = Param{Name: "itail", Unit: units.Ampere, Min: 0.1e-6, Max: 1e-3, Default: 20e-6, Scale: Log, Doc: "tail current of each input pair"}
	pWTN   = Param{Name: "wtn", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 500e-6, Default: 10e-6, Scale: Log, Doc: "width of the NMOS tail (and current-sink) transistors"}
	pWTP   = Param{Name: "wtp", Unit: units.Metre, Size: Width, Min: 0.5e-6, Max: 2000e-6, Default: 40e-6, Scale: Log, Doc: "width of the PMOS tail (and current-source) transistors"}
	pLT    = Param{Name: "lt", Unit: units.Metre, Size: Length, Min: 0.18e-6, Max: 10e-6, Default: 2e-6, Scale: Log, Doc: "length of all tail, mirror and reference transistors"}
	pKBias = Param{Name: "kbias", Unit: units.Dimensionless, Min: 1, Max: 10, Default: 4, Scale: Linear, Doc: "tail current over reference-branch current"}
	pVHead = Param{Name: "vhead", Unit: units.Volt, Size: Headroom, Min: 0.05, Max: 0.6, Default: 0.2, Scale: Linear, Doc: "headroom of the summing nodes from the rails (at least the summing stage's V_DSAT plus the saturation margin)"}
	// PBiasLaw is every family's reference-current temperature law
	// (BiasLaws, docs/families.md#reference-temperature-laws).
	PBiasLaw = Param{Name: "bias_law", Unit: units.Dimensionless, Min: 0, Max: float64(len(BiasLaws) - 1), Default: 0, Scale: Choice,
		Choices: BiasLaws, Doc: "temperature law of the reference currents: constant, ptat (∝ T) or constant-gm (a β-multiplier's, ∝ 1/KP_n(T))"}
)

// BiasLaws are the reference currents' temperature laws, by the index
// the bias_law parameter holds: constant, ptat and constant-gm.
var BiasLaws = []string{"constant", "ptat", "constant-gm"}

// The indices of BiasLaws.
const (
	LawConstant = iota
	LawPTAT
	LawConstantGM
)

func pairParams(n, p bool, extra ...Param) []Param {
	// One allocation: the search reads a family's parameters several times
	// an evaluation.
	ps := make([]Param, 0, 10+len(extra))
	if n {
		ps = append(ps, pWN, pLN)
	}
	if p {
		ps = append(ps, pWP, pLP)
	}
	ps = append(ps, pITail)
	if n {
		ps = append(ps, pWTN)
	}
	if p {
		ps = append(ps, pWTP)
	}
	ps = append(ps, pLT, pKBias, pVHead)
	return append(append(ps, extra...), PBiasLaw)
}

// builder assembles a stage and its bench.
type builder struct {
	c          *sim.Circuit
	st         *Stage
	v          Values
	cond       Conditions
	rules      device.Rules
	nm, pm     device.Model
	vdd, gnd   sim.Node
	inp, inn   sim.Node
	count      int
	iout       []sim.Term
	in, ip     []sim.Term
	powerTerms []sim.Term
	err        error // the first parameter the family read without declaring it
	sides      map[sim.Node]Side
}

// The sizes a builder reserves for its circuit: the largest family's
// (the square-root loop) with room to spare.
const (
	builderNodes   = 24
	builderMosfets = 20
	builderSources = 16
)

// newBuilder starts a circuit: supply and the two inputs,
// inp = vcm + vid/2 and inn = vcm − vid/2.
func newBuilder(f Family, v Values, cond Conditions) (*builder, error) {
	family := f.Name()
	if cond.Process == nil {
		return nil, fmt.Errorf("%s: no process given", family)
	}
	if !(cond.Supply > 0) {
		return nil, fmt.Errorf("%s: supply %g V, want > 0", family, cond.Supply)
	}
	for _, p := range f.Params() {
		if _, ok := v[p.Name]; !ok {
			return nil, fmt.Errorf("%s: parameter %s not given (complete the values first)", family, p.Name)
		}
	}
	// The title names the circuit in error messages: six digits suffice
	// there, and units.Format's exact rendering of a temperature in °C
	// (parsed back with rational arithmetic) cost 1.5 % of a search.
	title := fmt.Sprintf("%s on %s at %.6gV, %.6gC", family, cond.Process.Name, cond.Supply, cond.TempK-units.ZeroCelsius)
	c := sim.New(title, cond.TempK)
	c.Reserve(builderNodes, builderMosfets, builderSources)
	b := &builder{
		c: c, v: v, cond: cond, rules: cond.Process.Rules,
		nm: cond.Process.Card(device.NMOS), pm: cond.Process.Card(device.PMOS),
		sides: map[sim.Node]Side{},
	}
	b.st = &Stage{Family: family, Circuit: c, Devices: make([]Device, 0, builderMosfets)}
	b.vdd = c.Node("vdd")
	b.gnd = sim.Ground
	b.inp = c.Node("inp")
	b.inn = c.Node("inn")
	c.AddVSource("VDD", b.vdd, b.gnd, sim.Const(cond.Supply), true)
	c.AddVSource("VINP", b.inp, b.gnd, sim.Drive{CM: 1, DM: 0.5}, true)
	c.AddVSource("VINN", b.inn, b.gnd, sim.Drive{CM: 1, DM: -0.5}, true)
	b.powerTerms = append(b.powerTerms, sim.Term{Source: "VDD", Coef: -cond.Supply})
	return b, nil
}

// p returns the value of a declared parameter: reading parameters by
// their declarations, not by strings, a misspelt name does not compile,
// and a parameter the family forgot to declare is an error of Build
// (finish), not a silent zero.
func (b *builder) p(par Param) float64 {
	x, ok := b.v[par.Name]
	if !ok {
		if b.err == nil {
			b.err = fmt.Errorf("%s: reads parameter %s, which it does not declare", b.st.Family, par.Name)
		}
		return math.NaN()
	}
	return x
}

// mos adds a transistor with the next free name. NMOS bulks go to ground
// and PMOS bulks to the supply, as in a single-well process.
func (b *builder) mos(t device.Type, role string, duty Duty, d, g, s sim.Node, w, l float64) string {
	bulk := b.gnd
	if t == device.PMOS {
		bulk = b.vdd
	}
	return b.addMos(t, role, duty, d, g, s, bulk, w, l)
}

// mosInWell adds a transistor whose bulk is tied to its source: for a PMOS,
// a well of its own, as translinear loops are laid out.
func (b *builder) mosInWell(t device.Type, role string, duty Duty, d, g, s sim.Node, w, l float64) string {
	return b.addMos(t, role, duty, d, g, s, s, w, l)
}

// addMos adds a transistor of type t with the next free name, its width
// and length snapped to the process grid, and records the rules its
// drawn size breaks.
func (b *builder) addMos(t device.Type, role string, duty Duty, d, g, s, bulk sim.Node, w, l float64) string {
	b.count++
	name := "M" + strconv.Itoa(b.count)
	m := b.nm
	if t == device.PMOS {
		m = b.pm
	}
	geom := device.Geometry{W: b.rules.Snap(w), L: b.rules.Snap(l)}
	b.c.AddMosfet(name, d, g, s, bulk, m, geom)
	side := b.sides[d]
	if side == NoSide {
		side = b.sides[s]
	}
	b.st.Devices = append(b.st.Devices, Device{Name: name, Role: role, Type: t, Geom: geom, Duty: duty, Side: side})
	for _, is := range b.rules.Check(geom) {
		b.st.Geometry = append(b.st.Geometry, GeometryViolation{Device: name, Role: role, GeometryIssue: is})
	}
	return name
}

// nPair adds the NMOS input pair with common source tn and its drains on
// summing nodes held at supply − vhead.
func (b *builder) nPair(tn sim.Node) {
	c := b.c
	b.sides[tn] = NSide
	dn1, dn2 := c.Node("dn1"), c.Node("dn2")
	b.st.PairN[0] = b.mos(device.NMOS, "nmos input", Saturated, dn1, b.inp, tn, b.p(pWN), b.p(pLN))
	b.st.PairN[1] = b.mos(device.NMOS, "nmos input", Saturated, dn2, b.inn, tn, b.p(pWN), b.p(pLN))
	vs := b.cond.Supply - b.p(pVHead)
	c.AddVSource("VDN1", dn1, b.gnd, sim.Const(vs), true)
	c.AddVSource("VDN2", dn2, b.gnd, sim.Const(vs), true)
	// The NMOS pair's current comes from the summing stage's sources at
	// the supply; the power probe leaves it out and Stage.SummingPower
	// counts those sources' bias instead.
	b.iout = append(b.iout, sim.Term{Source: "VDN1", Coef: -1}, sim.Term{Source: "VDN2", Coef: 1})
	b.in = []sim.Term{{Source: "VDN1", Coef: -1}, {Source: "VDN2", Coef: -1}}
	b.c.Guess[tn] = 0.1
}

// pPair adds the PMOS input pair with common source tp and its drains on
// summing nodes held at vhead.
func (b *builder) pPair(tp sim.Node) {
	c := b.c
	b.sides[tp] = PSide
	dp1, dp2 := c.Node("dp1"), c.Node("dp2")
	b.st.PairP[0] = b.mos(device.PMOS, "pmos input", Saturated, dp1, b.inp, tp, b.p(pWP), b.p(pLP))
	b.st.PairP[1] = b.mos(device.PMOS, "pmos input", Saturated, dp2, b.inn, tp, b.p(pWP), b.p(pLP))
	c.AddVSource("VDP1", dp1, b.gnd, sim.Const(b.p(pVHead)), true)
	c.AddVSource("VDP2", dp2, b.gnd, sim.Const(b.p(pVHead)), true)
	b.iout = append(b.iout, sim.Term{Source: "VDP1", Coef: -1}, sim.Term{Source: "VDP2", Coef: 1})
	b.ip = []sim.Term{{Source: "VDP1", Coef: 1}, {Source: "VDP2", Coef: 1}}
	b.c.Guess[tp] = b.cond.Supply - 0.1
}

// nBias adds an NMOS reference branch: an ideal reference current i from
// the supply into a diode-connected NMOS of width w. It returns the gate
// node, from which any NMOS of length lt mirrors the current in
// proportion to its width.
func (b *builder) nBias(name string, i, w float64) sim.Node {
	g := b.c.Node(name)
	b.mos(device.NMOS, "nmos reference", Diode, g, g, b.gnd, w, b.p(pLT))
	b.c.AddISource("I"+name, b.vdd, g, sim.Const(i), false)
	b.c.Guess[g] = 0.6
	return g
}

// pBias adds a PMOS reference branch: a diode-connected PMOS of width w
// from the supply whose current i flows to ground through an ideal source.
func (b *builder) pBias(name string, i, w float64) sim.Node {
	g := b.c.Node(name)
	b.mos(device.PMOS, "pmos reference", Diode, g, g, b.vdd, w, b.p(pLT))
	b.c.AddISource("I"+name, g, b.gnd, sim.Const(i), false)
	b.c.Guess[g] = b.cond.Supply - 0.6
	return g
}

// nTail adds an NMOS tail sinking itail from tn, mirrored from its own
// reference branch at itail/kbias.
func (b *builder) nTail(tn sim.Node) {
	bn := b.nBias("bn", b.p(pITail)/b.p(pKBias), b.p(pWTN)/b.p(pKBias))
	b.mos(device.NMOS, "nmos tail", Saturated, tn, bn, b.gnd, b.p(pWTN), b.p(pLT))
}

// pTail adds a PMOS tail sourcing itail into tp from the supply. It
// returns the reference gate, from which other PMOS sources can mirror.
func (b *builder) pTail(tp sim.Node) sim.Node {
	bp := b.pBias("bp", b.p(pITail)/b.p(pKBias), b.p(pWTP)/b.p(pKBias))
	b.mos(device.PMOS, "pmos tail", Saturated, tp, bp, b.vdd, b.p(pWTP), b.p(pLT))
	return bp
}

// refVoltage adds an ideal reference voltage (a bias the stage receives
// from elsewhere, drawing no current) at a node of its own.
func (b *builder) refVoltage(name string, val float64) sim.Node {
	n := b.c.Node(name)
	b.c.AddVSource("V"+name, n, b.gnd, sim.Const(val), false)
	return n
}

// finish adds the probes and the port list; its error is the first
// undeclared parameter the family read.
func (b *builder) finish() (*Stage, error) {
	if b.err != nil {
		return nil, b.err
	}
	c := b.c
	if err := b.applyBiasLaw(); err != nil {
		return nil, err
	}
	c.AddProbe(ProbeOut, b.iout...)
	c.AddProbe(ProbeIN, b.in...)
	c.AddProbe(ProbeIP, b.ip...)
	c.AddProbe(ProbePower, b.powerTerms...)
	c.Output = ProbeOut
	ports := []sim.Node{b.inp, b.inn, b.vdd, b.gnd}
	for _, name := range []string{"dn1", "dn2", "dp1", "dp2"} {
		for n := 1; n < c.NumNodes(); n++ {
			if c.NodeName(sim.Node(n)) == name {
				ports = append(ports, sim.Node(n))
			}
		}
	}
	b.st.Ports = ports
	b.st.Roles = make(map[string]string, len(b.st.Devices))
	for _, d := range b.st.Devices {
		b.st.Roles[d.Name] = d.Role
	}
	b.st.VHead = b.p(pVHead)
	b.st.Supply = b.cond.Supply
	return b.st, nil
}

// applyBiasLaw puts the family's reference-current temperature law on
// every reference current of the stage (its sources that are not the
// bench's): each has its parameter value at the reference temperature
// (Conditions.BiasRefK) and scales as (T/T_ref)^e at the circuit's
// temperature T — e = 0 for constant, 1 for ptat, and for constant-gm
// minus the NMOS card's mobility exponent, the current of a β-multiplier
// reference with a temperature-independent resistor, I ∝ 1/(KP_n·R²)
// (Razavi, Design of Analog CMOS Integrated Circuits, "constant-Gm
// biasing", from memory), which holds a square-law device's gm constant.
// At the reference temperature every law leaves the currents as they
// are, bit for bit.
func (b *builder) applyBiasLaw() error {
	law := b.p(PBiasLaw)
	if b.err != nil {
		return b.err
	}
	exp := 0.0
	switch int(law) {
	case LawPTAT:
		exp = 1
	case LawConstantGM:
		e, ok := device.MobilityExponent(b.nm)
		if !ok {
			return fmt.Errorf("%s: bias_law constant-gm needs a card with a power-law mobility, and the NMOS card of %s has none", b.st.Family, b.cond.Process.Name)
		}
		exp = -e
	}
	ref := b.cond.BiasRefK
	if ref == 0 {
		ref = b.cond.TempK
	}
	factor := 1.0
	if exp != 0 && ref != b.cond.TempK {
		factor = math.Pow(b.cond.TempK/ref, exp)
	}
	for i := range b.c.ISources {
		is := &b.c.ISources[i]
		if is.Bench {
			continue
		}
		if exp != 0 {
			is.Law = &sim.TempLaw{Ref: is.Value.DC, RefK: ref, Exp: exp}
		}
		is.Value.DC *= factor
	}
	return nil
}
