package report

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"pairsmith/objectives"
)

// Significant figures of the numbers in text tables and the report.
const tableDigits = Digits

// errWriter remembers the first write error, so that a table can be
// written line by line and checked once.
type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) printf(format string, args ...any) {
	if e.err == nil {
		_, e.err = fmt.Fprintf(e.w, format, args...)
	}
}

// textTable lays out rows of cells in aligned columns. Widths count runes,
// so µ, ² and — take one column each as they do on a terminal.
type textTable struct {
	right []bool // right-align column i
	tight []bool // one space, not two, before column i
	rows  [][]string
}

func (t *textTable) add(cells ...string) { t.rows = append(t.rows, cells) }

// write writes the table, each line starting with indent and columns two
// spaces apart (one before a tight column); trailing blanks are left off.
func (t *textTable) write(e *errWriter, indent string) {
	var width []int
	for _, r := range t.rows {
		for i, c := range r {
			if i >= len(width) {
				width = append(width, 0)
			}
			width[i] = max(width[i], utf8.RuneCountInString(c))
		}
	}
	for _, r := range t.rows {
		var b strings.Builder
		b.WriteString(indent)
		for i, c := range r {
			pad := strings.Repeat(" ", width[i]-utf8.RuneCountInString(c))
			switch {
			case i > 0 && i < len(t.tight) && t.tight[i]:
				b.WriteString(" ")
			case i > 0:
				b.WriteString("  ")
			}
			if i < len(t.right) && t.right[i] {
				b.WriteString(pad + c)
			} else {
				b.WriteString(c + pad)
			}
		}
		e.printf("%s\n", strings.TrimRight(b.String(), " "))
	}
}

// Celsius writes a temperature in kelvin as degrees Celsius to at most
// Digits significant figures: "27 °C", "-40 °C", "26.85 °C". The
// difference from 273.15 K is rounded to 1 µK first, so that 300.15 K is
// 27 °C and not 27.000000000000023.
func Celsius(tempK float64) string {
	c := math.Round((tempK-273.15)*1e6) / 1e6
	return Plain(c, Digits) + " °C"
}

// Conditions describes where an evaluation was taken, in one line:
// "current-switch on demo18 (ekv), supply 1.8 V, 27 °C, vcm 0 V to 1.8 V
// in 10 mV steps (181 points)".
func Conditions(ev *objectives.Evaluation) string {
	d := ev.Design
	return fmt.Sprintf("%s on %s%s, supply %s, %s, vcm %s to %s in %s steps (%d points)",
		d.Topology, processName(d.ProcessRef, d.Process), atCorner(d.Process), SI(d.Supply, "V", tableDigits), Celsius(d.TempK),
		SI(d.Sweep.Low, "V", tableDigits), SI(d.Sweep.High, "V", tableDigits),
		SI(d.Sweep.Step, "V", tableDigits), ev.Result.Len())
}

// singlePair reports whether the evaluated stage has only one input pair.
func singlePair(ev *objectives.Evaluation) bool {
	if ev.Stage == nil {
		return false
	}
	return ev.Stage.PairN[0] == "" || ev.Stage.PairP[0] == ""
}

// RippleText writes a gm ripple for reading: "42.5 %", or
// "∞ (gm falls to zero)" when it is unbounded (docs/metrics.md#missing-and-unbounded-values).
// It is the ripple's figure in running text (figureProse).
func RippleText(r float64) string {
	e, _ := objectives.Lookup(objectives.AxisGMRipple)
	return figureProse(e, r)
}

// MetricsTable writes the metrics of an evaluation (docs/metrics.md) as a
// short aligned table for a terminal: a line naming the topology,
// process and conditions, one line per figure shown there
// (objectives.InEval) with an SI-prefixed unit, why it has no value when
// it has none, and what it means (objectives.Words.Meaning), and the
// caution that the figures are estimates.
func MetricsTable(w io.Writer, ev *objectives.Evaluation) error {
	e := &errWriter{w: w}
	m := ev.Metrics
	single := singlePair(ev)
	e.printf("%s\n", Conditions(ev))
	if len(ev.Conditions) > 0 {
		if mm := ev.Conditions[0].Mismatch; mm != nil && mm.Method == objectives.MethodMonteCarlo {
			e.printf("mismatch figures from %d Monte Carlo samples at each condition\n", mm.Samples)
		}
	}
	e.printf("\n")
	// Columns: metric, number (right-aligned), unit, note and meaning.
	t := &textTable{right: []bool{false, true, false, false}, tight: []bool{false, false, true, false}}
	row := func(name, value, note, meaning string) {
		num, unit, _ := strings.Cut(value, " ")
		if note != "" {
			meaning = note + "  " + meaning
		}
		t.add(name, num, unit, meaning)
	}
	if len(ev.Conditions) > 1 {
		worstTable(e, ev, single)
		e.printf("\n%s\n", objectives.Caution)
		return e.err
	}
	for _, f := range figuresUpTo(objectives.InEval) {
		v, note := figureParts(f, f.Value(m), true, single)
		row(f.Key, v, note, f.Words.Meaning)
	}
	t.write(e, "  ")
	e.printf("\n%s\n", objectives.Caution)
	return e.err
}

