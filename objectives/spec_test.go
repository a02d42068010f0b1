package objectives_test

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"log"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"pairsmith/objectives"
	"pairsmith/topologies"
	"pairsmith/units"
)

// issueSpec is the spec sheet of issue 3 ("The spec sheet"), verbatim.
const issueSpec = `name: strain-gauge buffer           # free text
process: demo18                     # built-in name, or a path relative to the spec
supply: 1.8V
temperature: 27C
input_range: {low: 0V, high: 1.8V}  # the common-mode range that must be covered
targets:
  gm_min: 150uS                     # every gm over the range at least this
  gm_ripple_max: 20%                # gm_max/gm_min - 1 at most this
  power_max: 200uW
  area_max: 3000um2
  switchover: {at: 0.9V, tolerance: 0.1V}   # optional
  transition_width_max: 200mV               # optional
pareto: [gm_ripple, power, area]    # trade-off axes; this is the default
topologies: all                     # or a list of family names
search: {evaluations: 20000, seed: 1, workers: 0}   # 0 workers = one per core; ` + "`time: 10m`" + ` also allowed
`

// checkIssueSpec checks that s holds exactly the values issueSpec writes.
// Each value is the float64 nearest the decimal written times its SI
// prefix (SI brochure, 9th ed., table 7: u = 1e-6, m = 1e-3; "um2" is
// (1e-6 m)² = 1e-12 m²), read with one rounding, so it equals the Go
// literal of the same decimal; 27 °C is 300.15 K (SI brochure §2.3.1).
func checkIssueSpec(t *testing.T, s *objectives.Spec) {
	t.Helper()
	if s.Name != "strain-gauge buffer" || s.ProcessRef != "demo18" || s.ProcessPath != "" ||
		s.Process == nil || s.Process.Name != "demo18" {
		t.Errorf("name %q, process %q (path %q, %v)", s.Name, s.ProcessRef, s.ProcessPath, s.Process)
	}
	checks := []struct {
		name      string
		got, want float64
	}{
		{"supply", s.Supply, 1.8},
		{"temperature", s.TempK, 300.15},
		{"input_range.low", s.Range.Low, 0},
		{"input_range.high", s.Range.High, 1.8},
		{"input_range.step (default)", s.Step, 10e-3},
		{"gm_min", s.Targets.GMMin, 150e-6},
		{"gm_ripple_max", s.Targets.GMRippleMax, 0.2},
		{"power_max", s.Targets.PowerMax, 200e-6},
		{"area_max", s.Targets.AreaMax, 3000e-12},
		{"switchover.at", s.Targets.Switchover.At, 0.9},
		{"switchover.tolerance", s.Targets.Switchover.Tolerance, 0.1},
		{"transition_width_max", s.Targets.TransitionWidthMax, 200e-3},
	}
	for _, c := range checks {
		if c.got != c.want {
			t.Errorf("%s = %.17g, want %.17g", c.name, c.got, c.want)
		}
	}
	if want := []string{"gm_ripple", "power", "area"}; !slices.Equal(s.Pareto, want) {
		t.Errorf("pareto %v, want %v", s.Pareto, want)
	}
	if want := topologies.Names(); !slices.Equal(s.Topologies, want) || len(want) != 7 {
		t.Errorf("topologies %v, want all seven %v", s.Topologies, want)
	}
	if want := (objectives.Search{Evaluations: 20000, Seed: 1, Workers: 0}); s.Search != want {
		t.Errorf("search %+v, want %+v", s.Search, want)
	}
	if want := []string{"gm_min", "gm_ripple_max", "power_max", "area_max", "switchover", "transition_width_max"}; !slices.Equal(s.Targets.Names(), want) {
		t.Errorf("targets set %v, want %v", s.Targets.Names(), want)
	}
}

