package objectives

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// Mismatch methods.
const (
	MethodSensitivity = "sensitivity"
	MethodMonteCarlo  = "monte-carlo"
)

// mismatchModel is the first-order effect of device mismatch on a swept
// stage (docs/mismatch.md): every transistor k has two independent
// zero-mean random variables, its threshold shift x_2k = ΔV_T (V, of the
// threshold's magnitude) and its current-factor shift x_2k+1 = Δβ/β, of
// standard deviations sig; the input offset at sweep point i is
// Σ_j off[i][j]·x_j and the switchover moves by Σ_j sw[j]·x_j.
type mismatchModel struct {
	vcm []float64
	sig []float64
	off [][]float64 // V per unit of each variable; NaN where gm is dead
	sw  []float64   // V per unit of each variable; nil without a handover
}

// deviceSigmas returns σ(ΔV_T) and σ(Δβ/β) of each transistor of st on
// process p: Pelgrom's law for a pair of like devices divided by √2, the
// two devices of a pair being independent (Pelgrom, Duinmaijer,
// Welbers, IEEE JSSC 24(5), 1989), from the drawn gate area W·L·m.
func deviceSigmas(st *topologies.Stage, p *device.Process) []float64 {
	sig := make([]float64, 2*len(st.Devices))
	for k, d := range st.Devices {
		pg := p.Mismatch.For(d.Type)
		sig[2*k] = pg.SigmaVT(d.Geom) / math.Sqrt2
		sig[2*k+1] = pg.SigmaBeta(d.Geom) / math.Sqrt2
	}
	return sig
}

// analyseMismatch builds the mismatch model of a sweep res of stage st,
// solved by s, on process p: at every point one factorisation and the
// adjoint sensitivities of the output and the two pair currents to each
// channel's current (sim.Solver.Sensitivities). A shift ΔV_T of a
// transistor's threshold magnitude moves its drain current by
// −sign·g_m·ΔV_T (sign +1 for an NMOS, −1 for a PMOS, SPICE signs), and
// Δβ/β moves it by I_D·Δβ/β; the offset is the input that cancels the
// output's change, −ΔI_out/gm. The switchover's sensitivities are
// Handover's gradient along the pair currents' first-order change.
func analyseMismatch(st *topologies.Stage, s *sim.Solver, res *sim.Result, p *device.Process, nm *noiseModel, tempK float64) (*mismatchModel, error) {
	c := st.Circuit
	nk := len(c.Mosfets)
	out, in, ip := c.ProbeIndex(topologies.ProbeOut), c.ProbeIndex(topologies.ProbeIN), c.ProbeIndex(topologies.ProbeIP)
	probes := []int{out, in, ip}
	sens := [][]float64{make([]float64, nk), make([]float64, nk), make([]float64, nk)}
	evs := make([]device.Eval, nk)
	np := res.Len()
	mm := &mismatchModel{vcm: res.VCM, sig: deviceSigmas(st, p), off: make([][]float64, np)}
	// The switchover's sensitivities, summed point by point: its gradient
	// with respect to the pair currents (shareCentre) times each
	// variable's effect on them; NaN without a switchover.
	handover := st.PairN[0] != "" && st.PairP[0] != ""
	var gIn, gIp, sw []float64
	if handover {
		gIn, gIp, sw = make([]float64, np), make([]float64, np), make([]float64, 2*nk)
		if math.IsNaN(shareCentre(res.VCM, res.Probe[in], res.Probe[ip], gIn, gIp)) {
			for j := range sw {
				sw[j] = math.NaN()
			}
		}
	}
	gmMax := gmPeak(res)
	rows := make([]float64, np*2*nk) // every point's row in one allocation
	for i := range np {
		if err := s.Sensitivities(res, i, probes, sens, evs); err != nil {
			return nil, err
		}
		if nm != nil { // the noise from the same solve
			nm.addNoise(i, st, p, sens[0], evs, s.LoadedOps(), res.GM[i], gmMax, tempK)
		}
		row := rows[i*2*nk : (i+1)*2*nk : (i+1)*2*nk]
		gm := res.GM[i]
		for k := range nk {
			sign := float64(st.Devices[k].Type) // +1 NMOS, −1 PMOS
			dvt := -sign * evs[k].GG            // ∂I_D/∂ΔV_T
			dbeta := evs[k].ID                  // ∂I_D/∂(Δβ/β)
			if gm > DeadGM*gmMax {
				row[2*k] = -sens[0][k] * dvt / gm
				row[2*k+1] = -sens[0][k] * dbeta / gm
			} else {
				row[2*k], row[2*k+1] = math.NaN(), math.NaN()
			}
			if handover {
				g := gIn[i]*sens[1][k] + gIp[i]*sens[2][k] // ∂switchover/∂δ_k
				sw[2*k] += g * dvt
				sw[2*k+1] += g * dbeta
			}
		}
		mm.off[i] = row
	}
	mm.sw = sw
	return mm, nil
}

