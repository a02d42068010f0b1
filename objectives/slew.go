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

// slewCurrents returns, at every point of sweep res, the smallest
// magnitude of the output current the stage delivers with the inputs
// driven apart by SlewVID (slewInputs), both ways, each solved by Newton
// from the point's vid = 0 solution (sim.Solver.OutputNear). A point
// whose inputs clip to one rail (both at 0 V or both at the supply) has
// no large input and gives 0.
func slewCurrents(st *topologies.Stage, s *sim.Solver, res *sim.Result, supply float64) ([]float64, error) {
	n := res.Unknowns
	out := make([]float64, res.Len())
	for i, vcm := range res.VCM {
		cm, dm := slewInputs(vcm, supply)
		if dm == 0 {
			continue
		}
		up, _, err := s.OutputNear(res.X[i*n:(i+1)*n], cm, dm)
		if err != nil {
			return nil, err
		}
		dn, _, err := s.OutputNear(res.X[i*n:(i+1)*n], cm, -dm)
		if err != nil {
			return nil, err
		}
		out[i] = math.Min(math.Abs(up), math.Abs(dn))
	}
	return out, nil
}

// addSlew puts the slew figures of a sweep into m: slew_current, the
// smallest large-input output current over the range, and slew, that
// current into the design's load (NaN without one).
func addSlew(m *Metrics, st *topologies.Stage, s *sim.Solver, res *sim.Result, d *Design) error {
	cur, err := slewCurrents(st, s, res, d.Supply)
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
