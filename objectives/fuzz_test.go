package objectives_test

import (
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"pairsmith/objectives"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// fuzzDir returns a directory for the readers' fuzz targets to resolve
// process paths in: p.yaml is the built-in demo18-l1 process file as it
// is shipped, bad.yaml a process file that lacks a required field.
func fuzzDir(f *testing.F) string {
	dir := f.TempDir()
	text, err := os.ReadFile(filepath.Join("..", "sim", "device", "processes", "demo18-l1.yaml"))
	if err != nil {
		f.Fatal(err)
	}
	bad := "model: level1\nnmos: {vto: 0.45V}\npmos: {vto: -0.45V, kp: 70uA/V2}\n"
	for name, data := range map[string][]byte{"p.yaml": text, "bad.yaml": []byte(bad)} {
		if err := os.WriteFile(filepath.Join(dir, name), data, 0o644); err != nil {
			f.Fatal(err)
		}
	}
	return dir
}

// checkReadError fails unless err is what a reader gives for bad input:
// an *units.Error whose message starts "FILE:LINE: " with FILE the file
// read (fuzz.yaml) or a process file it names, or, for a file over
// units.MaxFileSize, "fuzz.yaml: ".
func checkReadError(t *testing.T, err error) {
	t.Helper()
	var ue *units.Error
	if !errors.As(err, &ue) {
		t.Fatalf("error %q (%T) is not a *units.Error", err, err)
	}
	msg := err.Error()
	if errors.Is(err, units.ErrTooLarge) && ue.Line == 0 && strings.HasPrefix(msg, "fuzz.yaml: ") {
		return
	}
	if ue.File == "" || ue.Line < 1 || !strings.HasPrefix(msg, fmt.Sprintf("%s:%d: ", ue.File, ue.Line)) {
		t.Fatalf("error %q does not start with its file and line", msg)
	}
	if ue.File != "fuzz.yaml" {
		if _, err := os.Stat(ue.File); err != nil {
			t.Fatalf("error %q names a file that is neither the one read nor a process file", msg)
		}
	}
}

// FuzzReadDesign reads any text as a design file. Nothing may panic; an
// error is a bad-input error at a file and line (checkReadError); a design
// read in is within its family's bounds and its conditions' limits, and
// Design.Format writes it back as a file that reads as the same design.
// The seeds are in testdata/fuzz/FuzzReadDesign.
func FuzzReadDesign(f *testing.F) {
	dir := fuzzDir(f)
	f.Fuzz(func(t *testing.T, data []byte) {
		d, err := objectives.ReadDesign("fuzz.yaml", data, dir)
		if err != nil {
			checkReadError(t, err)
			return
		}
		checkDesign(t, d)
		text := d.Format()
		back, err := objectives.ReadDesign("fuzz.yaml", text, dir)
		if err != nil {
			t.Fatalf("the design's own file does not read: %v\n%s", err, text)
		}
		if !reflect.DeepEqual(d, back) {
			t.Fatalf("the design's own file reads as another design:\n%+v\n%+v\n%s", d, back, text)
		}
	})
}

// checkDesign fails unless d is a design its reader may return: a known
// family with every parameter within its bounds, a process, a supply and
// temperature within the readers' limits, and a sweep from low to high
// in steps above zero.
func checkDesign(t *testing.T, d *objectives.Design) {
	t.Helper()
	fam, err := d.Family()
	if err != nil {
		t.Fatalf("design of unknown family: %v", err)
	}
	if d.Process == nil || d.Process.N == nil || d.Process.P == nil {
		t.Fatalf("design %s without a complete process", d.Topology)
	}
	if !(d.Supply > 0 && d.Supply <= 20) || !(d.TempK >= 200 && d.TempK <= 500) {
		t.Fatalf("design %s at supply %g V, %g K", d.Topology, d.Supply, d.TempK)
	}
	if sw := d.Sweep; !(sw.High > sw.Low) || !(sw.Step > 0) || (sw.High-sw.Low)/sw.Step > 1e6 {
		t.Fatalf("design %s with sweep %+v", d.Topology, sw)
	}
	if len(d.Params) != len(fam.Params()) {
		t.Fatalf("design %s has %d parameters, its family %d", d.Topology, len(d.Params), len(fam.Params()))
	}
	for _, p := range fam.Params() {
		if v, ok := d.Params[p.Name]; !ok || !(v >= p.Min && v <= p.Max) {
			t.Fatalf("design %s: %s = %g (given %v), want %g … %g", d.Topology, p.Name, v, ok, p.Min, p.Max)
		}
	}
}

// FuzzReadSpec reads any text as a spec sheet. Nothing may panic; an
// error is a bad-input error at a file and line (checkReadError); a spec
// read in keeps the limits its reader documents, writes its JSON, and
// gives, for each family it lists, a design at the family's defaults
// that the design reader reads back as the same design. The seeds are in
// testdata/fuzz/FuzzReadSpec.
func FuzzReadSpec(f *testing.F) {
	dir := fuzzDir(f)
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := objectives.ReadSpec("fuzz.yaml", data, dir)
		if err != nil {
			checkReadError(t, err)
			return
		}
		if s.Process == nil || !(s.Supply > 0 && s.Supply <= 20) || !(s.TempK >= 200 && s.TempK <= 500) {
			t.Fatalf("spec with process %v, supply %g V, %g K", s.Process, s.Supply, s.TempK)
		}
		if span := s.Range.High - s.Range.Low; !(span > 0) || !(s.Step > 0) || s.Step > span {
			t.Fatalf("spec with range %+v, step %g", s.Range, s.Step)
		}
		if !distinctFrom(s.Pareto, objectives.AxisNames()) || !distinctFrom(s.Topologies, topologies.Names()) {
			t.Fatalf("spec with pareto %q, topologies %q", s.Pareto, s.Topologies)
		}
		if se := s.Search; se.Evaluations < 1 || se.Evaluations > objectives.MaxEvaluations || se.Workers < 0 || se.Time < 0 {
			t.Fatalf("spec with search %+v", se)
		}
		if _, err := json.Marshal(s); err != nil {
			t.Fatalf("spec's JSON: %v", err)
		}
		fams, err := s.Families()
		if err != nil {
			t.Fatal(err)
		}
		for _, fam := range fams {
			d := s.Design(fam.Name(), topologies.Defaults(fam))
			back, err := objectives.ReadDesign("fuzz-design.yaml", d.Format(), dir)
			if err != nil {
				t.Fatalf("the spec's %s design does not read: %v\n%s", fam.Name(), err, d.Format())
			}
			if !reflect.DeepEqual(d, back) {
				t.Fatalf("the spec's %s design reads as another:\n%+v\n%+v", fam.Name(), d, back)
			}
		}
	})
}

