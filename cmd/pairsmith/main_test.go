package main

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"pairsmith/sim"
)

// designsDir holds the demo designs, one per family.
const designsDir = "../../testdata/designs"

// runCmd runs the program in-process and returns its exit code, stdout
// and stderr.
func runCmd(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var o, e bytes.Buffer
	code = run(args, &o, &e)
	return code, o.String(), e.String()
}

func firstLine(s string) string {
	line, _, _ := strings.Cut(s, "\n")
	return line
}

// writeFile writes a file in dir and returns its path.
func writeFile(t *testing.T, dir, name, text string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// goodDesign is a valid design file; the bad-input cases each change one
// thing in it.
const goodDesign = `topology: current-switch
process: demo18
supply: 1.8V
temperature: 27C
sweep: {low: 0V, high: 1.8V, step: 10mV}
params:
  wn: 20um
  itail: 20uA
`

// goodProcess is a valid level-1 process file (invented demo numbers).
const goodProcess = `name: mine
model: level1
tnom: 27C
nmos: {vto: 0.45V, kp: 280uA/V2, gamma: 0.5V^0.5, phi: 0.8V, lambda: 0.05/V}
pmos: {vto: -0.45V, kp: 70uA/V2, gamma: 0.45V^0.5, phi: 0.8V, lambda: 0.06/V}
`

func TestGoodDesignEvaluates(t *testing.T) {
	// The base of the bad-input table must itself be good, or the table
	// would pass for the wrong reason.
	dir := t.TempDir()
	d := writeFile(t, dir, "design.yaml", goodDesign)
	writeFile(t, dir, "mine.yaml", goodProcess)
	for _, args := range [][]string{
		{"eval", d},
		{"netlist", d},
		{"eval", writeFile(t, dir, "withproc.yaml", strings.Replace(goodDesign, "process: demo18", "process: mine.yaml", 1))},
	} {
		if code, _, stderr := runCmd(t, args...); code != exitOK {
			t.Errorf("%v: exit %d, stderr %q", args, code, stderr)
		}
	}
}

// TestBadInput runs malformed design and process files through the
// program. The contract (issue 2 and docs/files.md#bad-input): exit code 2 and one
// first line on stderr naming the file, the line and the field, with what
// was given and what was wanted.
func TestBadInput(t *testing.T) {
	dir := t.TempDir()
	writeFile(t, dir, "badproc.yaml", strings.Replace(goodProcess, "vto: -0.45V", "vto: -0.45A", 1))
	if err := os.Mkdir(filepath.Join(dir, "adir"), 0o755); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name    string
		old     string // replaced in goodDesign
		new     string
		file    string // file the first line must name; "" for design.yaml
		line    int    // 0: no line (the file cannot be read)
		field   string // "" for a file-level error
		contain []string
	}{
		{"wrong unit", "wn: 20um", "wn: 20uV", "", 7, "params.wn", []string{`"20uV"`, "length"}},
		{"malformed number", "supply: 1.8V", "supply: 1..8V", "", 3, "supply", []string{`"1..8V"`, "voltage"}},
		{"unknown key, near miss", "supply: 1.8V", "supply: 1.8V\nsupplly: 1.8V", "", 4, "supplly", []string{`did you mean "supply"`}},
		{"unknown param, near miss", "itail: 20uA", "itial: 20uA", "", 8, "params.itial", []string{`did you mean "itail"`}},
		{"missing required field", "supply: 1.8V\n", "", "", 1, "supply", []string{"missing"}},
		{"unknown topology", "topology: current-switch", "topology: curent-switch", "", 1, "topology", []string{`"curent-switch"`, `"current-switch"`}},
		{"unknown process", "process: demo18", "process: demo81", "", 2, "process", []string{`"demo81"`, "demo18"}},
		{"param out of bounds", "itail: 20uA", "itail: 5mA", "", 8, "params.itail", []string{`"5mA"`, "1mA"}},
		{"low above high", "low: 0V, high: 1.8V", "low: 1.5V, high: 0.5V", "", 5, "sweep.high", []string{`"0.5V"`, "low below high"}},
		{"negative step", "step: 10mV", "step: -10mV", "", 5, "sweep.step", []string{`"-10mV"`, "above 0"}},
		{"temperature as a voltage", "temperature: 27C", "temperature: 27V", "", 4, "temperature", []string{`"27V"`, "temperature"}},
		{"YAML syntax error", "wn: 20um", "wn: [20um", "", -1, "", []string{"YAML"}},
		{"bad value in a process file", "process: demo18", "process: badproc.yaml", "badproc.yaml", 5, "pmos.vto", []string{`"-0.45A"`, "voltage"}},
		{"process path is a directory", "process: demo18", "process: adir", "", 2, "process", []string{`"adir"`}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			text := strings.Replace(goodDesign, tc.old, tc.new, 1)
			if text == goodDesign {
				t.Fatalf("case does not change the design (no %q)", tc.old)
			}
			path := writeFile(t, dir, "design.yaml", text)
			file := path
			if tc.file != "" {
				file = filepath.Join(dir, tc.file)
			}
			for _, cmd := range []string{"eval", "netlist"} {
				code, stdout, stderr := runCmd(t, cmd, path)
				if code != exitBadInput {
					t.Errorf("%s: exit %d, want %d; stderr %q", cmd, code, exitBadInput, stderr)
				}
				if stdout != "" {
					t.Errorf("%s: wrote %q on stdout for bad input", cmd, stdout)
				}
				first := firstLine(stderr)
				want := "pairsmith: " + file + ":"
				if tc.line > 0 {
					want = fmt.Sprintf("pairsmith: %s:%d: ", file, tc.line)
				}
				if !strings.HasPrefix(first, want) {
					t.Errorf("%s: first line %q, want it to start %q", cmd, first, want)
				}
				if tc.line < 0 && !strings.Contains(first, ".yaml:") {
					t.Errorf("%s: first line %q names no line", cmd, first)
				}
				if tc.field != "" && !strings.Contains(first, ": "+tc.field+": ") {
					t.Errorf("%s: first line %q does not name field %q", cmd, first, tc.field)
				}
				for _, c := range tc.contain {
					if !strings.Contains(first, c) {
						t.Errorf("%s: first line %q does not say %q", cmd, first, c)
					}
				}
			}
		})
	}
}