// TestReadSpecIssueExample reads the issue's spec sheet.
func TestReadSpecIssueExample(t *testing.T) {
	s, err := objectives.ReadSpec("strain.yaml", []byte(issueSpec), "")
	if err != nil {
		t.Fatal(err)
	}
	if s.File != "strain.yaml" {
		t.Errorf("File %q", s.File)
	}
	checkIssueSpec(t, s)
	sw := s.Sweep()
	if sw.Low != 0 || sw.High != 1.8 || sw.Step != 0.01 || sw.VID != 0 {
		t.Errorf("Sweep() = %+v", sw)
	}
	if c := s.Conditions; c.Process != s.Process || c.Supply != 1.8 || c.TempK != 300.15 {
		t.Errorf("Conditions = %+v", c)
	}
	fams, err := s.Families()
	if err != nil || len(fams) != 7 || fams[3].Name() != "current-switch" {
		t.Errorf("Families() = %v, %v", fams, err)
	}
}

// TestDemoSpecs reads the demo spec sheets: strain-gauge.yaml is the
// issue's example, so it holds the same values.
func TestDemoSpecs(t *testing.T) {
	s, err := objectives.LoadSpec("../testdata/specs/strain-gauge.yaml")
	if err != nil {
		t.Fatal(err)
	}
	checkIssueSpec(t, s)
	l1, err := objectives.LoadSpec("../testdata/specs/sensor-l1.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if l1.Process.Kind != "level1" || l1.Supply != 1.8 || len(l1.Targets.Names()) == 0 {
		t.Errorf("sensor-l1: process %s (%s), supply %g, targets %v", l1.ProcessRef, l1.Process.Kind, l1.Supply, l1.Targets.Names())
	}
	imp, err := objectives.LoadSpec("../testdata/specs/impossible.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// The comment in impossible.yaml bounds gm by P/(V·U_T) with
	// U_T = kT/q (CODATA: k = 1.380649e-23 J/K, q = 1.602176634e-19 C):
	// the target must be far above that bound.
	ut := 1.380649e-23 * imp.TempK / 1.602176634e-19
	if bound := imp.Targets.PowerMax / imp.Supply / ut; !(imp.Targets.GMMin > 5*bound) {
		t.Errorf("impossible.yaml: gm_min %g is not far above the weak-inversion bound %g", imp.Targets.GMMin, bound)
	}
}

// minimal is a spec sheet with only the required fields (lines 1–2).
const minimal = "process: demo18-l1\nsupply: 3.3V\n"

// TestReadSpecDefaults checks what a spec that leaves things out gets:
// 27 °C, rail to rail in 10 mV steps, no targets, the default axes, every
// family and the default search (issue 3; docs/files.md#quantities-and-units for the bare
// temperature in °C).
func TestReadSpecDefaults(t *testing.T) {
	s, err := objectives.ReadSpec("specs/min.yaml", []byte(minimal), "")
	if err != nil {
		t.Fatal(err)
	}
	if s.Name != "min" {
		t.Errorf("name %q, want the file's base name", s.Name)
	}
	if s.TempK != 300.15 || s.Range != (objectives.Range{Low: 0, High: 3.3, Follows: true}) || s.Step != 0.01 {
		t.Errorf("temperature %g K, range %+v, step %g", s.TempK, s.Range, s.Step)
	}
	if n := s.Targets.Names(); len(n) != 0 {
		t.Errorf("targets set: %v", n)
	}
	for _, v := range []float64{s.Targets.GMMin, s.Targets.GMRippleMax, s.Targets.PowerMax, s.Targets.AreaMax,
		s.Targets.Switchover.At, s.Targets.Switchover.Tolerance, s.Targets.TransitionWidthMax} {
		if !math.IsNaN(v) {
			t.Errorf("an absent target holds %g, want NaN", v)
		}
	}
	if !slices.Equal(s.Pareto, []string{"gm_ripple", "power", "area"}) || !slices.Equal(s.Topologies, topologies.Names()) {
		t.Errorf("pareto %v, topologies %v", s.Pareto, s.Topologies)
	}
	if s.Search != (objectives.Search{Evaluations: 20000, Seed: 1}) {
		t.Errorf("search %+v", s.Search)
	}

	tests := []struct {
		name  string
		text  string
		check func(*objectives.Spec) bool
	}{
		{"bare temperature is celsius", "temperature: -40", func(s *objectives.Spec) bool { return s.TempK == 233.15 }},
		{"kelvin", "temperature: 350K", func(s *objectives.Spec) bool { return s.TempK == 350 }},
		{"only low", "input_range: {low: 0.5V}", func(s *objectives.Spec) bool {
			return s.Range == objectives.Range{Low: 0.5, High: 3.3, Follows: true} && s.Step == 0.01
		}},
		{"only high, own step", "input_range: {high: 2V, step: 5mV}", func(s *objectives.Spec) bool {
			return s.Range == objectives.Range{Low: 0, High: 2} && s.Step == 0.005
		}},
		{"beyond the rails by less than the supply", "input_range: {low: -0.3V, high: 3.6V}", func(s *objectives.Spec) bool {
			return s.Range == objectives.Range{Low: -0.3, High: 3.6}
		}},
		{"high follows the supply when written so", "input_range: {low: 0.2V, high: supply}", func(s *objectives.Spec) bool {
			return s.Range == objectives.Range{Low: 0.2, High: 3.3, Follows: true}
		}},
		{"families in registry order", "topologies: [zener, n-pair, current-switch]", func(s *objectives.Spec) bool {
			return slices.Equal(s.Topologies, []string{"n-pair", "current-switch", "zener"})
		}},
		{"one family as a scalar", "topologies: sqrt-bias", func(s *objectives.Spec) bool {
			return slices.Equal(s.Topologies, []string{"sqrt-bias"})
		}},
		{"all in a list", "topologies: [all]", func(s *objectives.Spec) bool { return slices.Equal(s.Topologies, topologies.Names()) }},
		{"one axis as a scalar", "pareto: power", func(s *objectives.Spec) bool { return slices.Equal(s.Pareto, []string{"power"}) }},
		{"axes keep their order", "pareto:\n  - transition_width\n  - gm_min\n", func(s *objectives.Spec) bool {
			return slices.Equal(s.Pareto, []string{"transition_width", "gm_min"})
		}},
		{"only some targets", "targets: {gm_min: 0.25mS, area_max: 1.5e-9}", func(s *objectives.Spec) bool {
			return s.Targets.GMMin == 250e-6 && s.Targets.AreaMax == 1.5e-9 &&
				slices.Equal(s.Targets.Names(), []string{"gm_min", "area_max"})
		}},
		{"ripple as a bare fraction", "targets: {gm_ripple_max: 0.15}", func(s *objectives.Spec) bool { return s.Targets.GMRippleMax == 0.15 }},
		{"empty targets", "targets: {}", func(s *objectives.Spec) bool { return len(s.Targets.Names()) == 0 }},
		{"search sets some", "search: {evaluations: 500}", func(s *objectives.Spec) bool {
			return s.Search == objectives.Search{Evaluations: 500, Seed: 1}
		}},
		{"search sets all", "search: {evaluations: 3000, seed: -7, workers: 2, time: 1h30m}", func(s *objectives.Spec) bool {
			return s.Search == objectives.Search{Evaluations: 3000, Seed: -7, Workers: 2, Time: 90 * time.Minute}
		}},
		{"time as bare seconds", "search: {time: 90}", func(s *objectives.Spec) bool { return s.Search.Time == 90*time.Second }},
		{"time 0 is none", "search: {time: 0}", func(s *objectives.Spec) bool { return s.Search.Time == 0 }},
		{"name", "name: 'buffer #2: low power'", func(s *objectives.Spec) bool { return s.Name == "buffer #2: low power" }},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s, err := objectives.ReadSpec("d.yaml", []byte(minimal+tt.text+"\n"), "")
			if err != nil {
				t.Fatal(err)
			}
			if !tt.check(s) {
				t.Errorf("unexpected values: %+v", s)
			}
		})
	}
}

