package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The three files every case of TestBadInputTable starts from; each case
// changes some of them. Every value sits on its own line so that a case
// can name the line its error must point at.

// tableProcess is a level-1 process file (invented demo numbers, those
// of demo18-l1).
const tableProcess = `name: mine
model: level1
tnom: 27C
nmos:
  vto: 0.45V
  kp: 280uA/V2
  gamma: 0.5V^0.5
  phi: 0.8V
  lambda: 0.05/V
pmos:
  vto: -0.45V
  kp: 70uA/V2
  gamma: 0.45V^0.5
  phi: 0.8V
  lambda: 0.06/V
`

// tableDesign is a current switch on tableProcess.
const tableDesign = `topology: current-switch
process: proc.yaml
supply: 1.8V
temperature: 27C
sweep: {low: 0V, high: 1.8V, step: 10mV}
params:
  wn: 20um
  ln: 1um
  itail: 20uA
`

// tableSpec is a small search on tableProcess.
const tableSpec = `name: bad-input base
process: proc.yaml
supply: 1.8V
temperature: 27C
input_range: {low: 0.1V, high: 1.7V}
targets:
  gm_min: 100uS
  gm_ripple_max: 30%
topologies: [current-switch, complementary]
search: {evaluations: 40, seed: 1}
`

// edit replaces old by new in one of the three files ("proc", "design",
// "spec"); an old that is not there fails the case, so that no case
// passes because its edit did nothing.
type edit struct{ file, old, new string }

// badCase is one broken input: the edits, the command line (the words
// proc.yaml, design.yaml, spec.yaml and out stand for the files and an
// output directory in the case's directory), the exit code, and where
// the first line on stderr must point: "pairsmith: FILE:LINE: FIELD: …"
// for a file, or a prefix for a flag.
type badCase struct {
	name  string
	edits []edit
	args  []string
	code  int
	file  string   // "proc.yaml", "design.yaml", "spec.yaml"; "" for a flag or argument
	line  int      // the line named; 0 when the message names the file without a line
	field string   // the field named, "nmos.kp"; for a flag case, the prefix of the first line
	say   []string // texts the first line must hold
}

// Shorthands for the command lines of the table.
var (
	evalD    = []string{"eval", "design.yaml"}
	netlistD = []string{"netlist", "design.yaml"}
	runS     = []string{"run", "spec.yaml", "-o", "out"}
)

