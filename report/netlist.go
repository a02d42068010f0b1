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

// writeStage writes the stage's own elements: every transistor, resistor
// and controlled source, and the sources that are not part of the bench.
func writeStage(w *bufio.Writer, st *topologies.Stage, sub bool) {
	c := st.Circuit
	nd := func(n sim.Node) string { return spiceNode(c, n, sub) }
	for _, m := range c.Mosfets {
		line := fmt.Sprintf("%s %s %s %s %s %s w=%s l=%s", m.Name, nd(m.D), nd(m.G), nd(m.S), nd(m.B),
			modelName(m.Model.Type()), num(m.Geom.W), num(m.Geom.L))
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
		if !i.Bench {
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

func header(w *bufio.Writer, d *objectives.Design, what string) {
	fmt.Fprintf(w, "* pairsmith %s: %s on %s, supply %s, %s\n", what, d.Topology, d.Process.Name,
		units.Format(d.Supply, units.Volt), units.Format(d.TempK, units.Temperature))
	fmt.Fprintf(w, "* %s\n", objectives.Caution)
	fam, err := d.Family()
	if err == nil {
		var parts []string
		for _, p := range fam.Params() {
			parts = append(parts, p.Name+"="+units.Format(d.Params[p.Name], p.Unit))
		}
		for len(parts) > 0 {
			k := min(6, len(parts))
			fmt.Fprintf(w, "* %s\n", strings.Join(parts[:k], " "))
			parts = parts[k:]
		}
	}
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
	header(w, d, "stage")
	c := st.Circuit
	var ports []string
	for _, p := range st.Ports {
		ports = append(ports, spiceNode(c, p, true))
	}
	fmt.Fprintf(w, "* ports: %s\n", strings.Join(ports, " "))
	fmt.Fprintf(w, ".subckt %s %s\n", SubcktName(d), strings.Join(ports, " "))
	writeStage(w, st, true)
	fmt.Fprintf(w, ".ends %s\n", SubcktName(d))
	return w.Flush()
}

// TestbenchOptions choose what a testbench deck carries beyond the
// circuit.
type TestbenchOptions struct {
	// DC adds the design's common-mode sweep as a .dc analysis, with a
	// .print of I(VOUT) and I(VDD) so that `ngspice -b` runs it.
	DC bool
}

// Testbench writes a self-contained deck that ngspice -b runs as it is
// (design.md §3): the model cards of a level-1 process, the supply VDD, a
// common-mode source VCM, a zero-valued differential source VID driving
// inp = cm + VID/2 and inn = cm − VID/2 through controlled sources, the
// summing-node sources, and a zero-volt source VOUT whose current is the
// stage's differential output current, so that gm = d I(VOUT) / d VID.
// The stage's transistors keep the names the JSON of eval gives them.
func Testbench(out io.Writer, d *objectives.Design, st *topologies.Stage, opt TestbenchOptions) error {
	w := bufio.NewWriter(out)
	header(w, d, "testbench")
	c := st.Circuit
	fmt.Fprintln(w, "*")
	n, nOK := d.Process.N.(device.SpiceCarder)
	p, pOK := d.Process.P.(device.SpiceCarder)
	if nOK && pOK {
		fmt.Fprintf(w, "* models of process %s (%s)\n", d.Process.Name, d.Process.Kind)
		fmt.Fprintln(w, n.SpiceCard(NMOSModel, d.TempK))
		fmt.Fprintln(w, p.SpiceCard(PMOSModel, d.TempK))
	} else {
		fmt.Fprintf(w, "* process %s uses the %s model, which a SPICE deck cannot carry:\n", d.Process.Name, d.Process.Kind)
		fmt.Fprintf(w, "* add .model cards named %s and %s (or .include your foundry's) here.\n", NMOSModel, PMOSModel)
	}
	fmt.Fprintf(w, ".temp %s\n", num(d.TempK-units.ZeroCelsius))
	fmt.Fprintln(w, "*")
	fmt.Fprintln(w, "* bench: supply, inputs, summing nodes, output current")
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
	writeStage(w, st, false)
	if opt.DC {
		fmt.Fprintf(w, ".dc VCM %s %s %s\n", num(d.Sweep.Low), num(d.Sweep.High), num(d.Sweep.Step))
		fmt.Fprintln(w, ".print dc i(vout) i(vdd)")
	}
	fmt.Fprintln(w, ".end")
	return w.Flush()
}