// TestLoadSpecRelativeProcess checks that a process path is taken
// relative to the spec's directory (issue 3), and that Spec.Design gives a
// design file that reads back from anywhere.
func TestLoadSpecRelativeProcess(t *testing.T) {
	data, err := os.ReadFile("../sim/device/processes/demo18-l1.yaml")
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if err := os.MkdirAll(filepath.Join(dir, "procs"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "procs", "mine.yaml"), data, 0o644); err != nil {
		t.Fatal(err)
	}
	spec := filepath.Join(dir, "spec.yaml")
	if err := os.WriteFile(spec, []byte("process: procs/mine.yaml\nsupply: 1.8V\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := objectives.LoadSpec(spec)
	if err != nil {
		t.Fatal(err)
	}
	want := filepath.Join(dir, "procs", "mine.yaml")
	if s.ProcessRef != "procs/mine.yaml" || s.ProcessPath != want || s.Process.Kind != "level1" {
		t.Errorf("process %q at %q (%s), want the file at %q", s.ProcessRef, s.ProcessPath, s.Process.Kind, want)
	}
	fam, _ := topologies.Lookup("current-switch")
	d := s.Design("current-switch", topologies.Defaults(fam))
	back, err := objectives.ReadDesign("cand.yaml", d.Format(), t.TempDir())
	if err != nil {
		t.Fatalf("Design() does not read back elsewhere: %v\n%s", err, d.Format())
	}
	if diff := sameDesign(d, back); diff != "" {
		t.Errorf("read back differs in %s", diff)
	}
	if d.Sweep != s.Sweep() || d.Supply != 1.8 || d.TempK != 300.15 {
		t.Errorf("design at %+v, %g V, %g K", d.Sweep, d.Supply, d.TempK)
	}
}

// TestReadSpecErrors checks that every kind of bad spec sheet gives a
// *units.Error naming the file, the line and field, what was given and
// what is wanted (docs/files.md#bad-input and the rules' "bad user input").
func TestReadSpecErrors(t *testing.T) {
	const head = "name: t\nprocess: demo18\nsupply: 1.8V\n" // lines 1–3
	tests := []badYAML{
		// wrong units
		{name: "supply in amperes", text: "process: demo18\nsupply: 1.8A\n",
			field: "supply", line: 2, given: "1.8A", msg: []string{"voltage", "1.8V"}},
		{name: "gm_min in amperes", text: head + "targets:\n  gm_min: 150uA\n",
			field: "targets.gm_min", line: 5, given: "150uA", msg: []string{"conductance"}},
		{name: "power_max in volts", text: head + "targets: {power_max: 200uV}\n",
			field: "targets.power_max", line: 4, given: "200uV", msg: []string{"power in W"}},
		{name: "area_max in metres", text: head + "targets: {area_max: 3000um}\n",
			field: "targets.area_max", line: 4, given: "3000um", msg: []string{"area"}},
		{name: "transition width in seconds", text: head + "targets: {transition_width_max: 200ms}\n",
			field: "targets.transition_width_max", line: 4, given: "200ms", msg: []string{"voltage"}},
		{name: "ripple in volts", text: head + "targets: {gm_ripple_max: 20mV}\n",
			field: "targets.gm_ripple_max", line: 4, given: "20mV", msg: []string{"percentage"}},
		{name: "temperature in volts", text: head + "temperature: 27V\n",
			field: "temperature", line: 4, given: "27V", msg: []string{"temperature"}},
		{name: "range in amperes", text: head + "input_range: {low: 0A}\n",
			field: "input_range.low", line: 4, given: "0A", msg: []string{"voltage"}},
		{name: "switchover in amperes", text: head + "targets:\n  switchover: {at: 0.9A, tolerance: 0.1V}\n",
			field: "targets.switchover.at", line: 5, given: "0.9A", msg: []string{"voltage"}},
		// unknown keys
		{name: "unknown key with suggestion", text: head + "temprature: 27C\n",
			field: "temprature", line: 4, is: units.ErrUnknownField, msg: []string{`did you mean "temperature"`}},
		{name: "unknown key listing the known", text: head + "budget: 1mW\n",
			field: "budget", line: 4, is: units.ErrUnknownField, msg: []string{"input_range", "topologies", "search"}},
		{name: "target at the top level", text: head + "power_max: 200uW\n",
			field: "power_max", line: 4, is: units.ErrUnknownField, msg: []string{"under targets"}},
		{name: "search setting at the top level", text: head + "seed: 3\n",
			field: "seed", line: 4, is: units.ErrUnknownField, msg: []string{"under search"}},
		{name: "target named like its metric", text: head + "targets:\n  power: 200uW\n",
			field: "targets.power", line: 5, is: units.ErrUnknownField, msg: []string{`did you mean "power_max"`}},
		{name: "misspelt target", text: head + "targets:\n  gm_min: 150uS\n  gm_rippel_max: 20%\n",
			field: "targets.gm_rippel_max", line: 6, is: units.ErrUnknownField, msg: []string{`did you mean "gm_ripple_max"`}},
		{name: "unknown range key", text: head + "input_range: {low: 0V, hihg: 1.8V}\n",
			field: "input_range.hihg", line: 4, is: units.ErrUnknownField, msg: []string{`"high"`}},
		{name: "unknown search key", text: head + "search:\n  evaluation: 100\n",
			field: "search.evaluation", line: 5, is: units.ErrUnknownField, msg: []string{`"evaluations"`}},
		{name: "unknown switchover key", text: head + "targets:\n  switchover: {at: 0.9V, tol: 0.1V}\n",
			field: "targets.switchover.tol", line: 5, is: units.ErrUnknownField},
		{name: "duplicate key", text: head + "supply: 3.3V\n",
			field: "supply", line: 4, is: units.ErrDuplicate},
		// families
		{name: "unknown family with suggestion", text: head + "topologies: [zenr]\n",
			field: "topologies[0]", line: 4, given: "zenr", msg: []string{`did you mean "zener"`}},
		{name: "unknown family in a block list", text: head + "topologies:\n  - n-pair\n  - curent-switch\n",
			field: "topologies[1]", line: 6, given: "curent-switch", msg: []string{`did you mean "current-switch"`}},
		{name: "unknown family as a scalar", text: head + "topologies: folded-cascode\n",
			field: "topologies", line: 4, given: "folded-cascode", msg: []string{"n-pair", "sqrt-bias"}},
		{name: "duplicate family", text: head + "topologies: [zener, n-pair, zener]\n",
			field: "topologies[2]", line: 4, given: "zener", msg: []string{"once", "topologies[0]"}},
		{name: "all with others", text: head + "topologies: [all, zener]\n",
			field: "topologies[0]", line: 4, given: "all", msg: []string{"not both"}},
		{name: "empty topology list", text: head + "topologies: []\n",
			field: "topologies", line: 4, msg: []string{"at least one family"}},
		{name: "null topologies", text: head + "topologies:\n",
			field: "topologies", line: 4, msg: []string{"list of names"}},
		// input range
		{name: "low above high", text: head + "input_range:\n  low: 1.2V\n  high: 0.8V\n",
			field: "input_range.high", line: 6, given: "0.8V", msg: []string{"low below high", "1.2V", "800mV"}},
		{name: "low above the default high", text: head + "input_range: {low: 1.9V}\n",
			field: "input_range.low", line: 4, given: "1.9V", msg: []string{"low below high"}},
		{name: "low below the rails by more than the supply", text: head + "input_range: {low: -1.9V}\n",
			field: "input_range.low", line: 4, given: "-1.9V", msg: []string{"-1.8V"}},
		{name: "high above the rails by more than the supply", text: head + "input_range:\n  high: 3.7V\n",
			field: "input_range.high", line: 5, given: "3.7V", msg: []string{"3.6V"}},
		{name: "zero step", text: head + "input_range: {step: 0V}\n",
			field: "input_range.step", line: 4, given: "0V", msg: []string{"above 0 V"}},
		{name: "step larger than the range", text: head + "input_range: {low: 0.5V, high: 1V, step: 0.6V}\n",
			field: "input_range.step", line: 4, given: "0.6V", msg: []string{"500mV"}},
		// budgets and targets
		{name: "negative power budget", text: head + "targets:\n  power_max: -200uW\n",
			field: "targets.power_max", line: 5, given: "-200uW", msg: []string{"above 0 W"}},
		{name: "zero area budget", text: head + "targets: {area_max: 0}\n",
			field: "targets.area_max", line: 4, given: "0", msg: []string{"above 0"}},
		{name: "zero gm_min", text: head + "targets: {gm_min: 0uS}\n",
			field: "targets.gm_min", line: 4, given: "0uS", msg: []string{"above 0 S"}},
		{name: "negative ripple", text: head + "targets: {gm_ripple_max: -5%}\n",
			field: "targets.gm_ripple_max", line: 4, given: "-5%", msg: []string{"above 0"}},
		{name: "ripple 20 meant as 20 %", text: head + "targets: {gm_ripple_max: 20}\n",
			field: "targets.gm_ripple_max", line: 4, given: "20", msg: []string{"1000%", "0.2"}},
		{name: "zero transition width", text: head + "targets: {transition_width_max: 0mV}\n",
			field: "targets.transition_width_max", line: 4, given: "0mV"},
		{name: "zero switchover tolerance", text: head + "targets:\n  switchover: {at: 0.9V, tolerance: 0V}\n",
			field: "targets.switchover.tolerance", line: 5, given: "0V", msg: []string{"above 0 V"}},
		{name: "negative switchover tolerance", text: head + "targets:\n  switchover:\n    at: 0.9V\n    tolerance: -0.1V\n",
			field: "targets.switchover.tolerance", line: 7, given: "-0.1V"},
		{name: "switchover outside the range", text: head + "input_range: {low: 0.2V, high: 1.6V}\ntargets:\n  switchover: {at: 1.7V, tolerance: 0.1V}\n",
			field: "targets.switchover.at", line: 6, given: "1.7V", msg: []string{"200mV", "1.6V"}},
		{name: "switchover without tolerance", text: head + "targets:\n  switchover: {at: 0.9V}\n",
			field: "targets.switchover.tolerance", line: 5, is: units.ErrMissing},
		{name: "switchover as a number", text: head + "targets:\n  switchover: 0.9V\n",
			field: "targets.switchover", line: 5, given: "0.9V", msg: []string{"mapping"}},
		{name: "targets as a number", text: head + "targets: 5\n",
			field: "targets", line: 4, msg: []string{"mapping"}},
		// search
		{name: "zero evaluations", text: head + "search: {evaluations: 0}\n",
			field: "search.evaluations", line: 4, given: "0", msg: []string{"from 1 to 100000000"}},
		{name: "negative evaluations", text: head + "search: {evaluations: -5}\n",
			field: "search.evaluations", line: 4, given: "-5"},
		{name: "absurd evaluations", text: head + "search: {evaluations: 200000000}\n",
			field: "search.evaluations", line: 4, given: "200000000", msg: []string{"100000000"}},
		{name: "one evaluation too many", text: head + "search: {evaluations: 100000001}\n",
			field: "search.evaluations", line: 4, given: "100000001", msg: []string{"from 1 to 100000000"}},
		{name: "evaluations with a prefix", text: head + "search: {evaluations: 20k}\n",
			field: "search.evaluations", line: 4, given: "20k", msg: []string{"whole number"}},
		{name: "fractional evaluations", text: head + "search: {evaluations: 1.5}\n",
			field: "search.evaluations", line: 4, given: "1.5", msg: []string{"whole number"}},
		{name: "negative workers", text: head + "search:\n  workers: -1\n",
			field: "search.workers", line: 5, given: "-1", msg: []string{"one per core"}},
		{name: "text seed", text: head + "search: {seed: lucky}\n",
			field: "search.seed", line: 4, given: "lucky", msg: []string{"whole number"}},
		{name: "negative time", text: head + "search: {time: -10m}\n",
			field: "search.time", line: 4, given: "-10m", msg: []string{"10m", "negative"}},
		{name: "negative bare time", text: head + "search: {time: -5}\n",
			field: "search.time", line: 4, given: "-5", msg: []string{"negative"}},
		{name: "time in words", text: head + "search: {time: 10 minutes}\n",
			field: "search.time", line: 4, given: "10 minutes", msg: []string{"1h30m"}},
		// required fields and the process
		{name: "missing process", text: "name: t\nsupply: 1.8V\n",
			field: "process", line: 1, is: units.ErrMissing},
		{name: "missing supply", text: "name: t\nprocess: demo18\n",
			field: "supply", line: 1, is: units.ErrMissing},
		{name: "unknown process", text: "process: demo81\nsupply: 1.8V\n",
			field: "process", line: 1, given: "demo81", is: fs.ErrNotExist, msg: []string{`did you mean "demo18"`, "demo33-l1"}},
		{name: "zero supply", text: "process: demo18\nsupply: 0V\n",
			field: "supply", line: 2, given: "0V", msg: []string{"from 450mV"}},
		{name: "temperature out of range", text: head + "temperature: 300C\n",
			field: "temperature", line: 4, given: "300C"},
		// trade-off axes
		{name: "unknown axis with suggestion", text: head + "pareto: [gm_ripple, powr]\n",
			field: "pareto[1]", line: 4, given: "powr", msg: []string{`did you mean "power"`}},
		{name: "axis named like its target", text: head + "pareto:\n  - gm_ripple_max\n",
			field: "pareto[0]", line: 5, given: "gm_ripple_max", msg: []string{`did you mean "gm_ripple"`}},
		{name: "unknown axis listing the known", text: head + "pareto: [bandwidth]\n",
			field: "pareto[0]", line: 4, given: "bandwidth", msg: []string{"gm_ripple, power, area, gm_min, transition_width, offset, offset_drift, slew, min_supply, noise"}},
		{name: "duplicate axis", text: head + "pareto: [power, area, power]\n",
			field: "pareto[2]", line: 4, given: "power", msg: []string{"once", "pareto[0]"}},
		{name: "empty pareto", text: head + "pareto: []\n",
			field: "pareto", line: 4, msg: []string{"at least one"}},
	}
	checkBadYAML(t, tests, func(file string, data []byte, baseDir string) error {
		_, err := objectives.ReadSpec(file, data, baseDir)
		return err
	})
}

// TestLoadSpecMissingFile checks that a spec that cannot be read names it.
func TestLoadSpecMissingFile(t *testing.T) {
	path := filepath.Join(t.TempDir(), "nope.yaml")
	_, err := objectives.LoadSpec(path)
	if !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), path) {
		t.Errorf("error %v, want one naming %s and wrapping fs.ErrNotExist", err, path)
	}
}

