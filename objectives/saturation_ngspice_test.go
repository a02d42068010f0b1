package objectives_test

import (
	"bytes"
	"fmt"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"pairsmith/internal/ngspice"
	"pairsmith/objectives"
	"pairsmith/report"
	"pairsmith/sim"
	"pairsmith/topologies"
)

// opDeck returns the testbench deck of an evaluated design with its
// common-mode source at vcm and an operating-point analysis: the exported
// deck as report.Testbench writes it, with the VCM line's value replaced,
// tighter convergence tolerances (so that the reference's own iteration
// error, up to reltol·|V| ≈ 2 mV at ngspice's default reltol = 1e-3, is far
// below the 1 mV the comparison allows; common practice, no source) and an
// .op line.
func opDeck(t *testing.T, ev *objectives.Evaluation, vcm float64) string {
	t.Helper()
	var b bytes.Buffer
	if err := report.Testbench(&b, ev.Design, ev.Stage, report.TestbenchOptions{}); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(b.String(), "\n"), "\n")
	replaced, end := 0, -1
	for i, l := range lines {
		if strings.HasPrefix(l, "VCM cm 0 DC ") {
			lines[i] = "VCM cm 0 DC " + strconv.FormatFloat(vcm, 'g', -1, 64)
			replaced++
		}
		if strings.EqualFold(strings.TrimSpace(l), ".end") {
			end = i
		}
	}
	if replaced != 1 || end < 0 {
		t.Fatalf("testbench deck: %d VCM source lines and .end at line %d, want one VCM line and an .end\n%s", replaced, end, b.String())
	}
	tail := append([]string{".options reltol=1e-6 vntol=1e-9", ".op"}, lines[end:]...)
	return strings.Join(append(lines[:end:end], tail...), "\n") + "\n"
}

