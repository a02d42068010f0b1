package objectives

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/stat"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
)

// MaxSamples bounds `eval --monte-carlo`: more is a typo, not a study.
const MaxSamples = 1_000_000

// MismatchShifts returns Monte Carlo sample k's mismatch of every
// transistor of st, in the circuit's order: each its own threshold
// magnitude shift (DVT, V) and current-factor shift (DKP = Δβ/β), drawn
// as independent Gaussians of the σ that deviceSigmas gives (Pelgrom's
// law) from a generator seeded by (seed, k) alone, so that a sample is
// the same whichever worker draws it and whatever the others.
func MismatchShifts(st *topologies.Stage, p *device.Process, seed int64, k int) []device.Shift {
	rng := rand.New(rand.NewPCG(uint64(seed), uint64(k)))
	sig := deviceSigmas(st, p)
	out := make([]device.Shift, len(st.Devices))
	for i := range out {
		out[i] = device.Shift{DVT: rng.NormFloat64() * sig[2*i], DKP: rng.NormFloat64() * sig[2*i+1]}
	}
	return out
}

// WithShifts returns a copy of circuit c whose transistor k has its own
// card, c's shifted by shifts[k] (device.Shifted): one Monte Carlo
// sample's circuit. c itself is not changed.
func WithShifts(c *sim.Circuit, shifts []device.Shift) *sim.Circuit {
	out := *c
	out.Mosfets = slices.Clone(c.Mosfets)
	for k := range out.Mosfets {
		out.Mosfets[k].Model = device.Shifted(out.Mosfets[k].Model, shifts[k])
	}
	return &out
}

// sampleOffsets solves one sample's circuit c over sweep sp on solver s
// (rebound to it) and returns its input offset at every point — the
// differential input that zeroes the output current, found by Newton on
// vid from the vid = 0 sweep (to 1 nV, at most eight steps) — and its
// switchover at vid = 0 (NaN without a handover).
func sampleOffsets(s *sim.Solver, c *sim.Circuit, st *topologies.Stage, sp sim.SweepSpec, res *sim.Result) ([]float64, float64, error) {
	if err := s.Rebind(c); err != nil {
		return nil, 0, err
	}
	if err := s.Sweep(sp, res); err != nil {
		return nil, 0, err
	}
	out := st.Circuit.ProbeIndex(topologies.ProbeOut)
	n := res.Unknowns
	off := make([]float64, res.Len())
	gmMax := gmPeak(res)
	for i := range off {
		v, iout, gm := 0.0, res.Probe[out][i], res.GM[i]
		for range 8 {
			if !(gm > DeadGM*gmMax) { // no input there: the offset is not defined
				v = math.NaN()
				break
			}
			step := -iout / gm
			v += step
			var err error
			if iout, gm, err = s.OutputNear(res.X[i*n:(i+1)*n], res.VCM[i], v, nil); err != nil {
				return nil, 0, fmt.Errorf("offset at vcm = %g V: %w", res.VCM[i], err)
			}
			if math.Abs(step) < 1e-9 {
				break
			}
		}
		off[i] = v
	}
	sw := math.NaN()
	if st.PairN[0] != "" && st.PairP[0] != "" {
		sw, _ = Handover(res.VCM, res.Probe[st.Circuit.ProbeIndex(topologies.ProbeIN)], res.Probe[st.Circuit.ProbeIndex(topologies.ProbeIP)])
	}
	return off, sw, nil
}

