package objectives

import (
	"math"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
)

// DefaultNoiseFrequency is where `eval` reports the input-referred noise
// density, Hz (docs/noise.md).
const DefaultNoiseFrequency = 10e3

// boltzmann is k in J/K (SI brochure, 9th edition, exact).
const boltzmann = 1.380649e-23

// noiseModel is a swept stage's input-referred voltage noise: at sweep
// point i the density² is th[i] + fl[i]/f (V²/Hz), NaN where gm is dead.
type noiseModel struct {
	vcm, th, fl []float64
}

// thermalDensity is a channel's thermal current noise, A²/Hz: SPICE
// level 1's 4kT·(2/3)·|g_m| (ngspice's, measured: TestNoiseAgainstNgspice),
// and for EKV 4kT·γ·g_ms with γ from 1/2 in weak inversion (where it is
// the shot noise 2q·I_D) to 2/3 in strong inversion (the square law's),
// γ = 1/2 + (1/6)·IC/(1 + IC) between them by the inversion coefficient
// (the limits from C. C. Enz and E. A. Vittoz, Charge-based MOS
// Transistor Modeling, Wiley 2006, from memory; the interpolation is our
// choice).
func thermalDensity(kind string, ev device.Eval, ls device.LargeSignal, tempK float64) float64 {
	kt4 := 4 * boltzmann * tempK
	if kind == "ekv" {
		gamma := 0.5 + ls.IC/(6*(1+ls.IC))
		return kt4 * gamma * math.Abs(ev.GS)
	}
	return kt4 * 2.0 / 3.0 * math.Abs(ev.GG)
}

// addNoise adds, at point i of the sweep whose output sensitivities sens
// (sim.Solver.Sensitivities: ∂I_out/∂I_k) and device evaluations evs
// were just taken, that point's input-referred noise to nm: every
// transistor's thermal and flicker current noise (device.NoiseCoef), each
// independent, carried to the output by its sensitivity and referred to
// the input through gm.
func (nm *noiseModel) addNoise(i int, st *topologies.Stage, p *device.Process, sens []float64, evs []device.Eval, ls []device.LargeSignal, gm, gmMax, tempK float64) {
	if !(gm > DeadGM*gmMax) {
		nm.th[i], nm.fl[i] = math.NaN(), math.NaN()
		return
	}
	var th, fl float64
	for k, d := range st.Devices {
		s2 := sens[k] * sens[k]
		th += s2 * thermalDensity(p.Kind, evs[k], ls[k], tempK)
		if p.Noise.Given {
			fl += s2 * p.Noise.For(d.Type).Flicker(d.Geom, p.LateralDiffusion(d.Type), evs[k].ID)
		}
	}
	nm.th[i], nm.fl[i] = th/(gm*gm), fl/(gm*gm)
}

// NoiseResult is a design's input-referred noise at one condition.
type NoiseResult struct {
	// Frequency is where Density and Curve are taken, Hz.
	Frequency float64
	// VCM and Curve are the density along the sweep, V/√Hz (NaN where gm
	// is dead); Density is its largest value.
	VCM, Curve []float64
	Density    float64
	// FlickerCorner is where flicker and thermal noise are equal at the
	// point of the largest density, Hz (0 without flicker).
	FlickerCorner float64
	// Thermal and Flicker are each point's input-referred density²,
	// V²/Hz, the flicker part at 1 Hz (it falls as 1/f): At combines them.
	Thermal, Flicker []float64
}

// At returns the input-referred noise density at point i and frequency
// f, V/√Hz.
func (r *NoiseResult) At(i int, f float64) float64 { return math.Sqrt(r.Thermal[i] + r.Flicker[i]/f) }

