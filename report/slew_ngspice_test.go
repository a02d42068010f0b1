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

// TestSlewAgainstNgspice: the large-input output current pairsmith
// reports (slew_current: the inputs 0.5 V apart, each held within the
// rails, the smaller of the two polarities) equals what ngspice (Debian
// package) finds with the same deck's VCM and VID at those values, within
// 1e-4 (issue 9 asks 0.5 %; the two agree to six digits), for the n-pair
// and the current switch on demo18-l1 at common modes in the middle and
// near each rail; and for the n-pair it is its tail current (textbook: a
// pair driven hard steers its whole tail to one side), the NMOS pair's
// total current there, within 0.5 %, where the pair conducts (at 0.1 V it
// is off: no current, no slew).
func TestSlewAgainstNgspice(t *testing.T) {
	ngspice.Require(t)
	const supply = 1.8
	for _, family := range []string{"n-pair", "current-switch"} {
		for _, vcm := range []float64{0.1, 0.9, 1.7} {
			t.Run(fmt.Sprintf("%s/%gV", family, vcm), func(t *testing.T) {
				text := fmt.Sprintf("topology: %s\nprocess: demo18-l1\nsupply: 1.8V\ncorners: tt\nload: 1pF\n", family)
				d, err := objectives.ReadDesign("d.yaml", []byte(text), "")
				if err != nil {
					t.Fatal(err)
				}
				d.Sweep.Low, d.Sweep.High = vcm, vcm // one point
				ev, err := objectives.Evaluate(d)
				if err != nil {
					t.Fatal(err)
				}
				got := ev.Metrics.SlewCurrent
				if want := got / 1e-12; ev.Metrics.Slew != want {
					t.Errorf("slew %g V/s, want slew_current / load = %g", ev.Metrics.Slew, want)
				}
				// The inputs, as docs/metrics.md#slew defines them.
				hi, lo := math.Min(supply, vcm+0.25), math.Max(0, vcm-0.25)
				cm, dm := (hi+lo)/2, hi-lo
				var deck bytes.Buffer
				if err := report.Testbench(&deck, d, ev.Stage, report.TestbenchOptions{}); err != nil {
					t.Fatal(err)
				}
				base := strings.Replace(deck.String(), ".end\n", ".options reltol=1e-7 abstol=1e-15 vntol=1e-10\n.end\n", 1)
				base = strings.Replace(base, fmt.Sprintf("VCM cm 0 DC %g\n", vcm), fmt.Sprintf("VCM cm 0 DC %g\n", cm), 1)
				if !strings.Contains(base, fmt.Sprintf("VCM cm 0 DC %g\n", cm)) {
					t.Fatalf("no VCM line in the deck:\n%s", base)
				}
				cur := func(vid float64) (iout, in float64) {
					tab, err := ngspice.Run(strings.Replace(base, ".end\n", fmt.Sprintf(".dc VID %g %g 1\n.end\n", vid, vid), 1), "i(vout)", "i(vdn1)", "i(vdn2)")
					if err != nil {
						t.Fatal(err)
					}
					return tab.Vectors["i(vout)"][0], -(tab.Vectors["i(vdn1)"][0] + tab.Vectors["i(vdn2)"][0])
				}
				up, inUp := cur(dm)
				dn, _ := cur(-dm)
				want := math.Min(math.Abs(up), math.Abs(dn))
				if math.Abs(got-want) > 1e-4*want {
					t.Errorf("slew current %g A, ngspice %g A", got, want)
				}
				if family == "n-pair" && inUp > 1e-7 && math.Abs(got-inUp) > 0.005*inUp { // where the pair conducts
					t.Errorf("n-pair: slew current %g A, its tail current %g A", got, inUp)
				}
				t.Logf("slew current %.6g A, ngspice %.6g A", got, want)
			})
		}
	}
}
