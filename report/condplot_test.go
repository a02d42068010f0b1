package report

import (
	"strings"
	"testing"

	"pairsmith/objectives"
	"pairsmith/sizing"
	"pairsmith/topologies"
)

// TestConditionsFigure: the best candidate's gm at every condition names
// the nominal condition and the one where gm is lowest (the worst case's
// own, WorstCase.At), draws one line per condition and the band between
// them, and renders as SVG; the page's worst-case table gives each
// figure's nominal and worst value and the worst's condition; a run
// without an evaluated candidate says so.
// No outside source: it checks the figure against the evaluation it
// draws.
func TestConditionsFigure(t *testing.T) {
	spec, d, ev := currentSwitchOf(t, "name: cond\nprocess: demo18-l1\nsupply: {min: 1.62V, max: 1.98V}\ntemperature: {min: -40C, max: 125C}\ncorners: tt\n"+
		"input_range: {low: 0V, high: supply, step: 50mV}\ntargets: {gm_min: 150uS}\ntopologies: [current-switch]\n")
	w := ev.WorstFor(spec.Targets)
	c := &sizing.Candidate{ID: "c01", Topology: "current-switch", Design: d, Eval: ev, Metrics: w.Metrics, Worst: w, Feasible: true, Pareto: true}
	res := &sizing.Result{Spec: spec, Candidates: []*sizing.Candidate{c}, Best: c}
	f, err := ConditionsFigure(res)
	if err != nil {
		t.Fatal(err)
	}
	worst := ev.Conditions[w.At[objectives.AxisGMMin]].Condition.String()
	if len(ev.Conditions) != 9 || f.Legend == nil {
		t.Fatalf("%d conditions, legend %v", len(ev.Conditions), f.Legend)
	}
	svg, err := f.Render("svg")
	if err != nil {
		t.Fatal(err)
	}
	text := string(svg)
	for _, want := range []string{"nominal: " + ev.Conditions[0].Condition.String(), "lowest gm: " + worst, "the other 7 conditions", "gm_min target"} {
		if !strings.Contains(text, want) && !strings.Contains(text, strings.ReplaceAll(want, " ", "&#160;")) {
			t.Errorf("figure lacks %q", want)
		}
	}
	if !strings.Contains(f.Subtitle, "9 conditions") {
		t.Errorf("subtitle %q", f.Subtitle)
	}
	// One faded line (the only strokes drawn translucent) for each
	// condition but the nominal and the lowest-gm ones, drawn bold.
	if n := strings.Count(text, "stroke-opacity:0.6"); n != 9-2 {
		t.Errorf("%d thin condition lines in the SVG, want %d", n, 9-2)
	}
	// The page's worst-case table: each figure's nominal and worst value
	// and where the worst is.
	v := candidateView(spec, c)
	found := false
	for _, r := range v.Worst {
		if r.Key == objectives.AxisGMMin {
			found = true
			e, _ := objectives.Lookup(objectives.AxisGMMin)
			if r.Worst != figureCell(e, w.Metrics.GMMin) || r.Nominal != figureCell(e, ev.Metrics.GMMin) || r.At != worst {
				t.Errorf("worst-case row %+v, want %s at %s (nominal %s)", r, figureCell(e, w.Metrics.GMMin), worst, figureCell(e, ev.Metrics.GMMin))
			}
		}
	}
	if !found {
		t.Errorf("no gm_min row in the worst-case table %+v", v.Worst)
	}
	page, err := RunPage(res, RunOptions{}, nil, nil, svg, nil)
	if err != nil || !strings.Contains(string(page), "<h3>Worst case</h3>") || !strings.Contains(string(page), worst) {
		t.Errorf("the page lacks the worst-case table naming %s (%v)", worst, err)
	}
	if !strings.Contains(string(page), "<h2>gm at every condition</h2>") || !strings.Contains(string(page), "worst case over 9 conditions: ") {
		t.Error("the page lacks the conditions chart, or the best candidate's figures are not called the worst case")
	}
	// A spec of one condition: no chart repeating the gm curves, no
	// worst case to call so.
	spec1, d1, ev1 := currentSwitchOf(t, "name: one\nprocess: demo18-l1\nsupply: 1.8V\ncorners: tt\ninput_range: {low: 0V, high: supply, step: 50mV}\ntopologies: [current-switch]\n")
	c1 := &sizing.Candidate{ID: "c01", Topology: "current-switch", Design: d1, Eval: ev1, Metrics: ev1.Metrics, Worst: ev1.WorstFor(spec1.Targets), Feasible: true, Pareto: true}
	page1, err := RunPage(&sizing.Result{Spec: spec1, Candidates: []*sizing.Candidate{c1}, Best: c1}, RunOptions{}, nil, nil, svg, nil)
	if err != nil || strings.Contains(string(page1), "<h2>gm at every condition</h2>") || strings.Contains(string(page1), "worst case over") {
		t.Errorf("a page of one condition has the conditions chart or a worst case (%v)", err)
	}
	empty, err := ConditionsFigure(&sizing.Result{Spec: spec})
	if err != nil || !strings.Contains(empty.Subtitle, "no candidate") {
		t.Errorf("without candidates: %v, %q", err, empty.Subtitle)
	}
}

