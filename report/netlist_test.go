package report

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"pairsmith/internal/ngspice"
	"pairsmith/objectives"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// designsDir holds the demo designs, one per family, on the EKV demo
// processes.
const designsDir = "../testdata/designs"

// familyDesign returns a design of family f at its defaults on proc, with
// the voltage parameters scaled from the 1.8 V defaults to the supply as a
// designer would move them, swept rail to rail in 10 mV steps.
func familyDesign(t *testing.T, f topologies.Family, proc *device.Process, supply float64) *objectives.Design {
	t.Helper()
	v := topologies.Defaults(f)
	for _, p := range f.Params() {
		if p.Unit == units.Volt {
			v[p.Name] = math.Min(p.Max, p.Default*supply/1.8)
		}
	}
	d := &objectives.Design{
		Topology: f.Name(), ProcessRef: proc.Name, Conditions: topologies.Conditions{Process: proc, Supply: supply, TempK: 27 + device.ZeroC},
		Sweep: sim.SweepSpec{Low: 0, High: supply, Step: 0.01},
	}
	var err error
	if d.Params, err = topologies.Complete(f, v); err != nil {
		t.Fatal(err)
	}
	return d
}

// sweep solves a design's common-mode sweep with pairsmith.
func sweep(t *testing.T, d *objectives.Design) (*topologies.Stage, *sim.Solver, *sim.Result) {
	t.Helper()
	st, err := objectives.Build(d)
	if err != nil {
		t.Fatal(err)
	}
	s, err := sim.NewSolver(st.Circuit, sim.Options{})
	if err != nil {
		t.Fatal(err)
	}
	res := &sim.Result{}
	if err := s.Sweep(d.Sweep, res); err != nil {
		t.Fatal(err)
	}
	return st, s, res
}

// runDeckGM runs a --dc deck exactly as written with `ngspice -b` and
// returns the gm table it prints, failing the test unless ngspice exits 0
// without an error line.
func runDeckGM(t *testing.T, deck string) (vcm, gm []float64) {
	t.Helper()
	out, err := ngspice.RunBatch(context.Background(), deck)
	if err != nil {
		t.Fatal(err)
	}
	if out.ExitCode != 0 {
		t.Fatalf("ngspice -b exits %d\nstdout tail: %s\nstderr: %s", out.ExitCode, tail(out.Stdout), out.Stderr)
	}
	if e := ngspice.FirstError(out.Stderr + out.Stdout); e != "" {
		t.Fatalf("ngspice -b reports %q", e)
	}
	vcm, gm, err = ngspice.ReadPrint(out.Stdout, "gm")
	if err != nil {
		t.Fatal(err)
	}
	return vcm, gm
}

func tail(s string) string {
	lines := strings.Split(strings.TrimSpace(s), "\n")
	return strings.Join(lines[max(0, len(lines)-8):], "\n")
}

// compareGM checks the deck's gm against pairsmith's at every point:
// within 1 % of the peak gm (the agreement issue 2 asks of the families'
// ngspice checks). It returns the worst error as a fraction of the peak.
func compareGM(t *testing.T, res *sim.Result, vcm, gm []float64) float64 {
	t.Helper()
	if len(vcm) != res.Len() {
		t.Fatalf("the deck printed %d points, pairsmith swept %d", len(vcm), res.Len())
	}
	peak := 0.0
	for _, g := range res.GM {
		peak = math.Max(peak, math.Abs(g))
	}
	worst := 0.0
	for i := range vcm {
		// print writes the scale to 7 significant digits.
		if math.Abs(vcm[i]-res.VCM[i]) > 1e-6*math.Max(1, res.VCM[i]) {
			t.Fatalf("point %d: deck at vcm %g V, pairsmith at %g V", i, vcm[i], res.VCM[i])
		}
		e := math.Abs(gm[i]-res.GM[i]) / peak
		worst = math.Max(worst, e)
		if e > 0.01 {
			t.Errorf("vcm %.3f V: gm %.6g S, deck %.6g S (%.2g of the peak %.4g S)", res.VCM[i], res.GM[i], gm[i], e, peak)
		}
	}
	return worst
}

