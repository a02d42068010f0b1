package objectives_test

import (
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"testing"

	"pairsmith/objectives"
)

// allTargets are the issue's example targets (issue 3, "the spec
// sheet"): gm_min 150uS, gm_ripple_max 20%, power_max 200uW, area_max
// 3000um2, switchover 0.9V ± 0.1V, transition_width_max 200mV.
func allTargets() objectives.Targets {
	return objectives.Targets{GMMin: 150e-6, GMRippleMax: 0.2, PowerMax: 200e-6, AreaMax: 3000e-12,
		Switchover: objectives.SwitchoverTarget{At: 0.9, Tolerance: 0.1}, TransitionWidthMax: 0.2}
}

// metMetrics meet every one of allTargets.
func metMetrics() objectives.Metrics {
	return objectives.Metrics{GMMin: 195.6e-6, GMMax: 221.3e-6, GMRipple: 0.132, Power: 80.3e-6,
		Area: 500e-12, Switchover: 0.951, TransitionWidth: 0.183}
}

// allNames are the spec keys of every target, in Check's order.
func allNames() []string {
	return []string{"gm_min", "gm_ripple_max", "power_max", "area_max", "switchover", "transition_width_max"}
}

// closeTo compares a worked-out amount with a tolerance of a few rounding
// errors of the float64 arithmetic (common practice, no source).
func closeTo(got, want float64) bool {
	return math.Abs(got-want) <= 1e-12*math.Max(1, math.Abs(want))
}

// TestCheck checks Violation amounts worked out by hand from the
// definitions of issue 3's brief: (limit − value)/limit for gm_min,
// (value − limit)/limit for the maxima, (|sw − at| − tol)/tol for the
// switchover, each 0 when met.
func TestCheck(t *testing.T) {
	inf, nan := math.Inf(1), math.NaN()
	tests := []struct {
		name   string
		edit   func(*objectives.Metrics)
		amount []float64 // per target, in allNames order
	}{
		{"every target met", func(*objectives.Metrics) {}, []float64{0, 0, 0, 0, 0, 0}},
		{"every target exactly at its limit", func(m *objectives.Metrics) {
			m.GMMin, m.GMRipple, m.Power, m.Area, m.Switchover, m.TransitionWidth = 150e-6, 0.2, 200e-6, 3000e-12, 1.0, 0.2
		}, []float64{0, 0, 0, 0, 0, 0}},
		// gm_min 120 µS: (150 − 120)/150 = 0.2. Ripple 50 %: (0.5 − 0.2)/0.2 = 1.5.
		// Power 300 µW: (300 − 200)/200 = 0.5. Area 4500 µm²: (4500 − 3000)/3000 = 0.5.
		// Switchover 1.15 V: (|1.15 − 0.9| − 0.1)/0.1 = 1.5. Width 250 mV: (0.25 − 0.2)/0.2 = 0.25.
		{"every target violated", func(m *objectives.Metrics) {
			m.GMMin, m.GMRipple, m.Power, m.Area, m.Switchover, m.TransitionWidth = 120e-6, 0.5, 300e-6, 4500e-12, 1.15, 0.25
		}, []float64{0.2, 1.5, 0.5, 0.5, 1.5, 0.25}},
		// Switchover 0.7 V, below the window: (|0.7 − 0.9| − 0.1)/0.1 = 1.
		// gm_min 0 (a dead pair): (150 − 0)/150 = 1.
		{"switchover below its window, gm zero", func(m *objectives.Metrics) { m.Switchover, m.GMMin = 0.7, 0 },
			[]float64{1, 0, 0, 0, 1, 0}},
		// An unbounded ripple counts as RippleCap = 1/DeadGM − 1 = 999:
		// (999 − 0.2)/0.2 = 4994.
		{"unbounded ripple", func(m *objectives.Metrics) { m.GMRipple = inf }, []float64{0, 4994, 0, 0, 0, 0}},
		// A single pair: no handover, so switchover and width are NaN and
		// fail with MissingAmount = 10.
		{"no handover", func(m *objectives.Metrics) { m.Switchover, m.TransitionWidth = nan, nan },
			[]float64{0, 0, 0, 0, 10, 10}},
		{"failed evaluation", func(m *objectives.Metrics) { m.GMMin, m.Power, m.Area = nan, inf, nan },
			[]float64{10, 0, 10, 10, 0, 0}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			m := metMetrics()
			tt.edit(&m)
			vs := allTargets().Check(m)
			if len(vs) != len(allNames()) {
				t.Fatalf("%d violations, want %d: %+v", len(vs), len(allNames()), vs)
			}
			values := []float64{m.GMMin, m.GMRipple, m.Power, m.Area, m.Switchover, m.TransitionWidth}
			limits := []float64{150e-6, 0.2, 200e-6, 3000e-12, 0.9, 0.2}
			for i, v := range vs {
				if v.Target != allNames()[i] {
					t.Errorf("violation %d is %q, want %q", i, v.Target, allNames()[i])
				}
				if !closeTo(v.Amount, tt.amount[i]) || v.Amount < 0 || math.IsInf(v.Amount, 0) {
					t.Errorf("%s: amount %.17g, want %g", v.Target, v.Amount, tt.amount[i])
				}
				if v.Met() != (tt.amount[i] == 0) {
					t.Errorf("%s: Met() = %v with amount %g", v.Target, v.Met(), v.Amount)
				}
				same := v.Value == values[i] || (math.IsNaN(v.Value) && math.IsNaN(values[i]))
				if !same || v.Limit != limits[i] {
					t.Errorf("%s: value %g limit %g, want %g and %g", v.Target, v.Value, v.Limit, values[i], limits[i])
				}
			}
			var sum float64
			for _, a := range tt.amount {
				sum += a
			}
			if got := objectives.TotalViolation(vs); !closeTo(got, sum) {
				t.Errorf("TotalViolation = %g, want %g", got, sum)
			}
		})
	}
}

