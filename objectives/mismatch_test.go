package objectives_test

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"pairsmith/objectives"
	"pairsmith/units"
)

// TestPelgromNPair: the sensitivity estimate of an n-pair's input offset
// on the level-1 demo process equals the textbook closed form for a
// square-law pair, σ(V_os) = √(σ(ΔV_T)² + (V_ov/2 · σ(Δβ/β))²), with
// σ(ΔV_T) = A_VT/√(W·L) and σ(Δβ/β) = A_β/√(W·L) of the pair's devices
// (Pelgrom, Duinmaijer, Welbers, IEEE JSSC 24(5), 1989; the β term from
// any analog design text), within 5 % (issue 9), at three common modes
// where the pair conducts; and the k-sigma figures are k times the
// one-sigma ones.
func TestPelgromNPair(t *testing.T) {
	text := "topology: n-pair\nprocess: demo18-l1\nsupply: 1.8V\ncorners: tt\nmismatch: {sigma: 4}\n" +
		"sweep: {low: 0.9V, high: 1.5V, step: 0.3V}\nparams: {wn: 10um, ln: 2um, itail: 40uA}\n"
	d, err := objectives.ReadDesign("n.yaml", []byte(text), "")
	if err != nil {
		t.Fatal(err)
	}
	ev, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	mm := ev.Conditions[0].Mismatch
	if mm == nil {
		t.Fatal("no mismatch estimate on demo18-l1")
	}
	p := d.Process.Mismatch.N
	area := 10e-6 * 2e-6
	svt, sb := p.AVT/math.Sqrt(area), p.ABeta/math.Sqrt(area)
	for i, vcm := range mm.VCM {
		// The pair's overdrive at this point: from a design evaluated
		// there alone (its device report is at the middle of its sweep).
		one := *d
		one.Sweep.Low, one.Sweep.High = vcm, vcm
		at, err := objectives.Evaluate(&one)
		if err != nil {
			t.Fatal(err)
		}
		m1 := at.Devices[0]
		if m1.Role != "nmos input" {
			t.Fatalf("first device %s is a %s", m1.Name, m1.Role)
		}
		vov := m1.VGS - m1.VTH
		want := math.Hypot(svt, vov/2*sb)
		t.Logf("vcm %g V: σ(V_os) %.5g V, Pelgrom %.5g V (%+.3g %%)", vcm, mm.Offset[i], want, 100*(mm.Offset[i]/want-1))
		if got := mm.Offset[i]; math.Abs(got-want) > 0.05*want {
			t.Errorf("vcm %g V: σ(V_os) %g V, Pelgrom's %g V (V_ov %g V)", vcm, got, want, vov)
		}
	}
	if got := ev.Metrics.Offset; got != 4*mm.OffsetSigma {
		t.Errorf("offset %g, want 4 × %g", got, mm.OffsetSigma)
	}
	if got := ev.Metrics.OffsetDrift; got != 4*mm.DriftSigma || !(mm.DriftSigma < mm.OffsetSigma) {
		t.Errorf("offset drift %g (σ %g), want 4σ and below the offset σ %g for one pair", got, mm.DriftSigma, mm.OffsetSigma)
	}
}