// monteCarlo draws samples Monte Carlo samples of design d (at its one
// condition) on workers goroutines and returns the spread of its offset,
// of the offset's change across the range and of its switchover, as a
// MismatchResult of method monte-carlo. Sample k is the same whatever the
// number of workers (MismatchShifts), so the result is too, bit for bit.
func monteCarlo(d *Design, st *topologies.Stage, samples int, seed int64, workers int) (*MismatchResult, error) {
	np, err := d.Sweep.Points()
	if err != nil {
		return nil, err
	}
	offs := make([][]float64, samples)
	sws := make([]float64, samples)
	err = inParallel(samples, workers, func() func(int) error {
		s, err := sim.NewSolver(st.Circuit, sim.Options{})
		res := &sim.Result{}
		return func(k int) error {
			e := err
			if e == nil {
				c := WithShifts(st.Circuit, MismatchShifts(st, d.Process, seed, k))
				offs[k], sws[k], e = sampleOffsets(s, c, st, d.Sweep, res)
			}
			if e != nil {
				return fmt.Errorf("monte carlo sample %d: %w", k, e)
			}
			return nil
		}
	})
	if err != nil {
		return nil, err
	}
	vcm := make([]float64, np)
	for i := range vcm {
		vcm[i] = d.Sweep.At(i, np)
	}
	r := &MismatchResult{Sigma: d.sigma(), VCM: vcm, Offset: make([]float64, np), Method: MethodMonteCarlo, Samples: samples,
		SampleOffsets: offs, SampleSwitchovers: sws}
	// Each point's offsets over the samples, centred on their mean: the
	// spread is what mismatch adds to the stage's own (systematic)
	// offset, and the change between two live points is the spread of
	// V_os(a) − V_os(b), the largest over every pair the diameter of the
	// centred columns.
	cols := make([][]float64, 0, np)
	for i := range np {
		col := make([]float64, samples)
		for k := range samples {
			col[k] = offs[k][i]
		}
		r.Offset[i] = stat.StdDev(col, nil) // NaN where a sample's gm is dead
		if math.IsNaN(r.Offset[i]) {
			continue
		}
		r.OffsetSigma = math.Max(r.OffsetSigma, r.Offset[i])
		m := stat.Mean(col, nil)
		for k := range col {
			col[k] -= m
		}
		cols = append(cols, col)
	}
	r.DriftSigma = math.Sqrt(diameter(cols) / float64(samples-1))
	r.SwitchoverSigma = stat.StdDev(sws, nil)
	return r, nil
}

// MonteCarloNominal draws samples Monte Carlo samples of design d at its
// nominal condition alone (monteCarlo), for a report beside the
// sensitivity estimate.
func MonteCarloNominal(d *Design, samples int, seed int64, workers int) (*MismatchResult, error) {
	if !mismatchOK(d.Process) {
		return nil, errNoMismatch(d.Process)
	}
	if samples < 2 {
		return nil, fmt.Errorf("monte carlo: %d samples, want at least 2", samples)
	}
	st, err := Build(d)
	if err != nil {
		return nil, err
	}
	return monteCarlo(d, st, samples, seed, max(1, workers))
}

// SampleResult is one Monte Carlo sample of a design at its nominal
// condition: the common modes, the input offset at each (NaN where gm is
// dead) and gm at vid = 0.
type SampleResult struct {
	VCM, Offset, GM []float64
}

// MismatchSample solves Monte Carlo sample k of seed (MismatchShifts) of
// design d at its nominal condition: what `netlist --testbench
// --mismatch-sample k --seed seed` exports for ngspice to run.
func MismatchSample(d *Design, seed int64, k int) (*SampleResult, error) {
	if !mismatchOK(d.Process) {
		return nil, errNoMismatch(d.Process)
	}
	st, err := Build(d)
	if err != nil {
		return nil, err
	}
	s, err := sim.NewSolver(st.Circuit, sim.Options{})
	if err != nil {
		return nil, err
	}
	res := &sim.Result{}
	off, _, err := sampleOffsets(s, WithShifts(st.Circuit, MismatchShifts(st, d.Process, seed, k)), st, d.Sweep, res)
	if err != nil {
		return nil, err
	}
	return &SampleResult{VCM: slices.Clone(res.VCM), Offset: off, GM: slices.Clone(res.GM)}, nil
}