// TestCheckRippleContinuity checks that the violation of an unbounded
// ripple is where that of a finite ripple goes as gm_min sinks to the
// point (DeadGM·gm_max) where Ripple turns unbounded, and above every
// finite one: the search sees a dying pair get worse, never better.
func TestCheckRippleContinuity(t *testing.T) {
	tg := objectives.Targets{GMRippleMax: 0.2}
	unbounded := tg.Check(objectives.Metrics{GMRipple: math.Inf(1)})[0].Amount
	prev := 0.0
	for _, f := range []float64{0.5, 0.1, 0.01, 0.002, 0.0011, 0.0010001} {
		r := objectives.Ripple(f*1e-3, 1e-3)
		a := tg.Check(objectives.Metrics{GMRipple: r})[0].Amount
		if math.IsInf(r, 0) || !(a > prev) || !(a < unbounded) {
			t.Errorf("gm_min/gm_max %g: ripple %g, amount %g; want finite, rising from %g, below %g", f, r, a, prev, unbounded)
		}
		prev = a
	}
	if rel := (unbounded - prev) / unbounded; rel > 1e-3 {
		t.Errorf("amount just above the dead point %g is %g below the unbounded %g", prev, rel, unbounded)
	}
	// A limit so loose that the capped amount would fall below
	// MissingAmount still fails with MissingAmount.
	loose := objectives.Targets{GMRippleMax: 500}
	if a := loose.Check(objectives.Metrics{GMRipple: math.Inf(1)})[0].Amount; a != objectives.MissingAmount {
		t.Errorf("ripple limit 500: unbounded amount %g, want %g", a, objectives.MissingAmount)
	}
}

// TestTargetsSet checks which targets count as set and that Check and
// Names report only those, in the fixed order.
func TestTargetsSet(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name string
		t    objectives.Targets
		want []string
	}{
		{"none: NoTargets", objectives.NoTargets(), nil},
		{"none: zero value", objectives.Targets{}, nil},
		{"all", allTargets(), allNames()},
		{"some, the rest NaN", objectives.Targets{GMMin: nan, GMRippleMax: 0.3, PowerMax: nan, AreaMax: 1e-9,
			Switchover: objectives.SwitchoverTarget{At: nan, Tolerance: nan}, TransitionWidthMax: 0.1},
			[]string{"gm_ripple_max", "area_max", "transition_width_max"}},
		{"switchover at 0 V is set", objectives.Targets{Switchover: objectives.SwitchoverTarget{At: 0, Tolerance: 0.05}},
			[]string{"switchover"}},
		{"switchover without tolerance is not", objectives.Targets{Switchover: objectives.SwitchoverTarget{At: 0.9}}, nil},
		{"infinite limit is not set", objectives.Targets{PowerMax: math.Inf(1), GMMin: -1}, nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := tt.t.Names(); !slices.Equal(got, tt.want) {
				t.Errorf("Names() = %v, want %v", got, tt.want)
			}
			vs := tt.t.Check(metMetrics())
			var got []string
			for _, v := range vs {
				got = append(got, v.Target)
			}
			if !slices.Equal(got, tt.want) {
				t.Errorf("Check reports %v, want %v", got, tt.want)
			}
			for _, n := range allNames() {
				if tt.t.Has(n) != slices.Contains(tt.want, n) {
					t.Errorf("Has(%q) = %v", n, tt.t.Has(n))
				}
			}
		})
	}
	if allTargets().Has("gm_ripple") {
		t.Error(`Has("gm_ripple") is true for an axis name`)
	}
}

