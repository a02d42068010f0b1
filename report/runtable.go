package report

import (
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"pairsmith/objectives"
	"pairsmith/sizing"
)

// RunTable writes the outcome of a run for a terminal: a line with the
// spec and its targets; the families ranked, each with its best candidate
// that meets the spec (or its nearest miss and what that misses) and the
// candidate's figures shown in rankings (objectives.InRanking: gm_min,
// ripple, power, area, switchover) and id; a line with
// the best candidate (or, when none meets the spec, the targets that bind
// and the nearest candidate), where the run directory dir is, the
// evaluations and their rate; and the caution.
func RunTable(w io.Writer, res *sizing.Result, dir string) error {
	e := &errWriter{w: w}
	spec := res.Spec
	e.printf("%s: %d families %s\n", oneLine(spec.Name), len(spec.Topologies), specConditions(spec))
	if ts := TargetTexts(spec.Targets); len(ts) > 0 {
		e.printf("targets: %s\n\n", strings.Join(ts, ", "))
	} else {
		e.printf("targets: none (trade-offs only)\n\n")
	}
	figs := figuresUpTo(objectives.InRanking)
	right := []bool{true, false, false}
	head := []string{"rank", "topology", "status"}
	none := []string{"no result"}
	for _, e := range figs {
		right, head, none = append(right, true), append(head, e.ShortName()), append(none, "—")
	}
	t := &textTable{right: append(right, false)}
	t.add(append(head, "id")...)
	// A note goes on a line of its own below row (counted from the
	// header, 0).
	type note struct {
		row  int
		text string
	}
	var notes []note
	for _, f := range res.Families {
		rank := strconv.Itoa(f.Rank)
		c := f.Best
		if c == nil && f.Blocked != nil {
			t.add(append(append([]string{rank, f.Topology, blockedStatus}, none[1:]...), "—")...)
			notes = append(notes, note{len(t.rows) - 1, BlockedText(spec, f)})
			continue
		}
		if c == nil {
			t.add(append(append([]string{rank, f.Topology}, none...), "—")...)
			notes = append(notes, note{len(t.rows) - 1, "every evaluation failed (no DC solution or an invalid sizing)"})
			continue
		}
		status := "feasible"
		if !c.Feasible {
			status = missStatus
		}
		t.add(append(append([]string{rank, f.Topology, status}, figureCells(figs, c.Metrics)...), c.ID)...)
		if !c.Feasible {
			notes = append(notes, note{len(t.rows) - 1, "misses " + strings.Join(CandidateMisses(spec, c), "; ")})
		}
	}
	// Write the table with each note on a line of its own below its row,
	// indented under the topology column.
	lines := t.lines("  ")
	indent := "  " + strings.Repeat(" ", runeWidth(t.rows, 0)+2)
	next := 0
	for i, l := range lines {
		e.printf("%s\n", l)
		for next < len(notes) && notes[next].row == i {
			e.printf("%s%s\n", indent, notes[next].text)
			next++
		}
	}
	e.printf("\n")
	if b := res.Best; b != nil {
		e.printf("best: %s (%s), score %s; %d candidates written, %s\n",
			b.ID, b.Topology, ScoreText(b.Score), len(res.Candidates), FrontText(res))
	} else {
		e.printf("no candidate meets the spec; the targets that bind: %s\n", BindingText(res.Binding, res.BindingAt))
		if near := nearest(res); near != nil {
			e.printf("nearest: %s (%s) misses %s\n", near.ID, near.Topology, strings.Join(CandidateMisses(spec, near), "; "))
		}
		e.printf("%d candidates written (the nearest misses and each family's best)\n", len(res.Candidates))
	}
	e.printf("results in %s (open %s)\n", dir, filepath.Join(dir, ReportFile))
	e.printf("%d evaluations in %s, %s evaluations/s\n", res.Evaluations, SecondsText(res.Elapsed), Plain(math.Round(Rate(res)), Digits))
	e.printf("\n%s\n", objectives.Caution)
	return e.err
}

// FrontSize returns how many members of the Pareto front a result
// reports (with design files) and how many the whole front has; the
// reported ones are at most sizing.MaxReportedFront, the most spread
// by crowding distance when the front is larger.
func FrontSize(res *sizing.Result) (reported, whole int) {
	for _, c := range res.Candidates {
		if c.Pareto {
			reported++
		}
	}
	whole = reported
	if res.Search != nil {
		whole = max(whole, len(res.Search.Front))
	}
	return reported, whole
}

// FrontText says how much of the Pareto front a result reports: "12 on
// the Pareto front", "none on the Pareto front (no candidate meets the
// spec)", or, when the front was thinned to its most spread
// members, "200 of 1234 on the Pareto front (the most spread 200
// reported)".
func FrontText(res *sizing.Result) string {
	reported, whole := FrontSize(res)
	if whole == 0 {
		return "none on the Pareto front (no candidate meets the spec)"
	}
	if whole > reported {
		return fmt.Sprintf("%d of %d on the Pareto front (the most spread %d reported)", reported, whole, reported)
	}
	return fmt.Sprintf("%d on the Pareto front", reported)
}

// ScoreText writes a candidate's score for reading, to Digits significant
// figures ("0.7342"), a dash when it has none.
func ScoreText(score float64) string {
	if !finiteVal(score) {
		return "—"
	}
	return Plain(score, Digits)
}

// SecondsText writes a run's elapsed time in seconds to a tenth of a
// second and at most Digits figures: "2 s", "45.3 s", "1235 s".
func SecondsText(d time.Duration) string {
	return Plain(math.Round(d.Seconds()*10)/10, Digits) + " s"
}

// nearest returns the reported candidate of least total violation.
func nearest(res *sizing.Result) *sizing.Candidate {
	var near *sizing.Candidate
	for _, c := range res.Candidates {
		if near == nil || objectives.TotalViolation(c.Violations) < objectives.TotalViolation(near.Violations) {
			near = c
		}
	}
	return near
}

// lines returns the table's lines as write writes them, without their
// line ends.
func (t *textTable) lines(indent string) []string {
	var b strings.Builder
	t.write(&errWriter{w: &b}, indent)
	return strings.Split(strings.TrimSuffix(b.String(), "\n"), "\n")
}

// runeWidth returns the width of column col: its widest cell, in runes.
func runeWidth(rows [][]string, col int) int {
	w := 0
	for _, r := range rows {
		if col < len(r) {
			w = max(w, utf8.RuneCountInString(r[col]))
		}
	}
	return w
}

// BindingText writes the targets that bind, worst first, each with the
// condition where it binds when there is one: "gm_ripple_max at ss,
// 1.62 V, 125 °C; saturation at ff, 1.98 V, -40 °C" (semicolons, since a
// condition holds commas), or "gm_ripple_max, gm_min" at one condition.
func BindingText(binding, at []string) string {
	parts := make([]string, len(binding))
	sep := ", "
	for i, b := range binding {
		parts[i] = b
		if i < len(at) && at[i] != "" {
			parts[i] += " at " + at[i]
			sep = "; "
		}
	}
	return strings.Join(parts, sep)
}
