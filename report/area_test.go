package report_test

import (
	"bytes"
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"pairsmith/objectives"
	"pairsmith/report"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
)

// deckArea returns Σ W·L·M over the transistors a deck lists, read
// back from its text (parseDeckMosfets); a line it cannot read fails the
// test, so that a device is not left out unnoticed.
func deckArea(t *testing.T, deck string) (area float64, devices int) {
	t.Helper()
	ms, err := parseDeckMosfets(deck)
	if err != nil {
		t.Fatal(err)
	}
	for _, m := range ms {
		area += m.w * m.l * m.m
	}
	return area, len(ms)
}

// areaAgrees reports whether a measured area is the deck's, to a few
// rounding errors of the sum (common practice, no source). It is written
// so that it holds only for a number that matches: NaN and infinities
// fail it.
func areaAgrees(area, deck float64) bool { return math.Abs(area-deck) <= 1e-12*deck }

// stageDeck returns the stage's exported .subckt (report.Subckt).
func stageDeck(t *testing.T, d *objectives.Design, st *topologies.Stage) string {
	t.Helper()
	var deck bytes.Buffer
	if err := report.Subckt(&deck, d, st); err != nil {
		t.Fatal(err)
	}
	return deck.String()
}

// checkArea compares a measured area with Σ W·L·M of the devices the
// stage's exported .subckt lists, every one of them.
func checkArea(t *testing.T, what string, d *objectives.Design, st *topologies.Stage, area float64) {
	t.Helper()
	want, n := deckArea(t, stageDeck(t, d, st))
	if n != len(st.Circuit.Mosfets) || n == 0 {
		t.Fatalf("%s: the deck lists %d transistors, the stage has %d", what, n, len(st.Circuit.Mosfets))
	}
	if !areaAgrees(area, want) {
		t.Errorf("%s: area %.9g m², the deck's %d devices give Σ W·L·M = %.9g m²", what, area, n, want)
	}
}

// TestAreaMatchesDeck checks every family's area (objectives.Metrics,
// docs/metrics.md: Σ W·L·M of every transistor) against the transistors
// its exported .subckt lists, the deck a designer takes to a simulator:
// at the family's defaults through the whole evaluation (Evaluate), and
// for 50 random parameter vectors within the process's bounds
// (topologies.ParamsFor) each, measured on a short sweep (MeasureDesign).
// The deck is an outside reading of the stage: it is parsed back from
// its text, not taken from the family's own numbers.
func TestAreaMatchesDeck(t *testing.T) {
	proc, ok := device.Builtin("demo18-l1")
	if !ok {
		t.Fatal("no built-in demo18-l1")
	}
	cond := topologies.Conditions{Process: proc, Supply: 1.8, TempK: 27 + device.ZeroC}
	r := rand.New(rand.NewPCG(20261202, 8))
	for _, f := range topologies.All() {
		t.Run(f.Name(), func(t *testing.T) {
			params, err := topologies.ParamsFor(f, proc, device.DefaultSaturationMargin)
			if err != nil {
				t.Fatal(err)
			}
			design := func(v topologies.Values, step float64) *objectives.Design {
				v, err := topologies.Complete(f, v)
				if err != nil {
					t.Fatal(err)
				}
				return &objectives.Design{Topology: f.Name(), ProcessRef: proc.Name, Conditions: cond,
					Sweep: sim.SweepSpec{Low: 0, High: cond.Supply, Step: step}, Params: v}
			}
			d := design(topologies.Defaults(f), 0.01)
			ev, err := objectives.Evaluate(d)
			if err != nil {
				t.Fatal(err)
			}
			checkArea(t, "defaults", d, ev.Stage, ev.Metrics.Area)
			measured := 0
			for i := range 50 {
				v := randomLegal(r, params)
				d := design(v, 0.1)
				st, err := objectives.Build(d)
				if err != nil {
					t.Fatalf("vector %d %v: %v", i, v, err)
				}
				m, err := objectives.MeasureDesign(d)
				if err != nil {
					// No DC solution or an unphysical sweep: nothing is
					// measured, so there is no area to compare.
					continue
				}
				measured++
				checkArea(t, "vector "+strconv.Itoa(i), d, st, m.Area)
			}
			// Most random vectors are measured, so that the check covers
			// the family's sizes and not only its defaults (half of them:
			// our own choice, no source).
			if measured < 25 {
				t.Errorf("only %d of 50 random vectors measured", measured)
			}
			t.Logf("%d of 50 random vectors measured", measured)
		})
	}
}

// TestAreaCheckFailsOnNaN checks that the comparison rejects what the
// old hand copy of the families' areas let through, a NaN (NaN
// comparisons are false, so a check of the form |got − want| > tol passes
// it), and an infinite area, an area one device short and a deck with a
// device the sum would not count; and that the deck's sum is the one
// worked out by hand for two transistor lines, m= included.
func TestAreaCheckFailsOnNaN(t *testing.T) {
	// 2 µm × 1 µm plus 3 × 4 µm × 0.5 µm = 2e-12 + 6e-12 m².
	got, n := deckArea(t, "* title\n.subckt x a b\nM1 a b c d nch w=2e-06 l=1e-06 $ nmos input\n"+
		"M2 a b c d pch w=4e-06 l=5e-07 m=3\nIb a b DC 1e-06\n.ends x\n")
	if n != 2 || !areaAgrees(got, 8e-12) {
		t.Errorf("deckArea = %g m² over %d devices, want 8e-12 m² over 2", got, n)
	}
	proc, _ := device.Builtin("demo18-l1")
	f, err := topologies.Lookup("mirror-1to3")
	if err != nil {
		t.Fatal(err)
	}
	d := &objectives.Design{Topology: f.Name(), ProcessRef: proc.Name,
		Conditions: topologies.Conditions{Process: proc, Supply: 1.8, TempK: 300.15},
		Sweep:      sim.SweepSpec{Low: 0, High: 1.8, Step: 0.1}, Params: topologies.Defaults(f)}
	st, err := objectives.Build(d)
	if err != nil {
		t.Fatal(err)
	}
	m, err := objectives.MeasureDesign(d)
	if err != nil {
		t.Fatal(err)
	}
	want, _ := deckArea(t, stageDeck(t, d, st))
	one := st.Circuit.Mosfets[0].Geom.Area()
	for _, tc := range []struct {
		name  string
		area  float64
		agree bool
	}{
		{"measured", m.Area, true},
		{"NaN", math.NaN(), false},
		{"+Inf", math.Inf(1), false},
		{"one device short", m.Area - one, false},
		{"a device the sum leaves out", m.Area, false},
	} {
		deck := want
		if tc.name == "a device the sum leaves out" {
			deck += one // the deck lists one more device of the same size
		}
		if got := areaAgrees(tc.area, deck); got != tc.agree {
			t.Errorf("%s: area %g m² against the deck's %g m² agrees = %v, want %v", tc.name, tc.area, deck, got, tc.agree)
		}
	}
}
