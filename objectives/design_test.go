package objectives_test

import (
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"pairsmith/objectives"
	"pairsmith/sim"
	"pairsmith/topologies"
	"pairsmith/units"
)

// TestReadDesign checks that a full design file gives the values written,
// with units parsed as docs/files.md#quantities-and-units says (SI prefixes; a temperature in °C
// is kelvin − 273.15, SI brochure 9th ed. §2.3.1).
func TestReadDesign(t *testing.T) {
	text := `topology: current-switch
process: demo18-l1
supply: 1.8V
temperature: -40C
sweep: {low: 0.2V, high: 1.6V, step: 5mV}
params:
  wn: 20um
  ln: 1.5 um
  wp: 80µm
  itail: 30uA
  vref: 1.0V
  ratio: 1.5
  kbias: 2
  vhead: 250mV
`
	d, err := objectives.ReadDesign("cs.yaml", []byte(text), "")
	if err != nil {
		t.Fatal(err)
	}
	if d.Topology != "current-switch" || d.ProcessRef != "demo18-l1" || d.Process == nil || d.Process.Name != "demo18-l1" {
		t.Errorf("topology %q, process %q (%v)", d.Topology, d.ProcessRef, d.Process)
	}
	// Each value is the float64 nearest the decimal written, read with
	// one rounding, so it equals the Go literal of the same decimal.
	checks := []struct {
		name      string
		got, want float64
	}{
		{"supply", d.Supply, 1.8},
		{"temperature", d.TempK, 233.15}, // −40 °C = 233.15 K
		{"sweep.low", d.Sweep.Low, 0.2},
		{"sweep.high", d.Sweep.High, 1.6},
		{"sweep.step", d.Sweep.Step, 5e-3},
		{"sweep.vid", d.Sweep.VID, 0},
		{"wn", d.Params["wn"], 20e-6},
		{"ln", d.Params["ln"], 1.5e-6},
		{"wp", d.Params["wp"], 80e-6},
		{"itail", d.Params["itail"], 30e-6},
		{"vref", d.Params["vref"], 1.0},
		{"ratio", d.Params["ratio"], 1.5},
		{"kbias", d.Params["kbias"], 2},
		{"vhead", d.Params["vhead"], 0.25},
	}
	for _, c := range checks {
		if c.got != c.want {
			t.Errorf("%s = %.17g, want %.17g", c.name, c.got, c.want)
		}
	}
	fam, _ := topologies.Lookup("current-switch")
	if len(d.Params) != len(fam.Params()) {
		t.Errorf("%d params, want every one of the family's %d", len(d.Params), len(fam.Params()))
	}
	cond := d.Conditions
	if cond.Process != d.Process || cond.Supply != 1.8 || cond.TempK != 233.15 {
		t.Errorf("Conditions = %+v", cond)
	}
}