// gmPeak is the sweep's largest gm: the reference below which (DeadGM of
// it) a point has no input for the offset and the noise.
func gmPeak(res *sim.Result) float64 {
	peak := 0.0
	for _, g := range res.GM {
		peak = math.Max(peak, g)
	}
	return peak
}

// sigmaOf returns √(Σ_j (a_j·σ_j)²): the standard deviation of a linear
// combination of the independent variables.
func (mm *mismatchModel) sigmaOf(a []float64) float64 {
	v := 0.0
	for j, x := range a {
		t := x * mm.sig[j]
		v += t * t
	}
	return math.Sqrt(v)
}

// offsetSigmas returns the one-sigma input offset at every sweep point
// (NaN where gm is dead: the stage has no input there, and its ripple is
// already unbounded).
func (mm *mismatchModel) offsetSigmas() []float64 {
	out := make([]float64, len(mm.off))
	for i, row := range mm.off {
		if math.IsNaN(row[0]) {
			out[i] = math.NaN()
			continue
		}
		out[i] = mm.sigmaOf(row)
	}
	return out
}

// driftSigma returns the largest one-sigma change of the offset between
// two points of the sweep, √max over a, b of Σ_j ((off_a,j − off_b,j)·σ_j)²,
// over every pair of points where gm is alive: the diameter of the
// points off·σ (diameter).
func (mm *mismatchModel) driftSigma() float64 {
	k := len(mm.sig)
	rows := make([][]float64, 0, len(mm.off))
	flat := make([]float64, len(mm.off)*k)
	for _, row := range mm.off {
		if math.IsNaN(row[0]) {
			continue
		}
		r := flat[len(rows)*k : (len(rows)+1)*k : (len(rows)+1)*k]
		for j, x := range row {
			r[j] = x * mm.sig[j]
		}
		rows = append(rows, r)
	}
	return math.Sqrt(diameter(rows))
}

// diameter returns the largest squared distance between two of the
// points (0 for fewer than two), the same as comparing every pair, bit
// for bit, while comparing few: by the triangle inequality no pair is
// farther apart than the sum of its points' distances from the
// centroid, so with the points taken farthest from it first, the pairs
// whose sum cannot beat the largest distance found are skipped (a
// bound widened by 1e-9 against rounding).
func diameter(pts [][]float64) float64 {
	n := len(pts)
	if n < 2 {
		return 0
	}
	c := make([]float64, len(pts[0]))
	for _, p := range pts {
		for j, x := range p {
			c[j] += x
		}
	}
	for j := range c {
		c[j] /= float64(n)
	}
	type far struct {
		p   []float64
		rho float64
	}
	fs := make([]far, n)
	for i, p := range pts {
		d := 0.0
		for j, x := range p {
			t := x - c[j]
			d += t * t
		}
		fs[i] = far{p, math.Sqrt(d)}
	}
	slices.SortStableFunc(fs, func(a, b far) int { return cmp.Compare(b.rho, a.rho) })
	worst := 0.0
	for a := range n {
		pa := fs[a].p
		for b := a + 1; b < n; b++ {
			if r := (fs[a].rho + fs[b].rho) * (1 + 1e-9); r*r < worst {
				break // and every later b, nearer the centroid
			}
			pb := fs[b].p[:len(pa)]
			d := 0.0
			for j, x := range pa {
				t := x - pb[j]
				d += t * t
			}
			worst = math.Max(worst, d)
		}
	}
	return worst
}

// switchoverSigma returns the one-sigma shift of the switchover (NaN
// without a handover).
func (mm *mismatchModel) switchoverSigma() float64 {
	if mm.sw == nil || (len(mm.sw) > 0 && math.IsNaN(mm.sw[0])) {
		return math.NaN()
	}
	return mm.sigmaOf(mm.sw)
}

// MismatchResult is a design's mismatch at one condition.
type MismatchResult struct {
	// Sigma is the k of the k-sigma figures (the design's).
	Sigma float64
	// VCM and Offset are the one-sigma input offset along the sweep (NaN
	// where gm is dead).
	VCM, Offset []float64
	// OffsetSigma is its largest value, DriftSigma the largest one-sigma
	// change of offset between two common modes, SwitchoverSigma the
	// one-sigma shift of the handover's centre (NaN without one); V.
	OffsetSigma, DriftSigma, SwitchoverSigma float64
	// Method is MethodSensitivity or MethodMonteCarlo, Samples the
	// number of Monte Carlo samples (0 for sensitivities).
	Method  string
	Samples int
	// SampleOffsets[k][i] and SampleSwitchovers[k] are Monte Carlo
	// sample k's offset at point i and its switchover, V (nil for
	// sensitivities).
	SampleOffsets     [][]float64
	SampleSwitchovers []float64
}

