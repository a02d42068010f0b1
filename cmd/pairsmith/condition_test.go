package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"pairsmith/objectives"
)

// TestConditionFlags: eval and netlist take --corner, --supply and
// --temperature. eval's figures are those of the design under that
// condition (objectives.Design.At: bit for bit), its rail-to-rail sweep
// follows the supply; the deck carries the corner's cards (demo18-l1's
// ff lowers the NMOS threshold by 40 mV, its demo data), the supply and
// the .temp. Values that cannot be used are bad input naming the flag.
// (The decks themselves are checked against ngspice at corners in
// topologies' TestFamiliesAtCornersAgainstNgspice.)
func TestConditionFlags(t *testing.T) {
	path := filepath.Join(designsDir, "current-switch-l1.yaml")
	flags := []string{"--corner", "ff", "--supply", "1.98V", "--temperature", "125C"}
	code, stdout, stderr := runCmd(t, append([]string{"eval", "--json", path}, flags...)...)
	if code != exitOK {
		t.Fatalf("eval: exit %d: %s", code, stderr)
	}
	d, err := objectives.LoadDesign(path)
	if err != nil {
		t.Fatal(err)
	}
	at, err := d.At("ff", 1.98, 125+273.15)
	if err != nil {
		t.Fatal(err)
	}
	ev, err := objectives.Evaluate(at)
	if err != nil {
		t.Fatal(err)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	m := doc["metrics"].(map[string]any)
	if m["gm_min"] != ev.Metrics.GMMin || m["power"] != ev.Metrics.Power {
		t.Errorf("eval at ff, 1.98 V, 125 °C: gm_min %v, power %v; Design.At's %v, %v", m["gm_min"], m["power"], ev.Metrics.GMMin, ev.Metrics.Power)
	}
	curve := doc["curve"].([]any)
	if last := curve[len(curve)-1].(map[string]any)["vcm"].(float64); math.Abs(last-1.98) > 1e-12 {
		t.Errorf("the sweep ends at %g V, want the new rail 1.98 V", last)
	}
	nominal := evalJSON(t, path)["metrics"].(map[string]any)
	if nominal["gm_min"] == m["gm_min"] {
		t.Errorf("gm_min %v at ff, 1.98 V, 125 °C is the nominal one", m["gm_min"])
	}

	code, deck, stderr := runCmd(t, append([]string{"netlist", "--testbench", path}, flags...)...)
	if code != exitOK {
		t.Fatalf("netlist: exit %d: %s", code, stderr)
	}
	for _, want := range []string{"at corner ff", ".temp 125\n", "1.98"} {
		if !strings.Contains(deck, want) {
			t.Errorf("the deck at ff, 1.98 V, 125 °C lacks %q", want)
		}
	}
	vto := regexp.MustCompile(`\.model nch nmos \(level=1 vto=([0-9.e+-]+) `).FindStringSubmatch(deck)
	if vto == nil {
		t.Fatalf("no nch card in the deck:\n%s", deck)
	}
	if v, err := strconv.ParseFloat(vto[1], 64); err != nil || math.Abs(v-0.41) > 1e-12 {
		t.Errorf("nch vto = %s at ff, want 0.45 V − 40 mV = 0.41 V", vto[1])
	}

	for _, c := range []struct {
		args []string
		flag string
	}{
		{[]string{"--corner", "xx"}, "tt ff ss fs sf"},
		{[]string{"--supply", "50V"}, "--supply"},
		{[]string{"--supply", "0V"}, "--supply"},
		{[]string{"--supply", "1.9A"}, "--supply"},
		{[]string{"--temperature", "900C"}, "temperature"},
		{[]string{"--temperature", "0K"}, "temperature"},
	} {
		for _, cmd := range []string{"eval", "netlist"} {
			code, _, stderr := runCmd(t, append([]string{cmd, path}, c.args...)...)
			if code != exitBadInput || !strings.Contains(firstLine(stderr), c.flag) {
				t.Errorf("%s %v: exit %d, %q; want %d naming %s", cmd, c.args, code, firstLine(stderr), exitBadInput, c.flag)
			}
		}
	}
	// eval's table names the corner, and a Monte Carlo estimate says so.
	if code, out, stderr := runCmd(t, "eval", path, "--corner", "ff", "--monte-carlo", "20"); code != exitOK ||
		!strings.Contains(firstLine(out), "at corner ff") || !strings.Contains(out, "from 20 Monte Carlo samples") {
		t.Errorf("eval --corner ff --monte-carlo 20: exit %d, %q (%s)", code, out, stderr)
	}
	// A sweep that does not follow the supply is kept: a supply that
	// leaves its high end more than a supply beyond the rail is refused.
	fixed := filepath.Join(t.TempDir(), "fixed.yaml")
	if err := os.WriteFile(fixed, []byte("topology: current-switch\nprocess: demo18-l1\nsupply: 1.8V\nsweep: {low: 0V, high: 1.7V}\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, stderr := runCmd(t, "eval", fixed, "--supply", "0.8V"); code != exitBadInput || !strings.Contains(firstLine(stderr), "sweep from 0V to 1.7V") {
		t.Errorf("eval --supply 0.8V of a sweep to 1.7 V: exit %d, %q; want %d naming the sweep", code, firstLine(stderr), exitBadInput)
	}
}

// TestMismatchFlags: eval --monte-carlo N --seed S writes the Monte Carlo
// estimate (objectives.EvaluateWith: bit for bit), netlist --testbench
// --mismatch-sample K gives every transistor its own card, and values
// that cannot be used are bad input naming the flag.
func TestMismatchFlags(t *testing.T) {
	path := filepath.Join(designsDir, "current-switch-l1.yaml")
	code, stdout, stderr := runCmd(t, "eval", "--json", "--corner", "tt", "--monte-carlo", "40", "--seed", "3", path)
	if code != exitOK {
		t.Fatalf("eval: exit %d: %s", code, stderr)
	}
	var doc struct {
		Mismatch struct {
			OffsetSigma float64 `json:"offset_sigma"`
			Method      string  `json:"method"`
			Samples     int     `json:"samples"`
		} `json:"mismatch"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	d, err := objectives.LoadDesign(path)
	if err != nil {
		t.Fatal(err)
	}
	at, err := d.At("tt", d.Supply, d.TempK)
	if err != nil {
		t.Fatal(err)
	}
	ev, err := objectives.EvaluateWith(at, objectives.EvalOptions{MonteCarlo: 40, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	if m := doc.Mismatch; m.Method != "monte-carlo" || m.Samples != 40 || m.OffsetSigma != ev.Conditions[0].Mismatch.OffsetSigma {
		t.Errorf("mismatch %+v, want monte-carlo, 40 samples, offset σ %g", m, ev.Conditions[0].Mismatch.OffsetSigma)
	}
	code, stdout, stderr = runCmd(t, "netlist", "--testbench", "--mismatch-sample", "2", "--seed", "3", path)
	if code != exitOK {
		t.Fatalf("netlist: exit %d: %s", code, stderr)
	}
	for _, name := range []string{"M1", "M2", "M5"} {
		card := "nch_" + strings.ToLower(name)
		if !strings.Contains(stdout, ".model "+card+" ") && !strings.Contains(stdout, ".model p"+card[1:]+" ") {
			t.Errorf("the deck has no card of %s's own", name)
		}
	}
	for _, tt := range []struct {
		args []string
		flag string
	}{
		{[]string{"eval", "--monte-carlo", "1", path}, "--monte-carlo"},
		{[]string{"eval", "--monte-carlo", "-3", path}, "--monte-carlo"},
		{[]string{"netlist", "--mismatch-sample", "2", path}, "--mismatch-sample"},
		{[]string{"netlist", "--testbench", "--mismatch-sample", "-2", path}, "--mismatch-sample"},
		{[]string{"netlist", "--testbench", "--level1-equivalent", "--mismatch-sample", "1", filepath.Join(designsDir, "current-switch.yaml")}, "--level1-equivalent"},
	} {
		code, _, stderr := runCmd(t, tt.args...)
		if code != exitBadInput || !strings.Contains(stderr, tt.flag) {
			t.Errorf("%v: exit %d, %q; want %d naming %s", tt.args, code, stderr, exitBadInput, tt.flag)
		}
	}
}