// TestReadDesignDefaults checks the defaults of docs/files.md#design-file: temperature
// 27C (300.15 K), the sweep rail to rail in 10 mV steps, each missing sweep
// bound at its rail, and every parameter left out at the family's default.
func TestReadDesignDefaults(t *testing.T) {
	tests := []struct {
		name   string
		text   string
		supply float64
		sweep  sim.SweepSpec
		given  topologies.Values
		tempK  float64
		topo   string
	}{
		{name: "no temperature, no sweep, no params", topo: "n-pair",
			text:   "topology: n-pair\nprocess: demo18\nsupply: 1.8V\n",
			supply: 1.8, sweep: sim.SweepSpec{Low: 0, High: 1.8, Step: 0.01}, tempK: 300.15},
		{name: "bare temperature is celsius", topo: "p-pair",
			text:   "topology: p-pair\nprocess: demo33\nsupply: 3.3\ntemperature: 85\nparams: {wp: 100um}\n",
			supply: 3.3, sweep: sim.SweepSpec{Low: 0, High: 3.3, Step: 0.01}, tempK: 358.15,
			given: topologies.Values{"wp": 100e-6}},
		{name: "kelvin temperature, only the step", topo: "zener",
			text:   "topology: zener\nprocess: demo18\nsupply: 2.5V\ntemperature: 300K\nsweep: {step: 2mV}\n",
			supply: 2.5, sweep: sim.SweepSpec{Low: 0, High: 2.5, Step: 0.002}, tempK: 300},
		{name: "only low", topo: "mirror-1to3",
			text:   "topology: mirror-1to3\nprocess: demo18\nsupply: 1.8V\nsweep: {low: 300mV}\nparams:\n  vrefn: 0.7\n  wmp: 25um\n",
			supply: 1.8, sweep: sim.SweepSpec{Low: 0.3, High: 1.8, Step: 0.01}, tempK: 300.15,
			given: topologies.Values{"vrefn": 0.7, "wmp": 25e-6}},
		{name: "only high", topo: "sqrt-bias",
			text:   "topology: sqrt-bias\nprocess: demo18\nsupply: 1.8V\nsweep: {high: 1.2V}\n",
			supply: 1.8, sweep: sim.SweepSpec{Low: 0, High: 1.2, Step: 0.01}, tempK: 300.15},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			d, err := objectives.ReadDesign("d.yaml", []byte(tt.text), "")
			if err != nil {
				t.Fatal(err)
			}
			if d.Topology != tt.topo || d.Supply != tt.supply || d.TempK != tt.tempK || d.Sweep != tt.sweep {
				t.Errorf("got %s, supply %g, %g K, sweep %+v; want %s, %g, %g K, %+v",
					d.Topology, d.Supply, d.TempK, d.Sweep, tt.topo, tt.supply, tt.tempK, tt.sweep)
			}
			fam, err := d.Family()
			if err != nil {
				t.Fatal(err)
			}
			if len(d.Params) != len(fam.Params()) {
				t.Errorf("%d params, want the family's %d", len(d.Params), len(fam.Params()))
			}
			for _, p := range fam.Params() {
				want := p.Default
				if g, ok := tt.given[p.Name]; ok {
					want = g
				}
				if got, ok := d.Params[p.Name]; !ok || got != want {
					t.Errorf("%s = %g (present %v), want %g", p.Name, got, ok, want)
				}
			}
		})
	}
}

// randomDesign draws a design of family f with every parameter, the
// supply, temperature and sweep at random within their bounds (log
// parameters log-uniform), at full float64 precision.
func randomDesign(r *rand.Rand, f topologies.Family) *objectives.Design {
	v := topologies.Values{}
	for _, p := range f.Params() {
		v[p.Name] = p.FromUnit(r.Float64())
	}
	supply := 0.5 + r.Float64()*19.5
	low := -supply + r.Float64()*2*supply
	high := low + (2*supply-low)*(0.01+0.99*r.Float64())
	step := (high - low) / (10 + r.Float64()*1e4)
	temp := 200 + r.Float64()*300
	if r.IntN(3) == 0 {
		temp = math.Round(temp*100) / 100 // a value with a short °C form
	}
	return &objectives.Design{
		Topology: f.Name(), ProcessRef: "demo18-l1", Conditions: topologies.Conditions{Supply: supply, TempK: temp},
		Sweep:  sim.SweepSpec{Low: low, High: high, Step: step},
		Params: v,
	}
}

// newRand returns the tests' seeded source of random designs.
func newRand() *rand.Rand { return rand.New(rand.NewPCG(20240611, 7)) }

// sameDesign reports the first difference between two designs' values,
// comparing floats bit for bit.
func sameDesign(a, b *objectives.Design) string {
	same := func(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) }
	switch {
	case a.Topology != b.Topology:
		return "topology " + a.Topology + " vs " + b.Topology
	case a.ProcessRef != b.ProcessRef:
		return "process " + a.ProcessRef + " vs " + b.ProcessRef
	case !same(a.Supply, b.Supply):
		return "supply"
	case !same(a.TempK, b.TempK):
		return "temperature"
	case !same(a.Sweep.Low, b.Sweep.Low) || !same(a.Sweep.High, b.Sweep.High) ||
		!same(a.Sweep.Step, b.Sweep.Step) || !same(a.Sweep.VID, b.Sweep.VID):
		return "sweep"
	case len(a.Params) != len(b.Params):
		return "number of params"
	}
	for k, x := range a.Params {
		if y, ok := b.Params[k]; !ok || !same(x, y) {
			return "param " + k
		}
	}
	return ""
}