// TestUnreadableFiles: a design path that cannot be read is bad input
// and the error names it (issue 2: exit 2).
func TestUnreadableFiles(t *testing.T) {
	dir := t.TempDir()
	for _, path := range []string{filepath.Join(dir, "nothere.yaml"), dir} {
		for _, cmd := range []string{"eval", "netlist"} {
			code, _, stderr := runCmd(t, cmd, path)
			if code != exitBadInput {
				t.Errorf("%s %s: exit %d, want %d", cmd, path, code, exitBadInput)
			}
			if first := firstLine(stderr); !strings.HasPrefix(first, "pairsmith: design "+path+": ") {
				t.Errorf("%s %s: first line %q does not name the file", cmd, path, first)
			}
		}
	}
}

// TestUsageErrors: bad flags and arguments exit with 2, our message first
// and the usage after it (issue 2; cobra's own printing silenced).
func TestUsageErrors(t *testing.T) {
	good := filepath.Join(designsDir, "current-switch.yaml")
	tests := []struct {
		args  []string
		first string
	}{
		{[]string{"eval"}, "pairsmith: eval: want one design file (DESIGN.yaml), got 0 arguments"},
		{[]string{"eval", good, good}, "pairsmith: eval: want one design file (DESIGN.yaml), got 2 arguments"},
		{[]string{"eval", good, "--bogus"}, "pairsmith: unknown flag: --bogus"},
		{[]string{"netlist", good, "--dc"}, "pairsmith: --dc needs --testbench"},
		{[]string{"topologies", "extra"}, `pairsmith: unknown command "extra" for "pairsmith topologies"`},
		{[]string{"frob"}, `pairsmith: unknown command "frob" for "pairsmith"`},
	}
	for _, tc := range tests {
		code, stdout, stderr := runCmd(t, tc.args...)
		if code != exitBadInput {
			t.Errorf("%v: exit %d, want %d", tc.args, code, exitBadInput)
		}
		if first := firstLine(stderr); first != tc.first {
			t.Errorf("%v: first line %q, want %q", tc.args, first, tc.first)
		}
		if !strings.Contains(stderr, "Usage:") {
			t.Errorf("%v: no usage after a flag error: %q", tc.args, stderr)
		}
		if stdout != "" {
			t.Errorf("%v: stdout %q", tc.args, stdout)
		}
	}
}

// TestHelp: help is not an error.
func TestHelp(t *testing.T) {
	for _, args := range [][]string{{"--help"}, {"eval", "--help"}, {"help", "netlist"}} {
		code, stdout, _ := runCmd(t, args...)
		if code != exitOK || !strings.Contains(stdout, "Usage:") {
			t.Errorf("%v: exit %d, stdout %q", args, code, stdout)
		}
	}
}

// TestExitCodes checks how errors from the work map to exit codes and
// that a solver failure is reported as one, never as numbers (issue 2:
// "a point that does not converge is an error that names the point").
func TestExitCodes(t *testing.T) {
	conv := &sim.ConvergenceError{Circuit: "zener on demo18 at 1.8 V, 27C", VCM: 0.42, VID: 0, Reason: "Newton, gmin and source stepping failed"}
	tests := []struct {
		err   error
		code  int
		first string
	}{
		{&runError{fmt.Errorf("eval d.yaml: sweep: %w", conv)}, exitFailed,
			"pairsmith: eval d.yaml: sweep: zener on demo18 at 1.8 V, 27C: no DC solution at vcm = 0.42 V, vid = 0 V: Newton, gmin and source stepping failed"},
		{&runError{errors.New("write output: disk full")}, exitFailed, "pairsmith: write output: disk full"},
		{&runError{badInput("design x.yaml: %w", os.ErrNotExist)}, exitBadInput, "pairsmith: design x.yaml: file does not exist"},
		{errors.New("unknown flag: --x"), exitBadInput, "pairsmith: unknown flag: --x"},
	}
	for _, tc := range tests {
		var b bytes.Buffer
		if code := reportError(&b, nil, tc.err); code != tc.code {
			t.Errorf("%v: exit %d, want %d", tc.err, code, tc.code)
		}
		if first := firstLine(b.String()); first != tc.first {
			t.Errorf("first line %q, want %q", first, tc.first)
		}
	}
}