// TestSaturationFindingMatchesNgspice checks the saturation check of a PMOS
// tail against ngspice's operating point of the exported deck (ngspice .op,
// @m[vds] and @m[vdsat] of the Debian package installed here): the demo
// current-switch design on the level-1 process demo18-l1 with its PMOS
// tail narrowed to 40 µm, so that the tail, which feeds the switch once the
// PMOS pair hands over, is short of the 50 mV margin above V_DSAT from
// mid-range up to the top rail (a tail whose current a switch takes over
// is not exempt: docs/buildable.md, "Saturation") and saturated with
// margin below. At a common mode well inside the finding's span, one well
// below it and one on either side near its edge (three sweep steps off),
// the finding must cover the point exactly where ngspice shows
// |V_DS| < |V_DSAT| + margin, and pairsmith's V_DS and V_DSAT there must
// agree with ngspice's within 1 mV (both run the same level-1 equations).
func TestSaturationFindingMatchesNgspice(t *testing.T) {
	ngspice.Require(t)
	d, err := objectives.LoadDesign(filepath.Join("..", "testdata", "designs", "current-switch-l1.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if d.Process.Kind != "level1" {
		t.Fatalf("process %s is %s, want a level-1 process", d.Process.Name, d.Process.Kind)
	}
	// The narrowed PMOS tail of the doc above (40 µm: our own choice, no
	// source).
	d.Params["wtp"] = 40e-6
	ev, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	margin := d.Margin()

	// The PMOS tail and its saturation finding.
	k := -1
	for i, dev := range ev.Stage.Devices {
		if dev.Role == "pmos tail" {
			if k >= 0 {
				t.Fatalf("two pmos tails: %s and %s", ev.Stage.Devices[k].Name, dev.Name)
			}
			k = i
		}
	}
	if k < 0 {
		t.Fatal("the current-switch stage has no device of role \"pmos tail\"")
	}
	tail := ev.Stage.Devices[k]
	if tail.Duty != topologies.Saturated {
		t.Fatalf("%s has duty %s, want saturated", tail.Name, tail.Duty)
	}
	var f *objectives.Finding
	for i := range ev.Conditions[0].Findings {
		if g := ev.Conditions[0].Findings[i]; g.Check == objectives.CheckSaturation && g.Device == tail.Name {
			if f != nil {
				t.Fatalf("two saturation findings of %s", tail.Name)
			}
			f = &ev.Conditions[0].Findings[i]
		}
	}
	if f == nil {
		t.Fatalf("no saturation finding of %s (wtp = 40 µm); findings:\n%s", tail.Name, objectives.FindingsText(ev.Conditions[0].Findings))
	}
	step, vcm := d.Sweep.Step, ev.Result.VCM
	// The span is one run of failing points, so that a point inside it
	// fails and a point outside passes.
	inSpan := 0
	for _, v := range vcm {
		if v >= f.From-1e-9 && v <= f.To+1e-9 { // 1 nV slack on sweep points (common practice, no source)
			inSpan++
		}
	}
	if inSpan != f.Points {
		t.Fatalf("finding %v: %d sweep points from %g to %g V, %d failing: not one run", f, inSpan, f.From, f.To, f.Points)
	}
	// The design must leave room below the span for a point well outside
	// (0.3 V: our own choice, no source).
	if f.From < d.Sweep.Low+0.3 || f.From > d.Sweep.High-0.3 {
		t.Fatalf("finding %v: span starts at %g V, want it at least 0.3 V inside the range for a point well outside and one well inside", f, f.From)
	}
	t.Logf("finding: %v", f)

	nearest := func(v float64) int {
		best := 0
		for i := range vcm {
			if math.Abs(vcm[i]-v) < math.Abs(vcm[best]-v) {
				best = i
			}
		}
		return best
	}
	points := []struct {
		what string
		i    int
	}{
		{"well inside", nearest(0.5 * (f.From + f.To))},
		{"well outside", nearest(0.5 * (d.Sweep.Low + f.From))},
		{"near the edge, outside", nearest(f.From - 3*step)},
		{"near the edge, inside", nearest(f.From + 3*step)},
	}

	s, err := sim.NewSolver(ev.Stage.Circuit, sim.Options{})
	if err != nil {
		t.Fatal(err)
	}
	name := strings.ToLower(tail.Name)
	vds, vdsat := fmt.Sprintf("@%s[vds]", name), fmt.Sprintf("@%s[vdsat]", name)
	covered := map[bool]int{}
	for _, p := range points {
		v := vcm[p.i]
		tab, err := ngspice.Run(opDeck(t, ev, v), vds, vdsat)
		if err != nil {
			t.Fatalf("%s, vcm %g V: %v", p.what, v, err)
		}
		if len(tab.Vectors[vds]) != 1 || len(tab.Vectors[vdsat]) != 1 {
			t.Fatalf("%s, vcm %g V: ngspice .op gave %d and %d values, want one each", p.what, v, len(tab.Vectors[vds]), len(tab.Vectors[vdsat]))
		}
		// Magnitudes: ngspice writes a PMOS's vds with its own type sign
		// convention; the rule compares |V_DS| with |V_DSAT|
		// (docs/buildable.md, "Saturation").
		nsVDS, nsVDSAT := math.Abs(tab.Vectors[vds][0]), math.Abs(tab.Vectors[vdsat][0])
		op := s.Devices(s.PointAt(ev.Result, p.i))[k]
		if op.Name != tail.Name {
			t.Fatalf("solver device %d is %s, the stage's is %s", k, op.Name, tail.Name)
		}
		psVDS, psVDSAT := math.Abs(op.VDS), math.Abs(op.VDSAT)
		short := nsVDS < nsVDSAT+margin
		in := v >= f.From-1e-9 && v <= f.To+1e-9
		covered[in]++
		t.Logf("%-22s vcm %.3f V: ngspice |V_DS| %.6f V, |V_DSAT| %.6f V (headroom %+.4f V); pairsmith's differ by %.2g V, %.2g V; finding covers it: %v",
			p.what, v, nsVDS, nsVDSAT, nsVDS-nsVDSAT, psVDS-nsVDS, psVDSAT-nsVDSAT, in)
		// ngspice .op of the exported deck: short of the margin exactly
		// where the finding says so.
		if short != in {
			t.Errorf("%s, vcm %.3f V: ngspice |V_DS| − |V_DSAT| = %.4f V against the margin %.3f V (short: %v), but the finding (%g … %g V) covers it: %v",
				p.what, v, nsVDS-nsVDSAT, margin, short, f.From, f.To, in)
		}
		// ngspice .op of the exported deck: the same level-1 operating
		// point within 1 mV.
		if e := math.Abs(psVDS - nsVDS); e > 1e-3 {
			t.Errorf("%s, vcm %.3f V: |V_DS| %.6f V, ngspice %.6f V (%.3g V apart, want within 1 mV)", p.what, v, psVDS, nsVDS, e)
		}
		if e := math.Abs(psVDSAT - nsVDSAT); e > 1e-3 {
			t.Errorf("%s, vcm %.3f V: |V_DSAT| %.6f V, ngspice %.6f V (%.3g V apart, want within 1 mV)", p.what, v, psVDSAT, nsVDSAT, e)
		}
	}
	if covered[true] < 2 || covered[false] < 2 {
		t.Errorf("the points give %d inside the finding's span and %d outside, want two of each", covered[true], covered[false])
	}
}