// TestParseTimeBudget checks the time budget forms issue 3 names ("10m",
// "90s", "1h30m" as Go durations, see time.ParseDuration) and bare
// seconds.
func TestParseTimeBudget(t *testing.T) {
	good := []struct {
		text string
		want time.Duration
	}{
		{"10m", 10 * time.Minute},
		{"90s", 90 * time.Second},
		{"1h30m", 90 * time.Minute},
		{"90", 90 * time.Second},
		{" 1.5 ", 1500 * time.Millisecond},
		{"0", 0},
		{"2e3", 2000 * time.Second},
	}
	for _, g := range good {
		if got, err := objectives.ParseTimeBudget(g.text); err != nil || got != g.want {
			t.Errorf("ParseTimeBudget(%q) = %v, %v; want %v", g.text, got, err, g.want)
		}
	}
	for _, bad := range []string{"", "-1", "-10m", "NaN", "inf", "10 minutes", "1e20", "3000000h"} {
		if got, err := objectives.ParseTimeBudget(bad); err == nil {
			t.Errorf("ParseTimeBudget(%q) = %v, want an error", bad, got)
		}
	}
}

// TestSearchWorkerCount checks the number of workers a search runs. (The
// limits on search settings are checked by the bad-spec table above and,
// for flags, by cmd/pairsmith's TestRunBadFlags.)
func TestSearchWorkerCount(t *testing.T) {
	if n := (objectives.Search{Workers: 3}).WorkerCount(); n != 3 {
		t.Errorf("WorkerCount with 3 workers = %d", n)
	}
	if n := (objectives.Search{}).WorkerCount(); n < 1 {
		t.Errorf("WorkerCount with 0 workers = %d, want one per core", n)
	}
}

