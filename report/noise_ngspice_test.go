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

// TestNoiseAgainstNgspice: ngspice's .noise (Debian package) on the
// exported testbench — the output current read by a current-controlled
// voltage source on VOUT, referred to VID — gives pairsmith's
// input-referred noise density within 1e-4 (issue 9 asks 2 %; the two
// agree to five digits) at three common modes
// (one pair, the handover, the other) at 1 kHz and at 1 MHz, with the
// demo process's kf, af and tox on the cards, for the current switch and
// the 1:3 mirror on demo18-l1. pairsmith's noise at a point is that of a
// one-point evaluation there (the same path as the sweep's).
func TestNoiseAgainstNgspice(t *testing.T) {
	ngspice.Require(t)
	for _, family := range []string{"current-switch", "mirror-1to3"} {
		for _, vcm := range []float64{0.3, 0.9, 1.5} {
			t.Run(fmt.Sprintf("%s/%gV", family, vcm), func(t *testing.T) {
				d, err := objectives.ReadDesign("d.yaml", []byte("topology: "+family+"\nprocess: demo18-l1\nsupply: 1.8V\ncorners: tt\n"), "")
				if err != nil {
					t.Fatal(err)
				}
				d.Sweep.Low, d.Sweep.High = vcm, vcm
				ev, err := objectives.Evaluate(d)
				if err != nil {
					t.Fatal(err)
				}
				var deck bytes.Buffer
				if err := report.Testbench(&deck, d, ev.Stage, report.TestbenchOptions{}); err != nil {
					t.Fatal(err)
				}
				text := strings.Replace(deck.String(), "VID id 0 DC 0\n", "VID id 0 DC 0 AC 1\n", 1)
				text = strings.Replace(text, ".end\n", "HNOISE nout 0 VOUT 1\n.options reltol=1e-7 abstol=1e-15 vntol=1e-10\n.noise v(nout) VID dec 3 1k 1meg\n.end\n", 1)
				if !strings.Contains(text, "AC 1") || !strings.Contains(text, fmt.Sprintf("VCM cm 0 DC %g\n", vcm)) {
					t.Fatalf("deck not as expected:\n%s", text)
				}
				out, err := ngspice.RunBatch(t.Context(), strings.Replace(text, ".end\n", ".control\nrun\nsetplot noise1\nprint inoise_spectrum\n.endc\n.end\n", 1))
				if err != nil {
					t.Fatal(err)
				}
				freqs, dens, err := ngspice.ReadPrint(out.Stdout, "inoise_spectrum")
				if err != nil {
					t.Fatalf("%v\n%s", err, out.Stdout)
				}
				c := ev.Conditions[0].Noise
				checked := 0
				for j, f := range freqs {
					if math.Abs(f-1e3) > 1 && math.Abs(f-1e6) > 1e3 {
						continue
					}
					want := c.At(0, f)
					if math.Abs(dens[j]-want) > 1e-4*want {
						t.Errorf("%g Hz: ngspice %g V/√Hz, pairsmith %g V/√Hz", f, dens[j], want)
					}
					t.Logf("%g Hz: ngspice %.5g V/√Hz, pairsmith %.5g V/√Hz", f, dens[j], want)
					checked++
				}
				if checked != 2 {
					t.Errorf("checked %d frequencies, want 1 kHz and 1 MHz (ngspice gave %v)", checked, freqs)
				}
			})
		}
	}
}
