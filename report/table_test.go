package report

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"
	"unicode/utf8"

	"pairsmith/objectives"
	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
)

// fakeEval makes an evaluation by hand, with a flat curve of the design's
// sweep, so that table tests do not depend on the solver.
func fakeEval(t *testing.T, topology string, m objectives.Metrics, single bool) *objectives.Evaluation {
	t.Helper()
	proc, ok := device.Builtin("demo18")
	if !ok {
		t.Fatal("no demo18")
	}
	d := &objectives.Design{Topology: topology, ProcessRef: "demo18", Conditions: topologies.Conditions{Process: proc, Supply: 1.8, TempK: 300.15},
		Sweep: sim.SweepSpec{Low: 0, High: 1.8, Step: 0.01}}
	// A real sweep of the family (for the curve and point count), with
	// the metrics and devices replaced by the case's own.
	fam := "current-switch"
	if single {
		fam = "n-pair"
	}
	f, err := topologies.Lookup(fam)
	if err != nil {
		t.Fatal(err)
	}
	d.Topology = fam
	d.Params = topologies.Defaults(f)
	ev, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	d.Topology = topology
	ev.Metrics, ev.MidVCM = m, 0.9
	ev.Devices = []objectives.DeviceReport{
		{Name: "M1", Type: "nmos", Role: "nmos input", W: 20e-6, L: 1e-6, M: 1, ID: 1.333e-6, VGS: 0.5, VDS: 1.2, VTH: 0.551, VDSAT: 0.11, GM: 34.87e-6, Region: "moderate"},
		{Name: "M3", Type: "pmos", Role: "pmos input", W: 80e-6, L: 1e-6, M: 2, ID: -8.493e-6, VGS: -0.556, VDS: -1.256, VTH: -0.529, VDSAT: -0.133, GM: 175.9e-6, Region: "moderate"},
	}
	return ev
}

func TestMetricsTable(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name   string
		m      objectives.Metrics
		single bool
		want   []string
		absent []string
	}{
		{"both pairs", objectives.Metrics{GMMin: 1.9566e-4, GMMax: 2.2110e-4, GMRipple: 0.13, Power: 8.014e-5, Area: 4.2e-10, Switchover: 0.9833, TransitionWidth: 0.1941}, false,
			[]string{"gm_min            195.7 µS", "gm_ripple          13.0 %", "area                420 µm²", "switchover        983.3 mV", "transition_width  194.1 mV"},
			[]string{"∞", "—"}},
		// docs/metrics.md#missing-and-unbounded-values: unbounded ripple is ∞; a single pair has no handover.
		{"single pair", objectives.Metrics{GMMin: 5.6e-10, GMMax: 2.056e-4, GMRipple: math.Inf(1), Power: 4.576e-5, Area: 6.5e-11, Switchover: nan, TransitionWidth: nan}, true,
			[]string{"∞", "(gm falls to zero)", "—", "(single pair)", "560.0 pS", "65 µm²"},
			[]string{"no complete handover", "NaN", "Inf"}},
		{"incomplete handover", objectives.Metrics{GMMin: 2e-4, GMMax: 3e-4, GMRipple: 0.5, Power: 1e-4, Area: 3.25e-10, Switchover: 0.9, TransitionWidth: nan}, false,
			[]string{"(no complete handover)", "900.0 mV", "50.0 %"},
			[]string{"single pair", "NaN"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var b bytes.Buffer
			if err := MetricsTable(&b, fakeEval(t, "current-switch", tc.m, tc.single)); err != nil {
				t.Fatal(err)
			}
			out := b.String()
			lines := strings.Split(strings.TrimRight(out, "\n"), "\n")
			if want := "current-switch on demo18 (ekv), supply 1.8 V, 27 °C, vcm 0 V to 1.8 V in 10 mV steps (181 points)"; lines[0] != want {
				t.Errorf("header %q, want %q", lines[0], want)
			}
			if last := lines[len(lines)-1]; last != objectives.Caution {
				t.Errorf("last line %q, want the caution", last)
			}
			for _, w := range tc.want {
				if !strings.Contains(out, w) {
					t.Errorf("table lacks %q:\n%s", w, out)
				}
			}
			for _, a := range tc.absent {
				if strings.Contains(out, a) {
					t.Errorf("table has %q:\n%s", a, out)
				}
			}
			// Aligned: the numbers of all seven metric lines end in the
			// same column.
			col := -1
			for _, l := range lines[2:9] {
				f := strings.Fields(l)
				end := utf8.RuneCountInString(l[:strings.Index(l, f[1])]) + utf8.RuneCountInString(f[1])
				if col >= 0 && end != col {
					t.Errorf("line %q: value ends at %d, others at %d", l, end, col)
				}
				col = end
			}
		})
	}
}

func TestDevicesTable(t *testing.T) {
	var b bytes.Buffer
	if err := DevicesTable(&b, fakeEval(t, "current-switch", objectives.Metrics{}, false)); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, w := range []string{"vcm = 900 mV", "name", "vdsat", "vds-vdsat", "inversion", "saturation", "duty",
		"M1    nmos  nmos input", "20 µm", "1.333 µA", "0.500 V", "34.87 µS",
		"2×80 µm", "-8.493 µA", "-0.556 V", "175.9 µS", "-1.256 V", "-0.529 V"} {
		if !strings.Contains(out, w) {
			t.Errorf("devices table lacks %q:\n%s", w, out)
		}
	}
}

// failWriter fails after n bytes.
type failWriter struct{ n int }

func (f *failWriter) Write(p []byte) (int, error) {
	if len(p) > f.n {
		return 0, errors.New("disk full")
	}
	f.n -= len(p)
	return len(p), nil
}

func TestTablesReportWriteErrors(t *testing.T) {
	ev := fakeEval(t, "zener", objectives.Metrics{}, false)
	for name, f := range map[string]func() error{
		"metrics":  func() error { return MetricsTable(&failWriter{n: 200}, ev) },
		"devices":  func() error { return DevicesTable(&failWriter{n: 200}, ev) },
		"families": func() error { return FamiliesTable(&failWriter{n: 200}, topologies.All()) },
	} {
		if err := f(); err == nil || !strings.Contains(err.Error(), "disk full") {
			t.Errorf("%s: error %v, want the write error", name, err)
		}
	}
}

func TestFamiliesTable(t *testing.T) {
	var b bytes.Buffer
	if err := FamiliesTable(&b, topologies.All()); err != nil {
		t.Fatal(err)
	}
	for _, f := range topologies.All() {
		if !strings.Contains(b.String(), f.Name()+" — "+f.Summary()+"\n") {
			t.Errorf("no line for %s", f.Name())
		}
	}
}