// TestSpecJSON checks that a spec writes valid JSON (encoding/json
// rejects NaN, which absent targets hold) with only the set targets, SI
// values, and no worker count, so that the summary of a run does not
// depend on it (issue 3).
func TestSpecJSON(t *testing.T) {
	s, err := objectives.ReadSpec("s.yaml", []byte(minimal+"targets: {gm_min: 150uS, switchover: {at: 1V, tolerance: 50mV}}\nsearch: {workers: 2, time: 90s}\n"), "")
	if err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(s)
	if err != nil {
		t.Fatal(err)
	}
	var got map[string]any
	if err := json.Unmarshal(b, &got); err != nil {
		t.Fatal(err)
	}
	targets, _ := got["targets"].(map[string]any)
	if len(targets) != 2 || targets["gm_min"] != 150e-6 {
		t.Errorf("targets %v, want gm_min and switchover only", targets)
	}
	if sw, _ := targets["switchover"].(map[string]any); sw["at"] != 1.0 || sw["tolerance"] != 0.05 {
		t.Errorf("switchover %v", targets["switchover"])
	}
	search, _ := got["search"].(map[string]any)
	if _, ok := search["workers"]; ok || search["time"] != 90.0 || search["evaluations"] != 20000.0 {
		t.Errorf("search %v", search)
	}
	if got["supply"] != 3.3 || got["temperature"] != 300.15 || got["process"] != "demo18-l1" {
		t.Errorf("spec JSON %s", b)
	}
	// The value and the pointer write the same document.
	b2, err := json.Marshal(*s)
	if err != nil || string(b2) != string(b) {
		t.Errorf("value and pointer differ: %s vs %s (%v)", b2, b, err)
	}
	if b, err := json.Marshal(objectives.NoTargets()); err != nil || string(b) != "{}" {
		t.Errorf("NoTargets() JSON %s, %v", b, err)
	}
}