// TestFormatRoundTrip checks that Format writes a file that ReadDesign
// reads back to the same values bit for bit (the contract of docs/files.md#design-file:
// `run` writes designs that `eval` accepts unchanged), for random
// in-bounds designs of every family and for the demo designs.
func TestFormatRoundTrip(t *testing.T) {
	r := newRand()
	for _, f := range topologies.All() {
		t.Run(f.Name(), func(t *testing.T) {
			for range 200 {
				d := randomDesign(r, f)
				text := d.Format()
				back, err := objectives.ReadDesign("round.yaml", text, "")
				if err != nil {
					t.Fatalf("Format output does not read back: %v\n%s", err, text)
				}
				if diff := sameDesign(d, back); diff != "" {
					t.Fatalf("read back differs in %s\n%s\nwrote %+v\nread  %+v", diff, text, d, back)
				}
			}
		})
	}
	paths, err := filepath.Glob("../testdata/designs/*.yaml")
	if err != nil || len(paths) == 0 {
		t.Fatalf("demo designs: %v (%d found)", err, len(paths))
	}
	for _, p := range paths {
		t.Run(filepath.Base(p), func(t *testing.T) {
			d, err := objectives.LoadDesign(p)
			if err != nil {
				t.Fatal(err)
			}
			back, err := objectives.ReadDesign("round.yaml", d.Format(), filepath.Dir(p))
			if err != nil {
				t.Fatal(err)
			}
			if diff := sameDesign(d, back); diff != "" {
				t.Errorf("read back differs in %s\n%s", diff, d.Format())
			}
		})
	}
}

// TestFormatProcessPath checks the round trip for a design whose process is
// a file given by a path, including paths that plain YAML would misread
// unless quoted: a " #" starts a comment and ": " a mapping (YAML 1.2
// spec, §6.6 and §7.3.3; from memory). A user's process directory may
// well hold such names.
func TestFormatProcessPath(t *testing.T) {
	data, err := os.ReadFile("../sim/device/processes/demo18-l1.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"proc.yaml", "my process.yaml", "proc #2.yaml", "run: 3.yaml"} {
		t.Run(name, func(t *testing.T) {
			dir := t.TempDir()
			if err := os.WriteFile(filepath.Join(dir, name), data, 0o644); err != nil {
				t.Fatal(err)
			}
			fam, _ := topologies.Lookup("n-pair")
			d := &objectives.Design{Topology: "n-pair", ProcessRef: name, Conditions: topologies.Conditions{Supply: 1.8, TempK: 300.15},
				Sweep: sim.SweepSpec{Low: 0, High: 1.8, Step: 0.01}, Params: topologies.Defaults(fam)}
			back, err := objectives.ReadDesign("round.yaml", d.Format(), dir)
			if err != nil {
				t.Fatalf("Format output does not read back: %v\n%s", err, d.Format())
			}
			if diff := sameDesign(d, back); diff != "" {
				t.Errorf("read back differs in %s\n%s", diff, d.Format())
			}
		})
	}
}