// TestViolationJSON checks that a violation writes its spec key and SI
// values, with a missing value as null, as metrics do (docs/metrics.md#missing-and-unbounded-values).
func TestViolationJSON(t *testing.T) {
	vs := allTargets().Check(objectives.Metrics{GMMin: 120e-6, GMRipple: math.Inf(1), Power: 80e-6, Area: 500e-12,
		Switchover: math.NaN(), TransitionWidth: math.NaN()})
	b, err := json.Marshal(vs)
	if err != nil {
		t.Fatal(err)
	}
	var got []map[string]any
	if err := json.Unmarshal(b, &got); err != nil {
		t.Fatal(err)
	}
	if len(got) != 6 || got[0]["target"] != "gm_min" || got[0]["value"] != 120e-6 || got[0]["limit"] != 150e-6 {
		t.Fatalf("JSON %s", b)
	}
	if v, ok := got[1]["value"]; !ok || v != nil || !closeTo(got[1]["amount"].(float64), 4994) {
		t.Errorf("unbounded ripple written as %v", got[1])
	}
	if v, ok := got[4]["value"]; !ok || v != nil || got[4]["limit"] != 0.9 || got[4]["amount"] != objectives.MissingAmount {
		t.Errorf("missing switchover written as %v", got[4])
	}
}

// axesSpec is a spec with every axis, its targets from allTargets, over
// a 0.2 V … 1.6 V range.
func axesSpec(t *testing.T, targets string) *objectives.Spec {
	t.Helper()
	s, err := objectives.ReadSpec("axes.yaml", []byte("process: demo18\nsupply: 1.8V\n"+
		"input_range: {low: 0.2V, high: 1.6V}\npareto: [gm_ripple, power, area, gm_min, transition_width]\n"+targets), "")
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// TestAxes checks the axis values: the metric itself on the minimised
// axes, −gm_min on the maximised one, and the documented stand-ins for
// values that are unbounded or missing.
func TestAxes(t *testing.T) {
	s := axesSpec(t, "")
	inf, nan := math.Inf(1), math.NaN()
	low, high := 0.2, 1.6 // float64 variables: the width is High − Low in float64
	tests := []struct {
		name string
		m    objectives.Metrics
		want []float64
	}{
		{"finite", metMetrics(), []float64{0.132, 80.3e-6, 500e-12, -195.6e-6, 0.183}},
		// +Inf ripple → RippleCap = 999; gm_min 0 → 0; no handover → the
		// range's width, 1.6 − 0.2 V.
		{"single pair", objectives.Metrics{GMMin: 0, GMMax: 3e-4, GMRipple: inf, Power: 45e-6, Area: 65e-12,
			Switchover: nan, TransitionWidth: nan}, []float64{999, 45e-6, 65e-12, 0, high - low}},
		{"failed", objectives.Metrics{GMMin: nan, GMRipple: nan, Power: nan, Area: inf, TransitionWidth: nan},
			[]float64{999, 1e300, 1e300, 0, high - low}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := s.Axes(tt.m)
			if len(got) != len(tt.want) {
				t.Fatalf("Axes = %v, want %v", got, tt.want)
			}
			for i := range got {
				if got[i] != tt.want[i] || math.Signbit(got[i]) != math.Signbit(tt.want[i]) {
					t.Errorf("%s = %g, want %g", s.Pareto[i], got[i], tt.want[i])
				}
			}
		})
	}
	// Larger gm is better: it gives a smaller axis value.
	lo, hi := metMetrics(), metMetrics()
	hi.GMMin = 2 * lo.GMMin
	if !(s.Axes(hi)[3] < s.Axes(lo)[3]) {
		t.Errorf("gm_min axis does not fall as gm_min rises")
	}
	// The axes follow the spec's own list.
	s.Pareto = []string{"area", "bandwidth"}
	if got := s.Axes(metMetrics()); len(got) != 2 || got[0] != 500e-12 || !math.IsNaN(got[1]) {
		t.Errorf("Axes over [area bandwidth] = %v", got)
	}
}

