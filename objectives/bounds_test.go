package objectives_test

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"pairsmith/objectives"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// ldProcess is a level-1 process file (invented demo numbers) whose
// cards have lateral diffusions ldn and ldp; nmos.ld is on line 4,
// pmos.ld on line 5.
func ldProcess(ldn, ldp string) string {
	return "model: level1\nnmos:\n  vto: 0.45V\n  ld: " + ldn + "\n  kp: 280uA/V2\npmos: {vto: -0.45V, kp: 70uA/V2, ld: " + ldp + "}\n"
}

// readWithProcess returns a reader for checkBadYAML that writes the
// process file proc.yaml (text proc) beside the file it reads.
func readWithProcess(proc string, read func(file string, data []byte, baseDir string) error) func(string, []byte, string) error {
	return func(file string, data []byte, baseDir string) error {
		if err := os.WriteFile(filepath.Join(baseDir, "proc.yaml"), []byte(proc), 0o644); err != nil {
			return err
		}
		// The process file's errors name it by the path it is read at.
		return read(file, data, baseDir)
	}
}

func readDesign(file string, data []byte, baseDir string) error {
	_, err := objectives.ReadDesign(file, data, baseDir)
	return err
}

func readSpec(file string, data []byte, baseDir string) error {
	_, err := objectives.ReadSpec(file, data, baseDir)
	return err
}

// TestSupplyBounds: a supply below the process's smaller threshold, where
// no transistor turns on (objectives.MinSupply), or above MaxSupply is
// refused by design files and spec sheets alike; the bounds themselves
// are accepted. demo18's thresholds are 0.45 V and −0.45 V, demo33's
// 0.65 V and −0.7 V (invented demo data).
func TestSupplyBounds(t *testing.T) {
	tests := []struct {
		process, supply string
		ok              bool
	}{
		{"demo18", "1nV", false},
		{"demo18", "100mV", false},
		{"demo18", "449.9mV", false},
		{"demo18", "450mV", true},
		{"demo33", "649mV", false},
		{"demo33", "650mV", true},
		{"demo18", "20V", true},
		{"demo18", "20.01V", false},
		{"demo18", "1kV", false},
	}
	for _, tt := range tests {
		for _, kind := range []string{"design", "spec"} {
			text := "process: " + tt.process + "\nsupply: " + tt.supply + "\n"
			read := readSpec
			line := 2
			if kind == "design" {
				text = "topology: n-pair\n" + text
				read, line = readDesign, 3
			}
			err := read("s.yaml", []byte(text), t.TempDir())
			if tt.ok {
				if err != nil {
					t.Errorf("%s, %s supply %s: %v", kind, tt.process, tt.supply, err)
				}
				continue
			}
			var ue *units.Error
			if !errors.As(err, &ue) || ue.Line != line || ue.Field != "supply" || ue.Given != tt.supply ||
				!strings.Contains(err.Error(), "threshold") {
				t.Errorf("%s, %s supply %s: error %v, want one at s.yaml:%d: supply naming the threshold", kind, tt.process, tt.supply, err, line)
			}
		}
	}
	p, _ := device.Builtin("demo33")
	if got := objectives.MinSupply(p); got != 0.65 {
		t.Errorf("MinSupply(demo33) = %g V, want 0.65 V, the smaller of |0.65 V| and |−0.7 V|", got)
	}
}

