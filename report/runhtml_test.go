package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"regexp"
	"strings"
	"testing"

	"pairsmith/objectives"
	"pairsmith/optimize"
	"pairsmith/topologies"
)

// TestFrontText: the cap on the reported front is said wherever the
// front's size is, in the run table and on the page, with the whole
// front's size (optimize.Result.Front) beside the reported one.
func TestFrontText(t *testing.T) {
	tests := []struct {
		name   string
		search *optimize.Result
		want   string
		capped bool
	}{
		{"no search facts", nil, "1 on the Pareto front", false},
		{"nothing feasible", &optimize.Result{}, "none on the Pareto front (no candidate meets the spec)", false},
		{"whole front reported", &optimize.Result{Front: make([]optimize.Candidate, 1)}, "1 on the Pareto front", false},
		{"thinned front", &optimize.Result{Front: make([]optimize.Candidate, 1234)},
			"1 of 1234 on the Pareto front (the most spread 1 reported)", true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res := handResult(t, nil)
			res.Search = tc.search
			if tc.search != nil && len(tc.search.Front) == 0 {
				res.Candidates[0].Pareto, res.Candidates[0].Feasible, res.Best = false, false, nil
			}
			if got := FrontText(res); got != tc.want {
				t.Errorf("FrontText = %q, want %q", got, tc.want)
			}
			var b bytes.Buffer
			if err := RunTable(&b, res, "out"); err != nil {
				t.Fatal(err)
			}
			if want := "2 candidates written, " + tc.want + "\n"; res.Best != nil && !strings.Contains(b.String(), want) {
				t.Errorf("run table lacks %q:\n%s", want, b.String())
			}
			page, err := RunPage(res, RunOptions{}, nil, nil, nil, nil)
			if err != nil {
				t.Fatal(err)
			}
			if !strings.Contains(string(page), tc.want) {
				t.Errorf("the page lacks %q", tc.want)
			}
			if got := strings.Contains(string(page), "the reported ones are those most spread"); got != tc.capped {
				t.Errorf("the page explains the thinning: %v, want %v", got, tc.capped)
			}
		})
	}
}

