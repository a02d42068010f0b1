package objectives

import (
	"encoding/json"
	"math"
	"reflect"
	"slices"
	"strings"
	"testing"

	"pairsmith/units"
)

// TestCatalogEntries checks that every entry of the catalog is complete
// and consistent, so that every consumer can rely on it: names that
// resolve to one entry each, a field of Metrics for every figure and an
// entry for every field of Metrics and of Targets, senses that agree with
// the combination and the axes, and words for what the entry can be.
func TestCatalogEntries(t *testing.T) {
	names := map[string]string{}
	for _, e := range catalog {
		for _, n := range []string{e.Key, e.Target.Key} {
			if n == "" {
				continue
			}
			if other, ok := names[n]; ok && other != e.Key {
				t.Errorf("%q names both %s and %s", n, other, e.Key)
			}
			names[n] = e.Key
		}
		if e.Sense < 0 || e.Sense > Window || e.Words.Shown < 0 || e.Words.Shown > InFull {
			t.Errorf("%s: sense %d, shown %d out of range", e.Key, e.Sense, e.Words.Shown)
		}
		switch e.Kind {
		case Figure:
			if e.Field == nil || e.Column == "" || e.Combine == 0 || e.Words.Shown == 0 {
				t.Errorf("%s: a figure needs a field, a column, a combination and a place shown", e.Key)
			}
			if e.Words.Shown <= InEval && e.Words.Meaning == "" {
				t.Errorf("%s: shown in eval's table without a meaning", e.Key)
			}
			want := map[Sense]Combine{AtLeast: Lowest, AtMost: Highest, Window: Farthest}[e.Sense]
			if e.Sense != 0 && e.Combine != want {
				t.Errorf("%s: sense %d combines as %d, want %d (its worst case)", e.Key, e.Sense, e.Combine, want)
			}
		case Constraint:
			if e.Field != nil || e.HasTarget() || e.IsAxis() || e.Column != "" {
				t.Errorf("%s: a constraint has no field, target, axis or column", e.Key)
			}
			if strings.Count(e.Words.Miss, "%s") != 2 || strings.Count(e.Words.Miss, "%") != 2 {
				t.Errorf("%s: Words.Miss %q is not a format of a value and a limit", e.Key, e.Words.Miss)
			}
		default:
			t.Errorf("%s: kind %d", e.Key, e.Kind)
		}
		if e.HasTarget() {
			window := e.Sense == Window
			if window != (e.Target.Window != nil) || window == (e.Target.Limit != nil) || e.Target.Want == "" {
				t.Errorf("%s: a target needs a limit (a window for a Window sense) and its words", e.Key)
			}
			if window && e.Target.AtWant == "" {
				t.Errorf("%s: a window target says what its centre takes", e.Key)
			}
		}
		if e.IsAxis() && (e.Kind != Figure || e.Axis.Missing == nil || (e.Sense != AtLeast && e.Sense != AtMost)) {
			t.Errorf("%s: an axis is a figure larger or smaller the better, with a stand-in for a missing value", e.Key)
		}
		if e.Unbounded != (e.Words.Unbounded != "") || (e.Unbounded && !(e.Cap > 0 && isFinite(e.Cap))) {
			t.Errorf("%s: an unbounded figure needs a finite Cap and says why it is unbounded", e.Key)
		}
		if (e.Words.Single != "" || e.Words.Incomplete != "") && e.Words.Missing == "" {
			t.Errorf("%s: says why it is missing in eval's table but not in violations", e.Key)
		}
	}
	// Every float of Metrics is one figure's, every field of Targets one
	// target's: a field added without its entry fails here.
	mt := reflect.TypeFor[Metrics]()
	for i := range mt.NumField() {
		var m Metrics
		reflect.ValueOf(&m).Elem().Field(i).SetFloat(42)
		var owners []string
		for _, e := range Figures() {
			if e.Value(m) == 42 {
				owners = append(owners, e.Key)
			}
		}
		if len(owners) != 1 {
			t.Errorf("Metrics.%s is the field of %v, want one figure", mt.Field(i).Name, owners)
		}
	}
	tt := reflect.TypeFor[Targets]()
	for i := range tt.NumField() {
		var owners []string
		for _, e := range catalog {
			if !e.HasTarget() {
				continue
			}
			var t Targets
			var p any = e.Target.Limit
			if e.Target.Window != nil {
				p = e.Target.Window(&t)
			} else {
				p = e.Target.Limit(&t)
			}
			if reflect.ValueOf(p).Pointer() == reflect.ValueOf(&t).Elem().Field(i).Addr().Pointer() {
				owners = append(owners, e.Key)
			}
		}
		if tt.Field(i).Name == "NoiseAt" { // noise_max's frequency, read with its limit
			continue
		}
		if len(owners) != 1 {
			t.Errorf("Targets.%s is the target of %v, want one entry", tt.Field(i).Name, owners)
		}
	}
	var constraints []string
	for _, e := range catalog {
		if e.Kind == Constraint {
			constraints = append(constraints, e.Key)
		}
	}
	// The checks Assess can report (region.go's constants), each one
	// Constraint entry.
	if assessed := []string{CheckGeometry, CheckSaturation, CheckValidity}; !slices.Equal(constraints, assessed) {
		t.Errorf("the catalog's constraints %v, Assess's checks %v: each check is one entry", constraints, assessed)
	}
}