// TestMonteCarloFigure: the best candidate's Monte Carlo histograms stand
// beside the sensitivity estimate's σ at the same common mode, name the
// number of samples, and say so when there is no Monte Carlo; the
// finalists' table and summary.json carry a family best's. The
// agreement itself is objectives' TestMonteCarloAgainstSensitivity; this
// checks the figure against the samples it draws.
func TestMonteCarloFigure(t *testing.T) {
	spec, d, ev := currentSwitchOf(t, "name: mc\nprocess: demo18-l1\nsupply: 1.8V\ncorners: tt\ninput_range: {low: 0V, high: supply, step: 100mV}\ntopologies: [current-switch]\n")
	mc, err := objectives.MonteCarloNominal(d, 300, 1, 2)
	if err != nil {
		t.Fatal(err)
	}
	c := &sizing.Candidate{ID: "c01", Topology: "current-switch", Design: d, Eval: ev, Metrics: ev.Metrics, Worst: ev.WorstFor(spec.Targets), Feasible: true,
		MonteCarlo: mc}
	res := &sizing.Result{Spec: spec, Candidates: []*sizing.Candidate{c}, Best: c, MonteCarloOf: c}
	f, err := MonteCarloFigure(res)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Panels) != 3 || !strings.Contains(f.Subtitle, "300 samples") {
		t.Fatalf("%d panels, subtitle %q; want the offset band, the offset and the switchover from 300 samples", len(f.Panels), f.Subtitle)
	}
	svg, err := f.Render("svg")
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"300 samples: σ", "sensitivity: σ", "sensitivity: ±3 σ", "Monte Carlo: ±3 σ", "12 of the samples"} {
		if !strings.Contains(string(svg), want) && !strings.Contains(string(svg), strings.ReplaceAll(want, " ", "&#160;")) {
			t.Errorf("figure lacks %q", want)
		}
	}
	// The finalists' table and summary.json: the sensitivity beside the
	// Monte Carlo for a family's best that carries one.
	// The figure's candidate is listed once, also when it is no family's
	// best (a run without a best).
	for _, fams := range [][]sizing.FamilyRank{nil, {{Topology: "current-switch", Rank: 1, Feasible: true, Best: c}}} {
		res.Families = fams
		rows := finalistRows(res)
		if len(rows) != 1 || rows[0].OffsetMC != SI(mc.OffsetSigma, "V", tableDigits) || rows[0].Offset != SI(ev.Conditions[0].Mismatch.OffsetSigma, "V", tableDigits) || rows[0].Samples != 300 {
			t.Errorf("%d families: finalists %+v", len(fams), rows)
		}
	}
	sum, err := Summary(res, RunOptions{})
	if err != nil || !strings.Contains(string(sum), `"monte_carlo": {`) || !strings.Contains(string(sum), `"samples": 300`) {
		t.Errorf("summary.json lacks the candidate's Monte Carlo (%v)", err)
	}
	none, err := MonteCarloFigure(&sizing.Result{Spec: spec})
	if err != nil || !strings.Contains(none.Subtitle, "no Monte Carlo") {
		t.Errorf("without samples: %v, %q", err, none.Subtitle)
	}
}

// currentSwitchOf reads a spec sheet and evaluates the current switch at
// its defaults under it, as a run's re-evaluation does.
func currentSwitchOf(t *testing.T, sheet string) (*objectives.Spec, *objectives.Design, *objectives.Evaluation) {
	t.Helper()
	spec, err := objectives.ReadSpec("s.yaml", []byte(sheet), "")
	if err != nil {
		t.Fatal(err)
	}
	fam, err := topologies.Lookup("current-switch")
	if err != nil {
		t.Fatal(err)
	}
	d := spec.Design("current-switch", topologies.Defaults(fam))
	ev, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	return spec, d, ev
}