// procCases are broken process files; each is run through eval and
// netlist (a design on it) and run (a spec on it) by the table.
func procCases() []badCase {
	p := func(name, old, new string, line int, field string, say ...string) badCase {
		return badCase{name: name, edits: []edit{{"proc", old, new}}, code: exitBadInput,
			file: "proc.yaml", line: line, field: field, say: say}
	}
	// add puts a value on a new line after the nmos card's lambda (line 10).
	add := func(name, text string, field string, say ...string) badCase {
		return p(name, "  lambda: 0.05/V\n", "  lambda: 0.05/V\n  "+text+"\n", 10, field, say...)
	}
	return []badCase{
		// The issue's "exit 0 with absurd numbers" and "no line for bad
		// process values": each now refused at its line.
		p("kp 1e30", "  kp: 280uA/V2", "  kp: 1e30", 6, "nmos.kp", `got "1e30"`, "from 1uA/V2 to 5mA/V2"),
		add("bex 1000", "bex: 1000", "nmos.bex", `got "1000"`, "from -3 to 1.5"),
		add("tcv 1V/K, a typo for 1mV/K", "tcv: 1V/K", "nmos.tcv", `got "1V/K"`, "to 5mV/K"),
		p("lambda 1e6", "  lambda: 0.06/V", "  lambda: 1e6", 15, "pmos.lambda", `got "1e6"`, "to 2/V"),
		p("gamma 1e6", "  gamma: 0.5V^0.5", "  gamma: 1e6", 7, "nmos.gamma", `got "1e6"`, "to 4V^0.5"),
		p("vto 100V", "  vto: 0.45V", "  vto: 100V", 5, "nmos.vto", `got "100V"`, "from 50mV to 3V"),
		p("a tiny phi", "  phi: 0.8V\n  lambda: 0.06", "  phi: 1nV\n  lambda: 0.06", 14, "pmos.phi", `got "1nV"`, "from 400mV to 1.2V"),
		p("a huge tnom", "tnom: 27C", "tnom: 1e6", 3, "tnom", `got "1e6"`, "from -73.15C to 226.85C"),
		add("ld longer than any channel", "ld: 20um", "nmos.ld", `got "20um"`, "to 1um"),
		// Signs, units and the rest of the file's grammar.
		p("NMOS with a PMOS threshold", "  vto: 0.45V", "  vto: -0.45V", 5, "nmos.vto", "positive NMOS threshold"),
		p("PMOS with an NMOS threshold", "  vto: -0.45V", "  vto: 0.45V", 11, "pmos.vto", "negative PMOS threshold"),
		p("vto 450uV, a slip for 450mV", "  vto: 0.45V", "  vto: 450uV", 5, "nmos.vto", `got "450uV"`),
		p("kp zero", "  kp: 70uA/V2", "  kp: 0", 12, "pmos.kp", `got "0"`),
		p("kp without /V2", "  kp: 280uA/V2", "  kp: 280uA", 6, "nmos.kp", `got "280uA"`, "A/V²"),
		p("vto NaN", "  vto: 0.45V", "  vto: .nan", 5, "nmos.vto", "not a finite number"),
		add("negative tcv", "tcv: -1mV/K", "nmos.tcv", "magnitude"),
		add("bex -10", "bex: -10", "nmos.bex", `got "-10"`),
		p("negative lambda", "  lambda: 0.05/V", "  lambda: -0.05/V", 9, "nmos.lambda", `got "-0.05/V"`),
		p("unknown model", "model: level1", "model: bsim4", 2, "model", `got "bsim4"`, "level1 or ekv"),
		p("unknown card field", "  gamma: 0.5V^0.5", "  gama: 0.5V^0.5", 7, "nmos.gama", `did you mean "gamma"`),
		p("kp missing", "  kp: 70uA/V2\n", "", 10, "pmos.kp", "required field missing"),
		p("duplicate field", "  phi: 0.8V\n  lambda: 0.05/V", "  phi: 0.8V\n  phi: 0.7V\n  lambda: 0.05/V", 9, "nmos.phi", "duplicate field"),
		p("card not a mapping", "pmos:\n  vto: -0.45V\n  kp: 70uA/V2\n  gamma: 0.45V^0.5\n  phi: 0.8V\n  lambda: 0.06/V\n", "pmos: -0.45V\n",
			10, "pmos", "want a mapping"),
	}
}

// designCases are broken design files, each run through eval and netlist.
func designCases() []badCase {
	d := func(name, old, new string, line int, field string, say ...string) badCase {
		return badCase{name: name, edits: []edit{{"design", old, new}}, code: exitBadInput,
			file: "design.yaml", line: line, field: field, say: say}
	}
	return []badCase{
		// The cases.
		d("supply 1nV", "supply: 1.8V", "supply: 1nV", 3, "supply", `got "1nV"`, "from 450mV", "threshold"),
		d("supply below the threshold", "supply: 1.8V", "supply: 300mV", 3, "supply", `got "300mV"`),
		d("supply 100V", "supply: 1.8V", "supply: 100V", 3, "supply", `got "100V"`, "to 20V"),
		d("sweep step larger than the range", "step: 10mV}", "step: 2V}", 5, "sweep.step", `got "2V"`, "no larger than the range (1.8V)"),
		d("sweep narrower than the default step", "sweep: {low: 0V, high: 1.8V, step: 10mV}", "sweep: {low: 0.9V, high: 0.9000001V}",
			5, "sweep.high", `got "0.9000001V"`, "at least one step (10mV) above low"),
		{name: "ld at least half of ln, ln written", code: exitBadInput,
			edits: []edit{{"proc", "  lambda: 0.05/V\n", "  lambda: 0.05/V\n  ld: 500nm\n"}},
			file:  "design.yaml", line: 8, field: "params.ln", say: []string{`got "1um"`, "2 × 500nm = 1um", "proc.yaml:10: nmos.ld is 500nm"}},
		{name: "ld longer than L, no length written", code: exitBadInput,
			edits: []edit{{"proc", "  lambda: 0.06/V\n", "  lambda: 0.06/V\n  ld: 700nm\n"}, {"design", "  ln: 1um\n", ""}},
			file:  "proc.yaml", line: 16, field: "pmos.ld", say: []string{`got "700nm"`, "lp = 1um", "so below 500nm"}},
		{name: "temperature at which the card does not hold", code: exitBadInput,
			edits: []edit{{"proc", "  phi: 0.8V\n  lambda: 0.05", "  phi: 0.4V\n  lambda: 0.05"}, {"design", "temperature: 27C", "temperature: 226C"}},
			file:  "design.yaml", line: 4, field: "temperature", say: []string{`got "226C"`, "nmos card", "PHI at 499.15 K"}},
		// The rest of a design file.
		d("wrong unit", "wn: 20um", "wn: 20uV", 7, "params.wn", `got "20uV"`, "length"),
		d("unknown parameter", "itail: 20uA", "itial: 20uA", 9, "params.itial", `did you mean "itail"`),
		d("another family's parameter", "itail: 20uA", "lz: 2um", 9, "params.lz", "lz is a parameter of zener"),
		d("parameter out of bounds", "itail: 20uA", "itail: 5mA", 9, "params.itail", `got "5mA"`, "1mA"),
		d("temperature out of range", "temperature: 27C", "temperature: 400C", 4, "temperature", `got "400C"`),
		d("temperature as a voltage", "temperature: 27C", "temperature: 27V", 4, "temperature", `got "27V"`),
		d("unknown topology", "topology: current-switch", "topology: curent-switch", 1, "topology", `did you mean "current-switch"`),
		d("supply missing", "supply: 1.8V\n", "", 1, "supply", "required field missing"),
		d("low above high", "low: 0V, high: 1.8V", "low: 1.5V, high: 0.5V", 5, "sweep.high", "low below high"),
		d("negative step", "step: 10mV", "step: -10mV", 5, "sweep.step", `got "-10mV"`),
		d("unknown process", "process: proc.yaml", "process: demo81", 2, "process", `"demo81"`, "demo18"),
		d("sweep not a mapping", "sweep: {low: 0V, high: 1.8V, step: 10mV}", "sweep: 10mV", 5, "sweep", "want a mapping"),
		d("params a list", "params:\n  wn: 20um\n  ln: 1um\n  itail: 20uA\n", "params: [20um]\n", 6, "params", "want a mapping"),
		d("empty supply", "supply: 1.8V", "supply:", 3, "supply", "empty"),
	}
}