// worstTable writes the figures of an evaluation at more than one
// condition: each figure's nominal value, its worst case and the
// condition where that is measured (docs/conditions.md#worst-case).
func worstTable(e *errWriter, ev *objectives.Evaluation, single bool) {
	e.printf("worst case over %d conditions (nominal %s)\n\n", len(ev.Conditions), ev.Conditions[0].Condition)
	// Columns: metric, nominal number and unit, worst number and unit,
	// where, meaning.
	t := &textTable{right: []bool{false, true, false, true, false, false, false}, tight: []bool{false, false, true, false, true, false, false}}
	t.add("", "nominal", "", "worst", "", "at", "")
	for _, f := range figuresUpTo(objectives.InEval) {
		nv, nnote := figureParts(f, f.Value(ev.Metrics), true, single)
		wv, wnote := figureParts(f, f.Value(ev.Worst), true, single)
		nnum, nunit, _ := strings.Cut(nv, " ")
		wnum, wunit, _ := strings.Cut(wv, " ")
		at := ""
		if c, ok := ev.Binding(f.Key); ok {
			at = c.String()
		}
		meaning := f.Words.Meaning
		if note := or(wnote, nnote); note != "" {
			meaning = note + "  " + meaning
		}
		t.add(f.Key, nnum, nunit, wnum, wunit, at, meaning)
	}
	t.write(e, "  ")
}

// areaText writes an area in m² as µm², the unit layout uses, to four
// significant figures (Plain): 4.2e-10 m² is "420 µm²", 1e-20 m²
// "1e-8 µm²".
func areaText(a float64) string {
	if math.IsNaN(a) {
		return "NaN"
	}
	return Plain(a*1e12, tableDigits) + " µm²"
}

// DevicesTable writes the transistors of an evaluation at the middle of
// the sweep: name, type, role, W, L, drain current, terminal voltages,
// threshold, saturation voltage, |V_DS| − |V_DSAT|, gm, inversion level
// and saturation, and the duty the check holds it to. Signs are SPICE's:
// a conducting PMOS has negative id, vgs, vds and vth.
func DevicesTable(w io.Writer, ev *objectives.Evaluation) error {
	e := &errWriter{w: w}
	e.printf("devices at vcm = %s (SPICE signs: a conducting PMOS has negative id, vgs, vds, vth)\n\n",
		SI(ev.MidVCM, "V", tableDigits))
	t := &textTable{right: []bool{false, false, false, true, true, true, true, true, true, true, true, true, false, false, false}}
	t.add("name", "type", "role", "W", "L", "id", "vgs", "vds", "vth", "vdsat", "vds-vdsat", "gm", "inversion", "saturation", "duty")
	for _, d := range ev.Devices {
		wtxt := SI(d.W, "m", tableDigits)
		if d.M != 1 && d.M != 0 {
			wtxt = Plain(d.M, tableDigits) + "×" + wtxt
		}
		t.add(d.Name, d.Type, d.Role, wtxt, SI(d.L, "m", tableDigits),
			SIFixed(d.ID, "A", tableDigits), volts(d.VGS), volts(d.VDS), volts(d.VTH), volts(d.VDSAT),
			volts(d.VDSMargin), SIFixed(d.GM, "S", tableDigits), d.Inversion, d.Saturation, d.Duty)
	}
	t.write(e, "  ")
	return e.err
}

// volts writes a terminal voltage in V with three decimals (1 mV), as a
// SPICE operating-point listing does, so the column lines up; from 10 V
// on (where three decimals would be more than Digits figures) and for
// NaN and infinities, as SIFixed writes it.
func volts(v float64) string {
	if !finiteVal(v) || math.Abs(v) >= 9.9995 {
		return SIFixed(v, "V", tableDigits)
	}
	s := strconv.FormatFloat(v, 'f', 3, 64)
	if s == "-0.000" {
		s = "0.000"
	}
	return s + " V"
}
