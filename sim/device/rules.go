package device

import (
	"errors"
	"fmt"
	"math"

	"pairsmith/units"
)

// Rules are a process's geometry rules and the saturation margin every
// device whose function needs saturation must keep (docs/buildable.md).
// All values are SI. A zero Rules (a process file without a rules
// section) checks nothing: no minimum, no maximum, no grid, and the
// default margin.
type Rules struct {
	WMin, LMin float64 // smallest drawn width and length, m
	WMax, LMax float64 // largest drawn width and length, m; 0 for no limit
	Grid       float64 // manufacturing grid every drawn size is a multiple of, m; 0 for none
	// SaturationMargin is how far above V_DSAT the V_DS of a device that
	// must be saturated stays, V. A spec sheet may override it.
	SaturationMargin float64
	// Given reports whether the process file has a rules section.
	Given bool
}

// DefaultSaturationMargin is the margin a process or spec leaves
// unstated: 50 mV above V_DSAT (common practice, no source).
const DefaultSaturationMargin = 0.05

// RuleRanges are the physical ranges of the rules' values: drawn sizes
// from 10 nm (below any planar bulk process's minimum, from memory) to
// 10 mm, a grid of 0.1 nm to 1 µm, a margin of 0 to 1 V.
func RuleRanges() []Range {
	size := func(field, what string) Range {
		return Range{Field: field, Dim: units.Metre, Min: 10e-9, Max: 10e-3, What: what,
			Why: "a drawn size of a bulk CMOS process lies between 10 nm and 10 mm (from memory)"}
	}
	return []Range{
		size("wmin", "a smallest drawn width"),
		size("lmin", "a smallest drawn length"),
		size("wmax", "a largest drawn width"),
		size("lmax", "a largest drawn length"),
		{Field: "grid", Dim: units.Metre, Min: 0.1e-9, Max: 1e-6, What: "a manufacturing grid",
			Why: "layout grids run from fractions of a nanometre to tens of nanometres (from memory)"},
		{Field: "saturation_margin", Dim: units.Volt, Min: 0, Max: 1, What: "a margin above V_DSAT",
			Why: "a margin beyond 1 V would leave no headroom at any supply pairsmith takes"},
	}
}

// readRules reads a process file's rules section:
//
//	rules: {wmin: 0.22um, lmin: 0.18um, grid: 5nm, wmax: 1mm, lmax: 50um, saturation_margin: 50mV}
//
// wmin, lmin and grid are required; wmax, lmax and saturation_margin are
// optional. A minimum that is not on the grid, or a maximum below its
// minimum, is refused at its line.
func readRules(root *units.Map, pos map[string]fieldPos) (Rules, error) {
	r := Rules{SaturationMargin: DefaultSaturationMargin}
	if !root.Has("rules") {
		return r, nil
	}
	m, _, err := root.Map("rules")
	if err != nil {
		return r, err
	}
	if err := m.Check("wmin", "lmin", "grid", "wmax", "lmax", "saturation_margin"); err != nil {
		return r, err
	}
	if err := m.Require("wmin", "lmin", "grid"); err != nil {
		return r, err
	}
	dst := map[string]*float64{"wmin": &r.WMin, "lmin": &r.LMin, "wmax": &r.WMax, "lmax": &r.LMax,
		"grid": &r.Grid, "saturation_margin": &r.SaturationMargin}
	for _, rg := range RuleRanges() {
		v, present, err := m.Quantity(rg.Field, rg.Dim)
		if err != nil {
			return r, err
		}
		pos["rules."+rg.Field] = fieldPos{line: m.Line(rg.Field), text: m.Text(rg.Field)}
		if !present {
			continue
		}
		if !rg.Contains(v) {
			return r, m.ErrorAt(rg.Field, m.Text(rg.Field), rg.Want(), errors.New(rg.Why))
		}
		*dst[rg.Field] = v
	}
	for _, f := range []struct {
		key string
		v   float64
	}{{"wmin", r.WMin}, {"lmin", r.LMin}} {
		if !r.OnGrid(f.v) {
			return r, m.ErrorAt(f.key, m.Text(f.key),
				fmt.Sprintf("a multiple of the grid %s", units.Format(r.Grid, units.Metre)), nil)
		}
	}
	if r.WMax > 0 && r.WMax < r.WMin {
		return r, m.ErrorAt("wmax", m.Text("wmax"), fmt.Sprintf("at least wmin, %s", units.Format(r.WMin, units.Metre)), nil)
	}
	if r.LMax > 0 && r.LMax < r.LMin {
		return r, m.ErrorAt("lmax", m.Text("lmax"), fmt.Sprintf("at least lmin, %s", units.Format(r.LMin, units.Metre)), nil)
	}
	r.Given = true
	return r, nil
}

// Snap returns x on the grid: the nearest multiple of Grid (x itself
// without a grid), and at least one grid step for a positive x. Sizes are snapped before they are evaluated or
// exported, so that what is simulated is what is drawn.
func (r Rules) Snap(x float64) float64 {
	if !(r.Grid > 0) || math.IsNaN(x) || math.IsInf(x, 0) {
		return x
	}
	n := math.Round(x / r.Grid)
	if n < 1 && x > 0 {
		n = 1 // a positive size never rounds to nothing: it is one grid step, and below any minimum
	}
	// Rounded to the grid's own decimal digits, so that 0.22 µm on a 5 nm
	// grid is 2.2e-7 exactly as written, not 2.2000000000000002e-7.
	return roundSig(n*r.Grid, 12)
}

// OnGrid reports whether x is a multiple of the grid (always true without
// one).
func (r Rules) OnGrid(x float64) bool { return r.Snap(x) == roundSig(x, 12) }

func roundSig(x float64, digits int) float64 {
	if x == 0 {
		return 0
	}
	e := math.Floor(math.Log10(math.Abs(x)))
	f := math.Pow(10, float64(digits-1)-e)
	return math.Round(x*f) / f
}

// GeometryIssue is one way a device breaks a rule.
type GeometryIssue struct {
	Field string  // "w" or "l"
	Value float64 // the drawn size, m
	Limit float64 // the rule's value, m
	Min   bool    // a minimum (else a maximum)
}

// Amount is the issue's relative size: how far outside the limit the
// value lies, over the limit.
func (g GeometryIssue) Amount() float64 { return math.Abs(g.Value-g.Limit) / g.Limit }

func (g GeometryIssue) String() string {
	rule, cmp := "max", "above"
	if g.Min {
		rule, cmp = "min", "below"
	}
	return fmt.Sprintf("%s = %s %s the process's %s%s, %s", g.Field, units.Format(g.Value, units.Metre),
		cmp, g.Field, rule, units.Format(g.Limit, units.Metre))
}

// Check returns the rules a drawn geometry breaks (none for a zero Rules).
func (r Rules) Check(g Geometry) []GeometryIssue {
	var out []GeometryIssue
	for _, c := range []struct {
		field    string
		v        float64
		min, max float64
	}{{"w", g.W, r.WMin, r.WMax}, {"l", g.L, r.LMin, r.LMax}} {
		if c.min > 0 && c.v < c.min*(1-1e-9) {
			out = append(out, GeometryIssue{Field: c.field, Value: c.v, Limit: c.min, Min: true})
		}
		if c.max > 0 && c.v > c.max*(1+1e-9) {
			out = append(out, GeometryIssue{Field: c.field, Value: c.v, Limit: c.max})
		}
	}
	return out
}