// specCases are broken spec sheets, each run through run.
func specCases() []badCase {
	s := func(name, old, new string, line int, field string, say ...string) badCase {
		return badCase{name: name, edits: []edit{{"spec", old, new}}, args: runS, code: exitBadInput,
			file: "spec.yaml", line: line, field: field, say: say}
	}
	return []badCase{
		// The cases.
		s("supply 1nV", "supply: 1.8V", "supply: 1nV", 3, "supply", `got "1nV"`, "threshold"),
		s("supply 50V", "supply: 1.8V", "supply: 50V", 3, "supply", `got "50V"`),
		s("input range narrower than the default step", "input_range: {low: 0.1V, high: 1.7V}", "input_range: {low: 0.9V, high: 0.9000001V}",
			5, "input_range.high", `got "0.9000001V"`, "at least one step (10mV) above low"),
		s("step larger than the range", "high: 1.7V}", "high: 1.7V, step: 2V}", 5, "input_range.step", `got "2V"`, "no larger than the range (1.6V)"),
		{name: "ld at least half the shortest length the families allow", args: runS, code: exitBadInput,
			edits: []edit{{"proc", "  lambda: 0.05/V\n", "  lambda: 0.05/V\n  ld: 100nm\n"}},
			file:  "proc.yaml", line: 10, field: "nmos.ld", say: []string{`got "100nm"`, "180nm", "so below 90nm"}},
		// The rest of a spec sheet.
		s("ripple target 2000%", "gm_ripple_max: 30%", "gm_ripple_max: 20", 8, "targets.gm_ripple_max", `got "20"`, "1000%"),
		s("unknown target", "gm_min: 100uS", "gm_mn: 100uS", 7, "targets.gm_mn", `did you mean "gm_min"`),
		s("target of the wrong unit", "gm_min: 100uS", "gm_min: 100uA", 7, "targets.gm_min", "conductance"),
		s("negative budget", "evaluations: 40", "evaluations: -40", 10, "search.evaluations", `got "-40"`),
		s("bad time budget", "evaluations: 40", "time: soon", 10, "search.time", `got "soon"`),
		s("negative workers", "seed: 1}", "seed: 1, workers: -1}", 10, "search.workers", `got "-1"`),
		s("unknown family", "[current-switch, complementary]", "[current-switch, mirror-1to4]", 9, "topologies[1]", `"mirror-1to4"`),
		s("family twice", "[current-switch, complementary]", "[current-switch, current-switch]", 9, "topologies[1]", "each family once"),
		s("pareto axis twice", "topologies:", "pareto: [power, power]\ntopologies:", 9, "pareto[1]", "each axis once"),
		s("switchover outside the range", "gm_ripple_max: 30%", "gm_ripple_max: 30%\n  switchover: {at: 2V, tolerance: 0.1V}", 9,
			"targets.switchover.at", "within the input range"),
		s("zero switchover tolerance", "gm_ripple_max: 30%", "gm_ripple_max: 30%\n  switchover: {at: 0.9V, tolerance: 0V}", 9,
			"targets.switchover.tolerance", "above 0 V"),
		s("temperature out of range", "temperature: 27C", "temperature: 300C", 4, "temperature", `got "300C"`),
		s("range far below the rail", "low: 0.1V", "low: -5V", 5, "input_range.low", `got "-5V"`),
		s("a target at the top level", "topologies:", "power_max: 1mW\ntopologies:", 9, "power_max", "belongs under targets"),
		s("missing process file", "process: proc.yaml", "process: nothere.yaml", 2, "process", `"nothere.yaml"`),
	}
}