// distinctFrom reports whether names is a non-empty list of distinct
// members of known.
func distinctFrom(names, known []string) bool {
	if len(names) == 0 {
		return false
	}
	for i, n := range names {
		if !slices.Contains(known, n) || slices.Index(names, n) != i {
			return false
		}
	}
	return true
}

// FuzzEvaluate draws supplies from 1 V (below which neither pair of a
// rail-to-rail stage conducts on the demo processes, whose thresholds are
// 0.45 V to 0.7 V) to 3.6 V (the 3.3 V processes' nominal + 10 %) in
// 10 mV steps, and temperatures over the industrial range, −40 °C to
// 125 °C (common practice, no source), in 1 °C steps.
const (
	fuzzSupplySteps = 261 // 1.00 V … 3.60 V
	fuzzTempSteps   = 166 // −40 °C … 125 °C
)

// fraction maps a 16-bit number onto [0, 1].
func fraction(u uint16) float64 { return float64(u) / math.MaxUint16 }

// fuzzDesign returns the design the fuzz input chooses: the family
// topologies.All()[family mod 7] on the built-in process of that index,
// at the supply and temperature of those numbers (see fuzzSupplySteps),
// and every parameter within its bounds on its scale, from two bytes of
// params each (its default when params has run out).
func fuzzDesign(family, process uint8, supply, temp uint16, params []byte) *objectives.Design {
	fams := topologies.All()
	fam := fams[int(family)%len(fams)]
	names := device.BuiltinNames()
	name := names[int(process)%len(names)]
	proc, _ := device.Builtin(name)
	vdd := float64(100+int(supply)%fuzzSupplySteps) / 100
	v := topologies.Defaults(fam)
	for i, p := range fam.Params() {
		if len(params) < 2*(i+1) {
			break
		}
		u := fraction(binary.LittleEndian.Uint16(params[2*i:]))
		v[p.Name] = p.FromUnit(u)
	}
	return &objectives.Design{
		Topology: fam.Name(), ProcessRef: name, Conditions: topologies.Conditions{Process: proc, Supply: vdd, TempK: float64(int(temp)%fuzzTempSteps-40) + units.ZeroCelsius},

		Sweep: sim.SweepSpec{Low: 0, High: vdd, Step: objectives.DefaultStep}, Params: v,
	}
}

