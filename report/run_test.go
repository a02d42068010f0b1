package report

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"html/template"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"pairsmith/objectives"
	"pairsmith/sizing"
)

// searchSpec runs a small search of a demo spec sheet.
func searchSpec(t *testing.T, name string, evaluations int) *sizing.Result {
	t.Helper()
	spec, err := objectives.LoadSpec(filepath.Join("..", "testdata", "specs", name))
	if err != nil {
		t.Fatal(err)
	}
	spec.Search.Evaluations = evaluations
	res, err := sizing.Search(context.Background(), spec, sizing.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Candidates) == 0 {
		t.Fatal("the search reports no candidate")
	}
	return res
}

// TestWriteRun writes a run directory over an existing one: the files of
// the run are (over)written, every other file is left alone, and every
// design file reads back (objectives.LoadDesign, what `eval` reads) into a
// design whose evaluation has the candidate's metrics bit for bit
// (docs/files.md#candidate-files: eval reads them unchanged).
func TestWriteRun(t *testing.T) {
	res := searchSpec(t, "sensor-l1.yaml", 300)
	dir := t.TempDir()
	notes := filepath.Join(dir, "notes.txt")
	if err := os.WriteFile(notes, []byte("mine\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, SummaryFile), []byte("stale"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := WriteRun(dir, res, RunOptions{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	if b, err := os.ReadFile(notes); err != nil || string(b) != "mine\n" {
		t.Errorf("another file was touched: %q, %v", b, err)
	}
	raw, err := os.ReadFile(filepath.Join(dir, SummaryFile))
	if err != nil {
		t.Fatal(err)
	}
	want, err := Summary(res, RunOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(raw, want) {
		t.Error("summary.json is not what Summary gives (or the stale file was kept)")
	}
	for _, f := range []string{ParetoCSVFile, ParetoPlotFile, CurvesPlotFile, ReportFile} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Error(err)
		}
	}
	entries, err := os.ReadDir(filepath.Join(dir, CandidatesDir))
	if err != nil {
		t.Fatal(err)
	}
	if len(entries) != 2*len(res.Candidates) {
		t.Errorf("%d files in candidates/, want a design and a deck for each of %d", len(entries), len(res.Candidates))
	}
	for _, c := range res.Candidates {
		path := filepath.Join(dir, filepath.FromSlash(CandidateDesign(c.ID)))
		text, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		head, _, _ := strings.Cut(string(text), "topology:")
		for _, l := range strings.Split(strings.TrimSuffix(head, "\n"), "\n") {
			if !strings.HasPrefix(l, "# ") {
				t.Errorf("%s: header line %q is not a comment", c.ID, l)
			}
		}
		for _, w := range []string{"pairsmith run", res.Spec.Name, objectives.Caution} {
			if !strings.Contains(head, w) {
				t.Errorf("%s: header lacks %q", c.ID, w)
			}
		}
		d, err := objectives.LoadDesign(path)
		if err != nil {
			t.Fatalf("%s: %v", c.ID, err)
		}
		ev, err := objectives.Evaluate(d)
		if err != nil {
			t.Fatal(err)
		}
		if !ev.Metrics.Same(c.Eval.Metrics) {
			t.Errorf("%s: read back %+v, reported %+v", c.ID, ev.Metrics, c.Eval.Metrics)
		}
		if w := ev.WorstFor(res.Spec.Targets).Metrics; !w.Same(c.Metrics) {
			t.Errorf("%s: read back the worst case %+v, reported %+v", c.ID, w, c.Metrics)
		}
	}
	// A run directory that is a file cannot be written.
	if err := WriteRun(notes, res, RunOptions{}); err == nil {
		t.Error("no error writing into a regular file")
	}
}