// TestOffsetNeedsCoefficients: a sheet that bounds or trades on an offset
// on a process without mismatch coefficients is refused at that field,
// and one with them reads.
func TestOffsetNeedsCoefficients(t *testing.T) {
	dir := t.TempDir()
	data, err := os.ReadFile("../sim/device/processes/demo18.yaml")
	if err != nil {
		t.Fatal(err)
	}
	var kept []string
	for _, l := range strings.Split(string(data), "\n") {
		if !strings.HasPrefix(l, "mismatch:") {
			kept = append(kept, l)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "plain.yaml"), []byte(strings.Join(kept, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tt := range []struct{ text, field string }{
		{"process: plain.yaml\nsupply: 1.8V\ntargets: {offset_max: 4mV}\n", "targets.offset_max"},
		{"process: plain.yaml\nsupply: 1.8V\ntargets:\n  offset_drift_max: 1mV\n", "targets.offset_drift_max"},
		{"process: plain.yaml\nsupply: 1.8V\npareto: [power, offset]\n", "pareto[1]"},
	} {
		_, err := objectives.ReadSpec(filepath.Join(dir, "s.yaml"), []byte(tt.text), dir)
		var ue *units.Error
		if !errors.As(err, &ue) || ue.Field != tt.field || !strings.Contains(err.Error(), "mismatch") {
			t.Errorf("%q: error %v, want one at %s naming the mismatch section", tt.text, err, tt.field)
		}
	}
	if _, err := objectives.ReadSpec("s.yaml", []byte("process: demo18\nsupply: 1.8V\ntargets: {offset_max: 4mV}\npareto: [offset]\n"), ""); err != nil {
		t.Errorf("demo18 with an offset target: %v", err)
	}
}

// TestMonteCarloAgainstSensitivity: 2000 Monte Carlo samples, each
// device its own threshold and current factor and every offset solved
// from the sample's own circuit, agree with the first-order sensitivity
// estimate within three standard errors of a sample standard deviation,
// σ/√(2(N−1)) (issue 9; the standard error from any statistics text), at
// every common mode, for an n-pair and for the current switch, whose
// offset moves from one pair's to the other's across the handover; the
// switchover's spread too. The same seed gives the same result bit for
// bit on one worker and on three.
func TestMonteCarloAgainstSensitivity(t *testing.T) {
	const samples = 2000
	for _, family := range []string{"n-pair", "current-switch"} {
		t.Run(family, func(t *testing.T) {
			text := "topology: " + family + "\nprocess: demo18-l1\nsupply: 1.8V\ncorners: tt\nsweep: {low: 0.2V, high: 1.6V, step: 0.1V}\n"
			d, err := objectives.ReadDesign("d.yaml", []byte(text), "")
			if err != nil {
				t.Fatal(err)
			}
			sens, err := objectives.Evaluate(d)
			if err != nil {
				t.Fatal(err)
			}
			mc, err := objectives.EvaluateWith(d, objectives.EvalOptions{MonteCarlo: samples, Seed: 7, Workers: 3})
			if err != nil {
				t.Fatal(err)
			}
			a, b := sens.Conditions[0].Mismatch, mc.Conditions[0].Mismatch
			if b.Method != objectives.MethodMonteCarlo || b.Samples != samples {
				t.Fatalf("method %s with %d samples", b.Method, b.Samples)
			}
			se := func(sigma float64) float64 { return 3 * sigma / math.Sqrt(2*(samples-1)) }
			checked := 0
			for i := range a.Offset {
				if math.IsNaN(a.Offset[i]) {
					if !math.IsNaN(b.Offset[i]) {
						t.Errorf("vcm %g: dead for the sensitivities, %g by Monte Carlo", a.VCM[i], b.Offset[i])
					}
					continue
				}
				checked++
				if math.Abs(b.Offset[i]-a.Offset[i]) > se(a.Offset[i]) {
					t.Errorf("vcm %g V: Monte Carlo σ %g V, sensitivity %g V (3 SE %g V)", a.VCM[i], b.Offset[i], a.Offset[i], se(a.Offset[i]))
				}
			}
			if checked < 10 {
				t.Errorf("only %d live points checked", checked)
			}
			if family == "current-switch" {
				if math.Abs(b.SwitchoverSigma-a.SwitchoverSigma) > se(a.SwitchoverSigma) || !(a.SwitchoverSigma > 0) {
					t.Errorf("switchover σ: Monte Carlo %g V, sensitivity %g V", b.SwitchoverSigma, a.SwitchoverSigma)
				}
				if math.Abs(b.DriftSigma-a.DriftSigma) > se(a.DriftSigma) {
					t.Errorf("offset drift σ: Monte Carlo %g V, sensitivity %g V", b.DriftSigma, a.DriftSigma)
				}
			}
			t.Logf("offset σ: sensitivity %.4g V, Monte Carlo %.4g V; drift σ %.4g / %.4g V; switchover σ %.4g / %.4g V",
				a.OffsetSigma, b.OffsetSigma, a.DriftSigma, b.DriftSigma, a.SwitchoverSigma, b.SwitchoverSigma)
			one, err := objectives.EvaluateWith(d, objectives.EvalOptions{MonteCarlo: 200, Seed: 7, Workers: 1})
			if err != nil {
				t.Fatal(err)
			}
			three, err := objectives.EvaluateWith(d, objectives.EvalOptions{MonteCarlo: 200, Seed: 7, Workers: 3})
			if err != nil {
				t.Fatal(err)
			}
			p, q := one.Conditions[0].Mismatch, three.Conditions[0].Mismatch
			for i := range p.Offset {
				if math.Float64bits(p.Offset[i]) != math.Float64bits(q.Offset[i]) {
					t.Fatalf("vcm %g: %g on one worker, %g on three", p.VCM[i], p.Offset[i], q.Offset[i])
				}
			}
			if !one.Metrics.Same(three.Metrics) {
				t.Errorf("metrics differ between one worker and three")
			}
		})
	}
}

// TestSlewAlongTheRange: the slew current of a whole sweep, found by
// continuation sweeps at the large input and Newton towards the rails
// (slewCurrents), is the smallest of those found at each of its points
// alone (one point, solved from its vid = 0 solution: the path
// TestSlewAgainstNgspice checks against ngspice), within 1e-6 relative
// (the solver's tolerance; our own bound).
func TestSlewAlongTheRange(t *testing.T) {
	d, err := objectives.ReadDesign("d.yaml", []byte("topology: current-switch\nprocess: demo18-l1\nsupply: 1.8V\ncorners: tt\nsweep: {low: 0V, high: supply, step: 0.1V}\n"), "")
	if err != nil {
		t.Fatal(err)
	}
	ev, err := objectives.Evaluate(d)
	if err != nil {
		t.Fatal(err)
	}
	least, at := math.Inf(1), 0.0
	for _, vcm := range ev.Result.VCM {
		one := *d
		one.Sweep.Low, one.Sweep.High = vcm, vcm
		p, err := objectives.Evaluate(&one)
		if err != nil {
			t.Fatal(err)
		}
		if p.Metrics.SlewCurrent < least {
			least, at = p.Metrics.SlewCurrent, vcm
		}
	}
	if got := ev.Metrics.SlewCurrent; math.Abs(got-least) > 1e-6*least || !(least > 0) {
		t.Errorf("slew current %g A along the range, %g A the least of the points alone (at %g V)", got, least, at)
	}
}

// TestPairThermalNoise: the input-referred thermal noise of an n-pair on
// ideal summing nodes is that of its two input devices,
// √(2·4kT·(2/3)/g_m) with g_m each device's (van der Ziel's channel noise
// 4kT·(2/3)·g_m of a saturated square-law device; any analog design
// text), within 1 % (the tail's noise is common mode and reaches no
// output), at three common modes where the pair conducts; the flicker
// part falls as 1/f.
func TestPairThermalNoise(t *testing.T) {
	for _, vcm := range []float64{0.9, 1.2, 1.5} {
		d, err := objectives.ReadDesign("n.yaml", []byte("topology: n-pair\nprocess: demo18-l1\nsupply: 1.8V\ncorners: tt\nparams: {wn: 10um, ln: 2um, itail: 40uA}\n"), "")
		if err != nil {
			t.Fatal(err)
		}
		d.Sweep.Low, d.Sweep.High = vcm, vcm
		ev, err := objectives.Evaluate(d)
		if err != nil {
			t.Fatal(err)
		}
		n := ev.Conditions[0].Noise
		gm := ev.Devices[0].GM
		want := math.Sqrt(2 * 4 * 1.380649e-23 * d.TempK * 2 / 3 / gm)
		if got := math.Sqrt(n.Thermal[0]); math.Abs(got-want) > 0.01*want {
			t.Errorf("vcm %g V: thermal %g V/√Hz, √(2·4kT·(2/3)/g_m) = %g V/√Hz", vcm, got, want)
		}
		if lo, hi := n.At(0, 1e3), n.At(0, 1e6); !(n.Flicker[0] > 0) || math.Abs(lo*lo-n.Thermal[0]-1e3*(hi*hi-n.Thermal[0])) > 1e-9*lo*lo {
			t.Errorf("vcm %g V: flicker %g at 1 Hz, densities %g and %g at 1 kHz and 1 MHz: not 1/f", vcm, n.Flicker[0], lo, hi)
		}
	}
}