// result is the noise at frequency f.
func (nm *noiseModel) result(f float64) *NoiseResult {
	r := &NoiseResult{Frequency: f, VCM: nm.vcm, Curve: make([]float64, len(nm.th)), Thermal: nm.th, Flicker: nm.fl}
	at := -1
	for i := range nm.th {
		r.Curve[i] = r.At(i, f)
		if !math.IsNaN(r.Curve[i]) && (at < 0 || r.Curve[i] > r.Curve[at]) {
			at = i
		}
	}
	r.Density = math.NaN()
	if at >= 0 {
		r.Density = r.Curve[at]
		if nm.th[at] > 0 {
			r.FlickerCorner = nm.fl[at] / nm.th[at]
		}
	}
	return r
}

// newNoiseModel is an empty noise model for the np points of res.
func newNoiseModel(res *sim.Result) *noiseModel {
	np := res.Len()
	return &noiseModel{vcm: res.VCM, th: make([]float64, np), fl: make([]float64, np)}
}

// analyse builds the mismatch model (nil on a process without mismatch
// coefficients, or unless wantMismatch) and the noise model (nil unless
// wantNoise) of a sweep, from one set of sensitivities a point when both
// are wanted.
func analyse(st *topologies.Stage, s *sim.Solver, res *sim.Result, d *Design, wantMismatch, wantNoise bool) (*mismatchModel, *noiseModel, error) {
	var nm *noiseModel
	if wantMismatch && mismatchOK(d.Process) {
		if wantNoise {
			nm = newNoiseModel(res)
		}
		mm, err := analyseMismatch(st, s, res, d.Process, nm, d.TempK)
		return mm, nm, err
	}
	if !wantNoise {
		return nil, nil, nil
	}
	nm, err := analyseNoise(st, s, res, d.Process, d.TempK)
	return nil, nm, err
}

// analyseNoise builds the noise model of sweep res of stage st, solved by
// s, on process p at tempK: one factorisation a point
// (sim.Solver.Sensitivities of the output).
func analyseNoise(st *topologies.Stage, s *sim.Solver, res *sim.Result, p *device.Process, tempK float64) (*noiseModel, error) {
	c := st.Circuit
	nk := len(c.Mosfets)
	probes := []int{c.ProbeIndex(topologies.ProbeOut)}
	sens := [][]float64{make([]float64, nk)}
	evs := make([]device.Eval, nk)
	np := res.Len()
	nm := newNoiseModel(res)
	gmMax := gmPeak(res)
	for i := range np {
		if err := s.Sensitivities(res, i, probes, sens, evs); err != nil {
			return nil, err
		}
		nm.addNoise(i, st, p, sens[0], evs, s.LoadedOps(), res.GM[i], gmMax, tempK)
	}
	return nm, nil
}

// NoiseJSON is `eval --json`'s noise section (docs/files.md#eval-json).
type NoiseJSON struct {
	Frequency float64 `json:"frequency"` // Hz
	// Density is the largest input-referred density over the range and
	// the conditions, V/√Hz; FlickerCorner, Hz, is at that point.
	Density       *float64     `json:"density"`
	FlickerCorner *float64     `json:"flicker_corner"`
	Curve         []NoisePoint `json:"curve"` // the nominal condition's
}

// NoisePoint is the input noise density at one common mode (null where
// gm is dead).
type NoisePoint struct {
	VCM     float64  `json:"vcm"`
	Density *float64 `json:"density"`
}

// noiseJSON returns the noise section of an evaluation, nil when none
// was estimated.
func noiseJSON(cs []ConditionEval) *NoiseJSON {
	if len(cs) == 0 || cs[0].Noise == nil {
		return nil
	}
	nom := cs[0].Noise
	out := &NoiseJSON{Frequency: nom.Frequency}
	worst := nom
	for _, c := range cs {
		if n := c.Noise; n != nil && (math.IsNaN(worst.Density) || n.Density > worst.Density) {
			worst = n
		}
	}
	out.Density, out.FlickerCorner = finite(worst.Density), finite(worst.FlickerCorner)
	for i, v := range nom.VCM {
		out.Curve = append(out.Curve, NoisePoint{VCM: v, Density: finite(nom.Curve[i])})
	}
	return out
}