// TestSummaryTimes: summary.json depends on the run's time only through
// "seconds" and "evaluations_per_second", and not on the workers.
func TestSummaryTimes(t *testing.T) {
	res := searchSpec(t, "sensor-l1.yaml", 200)
	a, err := Summary(res, RunOptions{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	res.Elapsed += 1234 * time.Millisecond
	b, err := Summary(res, RunOptions{Workers: 8})
	if err != nil {
		t.Fatal(err)
	}
	la, lb := strings.Split(string(a), "\n"), strings.Split(string(b), "\n")
	if len(la) != len(lb) {
		t.Fatalf("%d lines against %d", len(la), len(lb))
	}
	var differ []string
	for i := range la {
		if la[i] != lb[i] {
			key, _, _ := strings.Cut(strings.TrimSpace(la[i]), ":")
			differ = append(differ, key)
		}
	}
	if strings.Join(differ, " ") != `"seconds" "evaluations_per_second"` {
		t.Errorf("lines that differ: %v, want only seconds and evaluations_per_second", differ)
	}
}

// TestSummaryInfeasible: on the impossible demo spec the summary says no
// candidate is feasible, best is null, and the binding targets are those
// of the search result.
func TestSummaryInfeasible(t *testing.T) {
	res := searchSpec(t, "impossible.yaml", 200)
	raw, err := Summary(res, RunOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var s struct {
		Feasible bool     `json:"feasible"`
		Best     *string  `json:"best"`
		Binding  []string `json:"binding"`
		Families []struct {
			Best *string `json:"best"`
		} `json:"families"`
		Candidates []struct {
			ID         string            `json:"id"`
			Violations []json.RawMessage `json:"violations"`
		} `json:"candidates"`
	}
	if err := json.Unmarshal(raw, &s); err != nil {
		t.Fatal(err)
	}
	if s.Feasible || s.Best != nil {
		t.Errorf("feasible %v best %v", s.Feasible, s.Best)
	}
	if len(s.Binding) == 0 || strings.Join(s.Binding, ",") != strings.Join(res.Binding, ",") {
		t.Errorf("binding %v, search %v", s.Binding, res.Binding)
	}
	ids := map[string]bool{}
	for _, c := range s.Candidates {
		ids[c.ID] = true
		if len(c.Violations) == 0 {
			t.Errorf("%s misses nothing of an impossible spec", c.ID)
		}
	}
	for _, f := range s.Families {
		if f.Best != nil && !ids[*f.Best] {
			t.Errorf("family best %s is not a candidate", *f.Best)
		}
	}
}

// handResult is a result written out by hand (invented numbers): a
// single pair on the front, without a handover, and a candidate off it.
func handResult(t *testing.T, pareto []string) *sizing.Result {
	t.Helper()
	spec, err := objectives.ReadSpec("hand.yaml", []byte("process: demo18\nsupply: 1.8V\ntargets: {gm_min: 100uS, power_max: 200uW}\n"), ".")
	if err != nil {
		t.Fatal(err)
	}
	if pareto != nil {
		spec.Pareto = pareto
	}
	nan := math.NaN()
	single := objectives.Metrics{GMMin: 1.25e-4, GMMax: 2.5e-4, GMRipple: 1, Power: 1.5e-4, Area: 4e-10,
		Switchover: nan, TransitionWidth: nan, GMOverIDMin: 9}
	off := objectives.Metrics{GMMin: 9e-5, GMMax: 1.2e-4, GMRipple: 1.0 / 3, Power: 2.5e-4, Area: 6e-10,
		Switchover: 0.9, TransitionWidth: 0.15, GMOverIDMin: 8}
	c1 := &sizing.Candidate{ID: "c01", Topology: "n-pair", Metrics: single, Feasible: true, Pareto: true,
		Violations: spec.Targets.Check(single), Score: 0.75}
	c2 := &sizing.Candidate{ID: "c02", Topology: "current-switch", Metrics: off,
		Violations: spec.Targets.Check(off), Score: 1.3}
	return &sizing.Result{Spec: spec, Candidates: []*sizing.Candidate{c1, c2}, Best: c1,
		Families: []sizing.FamilyRank{{Topology: "n-pair", Rank: 1, Feasible: true, Best: c1},
			{Topology: "current-switch", Rank: 2, Best: c2}}}
}

// TestParetoCSV reads pareto.csv with encoding/csv (RFC 4180): the
// header has SI units and the axis columns of the spec, the rows are the
// Pareto candidates only, values are exact, and the missing handover of a
// single pair is an empty cell.
func TestParetoCSV(t *testing.T) {
	for _, tc := range []struct {
		pareto []string
		axes   []string
		values []string
	}{
		{nil, []string{"axis_gm_ripple", "axis_power_W", "axis_area_m2"}, []string{"1", "0.00015", "4e-10"}},
		// gm_min is minimised negated (objectives.Spec.Axes).
		{[]string{"gm_min", "transition_width"}, []string{"axis_neg_gm_min_S", "axis_transition_width_V"}, []string{"-0.000125", "1.8"}},
	} {
		res := handResult(t, tc.pareto)
		rows := paretoRows(t, res)
		wantHead := append(append([]string{"id", "topology", "gm_min_S", "gm_max_S", "gm_ripple", "power_W", "area_m2",
			"switchover_V", "transition_width_V", "gm_id_min_per_V", "offset_V", "offset_drift_V", "slew_current_A", "slew_V_per_s", "min_supply_V", "noise_V_per_rtHz"}, tc.axes...), "score")
		if strings.Join(rows[0], ",") != strings.Join(wantHead, ",") {
			t.Errorf("header %v, want %v", rows[0], wantHead)
		}
		if len(rows) != 2 {
			t.Fatalf("%d rows, want the header and the one Pareto candidate", len(rows))
		}
		wantRow := append(append([]string{"c01", "n-pair", "0.000125", "0.00025", "1", "0.00015", "4e-10", "", "", "9", "0", "0", "0", "0", "0", "0"}, tc.values...), "0.75")
		if strings.Join(rows[1], ",") != strings.Join(wantRow, ",") {
			t.Errorf("row %v, want %v", rows[1], wantRow)
		}
	}
}

// paretoRows returns a result's pareto.csv (ParetoCSV) read back as rows,
// the header first.
func paretoRows(t *testing.T, res *sizing.Result) [][]string {
	t.Helper()
	data, err := ParetoCSV(res)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(data)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

// TestMissTexts: each missed target is said with its value and limit;
// met targets are not listed.
func TestMissTexts(t *testing.T) {
	spec, err := objectives.ReadSpec("s.yaml", []byte("process: demo18\nsupply: 1.8V\ntargets:\n  gm_min: 150uS\n"+
		"  gm_ripple_max: 20%\n  power_max: 200uW\n  area_max: 3000um2\n  switchover: {at: 0.9V, tolerance: 0.1V}\n"+
		"  transition_width_max: 200mV\n"), ".")
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		m    objectives.Metrics
		want []string
	}{
		{objectives.Metrics{GMMin: 9.52e-5, GMMax: 1e-4, GMRipple: 0.05, Power: 2.5e-4, Area: 4e-9, Switchover: 1.05, TransitionWidth: 0.1},
			[]string{"gm_min 95.2 µS < 150 µS", "power 250 µW > 200 µW", "area 4000 µm² > 3000 µm²", "switchover 1.05 V outside 900 mV ± 100 mV"}},
		{objectives.Metrics{GMMin: 0, GMMax: 2e-4, GMRipple: math.Inf(1), Power: 1e-4, Area: 1e-9, Switchover: math.NaN(), TransitionWidth: math.NaN()},
			[]string{"gm_min 0 S < 150 µS", "gm_ripple ∞ (gm falls to zero) > 20.0 %", "switchover none (no handover), wanted 900 mV ± 100 mV",
				"transition_width none (no handover), wanted ≤ 200 mV"}},
		{objectives.Metrics{GMMin: 2e-4, GMMax: 2.2e-4, GMRipple: 0.1, Power: 1e-4, Area: 1e-9, Switchover: 0.95, TransitionWidth: 0.25},
			[]string{"transition_width 250 mV > 200 mV"}},
		{objectives.Metrics{GMMin: 2e-4, GMMax: 2.2e-4, GMRipple: 0.1, Power: 1e-4, Area: 1e-9, Switchover: 0.95, TransitionWidth: 0.15}, nil},
	}
	for _, tc := range tests {
		got := MissTexts(spec, spec.Targets.Check(tc.m))
		if strings.Join(got, "|") != strings.Join(tc.want, "|") {
			t.Errorf("MissTexts = %q, want %q", got, tc.want)
		}
	}
}

// TestCandidateMisses: a failed always-on check names the device its
// value comes from (the worst finding), its role, the worst common mode
// where the check is swept, and how many findings there are; targets
// read as MissTexts writes them. Hand-made findings: the expected words
// are the report's own, no outside source.
func TestCandidateMisses(t *testing.T) {
	spec, err := objectives.ReadSpec("s.yaml", []byte("process: demo18\nsupply: 1.8V\ntargets:\n  gm_min: 150uS\n"), ".")
	if err != nil {
		t.Fatal(err)
	}
	nan := math.NaN()
	m := objectives.Metrics{GMMin: 9.52e-5, GMMax: 1e-4, GMRipple: 0.05, Power: 1e-4, Area: 1e-9, Switchover: 0.9, TransitionWidth: 0.1}
	tests := []struct {
		name string
		fs   []objectives.Finding
		want []string
	}{
		{"one swept finding", []objectives.Finding{
			{Check: objectives.CheckSaturation, Device: "M11", Role: "zener bias", Points: 25, From: 1.56, To: 1.8, VCM: 1.8, Value: -0.1724, Limit: 0.05, Amount: 0.79},
		}, []string{"gm_min 95.2 µS < 150 µS", "saturation: |V_DS| − |V_DSAT| -172.4 mV, want ≥ 50 mV (M11, zener bias, at vcm 1.8 V)"}},
		{"the worst of three, geometry without a common mode", []objectives.Finding{
			{Check: objectives.CheckGeometry, Device: "M3", Role: "pmos input", From: nan, To: nan, VCM: nan, Value: 1e-7, Limit: 1.8e-7, Amount: 0.44},
			{Check: objectives.CheckSaturation, Device: "M6", Role: "pmos tail", Points: 3, From: 0, To: 0.02, VCM: 0, Value: 0.02, Limit: 0.05, Amount: 0.1},
			{Check: objectives.CheckSaturation, Device: "summing stage", Role: "folding sources and mirror", From: nan, To: nan, VCM: nan, Value: 0.018, Limit: 0.05, Amount: 0.2},
			{Check: objectives.CheckSaturation, Device: "M8", Role: "mirror input", Points: 1, From: 1.8, To: 1.8, VCM: 1.8, Value: 0.03, Limit: 0.05, Amount: 0.05},
		}, []string{"gm_min 95.2 µS < 150 µS", "geometry: a drawn size 100 nm against the rule 180 nm (M3, pmos input)",
			"saturation: |V_DS| − |V_DSAT| 18 mV, want ≥ 50 mV (worst of 3: summing stage, folding sources and mirror)"}},
	}
	for _, tc := range tests {
		c := &sizing.Candidate{Violations: append(spec.Targets.Check(m), objectives.CheckViolations(tc.fs)...),
			Eval: &objectives.Evaluation{Findings: tc.fs}}
		if got := CandidateMisses(spec, c); strings.Join(got, "|") != strings.Join(tc.want, "|") {
			t.Errorf("%s: CandidateMisses = %q, want %q", tc.name, got, tc.want)
		}
		c.Eval = nil
		if got, want := CandidateMisses(spec, c), MissTexts(spec, c.Violations); strings.Join(got, "|") != strings.Join(want, "|") {
			t.Errorf("%s, not evaluated: CandidateMisses = %q, want MissTexts' %q", tc.name, got, want)
		}
	}
}

// TestInlineSVG: a figure prepared for the page has no XML prolog and no
// namespace declarations (no web addresses at all) and is still
// well-formed XML with an svg root (encoding/xml).
func TestInlineSVG(t *testing.T) {
	fig, err := ParetoFigure(handResult(t, nil))
	if err != nil {
		t.Fatal(err)
	}
	data, err := fig.Render("svg")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(data, []byte("<?xml")) || !bytes.Contains(data, []byte("xmlns=")) {
		t.Fatal("the rendered SVG has no prolog or namespace to strip: the test checks nothing")
	}
	in := string(inlineSVG(data))
	if !strings.HasPrefix(in, "<svg") || strings.Contains(in, "xmlns") || strings.Contains(in, "http") {
		t.Errorf("inline SVG starts %q", in[:min(len(in), 200)])
	}
	root, text := svgText(t, []byte(in))
	if root != "svg" || !strings.Contains(text, "n-pair") {
		t.Errorf("root %q; text names n-pair: %v", root, strings.Contains(text, "n-pair"))
	}
}

// TestRunPageEscapes: text from the spec sheet reaches the page and the
// plots escaped (html/template; the plots' text by SVGo's xml.Escape), so a
// spec name cannot add markup; the caution is on the page.
func TestRunPageEscapes(t *testing.T) {
	res := handResult(t, nil)
	res.Spec.Name = `<script>alert("x")</script> & co`
	fig, err := ParetoFigure(res)
	if err != nil {
		t.Fatal(err)
	}
	svg, err := fig.Render("svg")
	if err != nil {
		t.Fatal(err)
	}
	page, err := RunPage(res, RunOptions{}, svg, svg, svg, nil)
	if err != nil {
		t.Fatal(err)
	}
	p := string(page)
	if strings.Contains(p, "<script") {
		t.Error("the spec's name added a script element")
	}
	if !strings.Contains(p, "&lt;script&gt;") {
		t.Error("the spec's name is not on the page, escaped")
	}
	if !strings.Contains(p, "Estimates from compact models; verify with the foundry&#39;s models") {
		t.Error("the page lacks the caution")
	}
	for _, w := range []string{"n-pair", "current-switch", "c01", "candidates/c01.yaml", "candidates/c02.cir", "gm_min ≥ 100 µS"} {
		if !strings.Contains(p, w) {
			t.Errorf("the page lacks %q", w)
		}
	}
}

// TestParetoFigurePanels: the first trade-off axis runs across and every
// other axis gets a panel; a single axis is drawn against gm_min.
func TestParetoFigurePanels(t *testing.T) {
	for _, tc := range []struct {
		pareto []string
		panels int
		ylabel string // of the last panel
	}{
		{nil, 2, "area (µm²)"},
		{[]string{"power"}, 1, "gm_min (µS)"},
		{[]string{"gm_min"}, 1, "power (µW)"},
		{[]string{"gm_ripple", "power", "area", "gm_min", "transition_width"}, 4, "transition width (mV)"},
	} {
		fig, err := ParetoFigure(handResult(t, tc.pareto))
		if err != nil {
			t.Fatal(err)
		}
		if len(fig.Panels) != tc.panels {
			t.Errorf("%v: %d panels, want %d", tc.pareto, len(fig.Panels), tc.panels)
			continue
		}
		if got := fig.Panels[len(fig.Panels)-1].Y.Label.Text; got != tc.ylabel {
			t.Errorf("%v: last panel's y label %q, want %q", tc.pareto, got, tc.ylabel)
		}
		if _, err := fig.Render("svg"); err != nil {
			t.Error(err)
		}
	}
}

// TestRunTable: the families in rank order with their candidates; a
// nearest miss has what it misses on the line below it; the end names the
// best candidate, the directory and the rate, then the caution.
func TestRunTable(t *testing.T) {
	res := handResult(t, nil)
	res.Evaluations, res.Elapsed = 500, 2*time.Second
	var b bytes.Buffer
	if err := RunTable(&b, res, "out"); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(b.String(), "\n")
	find := func(s string) int {
		for i, l := range lines {
			if strings.Contains(l, s) {
				return i
			}
		}
		t.Fatalf("no line with %q in\n%s", s, b.String())
		return -1
	}
	first, second := find(" n-pair "), find(" current-switch ")
	if !(find("rank") < first && first < second) {
		t.Error("families not in rank order under the header")
	}
	for _, w := range []string{"feasible", "125 µS", "100.0 %", "150 µW", "400 µm²", "c01"} {
		if !strings.Contains(lines[first], w) {
			t.Errorf("row %q lacks %q", lines[first], w)
		}
	}
	if !strings.Contains(lines[second], "nearest miss") ||
		strings.TrimSpace(lines[second+1]) != "misses gm_min 90 µS < 100 µS; power 250 µW > 200 µW" {
		t.Errorf("nearest miss %q, then %q", lines[second], lines[second+1])
	}
	for _, w := range []string{"best: c01 (n-pair)", "results in out (open " + filepath.Join("out", "report.html") + ")",
		"500 evaluations in 2 s, 250 evaluations/s", objectives.Caution} {
		if !strings.Contains(b.String(), w) {
			t.Errorf("table lacks %q", w)
		}
	}
	res.Best, res.Binding = nil, []string{"power_max", "gm_min"}
	b.Reset()
	if err := RunTable(&b, res, "out"); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "no candidate meets the spec; the targets that bind: power_max, gm_min") {
		t.Errorf("infeasible table:\n%s", b.String())
	}
}

// TestParetoFigureFarMiss: a miss far beyond the front and the budgets
// (a single pair's ripple of 3000 %) is left off the chart and counted,
// rather than squashing the front into a corner.
func TestParetoFigureFarMiss(t *testing.T) {
	res := handResult(t, nil)
	far := *res.Candidates[1]
	far.ID, far.Metrics.GMRipple = "c03", 30
	res.Candidates = append(res.Candidates, &far)
	fig, err := ParetoFigure(res)
	if err != nil {
		t.Fatal(err)
	}
	// The front reaches 100 % and the other candidate 33 %: the axis
	// covers 100 % with 10 % room, not 3000 %.
	if x := fig.Panels[0].X.Max; math.Abs(x-110) > 1e-9 {
		t.Errorf("ripple axis reaches %v %%, want 110", x)
	}
	if !strings.HasSuffix(fig.Subtitle, "; 1 off the chart") {
		t.Errorf("subtitle %q does not count the candidate off the chart", fig.Subtitle)
	}
}

// TestBlockedFamily: a family of which no buildable sizing was found
// (sizing.FamilyRank.Blocked) has no candidate in the results table, the
// page or summary.json: its row says "not buildable" with the check its
// nearest fails, the device and the common mode, and summary.json lists
// the findings under "blocked" (issue 8: no reported candidate breaks a
// check).
func TestBlockedFamily(t *testing.T) {
	res := handResult(t, nil)
	f := objectives.Finding{Check: objectives.CheckSaturation, Device: "M6", Role: "nmos tail", Points: 4,
		From: 0.86, To: 0.89, VCM: 0.86, Value: 0.02, Limit: 0.05, Amount: 0.6, What: "short"}
	blocked := &sizing.Candidate{Topology: "complementary", Eval: &objectives.Evaluation{Findings: []objectives.Finding{f}},
		Violations: append(res.Spec.Targets.Check(res.Candidates[1].Metrics), objectives.CheckViolations([]objectives.Finding{f})...)}
	res.Families = append(res.Families, sizing.FamilyRank{Topology: "complementary", Rank: 3, Blocked: blocked, Evaluations: 321})
	var b bytes.Buffer
	if err := RunTable(&b, res, "out"); err != nil {
		t.Fatal(err)
	}
	want := "no buildable sizing in 321 evaluations; the nearest fails saturation: |V_DS| − |V_DSAT| 20 mV, want ≥ 50 mV (M6, nmos tail, at vcm 860 mV)"
	lines := strings.Split(b.String(), "\n")
	row := -1
	for i, l := range lines {
		if strings.Contains(l, " complementary ") {
			row = i
		}
	}
	if row < 0 || !strings.Contains(lines[row], "not buildable") || strings.Contains(lines[row], "c0") ||
		strings.TrimSpace(lines[row+1]) != want {
		t.Errorf("table:\n%s\nwant a complementary row 'not buildable' without an id, then %q", b.String(), want)
	}
	page, err := RunPage(res, RunOptions{}, nil, nil, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(page), template.HTMLEscapeString(want)) {
		t.Errorf("the page lacks %q", want)
	}
	for _, c := range res.Candidates { // hand-made: give them designs to write
		c.Design = &objectives.Design{Topology: c.Topology, Conditions: res.Spec.Conditions}
	}
	data, err := Summary(res, RunOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Families []struct {
			Topology string `json:"topology"`
			Best     *string
			Blocked  []struct {
				Check, Device string
				VCM           float64
			} `json:"blocked"`
		} `json:"families"`
	}
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	last := doc.Families[len(doc.Families)-1]
	if last.Topology != "complementary" || last.Best != nil || len(last.Blocked) != 1 ||
		last.Blocked[0].Check != "saturation" || last.Blocked[0].Device != "M6" || last.Blocked[0].VCM != 0.86 {
		t.Errorf("summary's complementary entry %+v, want best null and the one finding", last)
	}
	if first := doc.Families[0]; first.Blocked != nil {
		t.Errorf("a family with a best lists blocked findings %+v, want null", first.Blocked)
	}
}
