package objectives_test

import (
	"math"
	"slices"
	"testing"

	"pairsmith/objectives"
	"pairsmith/topologies"
)

// TestReadSignoff checks the sign-off section of a spec sheet: supply and
// temperature ranges with their nominal values, the corners, the
// mismatch k and the load (issue 9's spec-sheet section; the 27 °C
// nominal and the midpoint supply are the defaults).
func TestReadSignoff(t *testing.T) {
	const head = "process: demo18\n"
	tests := []struct {
		name  string
		text  string
		check func(s *objectives.Spec) bool
	}{
		{"single values, every corner", "supply: 1.8V\n", func(s *objectives.Spec) bool {
			so := s.Signoff
			return so.Supply == objectives.Single(1.8) && so.Temperature == objectives.Single(300.15) &&
				slices.Equal(so.Corners, []string{"tt", "ff", "ss", "fs", "sf"}) && so.Nominal == "tt" &&
				so.Sigma == 3 && so.Load == 0 && len(so.Conditions()) == 5 && s.Supply == 1.8 && s.Process.Corner == "tt"
		}},
		{"supply range, midpoint nominal", "supply: {min: 1.62V, max: 1.98V}\ncorners: tt\n", func(s *objectives.Spec) bool {
			return s.Signoff.Supply == objectives.Span{Min: 1.62, Nominal: 1.8, Max: 1.98} && s.Supply == 1.8 &&
				len(s.Signoff.Conditions()) == 3
		}},
		{"supply range, nominal given", "supply: {min: 1.6V, nominal: 1.7V, max: 2V}\n", func(s *objectives.Spec) bool {
			return s.Signoff.Supply == objectives.Span{Min: 1.6, Nominal: 1.7, Max: 2} && s.Supply == 1.7
		}},
		{"temperature range, 27 °C nominal", "supply: 1.8V\ntemperature: {min: -40C, max: 125C}\n", func(s *objectives.Spec) bool {
			return s.Signoff.Temperature == objectives.Span{Min: 233.15, Nominal: 300.15, Max: 398.15} && s.TempK == 300.15
		}},
		{"temperature range without 27 °C: midpoint", "supply: 1.8V\ntemperature: {min: 50C, max: 150C}\n", func(s *objectives.Spec) bool {
			return s.Signoff.Temperature.Nominal == 373.15 && s.TempK == 373.15
		}},
		{"corners in the process's order", "supply: 1.8V\ncorners: [sf, ss, tt]\n", func(s *objectives.Spec) bool {
			return slices.Equal(s.Signoff.Corners, []string{"tt", "ss", "sf"}) && s.Signoff.Nominal == "tt"
		}},
		{"without tt the first corner is nominal", "supply: 1.8V\ncorners: [ss, ff]\n", func(s *objectives.Spec) bool {
			return s.Signoff.Nominal == "ff" && s.Process.Corner == "ff" && s.Conditions.Process.N != nil
		}},
		{"mismatch and load", "supply: 1.8V\nmismatch: {sigma: 4.5}\nload: 5pF\n", func(s *objectives.Spec) bool {
			return s.Signoff.Sigma == 4.5 && s.Signoff.Load == 5e-12
		}},
		{"the whole sign-off", "supply: {min: 1.62V, max: 1.98V}\ntemperature: {min: -40C, max: 125C}\ncorners: [tt, ff, ss, fs, sf]\n", func(s *objectives.Spec) bool {
			cs := s.Signoff.Conditions()
			return len(cs) == 45 && cs[0] == (objectives.Condition{Corner: "tt", Supply: 1.8, TempK: 300.15})
		}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s, err := objectives.ReadSpec("s.yaml", []byte(head+tt.text), "")
			if err != nil {
				t.Fatal(err)
			}
			if !tt.check(s) {
				t.Errorf("unexpected sign-off: %+v, nominal %+v", s.Signoff, s.Conditions)
			}
		})
	}
}