// TestDCDeckGivesGM runs the --dc deck of every family on both level-1
// demo processes through `ngspice -b` as written and reads gm from what it
// prints. Source: ngspice (Debian package). Check: gm within 1 % of
// pairsmith's peak gm at every point of the sweep; the deck's own
// central difference over ±GMStep is far more accurate than that (see
// GMStep).
func TestDCDeckGivesGM(t *testing.T) {
	ngspice.Require(t)
	for _, pc := range []struct {
		process string
		supply  float64
	}{{"demo18-l1", 1.8}, {"demo33-l1", 3.3}} {
		proc, ok := device.Builtin(pc.process)
		if !ok {
			t.Fatalf("no built-in %s", pc.process)
		}
		for _, f := range topologies.All() {
			t.Run(pc.process+"/"+f.Name(), func(t *testing.T) {
				d := familyDesign(t, f, proc, pc.supply)
				st, _, res := sweep(t, d)
				var deck bytes.Buffer
				if err := Testbench(&deck, d, st, TestbenchOptions{DC: true}); err != nil {
					t.Fatal(err)
				}
				vcm, gm := runDeckGM(t, deck.String())
				t.Logf("worst gm error %.2g of the peak", compareGM(t, res, vcm, gm))
			})
		}
	}
}

// TestDeckWithoutDCHasNoAnalysis: docs/files.md#testbench-deck, a deck carries no analysis
// unless asked, so a user can add their own (common practice, no source).
func TestDeckWithoutDCHasNoAnalysis(t *testing.T) {
	proc, _ := device.Builtin("demo18-l1")
	d := familyDesign(t, topologies.All()[0], proc, 1.8)
	st, _, _ := sweep(t, d)
	var deck bytes.Buffer
	if err := Testbench(&deck, d, st, TestbenchOptions{}); err != nil {
		t.Fatal(err)
	}
	for _, l := range strings.Split(deck.String(), "\n") {
		f := strings.ToLower(strings.TrimSpace(l))
		for _, a := range []string{".dc", ".op", ".tran", ".ac", ".control", ".print", ".options"} {
			if strings.HasPrefix(f, a) {
				t.Errorf("deck without DC has the line %q", l)
			}
		}
	}
}

// TestNgspiceDCPoints: the deck's point count is the one ngspice's .dc
// gives, which stops before high when the range is not a whole number of
// steps (ngspice src/spicelib/analysis/dctrcurv.c), and is checked against
// ngspice itself.
func TestNgspiceDCPoints(t *testing.T) {
	ngspice.Require(t)
	for _, sp := range []sim.SweepSpec{
		{Low: 0, High: 1.8, Step: 0.01},
		{Low: 0, High: 3.3, Step: 0.01},
		{Low: 0.1, High: 1.7, Step: 0.03},
		{Low: 0, High: 1, Step: 0.3},
		{Low: 0.5, High: 0.5, Step: 0.01},
	} {
		n, err := ngspiceDCPoints(sp)
		if err != nil {
			t.Fatal(err)
		}
		deck := fmt.Sprintf("count\nv1 a 0 0\nr1 a 0 1k\n.dc v1 %s %s %s\n.end\n", num(sp.Low), num(sp.High), num(sp.Step))
		tab, err := ngspice.Run(deck, "v(a)")
		if err != nil {
			t.Fatal(err)
		}
		if len(tab.Scale) != n {
			t.Errorf("%+v: ngspiceDCPoints %d, ngspice gives %d", sp, n, len(tab.Scale))
		}
	}
}