// FuzzEvaluate evaluates random in-bounds designs (see fuzzDesign). Each
// either fails clearly — a point without a DC solution
// (*sim.ConvergenceError) or a sweep that is not a physical operating
// point (*objectives.UnphysicalError), either naming the design's family —
// or gives physical metrics: gm_min ≥ 0 and gm_max ≥ gm_min, both finite;
// power and area above zero and finite; a ripple ≥ 0 that is infinite only
// where gm falls below DeadGM·gm_max (Ripple's definition); a switchover
// and a transition width, when there are, inside the sweep; a gm/I_D, when
// there is one, finite and ≥ 0. The seeds are in
// testdata/fuzz/FuzzEvaluate.
func FuzzEvaluate(f *testing.F) {
	f.Fuzz(func(t *testing.T, family, process uint8, supply, temp uint16, params []byte) {
		d := fuzzDesign(family, process, supply, temp, params)
		ev, err := objectives.Evaluate(d)
		if err != nil {
			var (
				ce *sim.ConvergenceError
				ue *objectives.UnphysicalError
			)
			if !errors.As(err, &ce) && !errors.As(err, &ue) {
				t.Fatalf("%s: error %q (%T) is neither a point without a DC solution nor an unphysical sweep", d.Format(), err, err)
			}
			if msg := err.Error(); !strings.Contains(msg, d.Topology) {
				t.Fatalf("%s: error %q does not name the design", d.Format(), msg)
			}
			return
		}
		m := ev.Metrics
		fail := func(what string) {
			t.Helper()
			t.Fatalf("%s: %s\n%+v\n%s", d.Topology, what, m, d.Format())
		}
		finite := func(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
		switch {
		case !finite(m.GMMin) || !finite(m.GMMax) || m.GMMin < 0 || m.GMMax < m.GMMin:
			fail("gm_min and gm_max not finite with 0 ≤ gm_min ≤ gm_max")
		case !finite(m.Power) || !(m.Power > 0):
			fail("power not finite and above 0")
		case !finite(m.Area) || !(m.Area > 0):
			fail("area not finite and above 0")
		case math.IsInf(m.GMRipple, 1) && m.GMMin > objectives.DeadGM*m.GMMax:
			fail("ripple infinite where gm does not fall to zero")
		case !math.IsInf(m.GMRipple, 1) && !(finite(m.GMRipple) && m.GMRipple >= 0):
			fail("ripple neither ≥ 0 nor +Inf")
		case !math.IsNaN(m.Switchover) && !(m.Switchover >= d.Sweep.Low && m.Switchover <= d.Sweep.High):
			fail("switchover outside the sweep")
		case !math.IsNaN(m.TransitionWidth) && !(m.TransitionWidth >= 0 && m.TransitionWidth <= d.Sweep.High-d.Sweep.Low):
			fail("transition width outside the sweep")
		case !math.IsNaN(m.GMOverIDMin) && !(finite(m.GMOverIDMin) && m.GMOverIDMin >= 0):
			fail("gm/I_D not finite and ≥ 0")
		}
	})
}