// TestRangeStep: a sweep or input range narrower than its step is refused
// by designs and specs alike, blaming the field the file writes: the step
// when it is written, else the end of the range that is.
func TestRangeStep(t *testing.T) {
	tests := []struct {
		name, rng string
		field     string
		given     string
		msg       string
	}{
		{"step written", "{low: 0.5V, high: 1V, step: 0.6V}", "step", "0.6V", "no larger than the range (500mV)"},
		{"a tiny range, default step", "{low: 0.9V, high: 0.9000001V}", "high", "0.9000001V", "at least one step (10mV) above low"},
		{"only low written", "{low: 1.795V}", "low", "1.795V", "at least one step (10mV) below high"},
	}
	for _, tt := range tests {
		for _, kind := range []string{"design", "spec"} {
			t.Run(kind+"/"+tt.name, func(t *testing.T) {
				text, key, read := "process: demo18\nsupply: 1.8V\ninput_range: "+tt.rng+"\n", "input_range", readSpec
				if kind == "design" {
					text, key, read = "topology: n-pair\nprocess: demo18\nsupply: 1.8V\nsweep: "+tt.rng+"\n", "sweep", readDesign
				}
				err := read("r.yaml", []byte(text), t.TempDir())
				var ue *units.Error
				if !errors.As(err, &ue) || ue.Field != key+"."+tt.field || ue.Given != tt.given || !strings.Contains(err.Error(), tt.msg) {
					t.Errorf("error %v, want one at %s.%s (given %q) saying %q", err, key, tt.field, tt.given, tt.msg)
				}
			})
		}
	}
	// A step equal to the range is two points, and accepted.
	if _, err := objectives.ReadDesign("r.yaml", []byte("topology: n-pair\nprocess: demo18\nsupply: 1.8V\nsweep: {low: 0.5V, high: 1V, step: 0.5V}\n"), t.TempDir()); err != nil {
		t.Errorf("step equal to the range: %v", err)
	}
}

// TestLateralDiffusion: ld ≥ L/2 leaves no effective channel L − 2·ld.
// A design blames the length parameter it writes (params.ln for the NMOS
// input pair), or the process file's ld line when it writes none; a spec
// blames the ld line when ld is at least half the shortest length the
// families' bounds allow (180 nm: every family's ln, lp and lt).
func TestLateralDiffusion(t *testing.T) {
	design := "topology: complementary\nprocess: proc.yaml\nsupply: 1.8V\nparams:\n  ln: 1um\n  lp: 2um\n  lt: 4um\n"
	tests := []struct {
		name   string
		proc   string
		text   string
		read   func(string, []byte, string) error
		file   string // "" for the file read, else the process file
		line   int
		field  string
		given  string
		msg    []string
		accept bool
	}{
		{name: "design: nmos ld beyond ln/2", proc: ldProcess("500nm", "0"), text: design, read: readDesign,
			line: 5, field: "params.ln", given: "1um", msg: []string{"2 × 500nm = 1um", "nmos input", "proc.yaml:4: nmos.ld is 500nm"}},
		{name: "design: pmos ld beyond lp/2", proc: ldProcess("0", "1um"), text: design, read: readDesign,
			line: 6, field: "params.lp", given: "2um", msg: []string{"2 × 1um = 2um", "pmos input"}},
		{name: "design: nmos ld beyond lt/2 of the tail", proc: ldProcess("100nm", "0"), read: readDesign,
			text: strings.Replace(design, "lt: 4um", "lt: 180nm", 1), line: 7, field: "params.lt", given: "180nm",
			msg: []string{"2 × 100nm = 200nm", "nmos"}},
		{name: "design: ld below half of every length", proc: ldProcess("499nm", "999nm"), read: readDesign, text: design, accept: true},
		{name: "design: no length written", proc: ldProcess("600nm", "0"), read: readDesign,
			text: "topology: n-pair\nprocess: proc.yaml\nsupply: 1.8V\n", file: "proc.yaml", line: 4, field: "nmos.ld", given: "600nm",
			msg: []string{"below half the channel length ln = 1um of M1 (nmos input), so below 500nm"}},
		{name: "spec: ld above half the shortest length", proc: ldProcess("90nm", "0"), read: readSpec,
			text: "process: proc.yaml\nsupply: 1.8V\n", file: "proc.yaml", line: 4, field: "nmos.ld", given: "90nm",
			msg: []string{"180nm", "so below 90nm"}},
		{name: "spec: pmos ld", proc: ldProcess("10nm", "0.2um"), read: readSpec,
			text: "process: proc.yaml\nsupply: 1.8V\ntopologies: p-pair\n", file: "proc.yaml", line: 6, field: "pmos.ld", given: "0.2um",
			msg: []string{"lp of p-pair: 180nm"}},
		{name: "spec: ld just below half the shortest length", proc: ldProcess("89nm", "89nm"), read: readSpec,
			text: "process: proc.yaml\nsupply: 1.8V\n", accept: true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			dir := t.TempDir()
			err := readWithProcess(tt.proc, tt.read)("d.yaml", []byte(tt.text), dir)
			if tt.accept {
				if err != nil {
					t.Errorf("refused: %v", err)
				}
				return
			}
			var ue *units.Error
			if !errors.As(err, &ue) {
				t.Fatalf("error %v (%T), want a *units.Error", err, err)
			}
			file := "d.yaml"
			if tt.file != "" {
				file = filepath.Join(dir, tt.file)
			}
			if want := fmt.Sprintf("%s:%d: %s: got %q, ", file, tt.line, tt.field, tt.given); !strings.HasPrefix(err.Error(), want) {
				t.Errorf("error %q, want it to start %q", err, want)
			}
			for _, m := range tt.msg {
				if !strings.Contains(err.Error(), m) {
					t.Errorf("error %q does not say %q", err, m)
				}
			}
		})
	}
}