// probeEntries is a catalog of entries that exist nowhere else in the
// code: a figure larger the worse with a target and an axis ("gm_peak",
// kept in Metrics.GMMax with its limit borrowed from Targets.PowerMax),
// and a window figure ("centre", in Metrics.Switchover and
// Targets.Switchover), so that TestNewEntryIsOneEntry sees every
// consumer take an entry from the entry alone.
func probeEntries() []Entry {
	return []Entry{
		{
			Key: "gm_peak", Kind: Figure, Dim: units.Siemens, Sense: AtMost, Combine: Highest,
			Field:  func(m *Metrics) *float64 { return &m.GMMax },
			Column: "gm_peak_S",
			Target: Target{Key: "gm_peak_max", Want: "a peak gm above 0 S",
				Limit: func(t *Targets) *float64 { return &t.PowerMax }},
			Axis:  Axis{Default: true, Scale: 1e-3, Missing: func(Range) float64 { return 7 }},
			Words: Words{Meaning: "largest gm", Shown: InEval},
		},
		{
			Key: "centre", Kind: Figure, Dim: units.Volt, Sense: Window, Combine: Farthest,
			Field:  func(m *Metrics) *float64 { return &m.Switchover },
			Column: "centre_V",
			Target: Target{Key: "centre", Want: "a tolerance above 0 V", AtWant: "a voltage inside the range", AtInRange: true,
				Window: func(t *Targets) *SwitchoverTarget { return &t.Switchover }},
			Words: Words{Meaning: "the centre", Shown: InFull},
		},
	}
}