// ExampleReadSpec reads a small spec sheet: two targets, the trade-off
// between ripple and power, three families and a time budget; what is
// left out takes its default.
func ExampleReadSpec() {
	text := `name: demo buffer
process: demo18-l1
supply: 1.8V
targets:
  gm_min: 200uS
  power_max: 150uW
pareto: [gm_ripple, power]
topologies: [mirror-1to3, current-switch, complementary]
search: {evaluations: 3000, time: 90s}
`
	s, err := objectives.ReadSpec("demo.yaml", []byte(text), "")
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(s.Name, "on", s.Process.Name, "at", s.Supply, "V,", s.TempK, "K")
	fmt.Println("range", s.Range.Low, "V to", s.Range.High, "V in", s.Step, "V steps")
	fmt.Println("targets", s.Targets.Names())
	fmt.Println("axes", s.Pareto, "families", s.Topologies)
	fmt.Println(s.Search.Evaluations, "evaluations, seed", s.Search.Seed, "at most", s.Search.Time)

	_, err = objectives.ReadSpec("bad.yaml", []byte("process: demo18\nsupply: 1.8V\ntopologies: [zenr]\n"), "")
	fmt.Println(err)
	// Output:
	// demo buffer on demo18-l1 at 1.8 V, 300.15 K
	// range 0 V to 1.8 V in 0.01 V steps
	// targets [gm_min power_max]
	// axes [gm_ripple power] families [complementary current-switch mirror-1to3]
	// 3000 evaluations, seed 1 at most 1m30s
	// bad.yaml:3: topologies[0]: got "zenr", want a known family (did you mean "zener"?)
}