// TestConditionsOrder checks that the conditions list each corner ×
// supply × temperature once, the nominal first (issue 9: "every corner ×
// {supply min, nominal, max} × {temperature min, nominal, max}").
func TestConditionsOrder(t *testing.T) {
	so := objectives.Signoff{
		Supply: objectives.Span{Min: 1.62, Nominal: 1.8, Max: 1.98}, Temperature: objectives.Span{Min: 233.15, Nominal: 300.15, Max: 398.15},
		Corners: []string{"tt", "ff", "ss"}, Nominal: "tt",
	}
	cs := so.Conditions()
	if len(cs) != 27 {
		t.Fatalf("%d conditions, want 3 × 3 × 3", len(cs))
	}
	seen := map[objectives.Condition]bool{}
	for _, c := range cs {
		if seen[c] {
			t.Errorf("%v twice", c)
		}
		seen[c] = true
	}
	if cs[0] != (objectives.Condition{Corner: "tt", Supply: 1.8, TempK: 300.15}) || cs[1] != (objectives.Condition{Corner: "tt", Supply: 1.8, TempK: 233.15}) {
		t.Errorf("order starts %v, %v", cs[0], cs[1])
	}
	if got := cs[0].String(); got != "tt, 1.8 V, 27 °C" {
		t.Errorf("nominal reads %q", got)
	}
	if got := (objectives.Condition{Corner: "ss", Supply: 1.62, TempK: 233.15}).String(); got != "ss, 1.62 V, -40 °C" {
		t.Errorf("a corner reads %q", got)
	}
}

// TestSignoffErrors checks that a bad sign-off section names its file,
// line and field, what was given and what is wanted.
func TestSignoffErrors(t *testing.T) {
	const head = "process: demo18\n" // line 1
	tests := []badYAML{
		{name: "supply range without max", text: head + "supply: {min: 1.62V}\n", field: "supply.max", line: 2, msg: []string{"missing"}},
		{name: "supply range upside down", text: head + "supply: {min: 1.9V, max: 1.7V}\n", field: "supply.max", line: 2, msg: []string{"at least the minimum"}},
		{name: "supply min too low", text: head + "supply: {min: 0.1V, max: 1.98V}\n", field: "supply.min", line: 2, given: "0.1V"},
		{name: "nominal outside", text: head + "supply: {min: 1.62V, nominal: 2V, max: 1.98V}\n", field: "supply.nominal", line: 2, msg: []string{"1.62V … 1.98V"}},
		{name: "unknown supply field", text: head + "supply: {min: 1.62V, max: 1.98V, typ: 1.8V}\n", field: "supply.typ", line: 2},
		{name: "temperature max too hot", text: head + "supply: 1.8V\ntemperature: {min: -40C, max: 400C}\n", field: "temperature.max", line: 3, given: "400C"},
		{name: "unknown corner", text: head + "supply: 1.8V\ncorners: [tt, fff]\n", field: "corners[1]", line: 3, given: "fff", msg: []string{"tt, ff, ss, fs, sf"}},
		{name: "corner twice", text: head + "supply: 1.8V\ncorners: [ss, ss]\n", field: "corners[1]", line: 3, msg: []string{"once"}},
		{name: "no corner", text: head + "supply: 1.8V\ncorners: []\n", field: "corners", line: 3},
		{name: "sigma zero", text: head + "supply: 1.8V\nmismatch: {sigma: 0}\n", field: "mismatch.sigma", line: 3, given: "0"},
		{name: "sigma unknown field", text: head + "supply: 1.8V\nmismatch: {k: 3}\n", field: "mismatch.k", line: 3},
		{name: "load in volts", text: head + "supply: 1.8V\nload: 5V\n", field: "load", line: 3, given: "5V", msg: []string{"capacitance"}},
		{name: "load too big", text: head + "supply: 1.8V\nload: 1F\n", field: "load", line: 3, given: "1F"},
		{name: "slew without a load", text: head + "supply: 1.8V\ntargets: {slew_min: 2V/us}\n", field: "targets.slew_min", line: 3, msg: []string{"load"}},
		{name: "slew axis without a load", text: head + "supply: 1.8V\npareto: [power, slew]\n", field: "pareto[1]", line: 3, msg: []string{"load"}},
		{name: "range above the lowest supply", text: head + "supply: {min: 1V, max: 1.98V}\ninput_range: {low: 0.995V}\n",
			field: "input_range.low", line: 3, msg: []string{"lowest supply"}},
		// A fixed end within a supply of a rail at the nominal 1.44 V
		// (readRange's rule) but not at the lowest, 0.9 V.
		{name: "fixed high beyond the lowest supply", text: head + "supply: {min: 0.9V, max: 1.98V}\ninput_range: {high: 2.5V}\n",
			field: "input_range.high", line: 3, given: "2.5V", msg: []string{"lowest supply", "1.8V"}},
		{name: "low beyond the lowest supply", text: head + "supply: {min: 0.9V, max: 1.98V}\ninput_range: {low: -1.2V}\n",
			field: "input_range.low", line: 3, given: "-1.2V", msg: []string{"lowest supply", "-900mV"}},
	}
	checkBadYAML(t, tests, func(file string, data []byte, dir string) error {
		_, err := objectives.ReadSpec(file, data, dir)
		return err
	})
	// A design file's sweep takes the same rule.
	checkBadYAML(t, []badYAML{{name: "design sweep beyond the lowest supply",
		text:  "topology: n-pair\nprocess: demo18\nsupply: {min: 0.9V, max: 1.98V}\nsweep: {high: 2.5V}\n",
		field: "sweep.high", line: 4, given: "2.5V", msg: []string{"lowest supply"}}},
		func(file string, data []byte, dir string) error {
			_, err := objectives.ReadDesign(file, data, dir)
			return err
		})
}