// result turns the model into the figures of a design whose k is sigma.
func (mm *mismatchModel) result(sigma float64) *MismatchResult {
	r := &MismatchResult{Sigma: sigma, VCM: mm.vcm, Offset: mm.offsetSigmas(), Method: MethodSensitivity}
	for _, x := range r.Offset {
		if !math.IsNaN(x) {
			r.OffsetSigma = math.Max(r.OffsetSigma, x)
		}
	}
	r.DriftSigma = mm.driftSigma()
	r.SwitchoverSigma = mm.switchoverSigma()
	return r
}

// fill puts the k-sigma figures into m.
func (r *MismatchResult) fill(m *Metrics) {
	m.Offset, m.OffsetDrift = r.Sigma*r.OffsetSigma, r.Sigma*r.DriftSigma
}

// mismatchOK reports whether a process can estimate mismatch: it must
// give Pelgrom coefficients (the process file's mismatch section).
func mismatchOK(p *device.Process) bool { return p != nil && p.Mismatch.Given }

// errNoMismatch says why a process gives no mismatch figures.
func errNoMismatch(p *device.Process) error {
	return fmt.Errorf("process %s gives no mismatch coefficients (a mismatch section with avt and abeta per device type)", p.Name)
}

// MismatchJSON is `eval --json`'s mismatch section (docs/files.md#eval-json).
type MismatchJSON struct {
	Sigma float64 `json:"sigma"` // k
	// OffsetSigma, OffsetDriftSigma and SwitchoverSigma are one-sigma
	// values, V, the worst over the range and the conditions.
	OffsetSigma      *float64      `json:"offset_sigma"`
	OffsetCurve      []OffsetPoint `json:"offset_curve"` // the nominal condition's
	OffsetDriftSigma *float64      `json:"offset_drift_sigma"`
	SwitchoverSigma  *float64      `json:"switchover_sigma"`
	Method           string        `json:"method"`
	Samples          int           `json:"samples"`
}

// OffsetPoint is the one-sigma offset at one common mode (null where gm
// is dead).
type OffsetPoint struct {
	VCM   float64  `json:"vcm"`
	Sigma *float64 `json:"sigma"`
}

// mismatchJSON returns the mismatch section of an evaluation, nil when
// no condition has an estimate.
func mismatchJSON(cs []ConditionEval) *MismatchJSON {
	if len(cs) == 0 || cs[0].Mismatch == nil {
		return nil
	}
	nom := cs[0].Mismatch
	out := &MismatchJSON{Sigma: nom.Sigma, Method: nom.Method, Samples: nom.Samples}
	var off, drift, sw float64
	for _, c := range cs {
		if m := c.Mismatch; m != nil {
			off, drift = math.Max(off, m.OffsetSigma), math.Max(drift, m.DriftSigma)
			if math.IsNaN(m.SwitchoverSigma) || math.IsNaN(sw) {
				sw = math.NaN()
			} else {
				sw = math.Max(sw, m.SwitchoverSigma)
			}
		}
	}
	out.OffsetSigma, out.OffsetDriftSigma, out.SwitchoverSigma = finite(off), finite(drift), finite(sw)
	for i, v := range nom.VCM {
		out.OffsetCurve = append(out.OffsetCurve, OffsetPoint{VCM: v, Sigma: finite(nom.Offset[i])})
	}
	return out
}

// checkMismatchAsked refuses a sheet that bounds or trades on an offset
// figure on a process without mismatch coefficients, at the field that
// asks.
func checkMismatchAsked(m *units.Map, s *Spec) error {
	if mismatchOK(s.Process) {
		return nil
	}
	want := "a process with mismatch coefficients (its file's mismatch section) for an offset figure"
	for _, key := range []string{TargetOffsetMax, TargetOffsetDriftMax} {
		if s.Targets.Has(key) {
			tm, _, _ := m.Map("targets")
			return tm.ErrorAt(key, tm.Text(key), want, errNoMismatch(s.Process))
		}
	}
	for i, a := range s.Pareto {
		if a == AxisOffset || a == AxisOffsetDrift {
			return m.ItemErrorAt("pareto", i, a, want, errNoMismatch(s.Process))
		}
	}
	return nil
}