// TestAxisScale checks the normalisation of each axis: the target's
// limit when the spec sets one, else the documented default.
func TestAxisScale(t *testing.T) {
	none := axesSpec(t, "")
	set := axesSpec(t, "targets: {gm_min: 150uS, gm_ripple_max: 20%, power_max: 200uW, area_max: 3000um2, transition_width_max: 150mV}\n")
	tests := []struct {
		axis          string
		none, withTgt float64
	}{
		{"gm_ripple", 1.0, 0.2},
		{"power", 1e-3, 200e-6},
		{"area", 10000e-12, 3000e-12},
		{"gm_min", 100e-6, 150e-6},
		{"transition_width", 0.2, 0.15},
		{"bandwidth", 1, 1},
	}
	for _, tt := range tests {
		if got := none.AxisScale(tt.axis); got != tt.none {
			t.Errorf("AxisScale(%q) without targets = %g, want %g", tt.axis, got, tt.none)
		}
		if got := set.AxisScale(tt.axis); got != tt.withTgt {
			t.Errorf("AxisScale(%q) with targets = %g, want %g", tt.axis, got, tt.withTgt)
		}
	}
	if !slices.Equal(objectives.AxisNames(), []string{"gm_ripple", "power", "area", "gm_min", "transition_width", "offset", "offset_drift", "slew", "min_supply", "noise"}) {
		t.Errorf("AxisNames() = %v", objectives.AxisNames())
	}
}

// ExampleTargets_Check measures a stage with too little gm and too much
// ripple against two targets.
func ExampleTargets_Check() {
	t := objectives.Targets{GMMin: 150e-6, GMRippleMax: 0.2}
	m := objectives.Metrics{GMMin: 120e-6, GMMax: 180e-6, GMRipple: 0.5, Power: 80e-6, Area: 5e-10,
		Switchover: 0.95, TransitionWidth: 0.1}
	for _, v := range t.Check(m) {
		fmt.Printf("%s: %g against %g, violated by %.2f\n", v.Target, v.Value, v.Limit, v.Amount)
	}
	// Output:
	// gm_min: 0.00012 against 0.00015, violated by 0.20
	// gm_ripple_max: 0.5 against 0.2, violated by 1.50
}

// TestTightened checks the guard band: a stage that just meets the
// targets fails the tightened ones, one with the margin to spare meets
// them, and the violations are measured against the moved limits (the
// expected values are worked by hand from the definition: a 1 % margin
// moves 100 µS to 101 µS; common practice, no source).
func TestTightened(t *testing.T) {
	tg := objectives.Targets{GMMin: 100e-6, GMRippleMax: 0.2, PowerMax: 1e-4, AreaMax: 1e-9,
		Switchover: objectives.SwitchoverTarget{At: 0.9, Tolerance: 0.1}, TransitionWidthMax: 0.2}
	tt := tg.Tightened(0.01)
	just := objectives.Metrics{GMMin: 100e-6, GMMax: 120e-6, GMRipple: 0.2, Power: 1e-4, Area: 1e-9, Switchover: 1.0, TransitionWidth: 0.2}
	if v := objectives.TotalViolation(tg.Check(just)); v != 0 {
		t.Fatalf("a stage on every limit violates the exact targets by %g", v)
	}
	for _, v := range tt.Check(just) {
		if v.Amount <= 0 {
			t.Errorf("%s: a stage on the exact limit meets the tightened target", v.Target)
		}
	}
	roomy := objectives.Metrics{GMMin: 101.5e-6, GMMax: 120e-6, GMRipple: 0.197, Power: 0.985e-4, Area: 0.985e-9, Switchover: 0.9985, TransitionWidth: 0.197}
	if v := objectives.TotalViolation(tt.Check(roomy)); v != 0 {
		t.Errorf("a stage with 1.5 %% to spare violates 1 %%-tightened targets by %g: %+v", v, tt.Check(roomy))
	}
	if got := tt.Check(just)[0].Limit; math.Abs(got-101e-6) > 1e-18 {
		t.Errorf("tightened gm_min limit %g, want 101 µS", got)
	}
}