// TestDesignSignoffRoundTrip checks that a design of a spec with a whole
// sign-off writes a design file that reads back to the same sign-off,
// nominal condition and sweep, and that each condition's design (Under)
// sweeps rail to rail at its own supply.
func TestDesignSignoffRoundTrip(t *testing.T) {
	text := "process: demo18\nsupply: {min: 1.62V, max: 1.98V}\ntemperature: {min: -40C, max: 125C}\ncorners: [tt, ss, ff]\nmismatch: {sigma: 4}\nload: 2pF\n"
	s, err := objectives.ReadSpec("s.yaml", []byte(text), "")
	if err != nil {
		t.Fatal(err)
	}
	fam, _ := topologies.Lookup("current-switch")
	d := s.Design("current-switch", topologies.Defaults(fam))
	back, err := objectives.ReadDesign("d.yaml", d.Format(), "")
	if err != nil {
		t.Fatalf("%v\n%s", err, d.Format())
	}
	if !slices.Equal(back.AllConditions(), d.AllConditions()) || back.Signoff.Sigma != 4 || back.Signoff.Load != 2e-12 ||
		back.Sweep != d.Sweep || !back.FollowSupply {
		t.Errorf("read back %+v (sweep %+v), want %+v (sweep %+v)\n%s", back.Signoff, back.Sweep, d.Signoff, d.Sweep, d.Format())
	}
	for _, c := range back.AllConditions() {
		u := back.Under(c)
		if u.Supply != c.Supply || u.TempK != c.TempK || u.Process.Corner != c.Corner || u.Sweep.High != c.Supply || (len(u.AllConditions()) != 1) != (c == back.Nominal()) {
			t.Errorf("under %v: supply %g, %g K, corner %s, sweep to %g", c, u.Supply, u.TempK, u.Process.Corner, u.Sweep.High)
		}
	}
	ss := back.Under(objectives.Condition{Corner: "ss", Supply: 1.8, TempK: 300.15})
	tt := back.Under(back.Nominal())
	if ss.Process.N == tt.Process.N || tt != back {
		t.Errorf("ss shares tt's cards, or the nominal is not the design itself")
	}
}