// TestDemoSpecsReachable evaluates families at their defaults under the
// demo spec sheets: the feasible demos must have a feasible region for the
// search to find (a stage that meets every target already at its
// defaults), and the impossible one must be missed by every family.
func TestDemoSpecsReachable(t *testing.T) {
	tests := []struct {
		spec  string
		meets []string // families whose defaults meet every target
	}{
		{"strain-gauge.yaml", []string{"current-switch"}},
		{"sensor-l1.yaml", []string{"mirror-1to3", "sqrt-bias"}},
		{"impossible.yaml", nil},
	}
	for _, tt := range tests {
		t.Run(tt.spec, func(t *testing.T) {
			s, err := objectives.LoadSpec("../testdata/specs/" + tt.spec)
			if err != nil {
				t.Fatal(err)
			}
			fams, err := s.Families()
			if err != nil {
				t.Fatal(err)
			}
			for _, f := range fams {
				ev, err := objectives.Evaluate(s.Design(f.Name(), topologies.Defaults(f)))
				if err != nil {
					t.Fatalf("%s: %v", f.Name(), err)
				}
				vs := s.Targets.Check(ev.Metrics)
				met := objectives.TotalViolation(vs) == 0
				if want := slices.Contains(tt.meets, f.Name()); want && !met {
					t.Errorf("%s at its defaults misses: %+v", f.Name(), vs)
				} else if met && tt.meets == nil {
					t.Errorf("%s at its defaults meets the impossible spec: %+v", f.Name(), ev.Metrics)
				}
			}
		})
	}
}