// flagCases are bad flags and arguments of every command: exit 2, the
// flag or argument named first.
func flagCases() []badCase {
	f := func(name string, args []string, first string) badCase {
		return badCase{name: name, args: args, code: exitBadInput, field: first}
	}
	return []badCase{
		f("run: no budget", append(runS[:4:4], "--evaluations", "0"), "pairsmith: --evaluations 0: want a whole number from 1"),
		f("run: budget too large", append(runS[:4:4], "--evaluations", "100000001"), "pairsmith: --evaluations 100000001: "),
		f("run: NaN time", append(runS[:4:4], "--time", "NaN"), `pairsmith: --time "NaN": `),
		f("run: negative time", append(runS[:4:4], "--time", "-5m"), `pairsmith: --time "-5m": `),
		f("run: negative workers", append(runS[:4:4], "--workers", "-1"), "pairsmith: --workers -1: "),
		f("run: seed not a number", append(runS[:4:4], "--seed", "abc"), `pairsmith: invalid argument "abc" for "--seed" flag`),
		f("run: no output directory", []string{"run", "spec.yaml"}, "pairsmith: run: want an output directory (-o DIR)"),
		f("run: two specs", []string{"run", "spec.yaml", "spec.yaml", "-o", "out"}, "pairsmith: run: want one spec sheet (SPEC.yaml), got 2 arguments"),
		f("run: unknown flag", append(runS[:4:4], "--bogus"), "pairsmith: unknown flag: --bogus"),
		f("eval: no design", []string{"eval"}, "pairsmith: eval: want one design file (DESIGN.yaml), got 0 arguments"),
		f("eval: plot of an unknown format", append(evalD[:2:2], "--plot", "gm.txt"), "pairsmith: plot file gm.txt: "),
		f("eval: --json=maybe", append(evalD[:2:2], "--json=maybe"), `pairsmith: invalid argument "maybe" for "--json" flag`),
		f("netlist: --dc without --testbench", append(netlistD[:2:2], "--dc"), "pairsmith: --dc needs --testbench"),
		f("netlist: two designs", []string{"netlist", "design.yaml", "design.yaml"}, "pairsmith: netlist: want one design file (DESIGN.yaml), got 2 arguments"),
		f("netlist: unknown flag", append(netlistD[:2:2], "--bogus"), "pairsmith: unknown flag: --bogus"),
		f("topologies: an argument", []string{"topologies", "extra"}, `pairsmith: unknown command "extra" for "pairsmith topologies"`),
		f("topologies: --json=7", []string{"topologies", "--json=7"}, `pairsmith: invalid argument "7" for "--json" flag`),
		f("unknown command", []string{"frob"}, `pairsmith: unknown command "frob" for "pairsmith"`),
	}
}

