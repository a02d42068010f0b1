package report_test

import (
	"bytes"
	"fmt"
	"math"
	"strings"
	"testing"

	"pairsmith/internal/ngspice"
	"pairsmith/objectives"
	"pairsmith/report"
)

// TestMismatchSampleAgainstNgspice: a Monte Carlo sample's testbench,
// each transistor on its own card (netlist --testbench --mismatch-sample),
// gives in ngspice (Debian package) pairsmith's gm for that sample within
// 1 % of the peak at every common mode, and its input offset — the VID
// that zeroes I(VOUT), found by ngspice's own sweep of VID around it —
// within 0.1 % (issue 9 asks 1 %; the two agree to six digits), for the
// current switch on demo18-l1 across the
// handover.
func TestMismatchSampleAgainstNgspice(t *testing.T) {
	ngspice.Require(t)
	const seed, k = 11, 5
	d, err := objectives.ReadDesign("d.yaml", []byte("topology: current-switch\nprocess: demo18-l1\nsupply: 1.8V\ncorners: tt\n"+
		"sweep: {low: 0V, high: 1.8V, step: 50mV}\n"), "")
	if err != nil {
		t.Fatal(err)
	}
	want, err := objectives.MismatchSample(d, seed, k)
	if err != nil {
		t.Fatal(err)
	}
	st, err := objectives.Build(d)
	if err != nil {
		t.Fatal(err)
	}
	one := *st
	one.Circuit = objectives.WithShifts(st.Circuit, objectives.MismatchShifts(st, d.Process, seed, k))
	var deck bytes.Buffer
	if err := report.Testbench(&deck, d, &one, report.TestbenchOptions{DC: true}); err != nil {
		t.Fatal(err)
	}
	text := deck.String()
	if !strings.Contains(text, ".model nch_m1 ") {
		t.Fatalf("the deck gives M1 no card of its own:\n%s", text)
	}
	base := strings.Replace(text, ".end\n", ".options reltol=1e-7 abstol=1e-15 vntol=1e-10\n.end\n", 1)
	run := func(deck string) ngspice.Table {
		t.Helper()
		tab, err := ngspice.Run(deck, "i(vout)")
		if err != nil {
			t.Fatal(err)
		}
		return tab
	}
	const h = 1e-4
	up := run(strings.Replace(base, "VID id 0 DC 0\n", fmt.Sprintf("VID id 0 DC %g\n", h), 1))
	dn := run(strings.Replace(base, "VID id 0 DC 0\n", fmt.Sprintf("VID id 0 DC %g\n", -h), 1))
	if len(up.Scale) != len(want.VCM) {
		t.Fatalf("ngspice gives %d points, pairsmith %d", len(up.Scale), len(want.VCM))
	}
	peak := 0.0
	for _, g := range want.GM {
		peak = math.Max(peak, g)
	}
	for i := range want.VCM {
		gm := (up.Vectors["i(vout)"][i] - dn.Vectors["i(vout)"][i]) / (2 * h)
		if math.Abs(gm-want.GM[i]) > 0.01*peak {
			t.Errorf("vcm %g V: gm %g S in ngspice, %g S in pairsmith", want.VCM[i], gm, want.GM[i])
		}
	}
	// The offset at three common modes: one pair, the handover, the other.
	checked := 0
	for _, vcm := range []float64{0.3, 0.9, 1.5} {
		i := int(math.Round(vcm / 0.05))
		off := want.Offset[i]
		if math.IsNaN(off) || math.Abs(off) < 5e-6 {
			t.Fatalf("vcm %g V: sample offset %g V, want a live one above 5 µV", vcm, off)
		}
		lo, hi := off-0.5e-3, off+0.5e-3
		deckAt := strings.Replace(base, "VCM cm 0 DC 0.9\n", fmt.Sprintf("VCM cm 0 DC %g\n", vcm), 1)
		deckAt = strings.Replace(deckAt, ".dc VCM 0 1.8 0.05\n", fmt.Sprintf(".dc VID %g %g %g\n", lo, hi, 1e-5), 1)
		if !strings.Contains(deckAt, ".dc VID") {
			t.Fatalf("no VID sweep in the deck:\n%s", deckAt)
		}
		tab := run(deckAt)
		x, y := tab.Scale, tab.Vectors["i(vout)"]
		zero := math.NaN()
		for j := 1; j < len(y); j++ {
			if (y[j-1] <= 0) != (y[j] <= 0) {
				zero = x[j-1] - y[j-1]*(x[j]-x[j-1])/(y[j]-y[j-1])
				break
			}
		}
		if math.IsNaN(zero) || math.Abs(zero-off) > 1e-3*math.Abs(off) {
			t.Errorf("vcm %g V: offset %g V in ngspice, %g V in pairsmith", vcm, zero, off)
		}
		t.Logf("vcm %g V: offset pairsmith %.6g V, ngspice %.6g V", vcm, off, zero)
		checked++
	}
	if checked != 3 {
		t.Errorf("%d offsets checked", checked)
	}
}
