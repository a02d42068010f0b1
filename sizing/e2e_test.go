package sizing_test

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"strings"
	"testing"

	"pairsmith/internal/ngspice"
	"pairsmith/objectives"
	"pairsmith/report"
	"pairsmith/sizing"
)

// TestBestMeetsSpecInNgspice runs the search on the level-1 demo spec and
// simulates the best candidate's testbench in ngspice (Debian package),
// which must meet the spec's gm_min, gm_ripple_max and power_max by its
// own numbers: gm as the central difference of I(VOUT) over VID = ±0.1 mV
// at every point of the input range, power as VDD times the current the
// supply delivers, the largest over the range, plus VDD times the summing
// stage's bias for the largest pair currents ngspice finds
// (docs/buildable.md, "The summing stage's cost").
func TestBestMeetsSpecInNgspice(t *testing.T) {
	ngspice.Require(t)
	spec, err := objectives.LoadSpec("../testdata/specs/sensor-l1.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// The demo sheet's budget: with every device held to its saturation
	// margin and the square law, the first feasible candidate comes
	// after about 15 700 evaluations (seed 1).
	spec.Search.Evaluations = 20000
	res, err := sizing.Search(context.Background(), spec, sizing.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Best == nil {
		t.Fatalf("no feasible candidate in %d evaluations; binding %v", res.Evaluations, res.Binding)
	}
	b := res.Best
	t.Logf("best %s %s: gm_min %.4g S, ripple %.4g, power %.4g W", b.ID, b.Topology, b.Metrics.GMMin, b.Metrics.GMRipple, b.Metrics.Power)
	var deck bytes.Buffer
	if err := report.Testbench(&deck, b.Design, b.Eval.Stage, report.TestbenchOptions{DC: true}); err != nil {
		t.Fatal(err)
	}
	base := strings.Replace(deck.String(), ".end\n", ".options reltol=1e-7 abstol=1e-15 vntol=1e-10\n.end\n", 1)
	run := func(vid float64, vectors ...string) ngspice.Table {
		t.Helper()
		text := strings.Replace(base, "VID id 0 DC 0\n", fmt.Sprintf("VID id 0 DC %g\n", vid), 1)
		tab, err := ngspice.Run(text, vectors...)
		if err != nil {
			t.Fatal(err)
		}
		return tab
	}
	const h = 1e-4
	up, dn := run(h, "i(vout)"), run(-h, "i(vout)")
	op := run(0, "i(vdd)", "i(vdn1)", "i(vdn2)", "i(vdp1)", "i(vdp2)")
	gmMin, gmMax, power := math.Inf(1), math.Inf(-1), 0.0
	inMax, ipMax := 0.0, 0.0
	for i := range up.Scale {
		gm := (up.Vectors["i(vout)"][i] - dn.Vectors["i(vout)"][i]) / (2 * h)
		gmMin, gmMax = math.Min(gmMin, gm), math.Max(gmMax, gm)
		// SPICE currents flow into a source's + terminal: the delivered
		// current is minus I(V).
		power = math.Max(power, -spec.Supply*op.Vectors["i(vdd)"][i])
		inMax = math.Max(inMax, -(op.Vectors["i(vdn1)"][i] + op.Vectors["i(vdn2)"][i]))
		ipMax = math.Max(ipMax, op.Vectors["i(vdp1)"][i]+op.Vectors["i(vdp2)"][i])
	}
	// The folded cascode's sources: the largest NMOS pair current plus
	// 10 % of the larger pair's for the cascode branches.
	power += spec.Supply * (inMax + 0.1*math.Max(inMax, ipMax))
	ripple := gmMax/gmMin - 1
	tg := spec.Targets
	t.Logf("ngspice: gm_min %.4g S, ripple %.4g, power %.4g W over %d points", gmMin, ripple, power, len(up.Scale))
	if gmMin < tg.GMMin {
		t.Errorf("ngspice gm_min %.6g S below the target %.6g S", gmMin, tg.GMMin)
	}
	if ripple > tg.GMRippleMax {
		t.Errorf("ngspice ripple %.6g above the target %.6g", ripple, tg.GMRippleMax)
	}
	if power > tg.PowerMax {
		t.Errorf("ngspice power %.6g W above the budget %.6g W", power, tg.PowerMax)
	}
}

// TestImpossibleSpecNamesBindingTargets checks that a spec no stage can
// meet yields no best candidate and names the targets that bind.
func TestImpossibleSpecNamesBindingTargets(t *testing.T) {
	spec, err := objectives.LoadSpec("../testdata/specs/impossible.yaml")
	if err != nil {
		t.Fatal(err)
	}
	spec.Search.Evaluations = 600
	res, err := sizing.Search(context.Background(), spec, sizing.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Best != nil {
		t.Fatalf("best %s found for an impossible spec: %+v", res.Best.ID, res.Best.Metrics)
	}
	if len(res.Binding) == 0 {
		t.Fatal("no binding target named")
	}
	for _, name := range res.Binding {
		if !spec.Targets.Has(name) {
			t.Errorf("binding %q is not a target of the spec", name)
		}
	}
	t.Logf("binding: %v", res.Binding)
}
