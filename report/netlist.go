package report

import (
	"bufio"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"

	"pairsmith/objectives"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// Model names the decks give the two device types.
const (
	NMOSModel = "nch"
	PMOSModel = "pch"
)

func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// spiceNode names a node in a deck; inside a .subckt ground is the vss port.
func spiceNode(c *sim.Circuit, n sim.Node, sub bool) string {
	if n == sim.Ground {
		if sub {
			return "vss"
		}
		return "0"
	}
	return c.NodeName(n)
}

func modelName(t device.Type) string {
	if t == device.PMOS {
		return PMOSModel
	}
	return NMOSModel
}

// withNoise adds a process's noise coefficients of device type t, when
// it gives them, to a .model line: kf, af and tox, so that ngspice's
// .noise has pairsmith's flicker noise (docs/noise.md).
func withNoise(card string, n device.Noise, t device.Type) string {
	if !n.Given || !strings.HasSuffix(card, ")") {
		return card
	}
	c := n.For(t)
	return strings.TrimSuffix(card, ")") + fmt.Sprintf(" kf=%s af=%s tox=%s)", num(c.KF), num(c.AF), num(c.TOX))
}

// ownCard returns the name of transistor m's own card — one that is not
// process p's card of its type, as in a Monte Carlo sample
// (objectives.WithShifts) — and whether it has one.
func ownCard(m sim.Mosfet, p *device.Process) (string, bool) {
	if p == nil || m.Model == p.Card(m.Model.Type()) {
		return "", false
	}
	return modelName(m.Model.Type()) + "_" + strings.ToLower(m.Name), true
}

// writeStage writes the stage's own elements: every transistor, resistor
// and controlled source, and the sources that are not part of the bench.
// A transistor whose card is not process p's refers to its own
// (ownCard).
func writeStage(w *bufio.Writer, st *topologies.Stage, sub bool, p *device.Process) {
	c := st.Circuit
	nd := func(n sim.Node) string { return spiceNode(c, n, sub) }
	for _, m := range c.Mosfets {
		model := modelName(m.Model.Type())
		if own, ok := ownCard(m, p); ok {
			model = own
		}
		line := fmt.Sprintf("%s %s %s %s %s %s w=%s l=%s", m.Name, nd(m.D), nd(m.G), nd(m.S), nd(m.B),
			model, num(m.Geom.W), num(m.Geom.L))
		if m.Geom.Mult() != 1 {
			line += " m=" + num(m.Geom.Mult())
		}
		if role := st.Roles[m.Name]; role != "" {
			line += " $ " + role
		}
		fmt.Fprintln(w, line)
	}
	for _, r := range c.Resistors {
		fmt.Fprintf(w, "%s %s %s %s\n", r.Name, nd(r.A), nd(r.B), num(r.R))
	}
	for _, v := range c.VSources {
		if !v.Bench {
			fmt.Fprintf(w, "%s %s %s DC %s\n", v.Name, nd(v.P), nd(v.N), num(v.Value.DC))
		}
	}
	for _, i := range c.ISources {
		switch {
		case i.Bench:
		case i.Law != nil:
			// A reference current with a temperature law: a behavioural
			// source that ngspice evaluates at its own .temp (temper, °C).
			fmt.Fprintf(w, "B%s %s %s I = %s*pow((temper+%s)/%s, %s)\n", i.Name, nd(i.P), nd(i.N),
				num(i.Law.Ref), num(units.ZeroCelsius), num(i.Law.RefK), num(i.Law.Exp))
		default:
			fmt.Fprintf(w, "%s %s %s DC %s\n", i.Name, nd(i.P), nd(i.N), num(i.Value.DC))
		}
	}
	for _, g := range c.VCCSs {
		fmt.Fprintf(w, "%s %s %s %s %s %s\n", g.Name, nd(g.P), nd(g.N), nd(g.CP), nd(g.CN), num(g.G))
	}
	for _, e := range c.VCVSs {
		fmt.Fprintf(w, "%s %s %s %s %s %s\n", e.Name, nd(e.P), nd(e.N), nd(e.CP), nd(e.CN), num(e.Gain))
	}
}

// header writes a deck's title line (what it is and the design's
// conditions), then the notice lines, the caution and the parameters.
func header(w *bufio.Writer, d *objectives.Design, what string, notice ...string) {
	fmt.Fprintf(w, "* pairsmith %s: %s on %s%s, supply %s, %s\n", what, d.Topology, d.Process.Name, atCorner(d.Process),
		units.Format(d.Supply, units.Volt), units.Format(d.TempK, units.Temperature))
	for _, l := range notice {
		fmt.Fprintf(w, "* %s\n", l)
	}
	fmt.Fprintf(w, "* %s\n", objectives.Caution)
	fam, err := d.Family()
	if err == nil {
		var parts []string
		for _, p := range fam.Params() {
			parts = append(parts, p.Name+"="+p.Text(d.Params[p.Name]))
		}
		for len(parts) > 0 {
			k := min(6, len(parts))
			fmt.Fprintf(w, "* %s\n", strings.Join(parts[:k], " "))
			parts = parts[k:]
		}
	}
}

// atCorner names the process corner of p's cards for a deck's comments,
// "" for the typical one.
func atCorner(p *device.Process) string {
	if p.Corner == "" || p.Corner == device.Typical {
		return ""
	}
	return " at corner " + p.Corner
}

// celsius writes a temperature in kelvin as the °C number of a .temp
// line: the shortest decimal that reads back to the same kelvin
// (units.Format), so that −40 °C is "-40", not "-39.99999999999997".
func celsius(k float64) string {
	if s := units.Format(k, units.Temperature); strings.HasSuffix(s, "C") {
		return strings.TrimSuffix(s, "C")
	}
	return num(k - units.ZeroCelsius)
}

// SubcktName is the name the .subckt of a design gets.
func SubcktName(d *objectives.Design) string {
	return "ps_" + strings.ReplaceAll(d.Topology, "-", "_")
}

// Subckt writes the stage as a .subckt whose ports are the inputs, the
// supplies and the pairs' drains: inp inn vdd vss [dn1 dn2] [dp1 dp2].
// The caller provides the models nch and pch.
func Subckt(out io.Writer, d *objectives.Design, st *topologies.Stage) error {
	w := bufio.NewWriter(out)
	header(w, d, "stage", "No .model cards: the deck that includes it supplies "+NMOSModel+" and "+PMOSModel+" (your foundry's).")
	c := st.Circuit
	var ports []string
	for _, p := range st.Ports {
		ports = append(ports, spiceNode(c, p, true))
	}
	fmt.Fprintf(w, "* ports: %s\n", strings.Join(ports, " "))
	fmt.Fprintf(w, ".subckt %s %s\n", SubcktName(d), strings.Join(ports, " "))
	writeStage(w, st, true, nil)
	fmt.Fprintf(w, ".ends %s\n", SubcktName(d))
	return w.Flush()
}

// TestbenchOptions choose what a testbench deck carries beyond the
// circuit.
type TestbenchOptions struct {
	// SummingCurrent is the summing stage's bias the evaluation counted
	// in power (objectives.Evaluation.SummingCurrent), A; when positive
	// the deck states it beside its ideal summing nodes.
	SummingCurrent float64
	// DC makes the deck give gm directly: a .control block runs the
	// design's common-mode sweep (the .dc line) twice, at VID = +GMStep
	// and at VID = −GMStep, and prints gm = (I⁺(VOUT) − I⁻(VOUT))/(2·GMStep)
	// against VCM. It also tightens ngspice's tolerances (see gmOptions).
	DC bool
	// Level1Equivalent lets Testbench write a deck for a process whose
	// cards no SPICE simulator runs (EKV): the deck then carries the
	// nearest level-1 cards (Level1Equivalent) and says so in its first
	// lines. Without it such a process is a *NoSpiceModelError. For a
	// level-1 process it changes nothing.
	Level1Equivalent bool
}

// What a testbench deck's model cards are, as summary.json's
// "netlist_model" gives them.
const (
	// DeckLevel1: the process's own level-1 cards; ngspice runs the deck
	// with the equations pairsmith used.
	DeckLevel1 = "level1"
	// DeckLevel1Equivalent: the nearest level-1 cards of an EKV process
	// (Level1Equivalent); ngspice runs the deck, but its numbers differ
	// from pairsmith's EKV results.
	DeckLevel1Equivalent = "level1-equivalent"
)

// DeckModel says which cards a testbench of a design on process p
// carries: DeckLevel1 when both of the process's cards are SPICE cards,
// else DeckLevel1Equivalent.
func DeckModel(p *device.Process) string {
	if spiceCards(p) {
		return DeckLevel1
	}
	return DeckLevel1Equivalent
}

func spiceCards(p *device.Process) bool {
	_, nOK := p.N.(device.SpiceCarder)
	_, pOK := p.P.(device.SpiceCarder)
	return nOK && pOK
}

// NoSpiceModelError is Testbench's answer for a process whose model no
// SPICE simulator runs when no level-1 equivalent was asked for.
type NoSpiceModelError struct {
	Process string // the process's name
	Kind    string // its model kind ("ekv")
}

func (e *NoSpiceModelError) Error() string {
	return fmt.Sprintf("process %s uses the %s model, which ngspice cannot simulate: a deck with its cards would not run",
		e.Process, KindName(e.Kind))
}

// Level1Equivalent returns the nearest SPICE level-1 version of a process:
// its level-1 cards as they are, each EKV card mapped by level1FromEKV.
// The result has the process's name and tnom and kind "level1"; a card of
// any other model is an error.
func Level1Equivalent(p *device.Process) (*device.Process, error) {
	conv := func(m device.Model) (device.Model, error) {
		switch c := m.(type) {
		case *device.Level1:
			return c, nil
		case *device.EKV:
			return level1FromEKV(c), nil
		}
		return nil, fmt.Errorf("process %s: no level-1 equivalent of a %s card", p.Name, m.Kind())
	}
	n, err := conv(p.N)
	if err != nil {
		return nil, err
	}
	pc, err := conv(p.P)
	if err != nil {
		return nil, err
	}
	return &device.Process{
		Name: p.Name, Doc: "level-1 equivalent of " + p.Name + " (" + p.Kind + ")",
		Kind: "level1", TnomK: p.TnomK, N: n, P: pc,
	}, nil
}

// level1FromEKV maps an EKV card to the level-1 card nearest to it. The two
// models share their parameters' meanings, so each one is carried over as
// it is:
//
//   - VTO → vto: both are the threshold at VSB = 0 (the EKV pinch-off
//     voltage VP is zero at VG = VTO with the source on the bulk).
//   - KP → kp: both are µ·Cox, with β = KP·W/(L − 2·LD) in both.
//   - GAMMA → gamma, PHI → phi: both models' threshold rises with the
//     source–bulk voltage as VTO + GAMMA·(√(VSB + PHI) − √PHI).
//   - LAMBDA → lambda: the same factor 1 + LAMBDA·VDS on the current
//     (the EKV card smooths |VDS| within a few U_T of zero).
//   - LD → ld: the same effective length.
//   - TCV, BEX: the EKV card's temperature law (VTO − type·TCV·(T − Tnom),
//     KP·(T/Tnom)^BEX, PHI fixed) is exactly the level-1 card's linear law
//     (Level1.LinearTemp), so the mapping keeps it; the deck then carries
//     vto and kp at the simulation temperature with tnom equal to it
//     (Level1.SpiceCard), and the simulator changes nothing.
//
// What level 1 cannot carry is the EKV model itself: it has no weak or
// moderate inversion (no current below threshold) and no slope factor n
// (its strong-inversion current is about n times EKV's at the same
// overdrive, so gm at a given current is about √n times higher), so the
// numbers of an equivalent deck differ from pairsmith's EKV results, most in
// weak and moderate inversion. Scaling kp by 1/n was left out: n depends on
// the bias, and a kp that is not the card's would hide which process the
// deck stands for.
func level1FromEKV(c *device.EKV) *device.Level1 {
	return &device.Level1{
		Polarity: c.Polarity, VTO: c.VTO, KP: c.KP, Gamma: c.Gamma, Phi: c.Phi,
		Lambda: c.Lambda, LD: c.LD, TnomK: c.TnomK,
		LinearTemp: true, TCV: c.TCV, BEX: c.BEX,
	}
}

// GMStep is the VID step of the --dc deck's central difference, V. The
// stage's output current is odd in VID (its halves are symmetric and the
// drains are held), so the difference's error is the cubic term:
// ΔV²/(8·V_ov²) relative for a square-law pair (1.3e-7 at V_ov = 100 mV),
// ΔV²/(3·(2·n·U_T)²) in weak inversion (8e-7); where a pair runs out of
// current near a rail (V_ov → 0) the error stays below about ΔV/V_ov of
// the peak gm, 1e-3 for a peak overdrive of 100 mV. All are far below the
// 1 % of the peak the checks hold ngspice to; a larger step would grow
// them, a much smaller one would leave gm to ngspice's iteration error
// (see gmOptions).
const GMStep = 1e-4

// gmOptions tighten ngspice's convergence for the --dc deck: gm is a
// difference of two currents divided by 2·GMStep = 0.2 mV, so an
// iteration error δI in a current is δI/0.2 mV in gm. With the default
// reltol = 1e-3 and vntol = 1 µV that bound is up to 5·I/V of current and
// 0.5 % of gm from a node voltage; with reltol = 1e-6 and vntol = 1 nV it is
// below 1e-5 of the peak gm (common practice, no source, for the choice of
// tolerances; the bounds follow from ngspice's convergence test, |Δx| ≤
// reltol·|x| + vntol or abstol).
const gmOptions = ".options reltol=1e-6 vntol=1e-9"

// ngspiceDCPoints returns the number of points ngspice's .dc gives from
// low to high in steps of step: it adds step to the source value and stops
// once the value exceeds high by more than 1000 machine epsilons (ngspice
// src/spicelib/analysis/dctrcurv.c). Unlike sim.SweepSpec it does not add
// high itself when the range is not a whole number of steps.
func ngspiceDCPoints(sp sim.SweepSpec) (int, error) {
	if _, err := sp.Points(); err != nil {
		return 0, err
	}
	n := 0
	for v := sp.Low; v-sp.High <= 1e3*2.220446049250313e-16; v += sp.Step {
		n++
	}
	return n, nil
}

// Testbench writes a self-contained deck that ngspice -b runs as it is
// (docs/files.md#testbench-deck): the model cards of a level-1 process (or, with
// opt.Level1Equivalent, of an EKV process's level-1 equivalent, which its
// first lines announce), the supply VDD, a common-mode source VCM, a
// zero-valued differential source VID driving inp = cm + VID/2 and
// inn = cm − VID/2 through controlled sources, the summing-node sources,
// and a zero-volt source VOUT whose current is the stage's differential
// output current, so that gm = d I(VOUT) / d VID. The stage's transistors
// keep the names the JSON of eval gives them. Without opt.DC the deck has
// no analysis. A process whose cards no SPICE simulator runs is a
// *NoSpiceModelError unless opt.Level1Equivalent is set.
func Testbench(out io.Writer, d *objectives.Design, st *topologies.Stage, opt TestbenchOptions) error {
	proc := d.Process
	equivalent := !spiceCards(proc)
	if equivalent {
		if !opt.Level1Equivalent {
			return &NoSpiceModelError{Process: proc.Name, Kind: proc.Kind}
		}
		var err error
		if proc, err = Level1Equivalent(d.Process); err != nil {
			return err
		}
	}
	points := 0
	if opt.DC {
		var err error
		if points, err = ngspiceDCPoints(d.Sweep); err != nil {
			return fmt.Errorf("testbench: %w", err)
		}
	}
	w := bufio.NewWriter(out)
	if equivalent {
		header(w, d, "testbench, LEVEL-1 EQUIVALENT of an "+KindName(d.Process.Kind)+" process", equivalentNotice(d)...)
	} else {
		header(w, d, "testbench")
	}
	c := st.Circuit
	fmt.Fprintln(w, "*")
	if equivalent {
		fmt.Fprintf(w, "* level-1 equivalent cards of process %s (%s), at %s\n", d.Process.Name, d.Process.Kind,
			units.Format(d.TempK, units.Temperature))
	} else {
		fmt.Fprintf(w, "* models of process %s (%s)%s\n", proc.Name, proc.Kind, atCorner(proc))
	}
	fmt.Fprintln(w, withNoise(proc.N.(device.SpiceCarder).SpiceCard(NMOSModel, d.TempK), d.Process.Noise, device.NMOS))
	fmt.Fprintln(w, withNoise(proc.P.(device.SpiceCarder).SpiceCard(PMOSModel, d.TempK), d.Process.Noise, device.PMOS))
	first := true
	for _, m := range c.Mosfets {
		name, ok := ownCard(m, d.Process)
		if !ok {
			continue
		}
		sc, spice := m.Model.(device.SpiceCarder)
		if equivalent || !spice {
			return fmt.Errorf("testbench: transistor %s has a card of its own, which a level-1 equivalent deck cannot carry", m.Name)
		}
		if first {
			fmt.Fprintln(w, "* each transistor's own card (a mismatch sample): the process's shifted in vto and kp")
			first = false
		}
		fmt.Fprintln(w, withNoise(sc.SpiceCard(name, d.TempK), d.Process.Noise, m.Model.Type()))
	}
	fmt.Fprintf(w, ".temp %s\n", celsius(d.TempK))
	fmt.Fprintln(w, "*")
	fmt.Fprintln(w, "* bench: supply, inputs, summing nodes, output current")
	fmt.Fprintln(w, "* The summing nodes are ideal sources here, so that gm compares as it is; the folded-cascode")
	fmt.Fprintln(w, "* summing stage they stand for draws i_n,max + 10 % of the largest pair current from the supply")
	if opt.SummingCurrent > 0 {
		fmt.Fprintf(w, "* (its folding current, counted in power: %s A at %s V)\n", num(opt.SummingCurrent), num(d.Supply))
	}
	mid := 0.5 * (d.Sweep.Low + d.Sweep.High)
	fmt.Fprintf(w, "VCM cm 0 DC %s\n", num(mid))
	fmt.Fprintln(w, "VID id 0 DC 0")
	var iout []sim.Term
	if k := c.ProbeIndex(topologies.ProbeOut); k >= 0 {
		iout = c.Probes[k].Terms
	}
	ordered := append([]sim.VSource(nil), c.VSources...)
	sort.SliceStable(ordered, func(i, j int) bool { return ordered[i].Name == "VDD" && ordered[j].Name != "VDD" })
	for _, v := range ordered {
		if !v.Bench {
			continue
		}
		pn, nn := spiceNode(c, v.P, false), spiceNode(c, v.N, false)
		if v.Value.CM == 0 && v.Value.DM == 0 {
			fmt.Fprintf(w, "%s %s %s DC %s\n", v.Name, pn, nn, num(v.Value.DC))
			continue
		}
		// value = DC + CM·V(cm) + DM·V(id), as a chain of controlled sources.
		name := strings.TrimPrefix(v.Name, "V")
		mid := "x" + strings.ToLower(name)
		fmt.Fprintf(w, "E%s1 %s %s cm 0 %s\n", name, pn, mid, num(v.Value.CM))
		if v.Value.DC != 0 {
			mid2 := mid + "b"
			fmt.Fprintf(w, "E%s2 %s %s id 0 %s\n", name, mid, mid2, num(v.Value.DM))
			fmt.Fprintf(w, "V%sDC %s %s DC %s\n", name, mid2, nn, num(v.Value.DC))
		} else {
			fmt.Fprintf(w, "E%s2 %s %s id 0 %s\n", name, mid, nn, num(v.Value.DM))
		}
	}
	for _, i := range c.ISources {
		if i.Bench {
			fmt.Fprintf(w, "%s %s %s DC %s\n", i.Name, spiceNode(c, i.P, false), spiceNode(c, i.N, false), num(i.Value.DC))
		}
	}
	fmt.Fprintln(w, "VOUT out 0 DC 0")
	for k, t := range iout {
		fmt.Fprintf(w, "FOUT%d 0 out %s %s\n", k+1, t.Source, num(t.Coef))
	}
	fmt.Fprintln(w, "*")
	fmt.Fprintln(w, "* stage")
	writeStage(w, st, false, d.Process)
	if opt.DC {
		writeGMControl(w, d, points)
	}
	fmt.Fprintln(w, ".end")
	return w.Flush()
}

// equivalentNotice returns the lines that follow the title of a level-1
// equivalent deck: what was mapped how and what that means for its numbers.
func equivalentNotice(d *objectives.Design) []string {
	return []string{
		fmt.Sprintf("LEVEL-1 EQUIVALENT: process %s uses the %s model, which ngspice cannot simulate.", d.Process.Name, KindName(d.Process.Kind)),
		"The .model cards below are its nearest SPICE level-1 cards, not the process pairsmith evaluated:",
		"vto, kp, gamma, phi, lambda and ld as on the EKV cards; vto and kp taken to the deck's temperature",
		"by the EKV law (vto - type*tcv*(T - tnom), kp*(T/tnom)^bex, phi fixed), tnom set to that temperature.",
		"Level 1 has no weak or moderate inversion and no slope factor n: currents and gm differ from",
		"pairsmith's EKV results (gm by about sqrt(n) in strong inversion, far more in weak and moderate",
		"inversion). Use the deck to check the circuit and its bias; check numbers with your foundry's models.",
	}
}

// KindName returns a process's model kind as prose names it: "EKV",
// "level-1".
func KindName(kind string) string {
	switch kind {
	case "ekv":
		return "EKV"
	case "level1":
		return "level-1"
	}
	return kind
}

// writeGMControl writes the --dc part of a testbench: the sweep as a .dc
// line and a .control block that runs it at VID = ±GMStep and prints gm
// against VCM, or says on stdout and by exit code 1 that a sweep did not
// finish (points is the number of points ngspice's .dc gives).
func writeGMControl(w *bufio.Writer, d *objectives.Design, points int) {
	sw := d.Sweep
	fmt.Fprintln(w, "*")
	fmt.Fprintf(w, "* gm: `ngspice -b` runs the common-mode sweep at VID = +%s and at VID = -%s and prints\n",
		units.Format(GMStep, units.Volt), units.Format(GMStep, units.Volt))
	fmt.Fprintf(w, "* gm = (I(VOUT)+ - I(VOUT)-) / %s in S against VCM (the v-sweep column), %d points;\n",
		units.Format(2*GMStep, units.Volt), points)
	fmt.Fprintln(w, "* it exits 1 if a sweep does not finish. Drop the .control block to run the .dc alone.")
	if n, err := sw.Points(); err == nil && n != points {
		fmt.Fprintf(w, "* The range is not a whole number of steps: pairsmith also evaluates %s, ngspice stops before it.\n",
			units.Format(sw.High, units.Volt))
	}
	fmt.Fprintln(w, gmOptions)
	fmt.Fprintf(w, ".dc VCM %s %s %s\n", num(sw.Low), num(sw.High), num(sw.Step))
	fmt.Fprintf(w, `.control
set nobreak
alter VID dc = %[1]s
run
set psplus = $curplot
alter VID dc = -%[1]s
run
let gm = ({$psplus}.i(vout) - i(vout)) / %[2]s
let npoints = length({$psplus}.i(vout)) + length(i(vout))
if npoints = %[3]d
  print gm
  quit 0
end
echo pairsmith deck: a sweep did not finish (%[4]d points each wanted); no gm
quit 1
.endc
`, num(GMStep), num(2*GMStep), 2*points, points)
}
