package report_test

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"pairsmith/objectives"
	"pairsmith/report"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
)

// The geometry rules every exported device must obey, checked on the decks
// as written (docs/buildable.md, "Geometry rules"): every width and length
// a multiple of the process grid, at least wmin and lmin and at most the
// maxima where set; a device that breaks a rule is allowed only when the
// evaluation has a geometry finding naming exactly that device, so that an
// illegal derived device is never silent.

// deckDevice is one MOSFET line of a SPICE deck, read back from its text.
type deckDevice struct {
	name  string
	model string
	w, l  float64
	m     float64 // 1 when the line has no m=
}

// spiceScale are SPICE's scale-factor suffixes, longest first where one is
// the start of another ("meg" and "mil" before "m"); letters after a
// number that are no scale factor (units such as "v") are ignored, and
// case does not matter (ngspice user's manual, "General structure and
// conventions", scale factors; from memory).
var spiceScale = []struct {
	suffix string
	factor float64
}{
	{"meg", 1e6}, {"mil", 25.4e-6}, {"t", 1e12}, {"g", 1e9}, {"k", 1e3},
	{"m", 1e-3}, {"u", 1e-6}, {"n", 1e-9}, {"p", 1e-12}, {"f", 1e-15}, {"a", 1e-18},
}

var (
	spiceNumberRE = regexp.MustCompile(`^([+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:e[+-]?[0-9]+)?)([a-z]*)$`)
	spiceAssignRE = regexp.MustCompile(`\s*=\s*`) // "w = 1u" as "w=1u"
)

// parseSpiceNumber reads a number as SPICE writes it: a decimal mantissa
// with an optional exponent, then an optional scale factor and unit
// letters.
func parseSpiceNumber(s string) (float64, error) {
	m := spiceNumberRE.FindStringSubmatch(strings.ToLower(strings.TrimSpace(s)))
	if m == nil {
		return 0, fmt.Errorf("%q is not a SPICE number", s)
	}
	x, err := strconv.ParseFloat(m[1], 64)
	if err != nil {
		return 0, fmt.Errorf("%q: %w", s, err)
	}
	for _, sc := range spiceScale {
		if strings.HasPrefix(m[2], sc.suffix) {
			return x * sc.factor, nil
		}
	}
	return x, nil
}

// TestParseSpiceNumber checks the helper against SPICE's scale factors
// (ngspice user's manual, scale factors; from memory).
func TestParseSpiceNumber(t *testing.T) {
	tests := []struct {
		in   string
		want float64
		bad  bool
	}{
		{in: "2.2e-07", want: 2.2e-7},
		{in: "0.000112", want: 112e-6},
		{in: "1.15u", want: 1.15e-6},
		{in: "220n", want: 220e-9},
		{in: "220N", want: 220e-9},
		{in: "1m", want: 1e-3},
		{in: "1M", want: 1e-3},
		{in: "1meg", want: 1e6},
		{in: "2mil", want: 50.8e-6},
		{in: "3.3v", want: 3.3},
		{in: ".5um", want: 0.5e-6},
		{in: "1e3k", want: 1e6},
		{in: "-4p", want: -4e-12},
		{in: "w", bad: true},
		{in: "1.2.3", bad: true},
		{in: "", bad: true},
	}
	for _, tt := range tests {
		got, err := parseSpiceNumber(tt.in)
		if tt.bad {
			if err == nil {
				t.Errorf("parseSpiceNumber(%q) = %g, want an error", tt.in, got)
			}
			continue
		}
		// 1e-12 relative: a few rounding errors of a decimal number's
		// conversion (common practice, no source).
		if err != nil || math.Abs(got-tt.want) > 1e-12*math.Abs(tt.want) {
			t.Errorf("parseSpiceNumber(%q) = %g, %v; want %g", tt.in, got, err, tt.want)
		}
	}
}

