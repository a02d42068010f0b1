package device

import (
	"errors"
	"math"
	"strings"
	"testing"

	"pairsmith/units"
)

const rulesCard = "name: r\nmodel: level1\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n"

// TestReadRules: the rules section reads in SI units, its optional values
// take their defaults, and a file without one checks nothing (the file
// format of docs/buildable.md#geometry-rules).
func TestReadRules(t *testing.T) {
	tests := []struct {
		name, rules string
		want        Rules
	}{
		{"none", "", Rules{SaturationMargin: DefaultSaturationMargin}},
		{"required only", "rules: {wmin: 0.22um, lmin: 0.18um, grid: 5nm}\n",
			Rules{WMin: 0.22e-6, LMin: 0.18e-6, Grid: 5e-9, SaturationMargin: DefaultSaturationMargin, Given: true}},
		{"all", "rules: {wmin: 0.4um, lmin: 0.35um, grid: 10nm, wmax: 1mm, lmax: 50um, saturation_margin: 80mV}\n",
			Rules{WMin: 0.4e-6, LMin: 0.35e-6, Grid: 10e-9, WMax: 1e-3, LMax: 50e-6, SaturationMargin: 0.08, Given: true}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			p, err := ReadProcess("p.yaml", []byte(rulesCard+tt.rules))
			if err != nil {
				t.Fatal(err)
			}
			got := p.Rules
			for _, c := range []struct {
				what      string
				got, want float64
			}{{"wmin", got.WMin, tt.want.WMin}, {"lmin", got.LMin, tt.want.LMin}, {"grid", got.Grid, tt.want.Grid},
				{"wmax", got.WMax, tt.want.WMax}, {"lmax", got.LMax, tt.want.LMax},
				{"margin", got.SaturationMargin, tt.want.SaturationMargin}} {
				if math.Abs(c.got-c.want) > 1e-12*math.Abs(c.want) {
					t.Errorf("%s = %g, want %g", c.what, c.got, c.want)
				}
			}
			if got.Given != tt.want.Given {
				t.Errorf("Given = %v, want %v", got.Given, tt.want.Given)
			}
		})
	}
}

// TestReadRulesErrors: a bad rules section is refused at its line and
// field, with what was given and what was wanted.
func TestReadRulesErrors(t *testing.T) {
	tests := []struct {
		rules, field, want string
	}{
		{"rules: {wmin: 0.22um, lmin: 0.18um}\n", "grid", "grid"},
		{"rules: {wmin: 0.22um, lmin: 0.18um, grid: 5nm, wmn: 1um}\n", "wmn", "wmin"},
		{"rules: {wmin: 0.223um, lmin: 0.18um, grid: 5nm}\n", "wmin", "a multiple of the grid 5nm"},
		{"rules: {wmin: 1nm, lmin: 0.18um, grid: 0.5nm}\n", "wmin", "from 10nm"},
		{"rules: {wmin: 0.22um, lmin: 0.18um, grid: 5nm, lmax: 0.1um}\n", "lmax", "at least lmin"},
		{"rules: {wmin: 0.22um, lmin: 0.18um, grid: 5nm, saturation_margin: 2V}\n", "saturation_margin", "margin above V_DSAT"},
		{"rules: {wmin: 0.22V, lmin: 0.18um, grid: 5nm}\n", "wmin", ""},
	}
	for _, tt := range tests {
		t.Run(tt.field, func(t *testing.T) {
			_, err := ReadProcess("p.yaml", []byte(rulesCard+tt.rules))
			var ue *units.Error
			if !errors.As(err, &ue) {
				t.Fatalf("error %v (%T), want a *units.Error", err, err)
			}
			if ue.Line != 5 || !strings.Contains(err.Error(), tt.field) || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %q at line %d, want line 5 naming %q and %q", err, ue.Line, tt.field, tt.want)
			}
		})
	}
}

// TestSnapAndCheck: sizes snap to the nearest grid multiple and a size
// off its limits is reported with its rule (common practice, no source:
// layout tools round drawn sizes to the manufacturing grid).
func TestSnapAndCheck(t *testing.T) {
	r := Rules{WMin: 0.22e-6, LMin: 0.18e-6, LMax: 50e-6, Grid: 5e-9}
	for _, c := range []struct{ in, want float64 }{
		{0.2213e-6, 0.220e-6}, {0.2226e-6, 0.225e-6}, {17.5523e-6, 17.55e-6}, {1e-6, 1e-6}, {117.2e-9, 115e-9},
		{5e-12, 5e-9}, {2.4e-9, 5e-9},
	} {
		if got := r.Snap(c.in); got != c.want {
			t.Errorf("Snap(%g) = %.17g, want %g", c.in, got, c.want)
		}
		if !r.OnGrid(r.Snap(c.in)) {
			t.Errorf("Snap(%g) = %g is not on the grid", c.in, r.Snap(c.in))
		}
	}
	if (Rules{}).Snap(1.2345e-7) != 1.2345e-7 {
		t.Error("no grid: Snap changed the size")
	}
	issues := r.Check(Geometry{W: 115e-9, L: 60e-6})
	if len(issues) != 2 || issues[0].Field != "w" || !issues[0].Min || issues[1].Field != "l" || issues[1].Min {
		t.Fatalf("Check = %+v, want w below wmin and l above lmax", issues)
	}
	if a := issues[0].Amount(); math.Abs(a-(0.22-0.115)/0.22) > 1e-12 {
		t.Errorf("amount %g, want (wmin − w)/wmin", a)
	}
	if len(r.Check(Geometry{W: 0.22e-6, L: 0.18e-6})) != 0 {
		t.Error("the minimum itself is refused")
	}
}

// TestBuiltinRules: every built-in demo process carries rules, with
// minima on their grids.
func TestBuiltinRules(t *testing.T) {
	for _, name := range BuiltinNames() {
		p, _ := Builtin(name)
		r := p.Rules
		if !r.Given || !(r.WMin > 0 && r.LMin > 0 && r.Grid > 0) || !r.OnGrid(r.WMin) || !r.OnGrid(r.LMin) {
			t.Errorf("%s: rules %+v, want wmin, lmin and grid given, minima on the grid", name, r)
		}
	}
}
