package report

import (
	"bytes"
	"encoding/json"
	"html"
	"math"
	"slices"
	"strings"
	"testing"

	"pairsmith/objectives"
	"pairsmith/sizing"
	"pairsmith/topologies"
)

// catalogResult is a result written by hand (invented numbers) whose
// spec sets every target and names every axis of the catalog: a
// candidate on the front that meets them, and one that misses every
// target and fails every constraint. The figures are set through the
// catalog, so that an entry added later is in it too: each gets a value
// of its own, finite and positive. No outside source: the checks on it
// compare the report's words with the catalog's, not numbers with a
// reference.
func catalogResult(t *testing.T) *sizing.Result {
	t.Helper()
	text := "process: demo18\nsupply: 1.8V\nload: 5pF\ninput_range: {low: 0V, high: 1.8V}\npareto: [" +
		strings.Join(objectives.AxisNames(), ", ") + "]\n"
	spec, err := objectives.ReadSpec("all.yaml", []byte(text), ".")
	if err != nil {
		t.Fatal(err)
	}
	good, bad := objectives.Metrics{}, objectives.Metrics{}
	for i, e := range objectives.Figures() {
		x := float64(i+2) / 10 // 0.2, 0.3, …: within the input range for a voltage
		*e.Field(&good), *e.Field(&bad) = x, x
	}
	for _, e := range objectives.Catalog() {
		if !e.HasTarget() {
			continue
		}
		x := e.Value(good)
		// Every target: the good candidate meets it, the bad one misses it.
		switch e.Sense {
		case objectives.AtLeast:
			*e.Target.Limit(&spec.Targets) = x / 2
			*e.Field(&bad) = x / 4
		case objectives.AtMost:
			*e.Target.Limit(&spec.Targets) = 2 * x
			*e.Field(&bad) = 4 * x
			if e.Target.Frequency {
				spec.Targets.NoiseAt = 1e4
			}
		case objectives.Window:
			*e.Target.Window(&spec.Targets) = objectives.SwitchoverTarget{At: x, Tolerance: x / 10}
			*e.Field(&bad) = 2 * x
		}
	}
	badVs := spec.Targets.Check(bad)
	for _, e := range objectives.Catalog() {
		if e.Kind == objectives.Constraint {
			badVs = append(badVs, objectives.Violation{Target: e.Key, Value: 0.02, Limit: 0.05, Amount: 0.6})
		}
	}
	design := func(name string) *objectives.Design {
		f, err := topologies.Lookup(name)
		if err != nil {
			t.Fatal(err)
		}
		return spec.Design(name, topologies.Defaults(f))
	}
	c1 := &sizing.Candidate{ID: "c01", Topology: "current-switch", Design: design("current-switch"), Metrics: good,
		Feasible: true, Pareto: true, Violations: spec.Targets.Check(good), Score: 0.5}
	c2 := &sizing.Candidate{ID: "c02", Topology: "mirror-1to3", Design: design("mirror-1to3"), Metrics: bad,
		Violations: badVs, Score: 2}
	return &sizing.Result{Spec: spec, Candidates: []*sizing.Candidate{c1, c2}, Best: c1,
		Families: []sizing.FamilyRank{{Topology: "current-switch", Rank: 1, Feasible: true, Best: c1},
			{Topology: "mirror-1to3", Rank: 2, Best: c2}}}
}