// parseDeckMosfets returns every MOSFET of a deck as its element lines
// give it: lines starting with M (SPICE's letter for a MOSFET), joined
// with their "+" continuation lines, without their "$" comments; comment
// lines and .control blocks are skipped. W and L are required on each.
func parseDeckMosfets(deck string) ([]deckDevice, error) {
	var lines []string
	control := false
	sc := bufio.NewScanner(strings.NewReader(deck))
	for sc.Scan() {
		l := strings.TrimSpace(sc.Text())
		low := strings.ToLower(l)
		switch {
		case strings.HasPrefix(low, ".control"):
			control = true
			continue
		case strings.HasPrefix(low, ".endc"):
			control = false
			continue
		case control || l == "" || strings.HasPrefix(l, "*"):
			continue
		}
		if i := strings.Index(l, " $"); i >= 0 {
			l = strings.TrimSpace(l[:i])
		}
		if strings.HasPrefix(l, "+") && len(lines) > 0 {
			lines[len(lines)-1] += " " + strings.TrimSpace(l[1:])
			continue
		}
		lines = append(lines, l)
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	var out []deckDevice
	for _, l := range lines {
		if l[0] != 'M' && l[0] != 'm' {
			continue
		}
		l = spiceAssignRE.ReplaceAllString(l, "=")
		f := strings.Fields(l)
		if len(f) < 6 {
			return nil, fmt.Errorf("MOSFET line %q: want name, four nodes and a model", l)
		}
		d := deckDevice{name: f[0], model: strings.ToLower(f[5]), w: math.NaN(), l: math.NaN(), m: 1}
		for _, kv := range f[6:] {
			k, v, ok := strings.Cut(kv, "=")
			if !ok {
				return nil, fmt.Errorf("MOSFET line %q: %q is not key=value", l, kv)
			}
			x, err := parseSpiceNumber(v)
			if err != nil {
				return nil, fmt.Errorf("MOSFET line %q: %w", l, err)
			}
			switch strings.ToLower(k) {
			case "w":
				d.w = x
			case "l":
				d.l = x
			case "m":
				d.m = x
			}
		}
		if math.IsNaN(d.w) || math.IsNaN(d.l) {
			return nil, fmt.Errorf("MOSFET line %q: no w= or no l=", l)
		}
		out = append(out, d)
	}
	return out, nil
}

// onGrid reports whether x is a multiple of grid within 1e-9 of x
// (docs/buildable.md: every drawn size is a grid multiple; the 1e-9 is
// floating-point slack for sizes written in metres, common practice, no
// source).
func onGrid(x, grid float64) bool {
	if !(grid > 0) {
		return true
	}
	return math.Abs(x-math.Round(x/grid)*grid) <= 1e-9*math.Abs(x)
}

// ruleBreaks returns what of the process rules a drawn size breaks,
// "w" and "l" for a size outside its minimum or maximum, each once
// (docs/buildable.md, "Geometry rules").
func ruleBreaks(r device.Rules, w, l float64) []string {
	var out []string
	for _, c := range []struct {
		field    string
		v        float64
		min, max float64
	}{{"w", w, r.WMin, r.WMax}, {"l", l, r.LMin, r.LMax}} {
		// 1e-9 relative: floating-point slack, as onGrid (common practice,
		// no source).
		if (c.min > 0 && c.v < c.min*(1-1e-9)) || (c.max > 0 && c.v > c.max*(1+1e-9)) {
			out = append(out, c.field)
		}
	}
	return out
}

// geometryFindings maps each device a geometry finding names to the
// fields ("w", "l") its findings are about, read from the finding's words
// ("w = 117nm below the process's wmin, …").
func geometryFindings(fs []objectives.Finding) map[string][]string {
	out := map[string][]string{}
	for _, f := range fs {
		if f.Check != objectives.CheckGeometry {
			continue
		}
		field, _, _ := strings.Cut(f.What, " ")
		out[f.Device] = append(out[f.Device], field)
	}
	return out
}

// evalOutcome is how a design's evaluation ended.
type evalOutcome int

const (
	evaluated  evalOutcome = iota // swept and checked
	unphysical                    // an objectives.UnphysicalError
	failed                        // any other error
)

// checkedDesign is one design, its stage and its findings.
type checkedDesign struct {
	d        *objectives.Design
	st       *topologies.Stage
	findings []objectives.Finding
}

// evaluateForRules evaluates d. A sweep that is no physical operating point
// (objectives.UnphysicalError: the search counts it a failed evaluation)
// still builds: its findings are then Assess's without a sweep, which
// holds every geometry finding (they do not depend on the bias). Any other
// error of a legal vector fails the test: a device that breaks a rule must
// make the candidate infeasible with a geometry finding that names it, not
// an evaluation error (docs/buildable.md, "Geometry rules"); the deck is
// still checked from the built stage.
func evaluateForRules(t *testing.T, d *objectives.Design) (checkedDesign, evalOutcome) {
	t.Helper()
	ev, err := objectives.Evaluate(d)
	if err == nil {
		return checkedDesign{d: d, st: ev.Stage, findings: ev.Findings}, evaluated
	}
	outcome := unphysical
	var ue *objectives.UnphysicalError
	if !errors.As(err, &ue) {
		outcome = failed
		t.Errorf("evaluate %s on %s: %v\nwant an evaluation whose findings name the device (docs/buildable.md); the design:\n%s",
			d.Topology, d.Process.Name, err, d.Format())
	}
	st, err := objectives.Build(d)
	if err != nil {
		t.Fatalf("build %s: %v", d.Topology, err)
	}
	fs := objectives.Assess(st, nil, nil, d.Process.Kind, d.Margin(), d.TempK)
	return checkedDesign{d: d, st: st, findings: fs}, outcome
}

// checkDeckRules exports c's stage as a .subckt and as a testbench, reads
// every MOSFET back from each deck and checks it against the process rules
// and the stage's own device list. strict refuses any rule break; without
// it a device below a minimum (or above a maximum) must be named by a
// geometry finding. It returns the number of devices that break a rule.
func checkDeckRules(t *testing.T, c checkedDesign, strict bool) int {
	t.Helper()
	d, st := c.d, c.st
	r := d.Process.Rules
	if !r.Given {
		t.Fatalf("process %s has no rules section; the demo processes carry demo rules (docs/buildable.md)", d.Process.Name)
	}
	fam, err := d.Family()
	if err != nil {
		t.Fatal(err)
	}
	// The design's own drawn sizes are on the grid and within the bounds
	// the process sets (process rules: docs/buildable.md, "Geometry rules").
	bounds, err := topologies.ParamsFor(fam, d.Process, d.Margin())
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range bounds {
		if q.Size != topologies.Width && q.Size != topologies.Length {
			continue
		}
		x := d.Params[q.Name]
		if !onGrid(x, r.Grid) {
			t.Errorf("%s: parameter %s = %g m is not a multiple of the grid %g m (process rules: docs/buildable.md)", d.Topology, q.Name, x, r.Grid)
		}
		if x < q.Min*(1-1e-9) || x > q.Max*(1+1e-9) { // slack as in ruleBreaks (common practice, no source)
			t.Errorf("%s: parameter %s = %g m outside the process's bounds %g … %g m (process rules: docs/buildable.md)", d.Topology, q.Name, x, q.Min, q.Max)
		}
	}

	var sub, tb bytes.Buffer
	if err := report.Subckt(&sub, d, st); err != nil {
		t.Fatal(err)
	}
	if err := report.Testbench(&tb, d, st, report.TestbenchOptions{Level1Equivalent: true}); err != nil {
		t.Fatal(err)
	}
	named := geometryFindings(c.findings)
	breaking := 0
	for _, deck := range []struct {
		what, text string
	}{{"subckt", sub.String()}, {"testbench", tb.String()}} {
		devs, err := parseDeckMosfets(deck.text)
		if err != nil {
			t.Fatalf("%s %s deck: %v", d.Topology, deck.what, err)
		}
		// The deck lists exactly the stage's devices, in order, with the
		// stage's sizes (what is evaluated is what is exported:
		// docs/buildable.md, "Geometry rules").
		if len(devs) != len(st.Devices) {
			t.Errorf("%s %s deck: %d MOSFETs, the stage has %d devices", d.Topology, deck.what, len(devs), len(st.Devices))
		}
		for i := range min(len(devs), len(st.Devices)) {
			got, want := devs[i], st.Devices[i]
			model := report.NMOSModel
			if want.Type == device.PMOS {
				model = report.PMOSModel
			}
			if got.name != want.Name || got.model != model || got.w != want.Geom.W || got.l != want.Geom.L || got.m != want.Geom.Mult() {
				t.Errorf("%s %s deck: device %d is %s %s w=%g l=%g m=%g, the stage's is %s %s w=%g l=%g m=%g",
					d.Topology, deck.what, i, got.name, got.model, got.w, got.l, got.m,
					want.Name, model, want.Geom.W, want.Geom.L, want.Geom.Mult())
			}
		}
		seen := map[string]bool{}
		for _, m := range devs {
			// Every drawn size on the grid, whatever else (process rules:
			// docs/buildable.md).
			for _, s := range []struct {
				field string
				v     float64
			}{{"w", m.w}, {"l", m.l}} {
				if !onGrid(s.v, r.Grid) {
					t.Errorf("%s %s deck: %s %s = %g m is not a multiple of the grid %g m (process rules: docs/buildable.md)",
						d.Topology, deck.what, m.name, s.field, s.v, r.Grid)
				}
			}
			// The minima and maxima (process rules: docs/buildable.md):
			// broken only where a geometry finding names the device and
			// the size.
			breaks := ruleBreaks(r, m.w, m.l)
			seen[m.name] = true
			if len(breaks) == 0 {
				if fs, ok := named[m.name]; ok {
					t.Errorf("%s %s deck: %s (w=%g l=%g) obeys the rules, yet a geometry finding names it (%v)",
						d.Topology, deck.what, m.name, m.w, m.l, fs)
				}
				continue
			}
			if deck.what == "subckt" {
				breaking++
			}
			if strict {
				t.Errorf("%s %s deck: %s (w=%g l=%g) breaks the process's rule on %v (wmin %g, lmin %g, wmax %g, lmax %g; process rules: docs/buildable.md)",
					d.Topology, deck.what, m.name, m.w, m.l, breaks, r.WMin, r.LMin, r.WMax, r.LMax)
				continue
			}
			if got := strings.Join(named[m.name], ","); got != strings.Join(breaks, ",") {
				t.Errorf("%s %s deck: %s (w=%g l=%g) breaks the rule on %v, but its geometry findings are about %q (silent illegal device; docs/buildable.md)\n%s",
					d.Topology, deck.what, m.name, m.w, m.l, breaks, got, objectives.FindingsText(c.findings))
			}
		}
		for name := range named {
			if !seen[name] {
				t.Errorf("%s %s deck: a geometry finding names %s, which the deck does not have", d.Topology, deck.what, name)
			}
		}
	}
	return breaking
}

// TestDemoDesignDecksObeyRules exports every demo design and checks each
// of its devices, read back from the decks, against its process's rules:
// the demo designs are examples to build, so none may break a rule, even
// with a finding.
func TestDemoDesignDecksObeyRules(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("..", "testdata", "designs", "*.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if len(files) < len(topologies.All()) {
		t.Fatalf("%d demo designs, want at least one per family (%d)", len(files), len(topologies.All()))
	}
	families := map[string]bool{}
	for _, file := range files {
		t.Run(filepath.Base(file), func(t *testing.T) {
			d, err := objectives.LoadDesign(file)
			if err != nil {
				t.Fatal(err)
			}
			families[d.Topology] = true
			c, outcome := evaluateForRules(t, d)
			if outcome == unphysical {
				t.Errorf("the demo design's sweep is unphysical")
			}
			checkDeckRules(t, c, true)
		})
	}
	for _, f := range topologies.All() {
		if !families[f.Name()] {
			t.Errorf("no demo design of family %s", f.Name())
		}
	}
}

// randomLegal draws one parameter vector within the bounds the process
// sets (topologies.ParamsFor), each parameter on its own scale: log-uniform
// for a Log parameter, uniform for a Linear one, each word alike for a
// Choice (topologies.Param.FromUnit).
func randomLegal(rng *rand.Rand, ps []topologies.Param) topologies.Values {
	v := topologies.Values{}
	for _, q := range ps {
		v[q.Name] = q.FromUnit(rng.Float64())
	}
	return v
}

// TestRandomLegalDecksObeyRules draws 50 legal parameter vectors per
// family and demo process (seeded), evaluates each, exports it and checks
// every device read back from the decks against the process's rules: a
// device outside a minimum or maximum must be named by a geometry finding.
// The sweep is coarse (50 mV): the geometry does not depend on it.
func TestRandomLegalDecksObeyRules(t *testing.T) {
	const perFamily = 50
	for _, pname := range []string{"demo18", "demo33"} {
		proc, ok := device.Builtin(pname)
		if !ok {
			t.Fatalf("no built-in process %s", pname)
		}
		// The demo processes' nominal supplies (demo data of our own).
		supply := map[string]float64{"demo18": 1.8, "demo33": 3.3}[pname]
		for fi, f := range topologies.All() {
			t.Run(pname+"/"+f.Name(), func(t *testing.T) {
				ps, err := topologies.ParamsFor(f, proc, proc.Rules.SaturationMargin)
				if err != nil {
					t.Fatal(err)
				}
				rng := rand.New(rand.NewPCG(8, uint64(fi)))
				breaking, flagged := 0, 0
				outcomes := map[evalOutcome]int{}
				for range perFamily {
					v, err := topologies.Complete(f, randomLegal(rng, ps))
					if err != nil {
						t.Fatal(err)
					}
					d := &objectives.Design{
						Topology: f.Name(), ProcessRef: pname, Conditions: topologies.Conditions{Process: proc, Supply: supply, TempK: 27 + device.ZeroC},
						Sweep: sim.SweepSpec{Low: 0, High: supply, Step: 0.05}, Params: v,
					}
					c, outcome := evaluateForRules(t, d)
					outcomes[outcome]++
					n := checkDeckRules(t, c, false)
					breaking += n
					if n > 0 {
						flagged++
					}
				}
				t.Logf("%d vectors: %d with devices outside a rule (%d devices); %d evaluated, %d unphysical sweeps (findings from Assess without a sweep), %d evaluation errors",
					perFamily, flagged, breaking, outcomes[evaluated], outcomes[unphysical], outcomes[failed])
			})
		}
	}
}