// TestNewEntryIsOneEntry runs every consumer of the catalog in this
// package (JSON both ways, reading targets, checking, guard-banding, the
// axes and their scales, the worst case) over probeEntries, two entries
// whose names appear nowhere else: each consumer handles them from the
// entries alone, so a new figure is one entry. The expected values are
// worked by hand from the definitions (Targets.Check, Spec.Axes).
func TestNewEntryIsOneEntry(t *testing.T) {
	es := probeEntries()
	m := Metrics{GMMax: 450e-6, Switchover: 1.05}

	j := metricsJSON(es, m)
	if len(j) != 2 || *j["gm_peak"] != 450e-6 || *j["centre"] != 1.05 {
		t.Errorf("metrics JSON %v", j)
	}
	back := metricsFromJSON(es, map[string]*float64{"gm_peak": j["gm_peak"]})
	if back.GMMax != 450e-6 || !math.IsNaN(back.Switchover) {
		t.Errorf("read back %+v, want gm_peak 450e-6 and centre NaN (null)", back)
	}

	if got := targetKeysOf(es); !slices.Equal(got, []string{"gm_peak_max", "centre"}) {
		t.Errorf("target keys %v", got)
	}
	if got := axisNamesOf(es); !slices.Equal(got, []string{"gm_peak"}) {
		t.Errorf("axes %v", got)
	}
	if got := defaultParetoOf(es); !slices.Equal(got, []string{"gm_peak"}) {
		t.Errorf("default axes %v", got)
	}
	if none := noTargetsOf(es); !math.IsNaN(none.PowerMax) || !math.IsNaN(none.Switchover.Tolerance) || len(none.namesOf(es)) != 0 {
		t.Errorf("no targets %+v", none)
	}

	rng := Range{Low: 0, High: 1.8}
	read := func(text string) (Targets, error) {
		tm, err := units.ReadBytes("t.yaml", []byte(text))
		if err != nil {
			t.Fatal(err)
		}
		return readTargetsOf(es, tm, rng)
	}
	tg, err := read("gm_peak_max: 300uS\ncentre: {at: 0.9V, tolerance: 0.1V}\n")
	if err != nil {
		t.Fatal(err)
	}
	if tg.PowerMax != 300e-6 || tg.Switchover != (SwitchoverTarget{At: 0.9, Tolerance: 0.1}) {
		t.Errorf("read %+v", tg)
	}
	for text, want := range map[string]string{
		"gm_peak: 300uS\n":                          `did you mean "gm_peak_max"?`,
		"gm_peak_max: 0S\n":                         "a peak gm above 0 S",
		"centre: {at: 2V, tolerance: 0.1V}\n":       "a voltage inside the range (0V … 1.8V)",
		"centre: {at: 0.9V, tolerance: -0.1V}\n":    "a tolerance above 0 V",
		"power_max: 1mW\n":                          "unknown",
		"centre: {at: 0.9V, tolerance: 1mW}\n":      "voltage",
		"centre: {at: 0.9V}\n":                      "tolerance",
		"gm_peak_max: 300uV\n":                      "conductance",
		"centre: {at: 0.9V, tolerance: 0.1V, x: 1}": "unknown",
	} {
		_, err := read(text)
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%q: error %v, want one with %q", text, err, want)
		}
	}

	if got := tg.namesOf(es); !slices.Equal(got, []string{"gm_peak_max", "centre"}) {
		t.Errorf("set targets %v", got)
	}
	// gm_peak 450 µS against 300 µS: (450 − 300)/300 = 0.5. Centre 1.05 V
	// against 0.9 V ± 0.1 V: (|1.05 − 0.9| − 0.1)/0.1 = 0.5.
	vs := tg.checkOf(es, m)
	if len(vs) != 2 || vs[0].Target != "gm_peak_max" || vs[1].Target != "centre" ||
		!near(vs[0].Amount, 0.5) || !near(vs[1].Amount, 0.5) || vs[1].Limit != 0.9 {
		t.Errorf("violations %+v", vs)
	}
	doc, err := json.Marshal(tg.jsonOf(es))
	if err != nil || string(doc) != `{"centre":{"at":0.9,"tolerance":0.1},"gm_peak_max":0.0003}` {
		t.Errorf("targets JSON %s, %v", doc, err)
	}
	tight := tg.tightenedOf(es, 0.1)
	if !near(tight.PowerMax, 270e-6) || !near(tight.Switchover.Tolerance, 0.09) || tight.Switchover.At != 0.9 {
		t.Errorf("tightened %+v", tight)
	}

	s := &Spec{Range: rng, Pareto: []string{"gm_peak", "centre"}, Targets: tg}
	if got := s.axesOf(es, m); got[0] != 450e-6 || !math.IsNaN(got[1]) {
		t.Errorf("axes %v, want gm_peak and NaN for centre, which is no axis", got)
	}
	if got := s.axesOf(es, Metrics{GMMax: math.NaN()}); got[0] != 7 {
		t.Errorf("axis of a missing gm_peak %v, want its stand-in 7", got[0])
	}
	if got := s.axisScaleOf(es, "gm_peak"); got != 300e-6 {
		t.Errorf("scale %g, want the target 300e-6", got)
	}
	s.Targets = noTargetsOf(es)
	if got := s.axisScaleOf(es, "gm_peak"); got != 1e-3 {
		t.Errorf("scale %g without a target, want the entry's 1e-3", got)
	}

	w := worstOf(es, []Metrics{{GMMax: 1e-4, Switchover: 0.92}, m, {GMMax: 2e-4, Switchover: 0.8}}, tg)
	if w.GMMax != 450e-6 || w.Switchover != 1.05 {
		t.Errorf("worst %+v, want gm_peak 450e-6 and centre 1.05 (0.15 V from 0.9 V)", w)
	}
}