// TestEveryConsumerCoversEveryEntry checks each place that writes
// figures, targets or constraints against the catalog: summary.json,
// pareto.csv, eval's metrics table, the terminal's ranking, the report
// page's tables, paragraphs and glossary, the target and violation texts
// and the plots' axes each hold every entry meant for them, in the words
// the entry gives. A consumer that listed figures by hand would miss the
// next entry and fail here.
func TestEveryConsumerCoversEveryEntry(t *testing.T) {
	res := catalogResult(t)
	spec := res.Spec
	good, bad := res.Candidates[0], res.Candidates[1]
	figs := objectives.Figures()
	shown := func(s objectives.Shown) (out []objectives.Entry) {
		for _, e := range figs {
			if e.Words.Shown <= s {
				out = append(out, e)
			}
		}
		return out
	}

	// summary.json: every figure of a candidate, every target of the
	// spec, every axis, every missed target and failed constraint.
	raw, err := Summary(res, RunOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var sum struct {
		Spec struct {
			Targets map[string]json.RawMessage `json:"targets"`
		} `json:"spec"`
		Candidates []struct {
			Metrics    map[string]*float64 `json:"metrics"`
			Axes       map[string]*float64 `json:"axes"`
			Violations []struct {
				Target string `json:"target"`
			} `json:"violations"`
		} `json:"candidates"`
	}
	if err := json.Unmarshal(raw, &sum); err != nil {
		t.Fatal(err)
	}
	var missed []string
	for _, v := range sum.Candidates[1].Violations {
		missed = append(missed, v.Target)
	}
	for _, e := range objectives.Catalog() {
		if e.Kind == objectives.Figure {
			if p := sum.Candidates[0].Metrics[e.Key]; p == nil || *p != e.Value(good.Metrics) {
				t.Errorf("summary.json: metric %s = %v, want %g", e.Key, p, e.Value(good.Metrics))
			}
		}
		if e.HasTarget() {
			if _, ok := sum.Spec.Targets[e.Target.Key]; !ok {
				t.Errorf("summary.json: the spec's targets lack %s", e.Target.Key)
			}
		}
		if e.IsAxis() && sum.Candidates[0].Axes[e.Key] == nil {
			t.Errorf("summary.json: no axis %s", e.Key)
		}
		if (e.HasTarget() || e.Kind == objectives.Constraint) && !slices.Contains(missed, or(e.Target.Key, e.Key)) {
			t.Errorf("summary.json: the violations %v lack %s", missed, or(e.Target.Key, e.Key))
		}
	}

	// pareto.csv: a column per figure, one per axis, the values exact.
	rows := paretoRows(t, res)
	for i, e := range figs {
		if rows[0][2+i] != e.Column || rows[1][2+i] != csvNum(e.Value(good.Metrics)) {
			t.Errorf("pareto.csv column %d: %s = %s, want %s = %s", 2+i, rows[0][2+i], rows[1][2+i], e.Column, csvNum(e.Value(good.Metrics)))
		}
	}
	for i, a := range spec.Pareto {
		e, _ := objectives.Lookup(a)
		if col := rows[0][2+len(figs)+i]; !strings.HasPrefix(col, "axis_") || !strings.HasSuffix(col, e.Column) {
			t.Errorf("pareto.csv: axis %s in column %q", a, col)
		}
	}

	// eval's metrics table: a row per figure shown there, with its meaning.
	var b bytes.Buffer
	if err := MetricsTable(&b, fakeEval(t, "current-switch", good.Metrics, false)); err != nil {
		t.Fatal(err)
	}
	for _, e := range figs {
		row := ""
		for _, l := range strings.Split(b.String(), "\n") {
			if f := strings.Fields(l); len(f) > 0 && f[0] == e.Key {
				row = l
			}
		}
		if in := e.Words.Shown <= objectives.InEval; in != (row != "") || (in && !strings.HasSuffix(row, e.Words.Meaning)) {
			t.Errorf("eval's table: %s shown at %d has the row %q", e.Key, e.Words.Shown, row)
		}
	}

	// The terminal's ranking: the figures of the rankings in its head,
	// every missed target and failed constraint said below the miss.
	b.Reset()
	if err := RunTable(&b, res, "out"); err != nil {
		t.Fatal(err)
	}
	var head []string
	for _, l := range strings.Split(b.String(), "\n") {
		if f := strings.Fields(l); len(f) > 0 && f[0] == "rank" {
			head = f[3 : len(f)-1]
		}
	}
	var want []string
	for _, e := range shown(objectives.InRanking) {
		want = append(want, strings.Fields(e.ShortName())...)
	}
	if !slices.Equal(head, want) {
		t.Errorf("ranking head %v, want %v", head, want)
	}
	misses := MissTexts(spec, bad.Violations)
	if len(misses) != len(missed) {
		t.Errorf("%d miss texts for %d violations", len(misses), len(missed))
	}
	for i, m := range misses {
		e, _ := objectives.Lookup(missed[i])
		if strings.Contains(m, "(limit") || !strings.HasPrefix(m, e.Key) {
			t.Errorf("miss text %q is not in the words of %s", m, e.Key)
		}
		if !strings.Contains(b.String(), m) {
			t.Errorf("the ranking does not say %q", m)
		}
	}

	// The spec's targets, each by its figure's key.
	texts := TargetTexts(spec.Targets)
	for i, n := range spec.Targets.Names() {
		e, _ := objectives.Lookup(n)
		if !strings.HasPrefix(texts[i], e.Key+" ") {
			t.Errorf("target text %q for %s", texts[i], n)
		}
	}
	if len(texts) != len(spec.Targets.Names()) || len(texts) == 0 {
		t.Errorf("%d target texts for %d targets", len(texts), len(spec.Targets.Names()))
	}

	// The report page: a column head per figure in the Pareto table and
	// per figure of the rankings and the families in theirs, every figure
	// in the best candidate's paragraph, a glossary entry for each.
	page, err := RunPage(res, RunOptions{}, []byte("<svg></svg>"), []byte("<svg></svg>"), []byte("<svg></svg>"), nil)
	if err != nil {
		t.Fatal(err)
	}
	text := html.UnescapeString(string(page))
	for _, tc := range []struct {
		start, end string
		es         []objectives.Entry
	}{
		{"<h2>Families, ranked</h2>", "</tr>", shown(objectives.InFamilies)},
		{"<h2>Pareto candidates</h2>", "</tr>", figs},
		{"<h2>Other reported candidates</h2>", "</tr>", shown(objectives.InRanking)},
	} {
		sec := section(t, text, tc.start, tc.end)
		var heads []string
		for _, h := range strings.Split(sec, "<th>")[1:] {
			heads = append(heads, strings.TrimSuffix(h, "</th>"))
		}
		var keys []string
		for _, e := range tc.es {
			keys = append(keys, e.Key)
		}
		if !containsRun(heads, keys) {
			t.Errorf("%s: heads %v lack %v", tc.start, heads, keys)
		}
	}
	para := section(t, text, "<h2>Best candidate", "</p>")
	for _, e := range figs {
		if w := e.ShortName() + " " + figureProse(e, e.Value(good.Metrics)); !strings.Contains(para, w) {
			t.Errorf("the best's paragraph lacks %q:\n%s", w, para)
		}
	}
	gloss := section(t, text, "<h2>Glossary</h2>", "</dl>")
	for _, e := range objectives.Catalog() {
		if e.Words.Doc != "" && !strings.Contains(gloss, "<dt>"+e.GlossaryTerm()+"</dt><dd>"+e.Words.Doc+"</dd>") {
			t.Errorf("the glossary lacks %s", e.GlossaryTerm())
		}
		if e.Kind == objectives.Figure && !strings.Contains(gloss, e.Key) {
			t.Errorf("the glossary does not name %s", e.Key)
		}
	}

	// The plots: every axis drawn with its label and its target as the
	// budget.
	for _, a := range objectives.AxisNames() {
		e, _ := objectives.Lookup(a)
		v := viewOf(spec, a)
		limit, _ := spec.Targets.Bound(e.Target.Key)
		scale := 1.0
		if v.unit == "%" {
			scale = 100
		}
		if v.name != e.PlotLabel() || !(v.budget == scale*limit) || v.value(good.Metrics) != scale*e.Value(good.Metrics) {
			t.Errorf("axis %s drawn as %q, budget %g, value %g", a, v.name, v.budget, v.value(good.Metrics))
		}
	}
	if math.IsNaN(viewOf(spec, "no_such_axis").budget) != true {
		t.Error("an unknown axis has a budget")
	}
}

// containsRun reports whether want appears in list as a run of
// consecutive items.
func containsRun(list, want []string) bool {
	for i := 0; i+len(want) <= len(list); i++ {
		if slices.Equal(list[i:i+len(want)], want) {
			return true
		}
	}
	return false
}