// TestNoiseTarget: noise_max is a density at a frequency; the sheet's
// frequency becomes its designs' noise frequency (written back by
// Format), where eval takes the noise figure; bad ones name their field.
func TestNoiseTarget(t *testing.T) {
	s, err := objectives.ReadSpec("s.yaml", []byte("process: demo18-l1\nsupply: 1.8V\ncorners: tt\ntargets:\n  noise_max: {density: 25nV/rtHz, at: 1kHz}\npareto: [noise, power]\n"), "")
	if err != nil {
		t.Fatal(err)
	}
	if s.Targets.NoiseMax != 25e-9 || s.Targets.NoiseAt != 1e3 || !s.Targets.Has(objectives.TargetNoiseMax) {
		t.Fatalf("noise target %g at %g Hz", s.Targets.NoiseMax, s.Targets.NoiseAt)
	}
	fam, _ := topologies.Lookup("current-switch")
	d := s.Design("current-switch", topologies.Defaults(fam))
	back, err := objectives.ReadDesign("d.yaml", d.Format(), "")
	if err != nil || d.NoiseFrequency != 1e3 || back.NoiseFrequency != 1e3 {
		t.Fatalf("design noise frequency %g, read back %g (%v)", d.NoiseFrequency, back.NoiseFrequency, err)
	}
	ev, err := objectives.Evaluate(back)
	if err != nil {
		t.Fatal(err)
	}
	n := ev.Conditions[0].Noise
	if n.Frequency != 1e3 || ev.Metrics.Noise != n.Density {
		t.Errorf("noise at %g Hz, figure %g, density %g", n.Frequency, ev.Metrics.Noise, n.Density)
	}
	vs := s.Targets.Check(ev.Metrics)
	found := false
	for _, v := range vs {
		if v.Target == objectives.TargetNoiseMax {
			found = true
			if want := math.Max(0, (ev.Metrics.Noise-25e-9)/25e-9); v.Amount != want {
				t.Errorf("noise violation %g, want %g", v.Amount, want)
			}
		}
	}
	if !found {
		t.Error("no noise_max violation entry")
	}
	checkBadYAML(t, []badYAML{
		{name: "noise as one value", text: "process: demo18\nsupply: 1.8V\ntargets: {noise_max: 25nV/rtHz}\n", field: "targets.noise_max", line: 3, msg: []string{"density"}},
		{name: "noise without a frequency", text: "process: demo18\nsupply: 1.8V\ntargets: {noise_max: {density: 25nV/rtHz}}\n", field: "targets.noise_max.at", line: 3},
		{name: "noise in volts", text: "process: demo18\nsupply: 1.8V\ntargets: {noise_max: {density: 25nV, at: 1kHz}}\n", field: "targets.noise_max.density", line: 3, given: "25nV"},
		{name: "noise at 0 Hz", text: "process: demo18\nsupply: 1.8V\ntargets: {noise_max: {density: 25nV/rtHz, at: 0Hz}}\n", field: "targets.noise_max.at", line: 3},
	}, func(file string, data []byte, dir string) error {
		_, err := objectives.ReadSpec(file, data, dir)
		return err
	})
}

// TestHighEndWord: a sweep's high end written as a word other than
// supply is told what the field takes, the word that follows the
// supply among it; a quantity in the wrong unit keeps the unit's message.
func TestHighEndWord(t *testing.T) {
	const head = "topology: n-pair\nprocess: demo18\nsupply: 1.8V\n"
	checkBadYAML(t, []badYAML{
		{name: "capitalised word", text: head + "sweep: {high: Supply}\n", field: "sweep.high", line: 4, given: "Supply", msg: []string{"or supply to follow the supply"}},
		{name: "a current", text: head + "sweep: {high: 1.7A}\n", field: "sweep.high", line: 4, given: "1.7A", msg: []string{"in V"}},
	}, func(file string, data []byte, dir string) error {
		_, err := objectives.ReadDesign(file, data, dir)
		return err
	})
}
