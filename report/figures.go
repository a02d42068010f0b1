package report

import (
	"fmt"
	"math"
	"strings"

	"pairsmith/objectives"
	"pairsmith/units"
)

// The report writes every figure, target and constraint as its entry in
// objectives.Catalog says: the tables, texts, columns and plots below
// iterate over the catalog, and only the units (unitSymbol, quantity)
// are spelt out here.

// figuresUpTo returns the figures shown at level s or at an earlier one
// (objectives.Shown), in the catalog's order.
func figuresUpTo(s objectives.Shown) []objectives.Entry {
	var out []objectives.Entry
	for _, e := range objectives.Figures() {
		if e.Words.Shown <= s {
			out = append(out, e)
		}
	}
	return out
}

// figuresBeyond returns the figures not shown at level s, those of the
// later levels, in the catalog's order.
func figuresBeyond(s objectives.Shown) []objectives.Entry {
	var out []objectives.Entry
	for _, e := range objectives.Figures() {
		if e.Words.Shown > s {
			out = append(out, e)
		}
	}
	return out
}

// unitSymbol is the symbol values of dimension d are written with: the SI
// symbol, "/V" for 1/V, "" for a plain number or a fraction.
func unitSymbol(d units.Dim) string {
	if d == units.PerVolt {
		return "/V"
	}
	return UnitSymbol(d)
}

// quantity writes x, of dimension d, for reading: a fraction as a
// percentage (Percent), an area in µm² (areaText), anything else with an
// SI prefix to tableDigits figures, trailing zeros kept when fixed.
func quantity(x float64, d units.Dim, fixed bool) string {
	switch d {
	case units.Percent:
		return Percent(x)
	case units.SquareMetre:
		return areaText(x)
	}
	if fixed {
		return SIFixed(x, unitSymbol(d), tableDigits)
	}
	return SI(x, unitSymbol(d), tableDigits)
}

// figureParts writes a figure's value x for a table and says why it has
// none: "∞" and "(gm falls to zero)" for an unbounded one, "—" and the
// reason for a missing one (on a stage with a single pair when single),
// else the value and "". Trailing zeros are kept for a Fixed figure, and
// for every one when fixed.
func figureParts(e objectives.Entry, x float64, fixed, single bool) (value, note string) {
	switch {
	case e.Unbounded && math.IsInf(x, 1):
		return "∞", "(" + e.Words.Unbounded + ")"
	case math.IsNaN(x) && e.Words.Missing != "":
		why := or(e.Words.Incomplete, e.Words.Missing)
		if single && e.Words.Single != "" {
			why = e.Words.Single
		}
		return "—", "(" + why + ")"
	}
	return quantity(x, e.Dim, fixed || e.Words.Fixed), ""
}

// figureCell writes a figure for a table cell: the value alone.
func figureCell(e objectives.Entry, x float64) string {
	v, _ := figureParts(e, x, false, false)
	return v
}

// figureProse writes a figure in running text: the value, and for an
// unbounded one why ("∞ (gm falls to zero)").
func figureProse(e objectives.Entry, x float64) string {
	v, note := figureParts(e, x, false, false)
	if e.Unbounded && math.IsInf(x, 1) {
		return v + " " + note
	}
	return v
}

// figuresProse writes figures of m in running text, each by its short
// name: "gm_min 154.7 µS, ripple 7.3 %, power 54.8 µW".
func figuresProse(es []objectives.Entry, m objectives.Metrics) string {
	parts := make([]string, len(es))
	for i, e := range es {
		parts[i] = e.ShortName() + " " + figureProse(e, e.Value(m))
	}
	return strings.Join(parts, ", ")
}

// figureCells writes figures of m as table cells.
func figureCells(es []objectives.Entry, m objectives.Metrics) []string {
	out := make([]string, len(es))
	for i, e := range es {
		out[i] = figureCell(e, e.Value(m))
	}
	return out
}

// figureKeys returns the figures' keys, the report page's column heads.
func figureKeys(es []objectives.Entry) []string {
	out := make([]string, len(es))
	for i, e := range es {
		out[i] = e.Key
	}
	return out
}

// boundText writes a target's bound for reading: "≥ 150 µS", "≤ 20.0 %",
// "900 mV ± 100 mV" (limit is a Window's centre, tol its tolerance).
func boundText(e objectives.Entry, limit, tol float64) string {
	q := func(x float64) string { return quantity(x, e.Dim, false) }
	switch e.Sense {
	case objectives.AtLeast:
		return "≥ " + q(limit)
	case objectives.AtMost:
		return "≤ " + q(limit)
	}
	return q(limit) + " ± " + q(tol)
}

// missWord is how a missed bound of sense s reads between the value and
// the bound: "<", ">", "outside".
func missWord(s objectives.Sense) string {
	switch s {
	case objectives.AtLeast:
		return "<"
	case objectives.AtMost:
		return ">"
	}
	return "outside"
}

// violationText says what a missed target or failed constraint is: the
// figure's value against its bound, "gm_min 95.2 µS < 150 µS",
// "switchover 1.05 V outside 900 mV ± 100 mV"; for a missing value why,
// and for a target what was wanted, "switchover none (no handover),
// wanted 900 mV ± 100 mV"; a constraint in its own words (Words.Miss).
func violationText(e objectives.Entry, v objectives.Violation, tol float64) string {
	q := func(x float64) string { return quantity(x, e.Dim, false) }
	if e.Words.Miss != "" {
		return fmt.Sprintf(e.Words.Miss, q(v.Value), q(v.Limit))
	}
	name := e.Key
	if math.IsNaN(v.Value) {
		s := name + " none"
		if e.Words.Missing != "" {
			s += " (" + e.Words.Missing + ")"
		}
		if e.HasTarget() {
			s += ", wanted " + boundText(e, v.Limit, tol)
		}
		return s
	}
	limit := q(v.Limit)
	if e.Sense == objectives.Window {
		limit = boundText(e, v.Limit, tol)
	}
	return name + " " + figureProseLimit(e, v.Value) + " " + missWord(e.Sense) + " " + limit
}

// figureProseLimit writes a violation's value: as a limit is written (no
// trailing zeros), an unbounded one with why.
func figureProseLimit(e objectives.Entry, x float64) string {
	if e.Unbounded && math.IsInf(x, 1) {
		return "∞ (" + e.Words.Unbounded + ")"
	}
	return quantity(x, e.Dim, false)
}

func or(s, def string) string {
	if s != "" {
		return s
	}
	return def
}
