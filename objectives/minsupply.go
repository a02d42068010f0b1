package objectives

import (
	"math"
)

// MinSupplyResolution is how closely MinSupplyOf brackets the lowest
// working supply, V (issue 9: 5 mV).
const MinSupplyResolution = 5e-3

// meetsAt reports whether design d, put at corner and temperature tempK
// and supply v (its range following the supply when it does), meets
// targets t's gm_min and gm_ripple_max over its range — or, for a target
// not set, keeps gm alive everywhere (a finite ripple) — in one sweep at
// its step. A supply at which it has no DC solution, or an unphysical
// one, does not meet them.
func meetsAt(d *Design, corner string, v, tempK float64, t Targets, cache *SolverCache) bool {
	dc := d.Under(Condition{Corner: corner, Supply: v, TempK: tempK})
	m, _, _, err := measureStaged(dc, cache, dc.Sweep.Step, nil, func(Metrics, []Finding) bool { return false }, nil, Extras{})
	if err != nil || math.IsInf(m.GMRipple, 1) || math.IsNaN(m.GMRipple) {
		return false
	}
	if t.Has(TargetGMMin) && m.GMMin < t.GMMin {
		return false
	}
	if t.Has(TargetGMRippleMax) && m.GMRipple > t.GMRippleMax {
		return false
	}
	return true
}

// MinSupplyOf returns the lowest supply, to MinSupplyResolution, at which
// design d meets targets t's gm_min and gm_ripple_max rail to rail
// (meetsAt) at every corner and temperature of its sign-off: the largest
// over them of each one's lowest working supply, found by bisection
// between the process's MinSupply and the sign-off's highest supply
// (assuming a stage that works at one supply works at every higher one,
// which TestMinSupplyAgainstSweep checks on the demo designs). +Inf when
// the design does not meet them at the highest supply somewhere.
//
// The corners and temperatures after the first cost one sweep each when
// they work at the largest supply found so far, and a bisection above it
// otherwise.
//
// Its sweeps take compiled solvers from cache (nil: one of its own).
func MinSupplyOf(d *Design, t Targets, cache *SolverCache) float64 {
	if cache == nil {
		cache = &SolverCache{}
	}
	so := d.signoff()
	corners, temps, hi := so.Corners, so.Temperature.Values(), so.Supply.Max
	floor := MinSupply(d.Process)
	need := floor // the largest lowest working supply so far
	for _, c := range corners {
		for _, tk := range temps {
			if meetsAt(d, c, need, tk, t, cache) {
				continue
			}
			if !meetsAt(d, c, hi, tk, t, cache) {
				return math.Inf(1)
			}
			lo, up := need, hi // lo fails, up works
			for up-lo > MinSupplyResolution {
				mid := (lo + up) / 2
				if meetsAt(d, c, mid, tk, t, cache) {
					up = mid
				} else {
					lo = mid
				}
			}
			need = up
		}
	}
	return need
}