// unphysicalDesign is the kind of case: a current switch with
// in-bounds parameters, its switch gate at 0 V (vref) and its summing
// nodes 600 mV from the rails, at 86 °C on demo18 (invented demo data),
// and a 2 µA tail: at low common mode the PMOS pair's common source falls
// below the 600 mV summing node its drains sit on, so its current runs
// backwards (about −1.8 µA at 0 V) and gm goes negative.
func unphysicalDesign(t *testing.T) *objectives.Design {
	t.Helper()
	d, err := objectives.ReadDesign("cs.yaml", []byte("topology: current-switch\nprocess: demo18\nsupply: 1.8V\ntemperature: 86C\n"+
		"params: {vref: 0V, vhead: 600mV, itail: 2uA}\n"), t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestUnphysicalSweep: the sweep above is reported as unphysical, with
// where and what, by Evaluate and MeasureDesign alike, never as metrics.
func TestUnphysicalSweep(t *testing.T) {
	d := unphysicalDesign(t)
	_, err := objectives.Evaluate(d)
	var ue *objectives.UnphysicalError
	if !errors.As(err, &ue) {
		t.Fatalf("Evaluate: error %v, want an *UnphysicalError", err)
	}
	if _, err2 := objectives.MeasureDesign(d); err2 == nil || err2.Error() != err.Error() {
		t.Errorf("MeasureDesign: %v, want the same error as Evaluate's", err2)
	}
	if len(ue.Findings) != 2 || ue.Findings[0].Quantity != "i_p" || ue.Findings[1].Quantity != "gm" {
		t.Fatalf("findings %+v, want i_p then gm", ue.Findings)
	}
	ip := ue.Findings[0]
	// Where the PMOS pair runs backwards: from the bottom of the sweep,
	// worst at vcm = 0, µA-level (of a 2 µA tail), far beyond any solver
	// tolerance (1e-6 relative).
	if ip.From != 0 || ip.WorstVCM != 0 || !(ip.Worst < -0.5e-6 && ip.Worst > -2e-6) || ip.Points < 10 || ip.To >= 0.9 {
		t.Errorf("i_p finding %+v, want i_p ≈ −1.8 µA from vcm = 0 over the lower part of the sweep", ip)
	}
	if ue.VCM() != 0 || ue.Total != 181 {
		t.Errorf("VCM() = %g, total %d; want 0 V of 181 points", ue.VCM(), ue.Total)
	}
	msg := err.Error()
	for _, s := range []string{"current-switch on demo18", "unphysical result at vcm = 0V", "PMOS pair's current is reversed",
		"out of headroom", "gm is negative", "of 181 points"} {
		if !strings.Contains(msg, s) {
			t.Errorf("message %q does not say %q", msg, s)
		}
	}
	if strings.Contains(msg, "falls to zero") {
		t.Errorf("message %q calls a negative gm zero", msg)
	}
	// With the default 20 µA tail, the same bias is physical.
	d.Params["itail"] = 20e-6
	if _, err := objectives.Evaluate(d); err != nil {
		t.Errorf("20 µA tail: %v", err)
	}
}

// TestCheckPhysicalTolerance: a pair current or gm below zero by less
// than the solver's tolerance (1e-6 of the sweep's largest value plus
// 1e-12) counts as zero; beyond it, it is unphysical at that point.
func TestCheckPhysicalTolerance(t *testing.T) {
	d := design(t, "complementary", nil)
	ev := evaluate(t, d)
	c := ev.Stage.Circuit
	ip := c.ProbeIndex(topologies.ProbeIP)
	in := c.ProbeIndex(topologies.ProbeIN)
	var iMax, gMax float64
	for i := range ev.Result.VCM {
		iMax = math.Max(iMax, math.Abs(ev.Result.Probe[in][i])+math.Abs(ev.Result.Probe[ip][i]))
		gMax = math.Max(gMax, math.Abs(ev.Result.GM[i]))
	}
	iTol, gTol := 1e-6*iMax+1e-12, 1e-6*gMax+1e-12
	const k = 7
	tests := []struct {
		name  string
		set   func(r *sim.Result)
		found string // "" for physical
	}{
		{"as solved", func(*sim.Result) {}, ""},
		{"i_p within tolerance", func(r *sim.Result) { r.Probe[ip][k] = -0.5 * iTol }, ""},
		{"i_p beyond tolerance", func(r *sim.Result) { r.Probe[ip][k] = -2 * iTol }, "i_p"},
		{"i_n beyond tolerance", func(r *sim.Result) { r.Probe[in][k] = -2 * iTol }, "i_n"},
		{"gm within tolerance", func(r *sim.Result) { r.GM[k] = -0.5 * gTol }, ""},
		{"gm beyond tolerance", func(r *sim.Result) { r.GM[k] = -2 * gTol }, "gm"},
	}
	for _, tt := range tests {
		r := *ev.Result
		r.GM = append([]float64(nil), ev.Result.GM...)
		r.Probe = make([][]float64, len(ev.Result.Probe))
		for j, p := range ev.Result.Probe {
			r.Probe[j] = append([]float64(nil), p...)
		}
		tt.set(&r)
		err := objectives.CheckPhysical(ev.Stage, &r)
		if tt.found == "" {
			if err != nil {
				t.Errorf("%s: %v", tt.name, err)
			}
			continue
		}
		var ue *objectives.UnphysicalError
		if !errors.As(err, &ue) || len(ue.Findings) != 1 || ue.Findings[0].Quantity != tt.found ||
			ue.Findings[0].Points != 1 || ue.VCM() != r.VCM[k] {
			t.Errorf("%s: error %v, want one %s finding at vcm = %g V", tt.name, err, tt.found, r.VCM[k])
		}
	}
}

// TestTemperatureCardsHold: a temperature at which a card has no valid
// instance is bad input. Under the SPICE level-1 law PHI(T) ≈ (T/Tnom)·
// (PHI − Eg) + Eg (ngspice's mos1temp.c; Eg ≈ 1.12 V) falls below zero
// when a lightly doped card (phi 0.4 V) is heated far above its tnom: the
// channel turns intrinsic. The error is at the temperature when the file
// writes one, else at the process's tnom.
func TestTemperatureCardsHold(t *testing.T) {
	proc := "model: level1\ntnom: 200K\nnmos: {vto: 0.45V, kp: 280uA/V2, phi: 0.4V}\npmos: {vto: -0.45V, kp: 70uA/V2}\n"
	tests := []struct {
		name, text  string
		file, field string
		line        int
		given       string
	}{
		{"design at 226C", "topology: n-pair\nprocess: proc.yaml\nsupply: 1.8V\ntemperature: 226C\n", "", "temperature", 4, "226C"},
		{"design at the default 27C", "topology: n-pair\nprocess: proc.yaml\nsupply: 1.8V\n", "proc.yaml", "tnom", 2, "200K"},
	}
	for _, tt := range tests {
		dir := t.TempDir()
		err := readWithProcess(proc, readDesign)("d.yaml", []byte(tt.text), dir)
		file := "d.yaml"
		if tt.file != "" {
			file = filepath.Join(dir, tt.file)
		}
		want := fmt.Sprintf("%s:%d: %s: got %q, want ", file, tt.line, tt.field, tt.given)
		if err == nil || !strings.HasPrefix(err.Error(), want) || !strings.Contains(err.Error(), "PHI at") {
			t.Errorf("%s: error %v, want it to start %q and name PHI", tt.name, err, want)
		}
	}
	// At its own tnom the card holds.
	if err := readWithProcess(proc, readDesign)("d.yaml", []byte("topology: n-pair\nprocess: proc.yaml\nsupply: 1.8V\ntemperature: 200K\n"), t.TempDir()); err != nil {
		t.Errorf("at tnom: %v", err)
	}
}