// TestRunPageContents reads the page of a small real search: the run id
// in the header, the families table with each nearest miss's misses on a
// row of their own below it, the best candidate's parameters and
// transistors (g_m/I_D = g_m/|I_D| of each), one collapsible section per
// reported candidate, the glossary of every metric, the caution, and
// nothing fetched from elsewhere.
func TestRunPageContents(t *testing.T) {
	res := searchSpec(t, "strain-gauge.yaml", 400)
	pageRaw, err := RunPage(res, RunOptions{Workers: 2, RunID: "20250101-abcdef"}, nil, nil, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	page := string(pageRaw)
	if !strings.Contains(page, `<p class="runid">run <code>20250101-abcdef</code></p>`) {
		t.Error("the header lacks the run id")
	}
	noID, err := RunPage(res, RunOptions{}, nil, nil, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(noID), `class="runid"`) {
		t.Error("a run without an id shows a run id line")
	}
	if n := strings.Count(page, objectives.Caution[:40]); n < 2 {
		t.Errorf("the caution appears %d times, want at the top and the bottom", n)
	}
	// Offline: no address of another site, no script, no external style.
	for _, bad := range []string{"http://", "https://", "<script", "<link", "@import", "src="} {
		if strings.Contains(page, bad) {
			t.Errorf("the page has %q", bad)
		}
	}
	// The families table: a miss row follows each nearest miss's row.
	fam := section(t, page, `<table class="families">`, "</table>")
	misses := 0
	for _, f := range res.Families {
		if f.Best == nil || f.Best.Feasible {
			continue
		}
		misses++
		row := regexp.MustCompile(`(?s)<td><a href="#` + f.Best.ID + `">` + f.Best.ID + `</a></td>.*?</tr>\s*<tr class="misses"><td></td><td colspan="10">misses ([^<]*)</td></tr>`)
		m := row.FindStringSubmatch(fam)
		want := strings.Join(CandidateMisses(res.Spec, f.Best), "; ")
		if m == nil || htmlText(m[1]) != want {
			t.Errorf("%s (%s): no misses row %q below its row", f.Topology, f.Best.ID, want)
		}
	}
	if got := strings.Count(fam, `<tr class="misses">`); got != misses {
		t.Errorf("%d misses rows, want %d", got, misses)
	}
	// The best candidate (or the nearest) with its sizes.
	best := res.Best
	if best == nil {
		best = nearest(res)
	}
	sec := section(t, page, "<h2>Best candidate: "+best.ID, "<h2>Trade-offs</h2>")
	fams, err := best.Design.Family()
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range fams.Params() {
		text := paramText(best.Design.Params[p.Name], UnitSymbol(p.Unit))
		if p.Scale == topologies.Choice {
			text = p.Text(best.Design.Params[p.Name])
		}
		want := fmt.Sprintf("<tr><td><code>%s</code></td><td class=\"num\">%s</td>", p.Name, text)
		if !strings.Contains(sec, want) {
			t.Errorf("best candidate: no parameter row %q", want)
		}
	}
	if len(best.Eval.Devices) == 0 {
		t.Fatal("the best candidate has no transistors to show")
	}
	for _, d := range best.Eval.Devices {
		want := fmt.Sprintf("<tr><td>%s</td><td class=\"nowrap\">%s</td><td class=\"num\">%s</td><td class=\"num\">%s</td><td class=\"num\">%s</td><td class=\"num\">%s</td><td class=\"num\">%s</td><td class=\"nowrap\">%s</td><td class=\"nowrap\">%s</td><td class=\"num\">%s</td><td class=\"nowrap\">%s</td></tr>",
			d.Name, d.Role, widthText(d.W, d.M), SI(d.L, "m", 4), SIFixed(d.ID, "A", 4),
			SIFixed(d.GM, "S", 4), gmIDText(d.GM/math.Abs(d.ID)), d.Inversion, d.Saturation, volts(d.VDSMargin), d.Duty)
		if !strings.Contains(sec, want) {
			t.Errorf("best candidate: no transistor row %q", want)
		}
	}
	// One collapsible section for every reported candidate, in order.
	ids := regexp.MustCompile(`<details id="(c\d+)">`).FindAllStringSubmatch(page, -1)
	if len(ids) != len(res.Candidates) {
		t.Fatalf("%d details sections, want %d", len(ids), len(res.Candidates))
	}
	for i, c := range res.Candidates {
		if ids[i][1] != c.ID {
			t.Errorf("details %d is %s, want %s", i, ids[i][1], c.ID)
		}
	}
	if n := strings.Count(page, "<h3>Transistors at vcm = "); n != len(res.Candidates)+1 {
		t.Errorf("%d transistor tables, want one per candidate and the best's", n)
	}
	// The glossary names every metric, and says what power is made of.
	gl := section(t, page, `<dl class="glossary">`, "</dl>")
	for _, term := range []string{"gm_min, gm_max", "gm_ripple", "power", "area", "switchover", "transition_width",
		"gm_id_min", "score", "violations"} {
		if !strings.Contains(gl, "<dt>"+term+"</dt>") {
			t.Errorf("the glossary lacks %s", term)
		}
	}
	for _, w := range []string{"supply voltage × the total current drawn from the supply", "reference (bias) branch",
		"largest value over the sweep"} {
		if !strings.Contains(htmlText(gl), w) {
			t.Errorf("the glossary's power lacks %q", w)
		}
	}
}

// widthText is how the page writes a width with its multiplier.
func widthText(w, m float64) string {
	s := SI(w, "m", 4)
	if m != 1 && m != 0 {
		s = Plain(m, 4) + "×" + s
	}
	return s
}

// section returns the part of page from start up to end.
func section(t *testing.T, page, start, end string) string {
	t.Helper()
	_, rest, ok := strings.Cut(page, start)
	if !ok {
		t.Fatalf("the page lacks %q", start)
	}
	s, _, ok := strings.Cut(rest, end)
	if !ok {
		t.Fatalf("the page lacks %q after %q", end, start)
	}
	return s
}

// htmlText undoes html/template's escaping of text.
func htmlText(s string) string {
	return strings.NewReplacer("&lt;", "<", "&gt;", ">", "&amp;", "&", "&#39;", "'", "&#34;", `"`).Replace(s)
}

// svgHex is a colour as SVGo writes it in a style: "#E69F00".
func svgHex(c color.Color) string {
	r, g, b, _ := c.RGBA()
	return fmt.Sprintf("#%02X%02X%02X", r>>8, g>>8, b>>8)
}

// TestParetoFigureMarks: a candidate on the front is drawn as its
// family's filled marker, one off it as the same marker hollow (an
// outline), in the family's colour; the legend names the family by its
// filled marker and explains filled and hollow in grey. No two families
// share a marker, and no hollow form is a filled one.
func TestParetoFigureMarks(t *testing.T) {
	res := handResult(t, nil) // c01 n-pair on the front, c02 current-switch off it
	fig, err := ParetoFigure(res)
	if err != nil {
		t.Fatal(err)
	}
	svg, err := fig.Render("svg")
	if err != nil {
		t.Fatal(err)
	}
	count := func(style string) int { return strings.Count(string(svg), `style="`+style+`"`) }
	filled := func(c color.Color) int { return count("fill:" + svgHex(c)) }
	hollow := func(c color.Color) int { return count("fill:none;stroke:" + svgHex(c) + ";stroke-width:1.1") }
	panels := len(fig.Panels)
	np, cs := familyColour("n-pair"), familyColour("current-switch")
	for _, tc := range []struct {
		what      string
		got, want int
	}{
		{"n-pair filled (a point a panel, and the legend)", filled(np), panels + 1},
		{"n-pair hollow", hollow(np), 0},
		{"current-switch hollow (a point a panel)", hollow(cs), panels},
		{"current-switch filled (the legend)", filled(cs), 1},
		{"grey filled (legend: on the front)", filled(styleGrey), 1},
		{"grey hollow (legend: not on the front)", hollow(styleGrey), 1},
	} {
		if tc.got != tc.want {
			t.Errorf("%s: %d, want %d", tc.what, tc.got, tc.want)
		}
	}
	_, text := svgText(t, svg)
	for _, w := range []string{"n-pair", "current-switch", "on the front", "not on the front", "budget",
		"filled: 1 on the front; hollow: other reported candidates"} {
		if !strings.Contains(text, w) {
			t.Errorf("the figure's text lacks %q", w)
		}
	}
	seen := map[mark]bool{}
	for _, m := range familyMarks {
		if seen[m] || seen[m.outline()] || m.hollow {
			t.Errorf("mark %+v repeats another or is hollow", m)
		}
		seen[m], seen[m.outline()] = true, true
	}
	for _, c := range familyColours {
		if svgHex(c) == svgHex(styleGrey) {
			t.Errorf("a family has the style grey %s", svgHex(c))
		}
	}
}

// TestCurvesFigureFront: every reported front member is drawn as a thin,
// faded line and every family's best as a bold one (each bold line has
// its legend entry, a short line of the same style).
func TestCurvesFigureFront(t *testing.T) {
	res := searchSpec(t, "strain-gauge.yaml", 300)
	fig, err := CurvesFigure(res)
	if err != nil {
		t.Fatal(err)
	}
	front, bests := 0, 0
	for _, c := range res.Candidates {
		if c.Pareto {
			front++
		}
	}
	for _, f := range res.Families {
		if f.Best != nil {
			bests++
		}
	}
	if front == 0 || bests == 0 {
		t.Fatalf("the search gave %d front members and %d family bests: the test checks nothing", front, bests)
	}
	svg, err := fig.Render("svg")
	if err != nil {
		t.Fatal(err)
	}
	thin := strings.Count(string(svg), "stroke-opacity:0.6;stroke-width:"+fmt.Sprint(float64(thinWidth)))
	bold := strings.Count(string(svg), "stroke-width:"+fmt.Sprint(float64(boldWidth)))
	if thin != front || bold != 2*bests {
		t.Errorf("%d thin lines and %d bold ones with their legend entries, want %d front members and 2 × %d family bests",
			thin, bold, front, bests)
	}
	if want := fmt.Sprintf("thin: the %d reported members of the front", front); !strings.Contains(fig.Subtitle, want) {
		t.Errorf("subtitle %q lacks %q", fig.Subtitle, want)
	}
}

// TestRunPageSaysWhichDecksRun: the page says whether the run's decks
// carry the process's own cards (level 1: ngspice reproduces the numbers)
// or an EKV process's nearest level-1 equivalent (they run, with other
// numbers), as summary.json's netlist_model does.
func TestRunPageSaysWhichDecksRun(t *testing.T) {
	for _, tc := range []struct{ spec, want, not string }{
		{"sensor-l1.yaml", "own level-1 cards, and reproduces these numbers", "level-1 equivalent"},
		{"strain-gauge.yaml", "nearest level-1 equivalent", "own level-1 cards"},
	} {
		res := searchSpec(t, tc.spec, 200)
		page, err := RunPage(res, RunOptions{}, nil, nil, nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(page), tc.want) || strings.Contains(string(page), tc.not) {
			t.Errorf("%s: the page does not say %q (or says %q) of its decks", tc.spec, tc.want, tc.not)
		}
	}
}
