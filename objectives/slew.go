package objectives

import (
	"errors"
	"math"

	"pairsmith/sim"
	"pairsmith/topologies"
	"pairsmith/units"
)

// SlewVID is the differential input of the slew solve: 0.5 V, each input
// held within the rails (docs/metrics.md#slew).
const SlewVID = 0.5

// slewInputs returns the common mode and differential input that put
// vcm ± SlewVID/2 on the inputs, each clipped to the rails 0 … supply.
func slewInputs(vcm, supply float64) (cm, dm float64) {
	hi := math.Min(supply, math.Max(0, vcm+SlewVID/2))
	lo := math.Min(supply, math.Max(0, vcm-SlewVID/2))
	return (hi + lo) / 2, hi - lo
}

// slewCurrents returns, at every point of sweep res (of step step), the
// smallest magnitude of the output current the stage delivers with the
// inputs driven apart by SlewVID (slewInputs), both ways. Where neither
// input clips to a rail the inputs are SlewVID apart at the point's own
// common mode, and each polarity is one continuation sweep at that vid
// over those points, started from the first one's vid = 0 solution
// (sim.Solver.SweepStart); towards each rail the inputs
// clip, and each point is solved by Newton from its inner neighbour's
// solution (sim.Solver.OutputNear). A point whose inputs clip to one
// rail (both at 0 V or both at the supply) has no large input and
// gives 0.
func slewCurrents(st *topologies.Stage, s *sim.Solver, res *sim.Result, supply, step float64) ([]float64, error) {
	n, np := res.Unknowns, res.Len()
	out := make([]float64, np)
	for k := range out {
		out[k] = math.Inf(1)
	}
	k0, k1 := -1, -1 // the points whose inputs do not clip
	for k, v := range res.VCM {
		if _, dm := slewInputs(v, supply); dm == SlewVID && v-SlewVID/2 >= 0 && v+SlewVID/2 <= supply {
			if k0 < 0 {
				k0 = k
			}
			k1 = k
		}
	}
	probe := st.Circuit.ProbeIndex(topologies.ProbeOut)
	for _, sign := range []float64{1, -1} {
		// edge[0] and edge[1] are the solutions at k0 and k1, where the
		// clipped points start from.
		edge := [2][]float64{make([]float64, n), make([]float64, n)}
		if k0 >= 0 {
			sp := sim.SweepSpec{Low: res.VCM[k0], High: res.VCM[k1], Step: step, VID: sign * SlewVID}
			if pts, err := sp.Points(); err == nil && pts == k1-k0+1 && k1 > k0 {
				var r sim.Result
				if err := s.SweepStart(sp, &r, res.X[k0*n:(k0+1)*n]); err != nil {
					return nil, err
				}
				for j := range pts {
					out[k0+j] = math.Min(out[k0+j], math.Abs(r.Probe[probe][j]))
				}
				copy(edge[0], r.X[:n])
				copy(edge[1], r.X[(pts-1)*n:pts*n])
			} else {
				k0, k1 = -1, -1 // solve every point on its own
			}
		}
		if k0 < 0 {
			copy(edge[0], res.X[:n])
			copy(edge[1], edge[0])
		}
		// Outwards from the unclipped points: down to the first point,
		// up to the last.
		for _, side := range []struct {
			from, to, by int
			x            []float64
		}{{k0 - 1, -1, -1, edge[0]}, {max(k1+1, 0), np, 1, edge[1]}} {
			if k0 < 0 && side.by < 0 {
				continue // no unclipped points: one pass from the first point up
			}
			for k := side.from; k != side.to; k += side.by {
				cm, dm := slewInputs(res.VCM[k], supply)
				if dm == 0 {
					out[k] = 0
					continue
				}
				i, _, err := s.OutputNear(side.x, cm, sign*dm, side.x)
				if err != nil {
					return nil, err
				}
				out[k] = math.Min(out[k], math.Abs(i))
			}
		}
	}
	return out, nil
}

// addSlew puts the slew figures of a sweep of step step into m: slew_current, the
// smallest large-input output current over the range, and slew, that
// current into the design's load (NaN without one).
func addSlew(m *Metrics, st *topologies.Stage, s *sim.Solver, res *sim.Result, d *Design, step float64) error {
	cur, err := slewCurrents(st, s, res, d.Supply, step)
	if err != nil {
		return err
	}
	m.SlewCurrent = math.Inf(1)
	for _, c := range cur {
		m.SlewCurrent = math.Min(m.SlewCurrent, c)
	}
	if math.IsInf(m.SlewCurrent, 1) {
		m.SlewCurrent = math.NaN()
	}
	m.Slew = math.NaN()
	if d.Signoff.Load > 0 {
		m.Slew = m.SlewCurrent / d.Signoff.Load
	}
	return nil
}

// checkLoadAsked refuses a sheet that bounds or trades on the slew rate
// without a load to slew, at the field that asks.
func checkLoadAsked(m *units.Map, s *Spec) error {
	if s.Signoff.Load > 0 {
		return nil
	}
	const want = "a load (load: 5pF, say) for a slew rate into it"
	if s.Targets.Has(TargetSlewMin) {
		tm, _, _ := m.Map("targets")
		return tm.ErrorAt(TargetSlewMin, tm.Text(TargetSlewMin), want, errors.New("the sheet gives no load"))
	}
	for i, a := range s.Pareto {
		if a == AxisSlew {
			return m.ItemErrorAt("pareto", i, a, want, errors.New("the sheet gives no load"))
		}
	}
	return nil
}