// TestLoadDesignRelativeProcess checks that a process path in a design file
// is relative to that file (docs/files.md#design-file).
func TestLoadDesignRelativeProcess(t *testing.T) {
	data, err := os.ReadFile("../sim/device/processes/demo33-l1.yaml")
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
	path := filepath.Join(dir, "d.yaml")
	if err := os.WriteFile(path, []byte("topology: n-pair\nprocess: procs/mine.yaml\nsupply: 3.3V\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	d, err := objectives.LoadDesign(path)
	if err != nil {
		t.Fatal(err)
	}
	if d.Process.Name != "demo33-l1" || d.ProcessRef != "procs/mine.yaml" {
		t.Errorf("process %q from %q", d.Process.Name, d.ProcessRef)
	}
}

// TestReadDesignErrors checks that bad designs give a *units.Error naming
// the file, the line and the field, what was given and what was wanted
// (docs/files.md#bad-input and the project rules for bad input).
func TestReadDesignErrors(t *testing.T) {
	const head = "topology: n-pair\nprocess: demo18\nsupply: 1.8V\n" // lines 1–3
	tests := []badYAML{
		{name: "unknown key with suggestion", text: head + "temprature: 27C\n",
			field: "temprature", line: 4, is: units.ErrUnknownField, msg: []string{`did you mean "temperature"`}},
		{name: "unknown key without suggestion", text: head + "budget: 1mW\n",
			field: "budget", line: 4, is: units.ErrUnknownField, msg: []string{"topology", "sweep", "params"}},
		{name: "missing topology", text: "process: demo18\nsupply: 1.8V\n",
			field: "topology", line: 1, is: units.ErrMissing},
		{name: "missing supply", text: "topology: n-pair\nprocess: demo18\n",
			field: "supply", line: 1, is: units.ErrMissing},
		{name: "unknown topology with suggestion", text: "topology: curent-switch\nprocess: demo18\nsupply: 1.8V\n",
			field: "topology", line: 1, given: "curent-switch", msg: []string{`did you mean "current-switch"`}},
		{name: "unknown topology", text: "topology: folded\nprocess: demo18\nsupply: 1.8V\n",
			field: "topology", line: 1, given: "folded", msg: []string{"n-pair", "sqrt-bias"}},
		{name: "bad process", text: "topology: n-pair\nprocess: demo81\nsupply: 1.8V\n",
			field: "process", line: 2, given: "demo81", is: fs.ErrNotExist, msg: []string{"demo18", "demo33-l1"}},
		{name: "supply 0", text: "topology: n-pair\nprocess: demo18\nsupply: 0V\n",
			field: "supply", line: 3, given: "0V", msg: []string{"from 450mV"}},
		{name: "supply in amperes", text: "topology: n-pair\nprocess: demo18\nsupply: 1.8A\n",
			field: "supply", line: 3, given: "1.8A", msg: []string{"voltage"}},
		{name: "temperature out of range", text: head + "temperature: 400C\n",
			field: "temperature", line: 4, given: "400C"},
		{name: "negative step", text: head + "sweep: {low: 0V, high: 1.8V, step: -10mV}\n",
			field: "sweep.step", line: 4, given: "-10mV", msg: []string{"above 0 V"}},
		{name: "negative step, block style", text: head + "sweep:\n  low: 0V\n  high: 1.8V\n  step: -10mV\n",
			field: "sweep.step", line: 7, given: "-10mV"},
		{name: "low above high", text: head + "sweep:\n  low: 1.2V\n  high: 0.8V\n",
			field: "sweep.high", line: 6, given: "0.8V", msg: []string{"low below high"}},
		{name: "low above the default high", text: head + "sweep:\n  low: 2V\n",
			field: "sweep.low", line: 5, given: "2V"},
		{name: "high above twice the supply", text: head + "sweep:\n  low: 0V\n  high: 4V\n",
			field: "sweep.high", line: 6, given: "4V"},
		{name: "low below minus the supply", text: head + "sweep:\n  low: -2V\n  high: 1.8V\n",
			field: "sweep.low", line: 5, given: "-2V"},
		{name: "unknown sweep key", text: head + "sweep: {low: 0V, hihg: 1.8V}\n",
			field: "sweep.hihg", line: 4, is: units.ErrUnknownField, msg: []string{`"high"`}},
		{name: "param out of bounds", text: head + "params:\n  wn: 20um\n  ln: 20um\n",
			field: "params.ln", line: 6, given: "20um", msg: []string{"180nm", "10um"}},
		{name: "param with wrong unit", text: head + "params:\n  itail: 20uV\n",
			field: "params.itail", line: 5, given: "20uV", msg: []string{"current"}},
		{name: "param of another family", text: head + "params:\n  wn: 20um\n  wp: 80um\n",
			field: "params.wp", line: 6, is: units.ErrUnknownField},
		{name: "params not a mapping", text: head + "params: 3\n",
			field: "params", line: 4},
		{name: "duplicate key", text: head + "supply: 3.3V\n",
			field: "supply", line: 4, is: units.ErrDuplicate},
	}
	checkBadYAML(t, tests, func(file string, data []byte, baseDir string) error {
		_, err := objectives.ReadDesign(file, data, baseDir)
		return err
	})
}
