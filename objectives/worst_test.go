package objectives_test

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"pairsmith/objectives"
)

// signoffDesign reads a design file of family current-switch at its
// defaults on demo18 with the sign-off given in extra.
func signoffDesign(t *testing.T, extra string) *objectives.Design {
	t.Helper()
	text := "topology: current-switch\nprocess: demo18\n" + extra + "sweep: {low: 0V, high: supply, step: 20mV}\n"
	d, err := objectives.ReadDesign("d.yaml", []byte(text), "")
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestEvaluateConditions: a design with a sign-off is measured at every
// condition as the design put at that one condition alone (Design.At,
// the path `eval --corner --supply --temperature` takes and
// TestFamiliesAtCornersAgainstNgspice checks against ngspice), within
// 1e-9 of each figure: each condition's first point starts from another
// condition's solution rather than from scratch, and both converge to
// Newton's tolerance (1e-6 of each voltage plus 0.1 µV), far inside it
// once the final step is within a tenth of it, as the solver asks
// before it reads gm (our bound, no source); the worst case is each figure's extreme over them, at the
// condition WorstAt names; a finding names its condition; and a design
// of one condition is its own worst case with untagged findings.
func TestEvaluateConditions(t *testing.T) {
	d := signoffDesign(t, "supply: {min: 1.62V, max: 1.98V}\ntemperature: {min: -40C, max: 125C}\ncorners: [tt, ss, ff]\n")
	ev, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	if len(ev.Conditions) != 27 {
		t.Fatalf("%d conditions, want 27", len(ev.Conditions))
	}
	for i, c := range ev.Conditions {
		one, err := d.At(c.Condition.Corner, c.Condition.Supply, c.Condition.TempK)
		if err != nil {
			t.Fatal(err)
		}
		alone, err := objectives.Evaluate(one)
		if err != nil {
			t.Fatal(err)
		}
		// The lowest working supply is the whole sign-off's, not one
		// condition's: TestMinSupplyAgainstSweep checks it.
		if c.Metrics.MinSupply != ev.Metrics.MinSupply {
			t.Errorf("condition %d: min_supply %g, the design's %g", i, c.Metrics.MinSupply, ev.Metrics.MinSupply)
		}
		alone.Metrics.MinSupply = c.Metrics.MinSupply
		if f, ok := nearMetrics(alone.Metrics, c.Metrics, 1e-9); !ok || len(alone.Findings) != len(c.Findings) {
			t.Errorf("condition %d (%v): %s differs: %+v with %d findings, alone %+v with %d", i, c.Condition, f, c.Metrics, len(c.Findings), alone.Metrics, len(alone.Findings))
		}
		if i == 0 && !ev.Metrics.Same(c.Metrics) {
			t.Errorf("the nominal metrics %+v are not the first condition's %+v", ev.Metrics, c.Metrics)
		}
	}
	lowest := func(get func(objectives.Metrics) float64) (float64, int) {
		w, at := math.Inf(1), -1
		for i, c := range ev.Conditions {
			if v := get(c.Metrics); v < w {
				w, at = v, i
			}
		}
		return w, at
	}
	highest := func(get func(objectives.Metrics) float64) (float64, int) {
		w, at := lowest(func(m objectives.Metrics) float64 { return -get(m) })
		return -w, at
	}
	for _, tt := range []struct {
		key  string
		want func(func(objectives.Metrics) float64) (float64, int)
		get  func(objectives.Metrics) float64
	}{
		{"gm_min", lowest, func(m objectives.Metrics) float64 { return m.GMMin }},
		{"gm_max", highest, func(m objectives.Metrics) float64 { return m.GMMax }},
		{"gm_ripple", highest, func(m objectives.Metrics) float64 { return m.GMRipple }},
		{"power", highest, func(m objectives.Metrics) float64 { return m.Power }},
	} {
		w, at := tt.want(tt.get)
		if got := tt.get(ev.Worst); got != w || ev.WorstAt[tt.key] != at {
			t.Errorf("worst %s %g at %d, want %g at %d", tt.key, got, ev.WorstAt[tt.key], w, at)
		}
	}
	// The power is largest at the highest supply (common practice, no
	// source: P = V·I and the currents do not fall with the supply here).
	if c := ev.Conditions[ev.WorstAt["power"]].Condition; c.Supply != 1.98 {
		t.Errorf("power worst at %v, want at the 1.98 V supply", c)
	}
	for _, f := range ev.Findings {
		if f.Condition == "" || !strings.Contains(f.String(), " at "+f.Condition) {
			t.Errorf("finding %v does not name its condition", f)
		}
	}
	doc := ev.Doc()
	if len(doc.Conditions) != 27 || doc.Conditions[0].Corner != "tt" || doc.Worst["power"].Supply != 1.98 {
		t.Errorf("JSON conditions %d, first %+v, worst power at %+v", len(doc.Conditions), doc.Conditions[0], doc.Worst["power"])
	}

	one := signoffDesign(t, "supply: 1.8V\ncorners: tt\n")
	ev1, err := objectives.Evaluate(one)
	if err != nil {
		t.Fatal(err)
	}
	nominal := ev.Metrics
	nominal.MinSupply = ev1.Metrics.MinSupply // the sign-off's, not one condition's
	if len(ev1.Conditions) != 1 || !ev1.Worst.Same(ev1.Metrics) || !ev1.Metrics.Same(nominal) {
		t.Errorf("one condition: %d conditions, worst %+v, metrics %+v (nominal of the sign-off %+v)", len(ev1.Conditions), ev1.Worst, ev1.Metrics, ev.Metrics)
	}
	for _, f := range ev1.Findings {
		if f.Condition != "" {
			t.Errorf("a single condition's finding is tagged %q", f.Condition)
		}
	}
}

// TestMeasureWorst checks the search's lazy worst case: a candidate its
// nominal coarse look turns down meets no other condition; one that
// passes meets every condition, those where a figure is worst at the
// fine step, within the solver's tolerance of the full evaluation there
// (1e-5 relative, as TestMeasureStaged: our own bound, no source; the
// ripple as 1 + ripple, the ratio gm_max/gm_min); and a condition whose
// sweep is unphysical (a 2 µA tail at 86 °C, TestUnphysical's case) ends
// it with an error naming that condition.
func TestMeasureWorst(t *testing.T) {
	d := signoffDesign(t, "supply: {min: 1.62V, max: 1.98V}\ncorners: [tt, ss, ff]\n")
	order := d.AllConditions()
	var cache objectives.SolverCache
	cs, fine, err := objectives.MeasureWorst(d, order, &cache, 0.05, nil, objectives.NoTargets(), objectives.AllExtras(), func([]objectives.ConditionEval) bool { return true })
	if err != nil || len(cs) != 1 || fine != 0 {
		t.Fatalf("rejected at nominal: %d conditions, %d fine, %v", len(cs), fine, err)
	}
	cs, fine, err = objectives.MeasureWorst(d, order, &cache, 0.05, nil, objectives.NoTargets(), objectives.AllExtras(), func([]objectives.ConditionEval) bool { return false })
	if err != nil || len(cs) != len(order) {
		t.Fatalf("kept: %d conditions of %d, %v", len(cs), len(order), err)
	}
	full, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	near := func(a, b float64) bool { return a == b || math.Abs(a-b) <= 1e-5*math.Max(math.Abs(a), math.Abs(b)) }
	looks := 0
	for i, c := range cs {
		if !c.Fine {
			continue
		}
		looks++
		got, want := c.Metrics, full.Conditions[i].Metrics
		if c.Condition != full.Conditions[i].Condition || !near(got.GMMin, want.GMMin) || !near(1+got.GMRipple, 1+want.GMRipple) || !near(got.Power, want.Power) {
			t.Errorf("%v: %+v, eval %+v", c.Condition, got, want)
		}
	}
	// The nominal, and at most one condition for each figure with a
	// sense (those where its coarse worst is).
	limit := 1
	for _, e := range objectives.Figures() {
		if e.Sense != 0 {
			limit++
		}
	}
	if looks != fine || !cs[0].Fine || looks < 2 || looks > limit {
		t.Errorf("%d fine looks (MeasureWorst says %d; nominal %v), want the nominal and 1 to %d others", looks, fine, cs[0].Fine, limit-1)
	}
	// The worst power is the full evaluation's: it is measured at the
	// fine step where it is worst, and varies little between the coarse
	// points elsewhere (our observation on this design).
	w := objectives.WorstOver(cs, objectives.NoTargets())
	if !near(w.Metrics.Power, full.Worst.Power) {
		t.Errorf("worst power %g, eval's %g", w.Metrics.Power, full.Worst.Power)
	}

	// A search's extras come from each condition's coarse look: a fine
	// look keeps them, bit for bit, rather than measuring them again.
	ex := objectives.Extras{Mismatch: true, Noise: true, Coarse: true}
	screened, _, err := objectives.MeasureWorst(d, order, &cache, 0.05, nil, objectives.NoTargets(), ex, func(cs []objectives.ConditionEval) bool { return len(cs) > 1 })
	if err != nil {
		t.Fatal(err)
	}
	kept, fine, err := objectives.MeasureWorst(d, order, &cache, 0.05, nil, objectives.NoTargets(), ex, func([]objectives.ConditionEval) bool { return false })
	if err != nil || fine < 2 {
		t.Fatalf("%d fine looks, %v", fine, err)
	}
	for i := range kept {
		a, b := kept[i].Metrics, screened[i].Metrics
		if i > 0 && kept[i].Fine && (a.Offset != b.Offset || a.OffsetDrift != b.OffsetDrift || a.Noise != b.Noise || math.IsNaN(a.Offset)) {
			t.Errorf("%v: fine look offset %g, drift %g, noise %g; its coarse look's %g, %g, %g", kept[i].Condition, a.Offset, a.OffsetDrift, a.Noise, b.Offset, b.OffsetDrift, b.Noise)
		}
	}

	hot := signoffDesign(t, "supply: 1.8V\ntemperature: {min: 27C, max: 86C}\ncorners: tt\n")
	hot.Params["itail"], hot.Params["vhead"], hot.Params["vref"] = 2e-6, 0.6, 0
	if cool, err := hot.At("", 1.8, 300.15); err != nil {
		t.Fatal(err)
	} else if _, err := objectives.Evaluate(cool); err != nil {
		t.Fatalf("the hot sizing fails at its nominal 27 °C: %v", err)
	}
	_, _, err = objectives.MeasureWorst(hot, hot.AllConditions(), &cache, 0.05, nil, objectives.NoTargets(), objectives.AllExtras(), func([]objectives.ConditionEval) bool { return false })
	_, everr := objectives.Evaluate(hot)
	for _, err := range []error{err, everr} {
		var ue *objectives.UnphysicalError
		if !errors.As(err, &ue) || !strings.HasPrefix(err.Error(), "at tt, 1.8 V, 86 °C: ") {
			t.Errorf("error %v, want an UnphysicalError at tt, 1.8 V, 86 °C", err)
		}
	}
}

// TestConditionsJSONOrder: the conditions of a design's JSON follow
// Design.AllConditions, the nominal first.
func TestConditionsJSONOrder(t *testing.T) {
	d := signoffDesign(t, "supply: 1.8V\ncorners: [ss, tt]\n")
	ev, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, c := range ev.Doc().Conditions {
		got = append(got, c.Corner)
	}
	if !slices.Equal(got, []string{"tt", "ss"}) {
		t.Errorf("corners %v, want tt then ss", got)
	}
}

// TestBindingOnlyWhereItVaries: over several conditions, a figure with
// one value everywhere (the area, the lowest working supply) or none is
// worst at no one condition — eval's JSON gives its value without a
// condition — while gm_min, which moves with the conditions, names one.
func TestBindingOnlyWhereItVaries(t *testing.T) {
	d := signoffDesign(t, "supply: {min: 1.62V, max: 1.98V}\ncorners: [tt, ss]\n")
	ev, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := ev.Binding("gm_min"); !ok {
		t.Error("gm_min binds nowhere")
	}
	doc := ev.Doc()
	for _, key := range []string{"area", "min_supply", "slew"} { // slew: no load, no value
		if c, ok := ev.Binding(key); ok {
			t.Errorf("%s binds at %v, want nowhere", key, c)
		}
		if w, ok := doc.Worst[key]; !ok || w.Corner != "" || w.Supply != 0 {
			t.Errorf("eval --json's worst %s: %+v (present %v), want its value without a condition", key, w, ok)
		}
	}
	if w := doc.Worst["area"]; w.Value == nil || *w.Value != ev.Worst.Area {
		t.Errorf("worst area %+v, want %g", w, ev.Worst.Area)
	}
}