// ekvDesigns loads the demo designs that are on EKV processes.
func ekvDesigns(t *testing.T) []string {
	t.Helper()
	files, err := filepath.Glob(filepath.Join(designsDir, "*.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	for _, f := range files {
		d, err := objectives.LoadDesign(f)
		if err != nil {
			t.Fatal(err)
		}
		if d.Process.Kind == "ekv" {
			out = append(out, f)
		}
	}
	if len(out) < len(topologies.All()) {
		t.Fatalf("%d demo designs on EKV processes, want one a family at least", len(out))
	}
	return out
}

// TestEKVDeckRefusedWithoutEquivalent: a testbench of an EKV design is
// refused, never written with cards ngspice cannot run, unless the level-1
// equivalent is asked for.
func TestEKVDeckRefusedWithoutEquivalent(t *testing.T) {
	for _, file := range ekvDesigns(t) {
		d, err := objectives.LoadDesign(file)
		if err != nil {
			t.Fatal(err)
		}
		st, err := objectives.Build(d)
		if err != nil {
			t.Fatal(err)
		}
		for _, dc := range []bool{false, true} {
			var deck bytes.Buffer
			err := Testbench(&deck, d, st, TestbenchOptions{DC: dc})
			var nm *NoSpiceModelError
			if !errors.As(err, &nm) || nm.Process != d.Process.Name || nm.Kind != "ekv" {
				t.Errorf("%s (dc %v): error %v, want a NoSpiceModelError naming %s", file, dc, err, d.Process.Name)
			}
			if deck.Len() != 0 {
				t.Errorf("%s (dc %v): %d bytes written for a refused deck", file, dc, deck.Len())
			}
		}
		if got := DeckModel(d.Process); got != DeckLevel1Equivalent {
			t.Errorf("%s: DeckModel %q, want %q", file, got, DeckLevel1Equivalent)
		}
	}
}

// TestLevel1EquivalentDeck runs the level-1 equivalent --dc deck of every
// EKV demo design through `ngspice -b` as written. Source: ngspice (Debian
// package). Checks: it runs without errors; its first lines say it is a
// level-1 equivalent of an EKV process; every transistor's drain current
// at VID = 0 agrees with pairsmith evaluating the same design on the
// level-1 process Level1Equivalent builds (within 0.1 %, plus a 0.1 nA
// floor for devices that are off, where ngspice adds junction leakage
// pairsmith leaves out — the drain-current agreement of the families'
// ngspice checks), and so does the gm it prints (within 1 % of the peak).
// The equivalent's numbers are also checked to differ from the EKV ones,
// as its header says they do.
func TestLevel1EquivalentDeck(t *testing.T) {
	ngspice.Require(t)
	for _, file := range ekvDesigns(t) {
		t.Run(filepath.Base(file), func(t *testing.T) {
			d, err := objectives.LoadDesign(file)
			if err != nil {
				t.Fatal(err)
			}
			st, err := objectives.Build(d)
			if err != nil {
				t.Fatal(err)
			}
			var deck bytes.Buffer
			if err := Testbench(&deck, d, st, TestbenchOptions{DC: true, Level1Equivalent: true}); err != nil {
				t.Fatal(err)
			}
			text := deck.String()
			lines := strings.SplitN(text, "\n", 3)
			if want := "* pairsmith testbench, LEVEL-1 EQUIVALENT of an EKV process: "; !strings.HasPrefix(lines[0], want) {
				t.Errorf("title %q, want it to start %q", lines[0], want)
			}
			if want := "* LEVEL-1 EQUIVALENT: process " + d.Process.Name + " uses the EKV model"; !strings.HasPrefix(lines[1], want) {
				t.Errorf("second line %q, want it to start %q", lines[1], want)
			}
			for _, w := range []string{"weak or moderate inversion", "differ from", "vto - type*tcv*(T - tnom)", "kp*(T/tnom)^bex"} {
				if !strings.Contains(text, w) {
					t.Errorf("the deck's header does not say %q", w)
				}
			}
			if n := strings.Count(text, "\n.model "); n != 2 || strings.Count(text, "(level=1 ") != 2 {
				t.Errorf("the deck carries %d .model cards, want two level-1 ones", n)
			}

			eq, err := Level1Equivalent(d.Process)
			if err != nil {
				t.Fatal(err)
			}
			if eq.Kind != "level1" {
				t.Fatalf("equivalent kind %q", eq.Kind)
			}
			dl := *d
			dl.Process = eq
			stl, s, res := sweep(t, &dl)

			vcm, gm := runDeckGM(t, text)
			compareGM(t, res, vcm, gm)

			var vectors []string
			for _, m := range stl.Circuit.Mosfets {
				vectors = append(vectors, "@"+strings.ToLower(m.Name)+"[id]")
			}
			tab, err := ngspice.Run(text, vectors...) // Run leaves the deck's .control out: one sweep at VID = 0
			if err != nil {
				t.Fatal(err)
			}
			if len(tab.Scale) != res.Len() {
				t.Fatalf("ngspice gave %d points, pairsmith %d", len(tab.Scale), res.Len())
			}
			for i := range res.VCM {
				for _, dv := range s.Devices(s.PointAt(res, i)) {
					// ngspice gives a MOS1 device's id in the device's own
					// sign (positive for a conducting PMOS).
					ngID := float64(dv.Type) * tab.Vectors["@"+strings.ToLower(dv.Name)+"[id]"][i]
					if diff := math.Abs(ngID - dv.ID); diff > 1e-3*math.Max(math.Abs(ngID), math.Abs(dv.ID))+1e-10 {
						t.Errorf("vcm %.2f V: %s (%s) id %.6g A, ngspice %.6g A", res.VCM[i], dv.Name, stl.Roles[dv.Name], dv.ID, ngID)
					}
				}
			}

			// The EKV numbers are not what the deck gives (its header's
			// warning): gm differs by more than 1 % of the peak somewhere.
			_, _, ekv := sweep(t, d)
			differ := false
			for i := range ekv.GM {
				differ = differ || math.Abs(ekv.GM[i]-res.GM[i]) > 0.01*math.Abs(ekv.GM[i])
			}
			if !differ {
				t.Error("the level-1 equivalent gives the EKV gm everywhere; the header's warning would be wrong")
			}
		})
	}
}

// TestLevel1EquivalentMapping: the mapped card keeps every parameter the
// two models share and the EKV card's temperature law, so that its
// threshold and kp at any temperature are the EKV card's. Source: the two
// temperature laws as cards.go documents them, VTO − type·TCV·(T − Tnom)
// and KP·(T/Tnom)^BEX, evaluated here independently.
func TestLevel1EquivalentMapping(t *testing.T) {
	for _, name := range []string{"demo18", "demo33"} {
		p, _ := device.Builtin(name)
		eq, err := Level1Equivalent(p)
		if err != nil {
			t.Fatal(err)
		}
		for _, typ := range []device.Type{device.NMOS, device.PMOS} {
			e := p.Card(typ).(*device.EKV)
			l := eq.Card(typ).(*device.Level1)
			if l.Polarity != e.Polarity || l.VTO != e.VTO || l.KP != e.KP || l.Gamma != e.Gamma || l.Phi != e.Phi ||
				l.Lambda != e.Lambda || l.LD != e.LD || l.TnomK != e.TnomK || !l.LinearTemp || l.TCV != e.TCV || l.BEX != e.BEX {
				t.Errorf("%s %v: level-1 card %+v does not carry EKV card %+v", name, typ, *l, *e)
			}
			for _, tc := range []float64{-40, 27, 125} {
				tk := tc + device.ZeroC
				card := l.SpiceCard("m", tk)
				wantVTO := e.VTO - float64(typ)*e.TCV*(tk-e.TnomK)
				wantKP := e.KP * math.Pow(tk/e.TnomK, e.BEX)
				for _, kv := range []struct {
					key  string
					want float64
				}{{"vto", wantVTO}, {"kp", wantKP}, {"tnom", tc}} {
					got := cardValue(t, card, kv.key)
					if math.Abs(got-kv.want) > 1e-12*math.Max(1, math.Abs(kv.want)) {
						t.Errorf("%s %v at %g °C: %s = %.15g, want %.15g", name, typ, tc, kv.key, got, kv.want)
					}
				}
			}
		}
	}
}

// cardValue reads key=value from a .model line.
func cardValue(t *testing.T, card, key string) float64 {
	t.Helper()
	for _, f := range strings.Fields(strings.NewReplacer("(", " ", ")", " ").Replace(card)) {
		if k, v, ok := strings.Cut(f, "="); ok && k == key {
			var x float64
			if _, err := fmt.Sscan(v, &x); err != nil {
				t.Fatalf("%s: %s=%q: %v", card, key, v, err)
			}
			return x
		}
	}
	t.Fatalf("%s: no %s", card, key)
	return 0
}