// TestWorst checks the worst case over conditions, figure by figure as the
// catalog combines them, worked by hand: the lowest gm_min, the highest
// of the others, the switchover farthest from the target's centre (or
// from the mean of the values without a target); a NaN somewhere is NaN;
// one condition is its own worst case bit for bit, none gives NaN.
func TestWorst(t *testing.T) {
	nom := Metrics{GMMin: 150e-6, GMMax: 170e-6, GMRipple: 0.13, Power: 90e-6, Area: 4e-10,
		Switchover: 0.91, TransitionWidth: 0.15, GMOverIDMin: 14}
	cold := Metrics{GMMin: 165e-6, GMMax: 190e-6, GMRipple: 0.15, Power: 80e-6, Area: 4e-10,
		Switchover: 0.84, TransitionWidth: 0.14, GMOverIDMin: 12}
	hot := Metrics{GMMin: 132e-6, GMMax: 160e-6, GMRipple: math.Inf(1), Power: 110e-6, Area: 4e-10,
		Switchover: 0.98, TransitionWidth: 0.19, GMOverIDMin: 16}
	tg := NoTargets()
	tg.Switchover = SwitchoverTarget{At: 0.9, Tolerance: 0.1}
	// |0.84 − 0.9| = 0.06 < |0.98 − 0.9| = 0.08.
	want := Metrics{GMMin: 132e-6, GMMax: 190e-6, GMRipple: math.Inf(1), Power: 110e-6, Area: 4e-10,
		Switchover: 0.98, TransitionWidth: 0.19, GMOverIDMin: 16}
	if got := Worst([]Metrics{nom, cold, hot}, tg); !got.Same(want) {
		t.Errorf("Worst = %+v, want %+v", got, want)
	}
	// Centred at 0.7 V the coldest switchover is the farthest.
	tg.Switchover.At = 0.7
	if got := Worst([]Metrics{nom, cold, hot}, tg); got.Switchover != 0.98 {
		t.Errorf("switchover %g from 0.7 V, want 0.98", got.Switchover)
	}
	tg.Switchover.At = 1.1
	if got := Worst([]Metrics{nom, cold, hot}, tg); got.Switchover != 0.84 {
		t.Errorf("switchover %g from 1.1 V, want 0.84", got.Switchover)
	}
	// Without a target: the mean (0.91 + 0.84 + 0.98)/3 = 0.91, 0.07 from
	// both extremes but for rounding; with 0.86 for the nominal the mean
	// is 0.8933…, nearer 0.84 (0.053) than 0.98 (0.087).
	nom2 := nom
	nom2.Switchover = 0.86
	if got := Worst([]Metrics{nom2, cold, hot}, NoTargets()); got.Switchover != 0.98 {
		t.Errorf("switchover without a target %g, want 0.98", got.Switchover)
	}
	single := cold
	single.Switchover = math.NaN()
	if got := Worst([]Metrics{nom, single}, tg); !math.IsNaN(got.Switchover) || got.GMMin != 150e-6 {
		t.Errorf("a switchover missing at one condition: %+v, want NaN (and gm_min 150e-6)", got)
	}
	if got := Worst([]Metrics{hot}, tg); !got.Same(hot) {
		t.Errorf("one condition: %+v, want it unchanged", got)
	}
	none := Worst(nil, tg)
	for _, e := range Figures() {
		if !math.IsNaN(e.Value(none)) {
			t.Errorf("no condition: %s = %g, want NaN", e.Key, e.Value(none))
		}
	}
}

// near compares a worked-out value with a tolerance of a few rounding
// errors of the float64 arithmetic (common practice, no source).
func near(got, want float64) bool {
	return math.Abs(got-want) <= 1e-12*math.Max(1, math.Abs(want))
}