// TestBadInputTable runs broken process files, design files, spec sheets
// and flags of every command through the program. The contract (issue 7,
// and docs/files.md#bad-input): bad input exits 2, writes nothing on stdout, makes
// no output directory, and its first stderr line names the file, the
// line and the field, what was given and what was wanted.
func TestBadInputTable(t *testing.T) {
	var cases []badCase
	for _, c := range procCases() {
		// A broken process file is bad input whichever command reads it.
		for _, args := range [][]string{evalD, netlistD, runS} {
			cc := c
			cc.name = args[0] + ": " + c.name
			cc.args = args
			cases = append(cases, cc)
		}
	}
	for _, c := range designCases() {
		for _, args := range [][]string{evalD, netlistD} {
			cc := c
			cc.name = args[0] + ": " + c.name
			cc.args = args
			cases = append(cases, cc)
		}
	}
	cases = append(cases, specCases()...)
	cases = append(cases, flagCases()...)
	distinct := len(procCases()) + len(designCases()) + len(specCases()) + len(flagCases())
	if distinct < 60 {
		t.Fatalf("%d distinct broken inputs, want at least 60", distinct)
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			files := map[string]string{"proc": tableProcess, "design": tableDesign, "spec": tableSpec}
			for _, e := range c.edits {
				text := strings.Replace(files[e.file], e.old, e.new, 1)
				if text == files[e.file] {
					t.Fatalf("edit of %s does nothing (no %q)", e.file, e.old)
				}
				files[e.file] = text
			}
			for k, text := range files {
				writeFile(t, dir, k+".yaml", text)
			}
			args := make([]string, len(c.args))
			for i, a := range c.args {
				if a == "out" || strings.HasSuffix(a, ".yaml") {
					a = filepath.Join(dir, a)
				}
				args[i] = a
			}
			code, stdout, stderr := runCmd(t, args...)
			first := firstLine(stderr)
			if code != c.code {
				t.Errorf("exit %d, want %d; first line %q", code, c.code, first)
			}
			if stdout != "" {
				t.Errorf("stdout %q for bad input", stdout)
			}
			if _, err := os.Stat(filepath.Join(dir, "out")); err == nil {
				t.Error("the output directory was made for bad input")
			}
			want := c.field
			if c.file != "" {
				want = fmt.Sprintf("pairsmith: %s:%d: %s: ", filepath.Join(dir, c.file), c.line, c.field)
			}
			if !strings.HasPrefix(first, want) {
				t.Errorf("first line %q, want it to start %q", first, want)
			}
			for _, s := range c.say {
				if !strings.Contains(first, s) {
					t.Errorf("first line %q does not say %q", first, s)
				}
			}
		})
	}
}

// TestBadInputTableBase: the three files the table breaks are good as
// they are, so that every case fails for its own edit: the design
// evaluates and exports, the spec runs.
func TestBadInputTableBase(t *testing.T) {
	dir := t.TempDir()
	writeFile(t, dir, "proc.yaml", tableProcess)
	d := writeFile(t, dir, "design.yaml", tableDesign)
	s := writeFile(t, dir, "spec.yaml", tableSpec)
	for _, args := range [][]string{{"eval", d}, {"netlist", d}, {"run", s, "-o", filepath.Join(dir, "out")}} {
		if code, _, stderr := runCmd(t, args...); code != exitOK && code != exitInfeasible {
			t.Errorf("%v: exit %d: %s", args, code, stderr)
		}
	}
}

// TestUnphysicalEval is the negative-gm case, a current switch
// whose parameters are all within bounds (its switch gate at 0 V, its
// summing nodes 600 mV from the rails, 86 °C on demo18, a 2 µA tail):
// the PMOS pair's current runs backwards at the bottom of the range and
// gm goes negative. eval says so and exits 1 (a result that is no
// stage, not a bad input), printing no metrics and never calling it a
// ripple "falling to zero".
func TestUnphysicalEval(t *testing.T) {
	dir := t.TempDir()
	d := writeFile(t, dir, "cs.yaml", "topology: current-switch\nprocess: demo18\nsupply: 1.8V\ntemperature: 86C\n"+
		"params: {vref: 0V, vhead: 600mV, itail: 2uA}\n")
	for _, args := range [][]string{{"eval", d}, {"eval", "--json", d}} {
		code, stdout, stderr := runCmd(t, args...)
		first := firstLine(stderr)
		if code != exitFailed {
			t.Errorf("%v: exit %d, want %d; %q", args, code, exitFailed, first)
		}
		if stdout != "" {
			t.Errorf("%v: printed %q", args, stdout)
		}
		for _, s := range []string{"pairsmith: eval " + d + ": ", "unphysical result at vcm = 0V",
			"PMOS pair's current is reversed", "out of headroom", "gm is negative"} {
			if !strings.Contains(first, s) {
				t.Errorf("%v: first line %q does not say %q", args, first, s)
			}
		}
		if strings.Contains(stderr, "falls to zero") {
			t.Errorf("%v: %q calls a negative gm zero", args, stderr)
		}
	}
}
