package main

import (
	"bytes"
	"encoding/json"
	"flag"
	"fmt"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"gopkg.in/yaml.v3"

	"pairsmith/internal/ngspice"
	"pairsmith/objectives"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// demoDesigns are the demo design files: one per family on demo18, and
// two more (issue 2's level-1 and 3.3 V cases).
func demoDesigns() []string {
	var names []string
	for _, f := range topologies.All() {
		names = append(names, f.Name())
	}
	return append(names, "current-switch-l1", "complementary-33")
}

// evalJSON runs `eval --json` on a design and decodes the document
// generically, so that the test sees the keys as a script would.
func evalJSON(t *testing.T, path string) map[string]any {
	t.Helper()
	code, stdout, stderr := runCmd(t, "eval", "--json", path)
	if code != exitOK {
		t.Fatalf("eval --json %s: exit %d: %s", path, code, stderr)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatalf("eval --json %s: output does not parse: %v", path, err)
	}
	return doc
}

// update rewrites the demo designs from the families' defaults:
// go test ./cmd/pairsmith -run TestDemoDesigns -update
var update = flag.Bool("update", false, "rewrite testdata/designs from the family defaults")

// demoConditions returns the family, process and supply of a demo design.
func demoConditions(name string) (family, process string, supply float64) {
	switch name {
	case "current-switch-l1":
		return "current-switch", "demo18-l1", 1.8
	case "complementary-33":
		return "complementary", "demo33", 3.3
	}
	return name, "demo18", 1.8
}

// demoSizing is the sizing of a demo design that is not at its family's
// defaults. current-switch-l1: the defaults run the level-1 demo process's
// inputs and switch at an overdrive of about 45 mV, below the 4·U_T the
// square law needs (docs/buildable.md#level-1-validity), so it is re-sized
// from a search on demo18-l1 (rounded): every device in strong inversion
// where it carries its working current, every margin kept.
func demoSizing(name string) topologies.Values {
	if name == "current-switch-l1" {
		return topologies.Values{"wn": 18e-6, "ln": 1.3e-6, "wp": 68e-6, "lp": 1.15e-6, "itail": 90e-6,
			"wtp": 165e-6, "lt": 1e-6, "kbias": 6, "vhead": 0.215, "vref": 0.95, "ratio": 1.1,
			"wsw": 112e-6, "wm": 27e-6}
	}
	return nil
}

// demoParams returns the parameters of a demo design: the family's
// defaults with demoSizing over them.
func demoParams(name string, fam topologies.Family) topologies.Values {
	v := topologies.Defaults(fam)
	for k, x := range demoSizing(name) {
		v[k] = x
	}
	return v
}

// writeDemoDesign writes a demo design file at the family's defaults (or
// its demoSizing).
func writeDemoDesign(t *testing.T, name string) {
	t.Helper()
	family, process, supply := demoConditions(name)
	fam, err := topologies.Lookup(family)
	if err != nil {
		t.Fatal(err)
	}
	proc, err := device.ResolveProcess(process, ".")
	if err != nil {
		t.Fatal(err)
	}
	d := &objectives.Design{Topology: family, ProcessRef: process, Conditions: topologies.Conditions{Process: proc, Supply: supply, TempK: 27 + units.ZeroCelsius},
		Sweep:  sim.SweepSpec{Low: 0, High: supply, Step: 10e-3},
		Params: demoParams(name, fam)}
	at := "at its defaults"
	if demoSizing(name) != nil {
		at = "re-sized for the square law"
	}
	head := fmt.Sprintf("# Demo design: %s %s on the built-in %s process (invented demo data),\n"+
		"# %s, 27C, swept rail to rail in 10 mV steps.\n"+
		"# Every parameter is written out; `pairsmith topologies` says what each one does.\n",
		family, at, process, units.Format(supply, units.Volt))
	path := filepath.Join(designsDir, name+".yaml")
	if err := os.WriteFile(path, append([]byte(head), d.Format()...), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestDemoDesigns: every demo design file exists, writes every parameter
// of its family at the family default as units.Format writes it (so a
// designer sees every knob), and evaluates without error.
func TestDemoDesigns(t *testing.T) {
	for _, name := range demoDesigns() {
		t.Run(name, func(t *testing.T) {
			if *update {
				writeDemoDesign(t, name)
			}
			path := filepath.Join(designsDir, name+".yaml")
			data, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			var raw struct {
				Topology    string            `yaml:"topology"`
				Process     string            `yaml:"process"`
				Supply      string            `yaml:"supply"`
				Temperature string            `yaml:"temperature"`
				Sweep       map[string]string `yaml:"sweep"`
				Params      map[string]string `yaml:"params"`
			}
			if err := yaml.Unmarshal(data, &raw); err != nil {
				t.Fatal(err)
			}
			_, wantProc, supply := demoConditions(name)
			wantSupply := units.Format(supply, units.Volt)
			if raw.Process != wantProc || raw.Supply != wantSupply || raw.Temperature != "27C" {
				t.Errorf("process %q supply %q temperature %q, want %q %q 27C", raw.Process, raw.Supply, raw.Temperature, wantProc, wantSupply)
			}
			if raw.Sweep["low"] != "0V" || raw.Sweep["high"] != objectives.HighSupply || raw.Sweep["step"] != "10mV" {
				t.Errorf("sweep %v, want rail to rail in 10mV steps", raw.Sweep)
			}
			fam, err := topologies.Lookup(raw.Topology)
			if err != nil {
				t.Fatal(err)
			}
			if len(raw.Params) != len(fam.Params()) {
				t.Errorf("%d params written, family has %d", len(raw.Params), len(fam.Params()))
			}
			want := demoParams(name, fam)
			for _, p := range fam.Params() {
				if got, want := raw.Params[p.Name], p.Text(want[p.Name]); got != want {
					t.Errorf("params.%s = %q, want %q (the default, or demoSizing)", p.Name, got, want)
				}
			}
			doc := evalJSON(t, path)
			if doc["topology"] != raw.Topology {
				t.Errorf("topology %v, want %s", doc["topology"], raw.Topology)
			}
		})
	}
}

// TestEvalJSON checks the document of docs/files.md#eval-json and the metric
// definitions of docs/metrics.md on the demo designs.
func TestEvalJSON(t *testing.T) {
	for _, name := range []string{"n-pair", "p-pair", "current-switch", "complementary-33"} {
		t.Run(name, func(t *testing.T) {
			doc := evalJSON(t, filepath.Join(designsDir, name+".yaml"))
			if doc["topology"] != strings.TrimSuffix(name, "-33") {
				t.Errorf("topology = %v", doc["topology"])
			}
			supply := doc["supply"].(float64)
			// docs/files.md#eval-json: curve points with vcm, gm, i_n, i_p, in SI.
			curve, ok := doc["curve"].([]any)
			// 0 V to the supply in 10 mV steps, both ends included.
			if wantN := int(math.Round(supply/0.01)) + 1; !ok || len(curve) != wantN {
				t.Fatalf("curve has %d points, want %d", len(curve), wantN)
			}
			gmMin, gmMax := math.Inf(1), math.Inf(-1)
			for i, c := range curve {
				pt := c.(map[string]any)
				for _, k := range []string{"vcm", "gm", "i_n", "i_p"} {
					if _, ok := pt[k].(float64); !ok {
						t.Fatalf("curve[%d] lacks number %q: %v", i, k, pt)
					}
				}
				if want := 0.01 * float64(i); math.Abs(pt["vcm"].(float64)-want) > 1e-9 {
					t.Errorf("curve[%d].vcm = %v, want %v", i, pt["vcm"], want)
				}
				gmMin, gmMax = math.Min(gmMin, pt["gm"].(float64)), math.Max(gmMax, pt["gm"].(float64))
			}
			m, ok := doc["metrics"].(map[string]any)
			if !ok {
				t.Fatal("no metrics")
			}
			keys := []string{"gm_min", "gm_max", "gm_ripple", "power", "area", "switchover", "transition_width"}
			for _, k := range keys {
				if _, ok := m[k]; !ok {
					t.Errorf("metrics lack %q", k)
				}
			}
			// docs/metrics.md#gm_min-and-gm_max: gm_min and gm_max are the extremes of the curve.
			if m["gm_min"] != gmMin || m["gm_max"] != gmMax {
				t.Errorf("gm_min %v gm_max %v, curve extremes %v %v", m["gm_min"], m["gm_max"], gmMin, gmMax)
			}
			single := name == "n-pair" || name == "p-pair"
			if single {
				// docs/metrics.md#missing-and-unbounded-values: a single pair loses gm near its dead rail,
				// so its ripple is unbounded (null); it has no handover.
				if m["gm_ripple"] != nil {
					t.Errorf("gm_ripple = %v, want null for a single pair", m["gm_ripple"])
				}
				if m["switchover"] != nil || m["transition_width"] != nil {
					t.Errorf("switchover %v transition_width %v, want null for a single pair", m["switchover"], m["transition_width"])
				}
			} else {
				// docs/metrics.md#gm_ripple: ripple = gm_max/gm_min − 1; the handover
				// lies inside the range.
				r, ok := m["gm_ripple"].(float64)
				if !ok || math.Abs(r-(gmMax/gmMin-1)) > 1e-12 {
					t.Errorf("gm_ripple = %v, want gm_max/gm_min−1 = %v", m["gm_ripple"], gmMax/gmMin-1)
				}
				if s, ok := m["switchover"].(float64); !ok || !(s > 0 && s < supply) {
					t.Errorf("switchover = %v, want inside 0 … %v V", m["switchover"], supply)
				}
			}
			devs, ok := doc["devices"].([]any)
			if !ok || len(devs) < 4 {
				t.Fatalf("devices: %v", doc["devices"])
			}
			for _, d := range devs {
				dev := d.(map[string]any)
				for _, k := range []string{"name", "type", "w", "l", "id", "vgs", "vds", "vth", "gm"} {
					if _, ok := dev[k]; !ok {
						t.Errorf("device %v lacks %q", dev["name"], k)
					}
				}
				if ty := dev["type"]; ty != "nmos" && ty != "pmos" {
					t.Errorf("device %v type %v", dev["name"], ty)
				}
			}
		})
	}
}

// TestEvalText checks the text form: every metric is listed, a single
// pair shows the unbounded ripple and the missing handover in words
// (docs/metrics.md#missing-and-unbounded-values: ∞ in text), and the caution ends the table.
func TestEvalText(t *testing.T) {
	code, stdout, stderr := runCmd(t, "eval", filepath.Join(designsDir, "n-pair.yaml"))
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, want := range []string{"n-pair on demo18", "gm_min", "gm_max", "power", "area", "µm²",
		"∞", "(gm falls to zero)", "(single pair)", "Estimates from compact models"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("text output lacks %q:\n%s", want, stdout)
		}
	}
	code, stdout, _ = runCmd(t, "eval", "--devices", filepath.Join(designsDir, "current-switch.yaml"))
	if code != exitOK {
		t.Fatalf("eval --devices: exit %d", code)
	}
	doc := evalJSON(t, filepath.Join(designsDir, "current-switch.yaml"))
	for _, d := range doc["devices"].([]any) {
		name := d.(map[string]any)["name"].(string)
		if !strings.Contains(stdout, "\n  "+name+" ") {
			t.Errorf("--devices does not list %s:\n%s", name, stdout)
		}
	}
}

// TestEvalPlot writes both plot formats and checks that each decodes:
// SVG as XML (encoding/xml), PNG with image/png at a sensible size.
func TestEvalPlot(t *testing.T) {
	dir := t.TempDir()
	design := filepath.Join(designsDir, "current-switch.yaml")

	svgPath := filepath.Join(dir, "gm.svg")
	code, _, stderr := runCmd(t, "eval", design, "--plot", svgPath)
	if code != exitOK {
		t.Fatalf("--plot svg: exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, svgPath) {
		t.Errorf("stderr %q does not say where the plot went", stderr)
	}
	data, err := os.ReadFile(svgPath)
	if err != nil {
		t.Fatal(err)
	}
	texts := parseXML(t, svgPath, data)
	for _, want := range []string{"current-switch", "i_n", "i_p", "vcm"} {
		if !strings.Contains(texts, want) {
			t.Errorf("SVG text lacks %q", want)
		}
	}

	pngPath := filepath.Join(dir, "gm.png")
	if code, _, stderr := runCmd(t, "eval", design, "--plot", pngPath); code != exitOK {
		t.Fatalf("--plot png: exit %d: %s", code, stderr)
	}
	pf, err := os.Open(pngPath)
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	img, err := png.Decode(pf)
	if err != nil {
		t.Fatalf("PNG does not decode: %v", err)
	}
	b := img.Bounds()
	if b.Dx() < 600 || b.Dx() > 4000 || b.Dy() < 400 || b.Dy() > 4000 {
		t.Errorf("PNG is %d×%d pixels", b.Dx(), b.Dy())
	}
	// Something is drawn: a fair share of the pixels is not white.
	ink := 0
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			if r, g, bl, _ := img.At(x, y).RGBA(); r < 0xf000 || g < 0xf000 || bl < 0xf000 {
				ink++
			}
		}
	}
	if share := float64(ink) / float64(b.Dx()*b.Dy()/4); share < 0.01 || share > 0.5 {
		t.Errorf("%.1f %% of the PNG is drawn on", 100*share)
	}

	for _, bad := range []string{"gm.jpg", "gm", "gm.pdf"} {
		p := filepath.Join(dir, bad)
		code, _, stderr := runCmd(t, "eval", design, "--plot", p)
		if code != exitBadInput {
			t.Errorf("--plot %s: exit %d, want %d", bad, code, exitBadInput)
		}
		first := firstLine(stderr)
		if !strings.Contains(first, p) || !strings.Contains(first, ".svg or .png") {
			t.Errorf("--plot %s: first line %q does not name the file and the formats", bad, first)
		}
		if _, err := os.Stat(p); err == nil {
			t.Errorf("--plot %s wrote a file", bad)
		}
	}
}

// TestTopologiesJSON checks the listing against issue 2 item 6 (seven
// families, named exactly) and the families' own declarations.
func TestTopologiesJSON(t *testing.T) {
	code, stdout, stderr := runCmd(t, "topologies", "--json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Families []struct {
			Name    string `json:"name"`
			Summary string `json:"summary"`
			Params  []struct {
				Name    string   `json:"name"`
				Unit    *string  `json:"unit"`
				Min     *float64 `json:"min"`
				Max     *float64 `json:"max"`
				Scale   string   `json:"scale"`
				Default *float64 `json:"default"`
				Doc     string   `json:"doc"`
				Choices []string `json:"choices"`
			} `json:"params"`
		} `json:"families"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, f := range doc.Families {
		names = append(names, f.Name)
	}
	// Issue 2, item 6: the seven families, named exactly.
	want := []string{"n-pair", "p-pair", "complementary", "current-switch", "mirror-1to3", "zener", "sqrt-bias"}
	slices.Sort(names)
	slices.Sort(want)
	if !slices.Equal(names, want) {
		t.Fatalf("families %v, want %v", names, want)
	}
	units := map[string]bool{"m": true, "A": true, "V": true, "": true, "S": true, "m²": true, "F": true}
	for _, f := range doc.Families {
		if f.Summary == "" || len(f.Params) == 0 {
			t.Errorf("%s: summary %q, %d params", f.Name, f.Summary, len(f.Params))
		}
		fam, err := topologies.Lookup(f.Name)
		if err != nil {
			t.Fatal(err)
		}
		if len(f.Params) != len(fam.Params()) {
			t.Errorf("%s: %d params listed, family declares %d", f.Name, len(f.Params), len(fam.Params()))
		}
		for i, p := range f.Params {
			if p.Unit == nil || p.Min == nil || p.Max == nil || p.Default == nil || p.Doc == "" {
				t.Errorf("%s.%s: a key is missing: %+v", f.Name, p.Name, p)
				continue
			}
			if !units[*p.Unit] {
				t.Errorf("%s.%s: unit %q", f.Name, p.Name, *p.Unit)
			}
			if !(*p.Min < *p.Max) || *p.Default < *p.Min || *p.Default > *p.Max {
				t.Errorf("%s.%s: default %g outside %g … %g", f.Name, p.Name, *p.Default, *p.Min, *p.Max)
			}
			switch p.Scale {
			case "lin":
			case "log":
				if !(*p.Min > 0) {
					t.Errorf("%s.%s: log scale from %g", f.Name, p.Name, *p.Min)
				}
			case "choice":
				if len(p.Choices) < 2 || *p.Min != 0 || *p.Max != float64(len(p.Choices)-1) {
					t.Errorf("%s.%s: choices %v over %g … %g", f.Name, p.Name, p.Choices, *p.Min, *p.Max)
				}
			default:
				t.Errorf("%s.%s: scale %q", f.Name, p.Name, p.Scale)
			}
			// The JSON carries the declared SI values exactly.
			if i < len(fam.Params()) {
				d := fam.Params()[i]
				if d.Name != p.Name || d.Min != *p.Min || d.Max != *p.Max || d.Default != *p.Default {
					t.Errorf("%s.%s: listed %+v, declared %+v", f.Name, p.Name, p, d)
				}
			}
		}
	}
}

// TestTopologiesText checks the readable listing names every family and
// parameter with its default as a design file writes it.
func TestTopologiesText(t *testing.T) {
	code, stdout, _ := runCmd(t, "topologies")
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	for _, f := range topologies.All() {
		if !strings.Contains(stdout, f.Name()+" — "+f.Summary()) {
			t.Errorf("listing lacks family line of %s", f.Name())
		}
		for _, p := range f.Params() {
			if !strings.Contains(stdout, "  "+p.Name+" ") || !strings.Contains(stdout, units.Format(p.Default, p.Unit)) {
				t.Errorf("%s: listing lacks %s at %s", f.Name(), p.Name, units.Format(p.Default, p.Unit))
			}
		}
	}
}

// spiceDevices returns the names of the MOSFET lines (SPICE: element
// names starting with M) of a deck or of the .subckt in it.
func spiceDevices(deck string) []string {
	var names []string
	for _, line := range strings.Split(deck, "\n") {
		f := strings.Fields(line)
		if len(f) > 0 && (f[0][0] == 'M' || f[0][0] == 'm') {
			names = append(names, f[0])
		}
	}
	slices.Sort(names)
	return names
}

// TestNetlist: the .subckt's device lines carry the names the JSON gives
// (docs/files.md#testbench-deck), and --testbench -o writes the deck to a file.
func TestNetlist(t *testing.T) {
	for _, name := range []string{"current-switch", "zener", "p-pair"} {
		design := filepath.Join(designsDir, name+".yaml")
		code, sub, stderr := runCmd(t, "netlist", design)
		if code != exitOK {
			t.Fatalf("%s: exit %d: %s", name, code, stderr)
		}
		start, end := strings.Index(sub, "\n.subckt "), strings.Index(sub, "\n.ends")
		if start < 0 || end < start {
			t.Fatalf("%s: no .subckt … .ends:\n%s", name, sub)
		}
		var want []string
		for _, d := range evalJSON(t, design)["devices"].([]any) {
			want = append(want, d.(map[string]any)["name"].(string))
		}
		slices.Sort(want)
		if got := spiceDevices(sub[start:end]); !slices.Equal(got, want) {
			t.Errorf("%s: .subckt devices %v, JSON devices %v", name, got, want)
		}
	}

	dir := t.TempDir()
	out := filepath.Join(dir, "tb.cir")
	design := filepath.Join(designsDir, "current-switch-l1.yaml")
	code, stdout, stderr := runCmd(t, "netlist", "--testbench", "-o", out, design)
	if code != exitOK {
		t.Fatalf("--testbench: exit %d: %s", code, stderr)
	}
	if stdout != "" {
		t.Errorf("-o given, yet stdout has %d bytes", len(stdout))
	}
	deck, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	// docs/files.md#testbench-deck: the bench sources and no analysis unless asked.
	for _, src := range []string{"VDD ", "VCM ", "VID ", "VOUT ", ".model nch", ".model pch", ".end"} {
		if !bytes.Contains(deck, []byte("\n"+src)) {
			t.Errorf("testbench lacks a %q line", src)
		}
	}
	if bytes.Contains(deck, []byte("\n.dc ")) {
		t.Error("testbench carries a .dc without --dc")
	}
	code, withDC, _ := runCmd(t, "netlist", "--testbench", "--dc", design)
	if code != exitOK || !strings.Contains(withDC, "\n.dc VCM 0 1.8 0.01\n") {
		t.Errorf("--dc: exit %d, no .dc VCM 0 1.8 0.01 line", code)
	}
	// An output path that cannot be written is bad input, as in `run`
	// and `eval --plot`: exit 2 with the path on the first line.
	bad := filepath.Join(dir, "no", "such", "dir.cir")
	if code, _, stderr := runCmd(t, "netlist", "-o", bad, design); code != exitBadInput || !strings.HasPrefix(stderr, "pairsmith: output "+bad+": ") {
		t.Errorf("unwritable -o: exit %d, stderr %q; want %d naming %s", code, stderr, exitBadInput, bad)
	}
	if code, _, stderr := runCmd(t, "eval", "--plot", filepath.Join(dir, "no", "gm.svg"), design); code != exitBadInput || !strings.Contains(stderr, "pairsmith: output ") {
		t.Errorf("unwritable --plot: exit %d, stderr %q; want %d", code, stderr, exitBadInput)
	}
	if code, _, stderr := runCmd(t, "eval", "--plot", "", design); code != exitBadInput || !strings.Contains(stderr, "plot file") {
		t.Errorf("--plot '': exit %d, stderr %q; want %d saying the plot file has no extension", code, stderr, exitBadInput)
	}
}

// TestTestbenchAgreesWithNgspice runs the deck that `netlist --testbench
// --dc` writes for the level-1 demo design through ngspice -b, unedited
// (docs/files.md#testbench-deck), and compares the NMOS and PMOS pair currents at every
// sweep point with the curve `eval --json` gives for the same file.
// Source: ngspice (Debian package); tolerance 0.1 % of the pair's largest
// current, the branch-current agreement issue 2 asks for.
func TestTestbenchAgreesWithNgspice(t *testing.T) {
	ngspice.Require(t)
	design := filepath.Join(designsDir, "current-switch-l1.yaml")
	deckPath := filepath.Join(t.TempDir(), "tb.cir")
	if code, _, stderr := runCmd(t, "netlist", "--testbench", "--dc", "-o", deckPath, design); code != exitOK {
		t.Fatalf("netlist: exit %d: %s", code, stderr)
	}
	deck, err := os.ReadFile(deckPath)
	if err != nil {
		t.Fatal(err)
	}
	// The pairs' transistor names, from the Go API the command wraps; the
	// deck keeps the names the JSON gives (docs/files.md#testbench-deck).
	d, err := objectives.LoadDesign(design)
	if err != nil {
		t.Fatal(err)
	}
	st, err := objectives.Build(d)
	if err != nil {
		t.Fatal(err)
	}
	vec := func(name string) string { return "@" + strings.ToLower(name) + "[id]" }
	names := []string{st.PairN[0], st.PairN[1], st.PairP[0], st.PairP[1]}
	var vectors []string
	for _, n := range names {
		vectors = append(vectors, vec(n))
	}
	tab, err := ngspice.Run(string(deck), vectors...)
	if err != nil {
		t.Fatal(err)
	}
	curve := evalJSON(t, design)["curve"].([]any)
	if len(tab.Scale) != len(curve) {
		t.Fatalf("ngspice gives %d points, eval %d", len(tab.Scale), len(curve))
	}
	var maxN, maxP float64
	for _, c := range curve {
		pt := c.(map[string]any)
		maxN = math.Max(maxN, math.Abs(pt["i_n"].(float64)))
		maxP = math.Max(maxP, math.Abs(pt["i_p"].(float64)))
	}
	for i, c := range curve {
		pt := c.(map[string]any)
		if math.Abs(tab.Scale[i]-pt["vcm"].(float64)) > 1e-9 {
			t.Fatalf("point %d: ngspice vcm %g, eval %g", i, tab.Scale[i], pt["vcm"])
		}
		// i_n and i_p are the pairs' total currents, as magnitudes; the
		// sign ngspice gives @m[id] of a PMOS is its own convention, so
		// compare magnitudes.
		in := math.Abs(tab.Vectors[vectors[0]][i] + tab.Vectors[vectors[1]][i])
		ip := math.Abs(tab.Vectors[vectors[2]][i] + tab.Vectors[vectors[3]][i])
		if e := math.Abs(in - pt["i_n"].(float64)); e > 1e-3*maxN {
			t.Errorf("vcm %.2f V: i_n ngspice %.6g A, eval %.6g A", tab.Scale[i], in, pt["i_n"])
		}
		if e := math.Abs(ip - pt["i_p"].(float64)); e > 1e-3*maxP {
			t.Errorf("vcm %.2f V: i_p ngspice %.6g A, eval %.6g A", tab.Scale[i], ip, pt["i_p"])
		}
	}
}
