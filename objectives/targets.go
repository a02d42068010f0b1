package objectives

import (
	"encoding/json"
	"math"
)

// The targets a spec sheet may set, by their spec keys, in the fixed order
// that Targets.Check and Targets.Names use.
const (
	TargetGMMin              = "gm_min"
	TargetGMRippleMax        = "gm_ripple_max"
	TargetPowerMax           = "power_max"
	TargetAreaMax            = "area_max"
	TargetSwitchover         = "switchover"
	TargetTransitionWidthMax = "transition_width_max"
)

// targetOrder is the order of Check and Names.
func targetOrder() []string {
	return []string{TargetGMMin, TargetGMRippleMax, TargetPowerMax, TargetAreaMax,
		TargetSwitchover, TargetTransitionWidthMax}
}

// The trade-off axes a spec sheet's pareto list may name. Every axis is
// minimised except gm_min, which Spec.Axes negates (see there).
const (
	AxisGMRipple        = "gm_ripple"
	AxisPower           = "power"
	AxisArea            = "area"
	AxisGMMin           = "gm_min"
	AxisTransitionWidth = "transition_width"
)

// AxisNames returns every trade-off axis a spec may name, in a fixed order.
func AxisNames() []string {
	return []string{AxisGMRipple, AxisPower, AxisArea, AxisGMMin, AxisTransitionWidth}
}

// DefaultPareto returns the trade-off axes of a spec that names none:
// gm ripple, power and area (docs/search.md#trade-off-axes).
func DefaultPareto() []string { return []string{AxisGMRipple, AxisPower, AxisArea} }

// Natural scales of the trade-off axes when the spec sets no target on
// them; see Spec.AxisScale.
const (
	DefaultScaleGMRipple        = 1.0   // a doubling of gm across the range
	DefaultScalePower           = 1e-3  // 1 mW
	DefaultScaleArea            = 1e-8  // 10 000 µm²
	DefaultScaleGMMin           = 1e-4  // 100 µS
	DefaultScaleTransitionWidth = 0.2   // 200 mV
	defaultScaleUnknown         = 1.0   // an axis name Spec does not know
	worstAxisValue              = 1e300 // a failed evaluation's power or area on an axis
)

// RippleCap is the largest gm ripple that Ripple reports as finite, in
// the limit: a gm_min just above DeadGM·gm_max gives gm_max/gm_min − 1 just
// below 1/DeadGM − 1 = 999. An unbounded (+Inf) ripple is counted as this
// value wherever a finite number is needed, so that its violation and its
// axis value join those of finite ripples continuously and rank worst.
const RippleCap = 1/DeadGM - 1

// MissingAmount is the violation Amount of a target whose metric has no
// value: a switchover or transition width target on a stage without a
// handover (a single pair, NaN), or a metric that a failed evaluation left
// NaN or infinite. It is finite so that such a candidate can still be
// ranked by Deb's feasibility rules, and as large as the Amount of a
// switchover ten tolerances outside its window or of a transition width
// eleven times its limit. An unbounded gm ripple is not "missing": it
// counts as RippleCap (see Targets.Check).
const MissingAmount = 10.0

// Targets are a spec sheet's targets and budgets, all SI (issue 3, "the
// spec sheet"). Every target is optional: one that is not set holds NaN
// (ReadSpec writes NaN for every target left out). A limit that is zero,
// negative or infinite also counts as not set, so the zero Targets{} sets
// none, like a spec without targets (pure trade-off exploration).
type Targets struct {
	GMMin              float64          // S: every gm over the range at least this
	GMRippleMax        float64          // fraction: gm_max/gm_min − 1 at most this (0.2 is 20 %)
	PowerMax           float64          // W
	AreaMax            float64          // m²
	Switchover         SwitchoverTarget // V; set when its Tolerance is
	TransitionWidthMax float64          // V
}

// SwitchoverTarget asks for the handover's centre (Metrics.Switchover)
// within At ± Tolerance. It is set when Tolerance is a positive finite
// number and At a finite one.
type SwitchoverTarget struct {
	At        float64 // V
	Tolerance float64 // V, > 0
}

// NoTargets returns Targets with every target unset (NaN).
func NoTargets() Targets {
	nan := math.NaN()
	return Targets{GMMin: nan, GMRippleMax: nan, PowerMax: nan, AreaMax: nan,
		Switchover: SwitchoverTarget{At: nan, Tolerance: nan}, TransitionWidthMax: nan}
}

// isLimit reports whether x is a set limit: positive and finite (NaN is
// not).
func isLimit(x float64) bool { return x > 0 && !math.IsInf(x, 1) }

func isFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// Has reports whether the target with that spec key is set; false for a
// name that is no target.
func (t Targets) Has(name string) bool {
	switch name {
	case TargetGMMin:
		return isLimit(t.GMMin)
	case TargetGMRippleMax:
		return isLimit(t.GMRippleMax)
	case TargetPowerMax:
		return isLimit(t.PowerMax)
	case TargetAreaMax:
		return isLimit(t.AreaMax)
	case TargetSwitchover:
		return isLimit(t.Switchover.Tolerance) && isFinite(t.Switchover.At)
	case TargetTransitionWidthMax:
		return isLimit(t.TransitionWidthMax)
	}
	return false
}

// Names returns the spec keys of the set targets, in the order gm_min,
// gm_ripple_max, power_max, area_max, switchover, transition_width_max:
// the order of Check's violations.
func (t Targets) Names() []string {
	var out []string
	for _, n := range targetOrder() {
		if t.Has(n) {
			out = append(out, n)
		}
	}
	return out
}

// Violation is how far one set target is from being met.
type Violation struct {
	Target string  // the spec key: "gm_min", "gm_ripple_max", …
	Value  float64 // the measured value (SI); NaN or +Inf as in Metrics
	// Limit is the bound: the target's value, and for the switchover the
	// wanted centre At (the window is At ± Tolerance).
	Limit float64
	// Amount is the normalised violation, ≥ 0 and finite, 0 when the
	// target is met; see Targets.Check.
	Amount float64
}

// Met reports whether the target is met.
func (v Violation) Met() bool { return v.Amount == 0 }

// MarshalJSON writes {"target", "value", "limit", "amount"} in SI units,
// with a NaN or infinite value (a missing switchover, an unbounded ripple)
// as null, as Metrics does.
func (v Violation) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Target string   `json:"target"`
		Value  *float64 `json:"value"`
		Limit  *float64 `json:"limit"`
		Amount float64  `json:"amount"`
	}{v.Target, finite(v.Value), finite(v.Limit), v.Amount})
}

// Check measures m against every set target and returns one Violation per
// set target, met ones included (Amount 0), in the order of Names.
//
// The Amount is normalised by the limit, so that targets of different
// units add up in Deb's feasibility rules (K. Deb, "An efficient
// constraint handling method for genetic algorithms", Comput. Methods
// Appl. Mech. Engrg. 186, 2000):
//
//	gm_min                 (limit − value) / limit
//	gm_ripple_max, power_max, area_max, transition_width_max
//	                       (value − limit) / limit
//	switchover             (|value − at| − tolerance) / tolerance
//
// each clipped below at 0. An unbounded ripple (+Inf, gm falls to zero
// somewhere) fails its target and counts as a ripple of RippleCap, so its
// Amount is max(MissingAmount, (RippleCap − limit)/limit): above that of
// every finite ripple, and the limit of theirs as gm_min sinks towards
// zero. A missing switchover or transition width (NaN: a single pair has
// no handover), and any other NaN or infinite value, fails with Amount
// MissingAmount.
func (t Targets) Check(m Metrics) []Violation {
	var out []Violation
	above := func(name string, value, limit float64) { // value must be ≥ limit
		amt := MissingAmount
		if isFinite(value) {
			amt = math.Max(0, (limit-value)/limit)
		}
		out = append(out, Violation{Target: name, Value: value, Limit: limit, Amount: amt})
	}
	below := func(name string, value, limit float64) { // value must be ≤ limit
		amt := MissingAmount
		if isFinite(value) {
			amt = math.Max(0, (value-limit)/limit)
		}
		out = append(out, Violation{Target: name, Value: value, Limit: limit, Amount: amt})
	}
	if t.Has(TargetGMMin) {
		above(TargetGMMin, m.GMMin, t.GMMin)
	}
	if t.Has(TargetGMRippleMax) {
		lim := t.GMRippleMax
		if math.IsInf(m.GMRipple, 1) {
			out = append(out, Violation{Target: TargetGMRippleMax, Value: m.GMRipple, Limit: lim,
				Amount: math.Max(MissingAmount, (RippleCap-lim)/lim)})
		} else {
			below(TargetGMRippleMax, m.GMRipple, lim)
		}
	}
	if t.Has(TargetPowerMax) {
		below(TargetPowerMax, m.Power, t.PowerMax)
	}
	if t.Has(TargetAreaMax) {
		below(TargetAreaMax, m.Area, t.AreaMax)
	}
	if t.Has(TargetSwitchover) {
		sw := t.Switchover
		amt := MissingAmount
		if isFinite(m.Switchover) {
			amt = math.Max(0, (math.Abs(m.Switchover-sw.At)-sw.Tolerance)/sw.Tolerance)
		}
		out = append(out, Violation{Target: TargetSwitchover, Value: m.Switchover, Limit: sw.At, Amount: amt})
	}
	if t.Has(TargetTransitionWidthMax) {
		below(TargetTransitionWidthMax, m.TransitionWidth, t.TransitionWidthMax)
	}
	return out
}

// TotalViolation returns the sum of the Amounts: 0 when every target is
// met. It is the constraint violation Deb's rules compare.
func TotalViolation(vs []Violation) float64 {
	s := 0.0
	for _, v := range vs {
		s += v.Amount
	}
	return s
}

// MarshalJSON writes the set targets only, by their spec keys, in SI
// units: {"gm_min": 1.5e-4, "switchover": {"at": 0.9, "tolerance": 0.1}, …};
// {} when none is set.
func (t Targets) MarshalJSON() ([]byte, error) {
	out := map[string]any{}
	for _, n := range t.Names() {
		switch n {
		case TargetGMMin:
			out[n] = t.GMMin
		case TargetGMRippleMax:
			out[n] = t.GMRippleMax
		case TargetPowerMax:
			out[n] = t.PowerMax
		case TargetAreaMax:
			out[n] = t.AreaMax
		case TargetSwitchover:
			out[n] = map[string]float64{"at": t.Switchover.At, "tolerance": t.Switchover.Tolerance}
		case TargetTransitionWidthMax:
			out[n] = t.TransitionWidthMax
		}
	}
	return json.Marshal(out)
}

// Axes returns the values of m on the spec's trade-off axes (s.Pareto, in
// that order), every one to be minimised:
//
//	gm_ripple         the ripple; +Inf (or NaN) counts as RippleCap
//	power, area       W, m²; a NaN or infinite value (only a failed
//	                  evaluation gives one) counts as 1e300, last of all
//	gm_min            −gm_min in S (negated, so that minimising it
//	                  maximises gm_min; negation keeps the axis linear and
//	                  defined at gm_min = 0); NaN counts as 0
//	transition_width  V; NaN (no handover) counts as the width of the
//	                  input range, the widest a transition can be there
//
// An axis name the spec does not know gives NaN.
func (s *Spec) Axes(m Metrics) []float64 {
	out := make([]float64, len(s.Pareto))
	for i, a := range s.Pareto {
		var v float64
		switch a {
		case AxisGMRipple:
			v = m.GMRipple
			if !isFinite(v) {
				v = RippleCap
			}
		case AxisPower, AxisArea:
			v = m.Power
			if a == AxisArea {
				v = m.Area
			}
			if !isFinite(v) {
				v = worstAxisValue
			}
		case AxisGMMin:
			v = 0 - m.GMMin // 0 − x, so that gm_min = 0 gives +0, not −0
			if !isFinite(v) {
				v = 0
			}
		case AxisTransitionWidth:
			v = m.TransitionWidth
			if !isFinite(v) {
				v = s.Range.High - s.Range.Low
			}
		default:
			v = math.NaN()
		}
		out[i] = v
	}
	return out
}

// AxisScale returns a natural unit of the trade-off axis, by which
// hypervolume and scalarisation divide its values: the spec's target on
// it when set (gm_ripple_max for gm_ripple, power_max, area_max, gm_min,
// transition_width_max), else a default: ripple 1.0 (a doubling), power
// 1 mW, area 10 000 µm², gm_min 100 µS, transition width 0.2 V. The scale
// is positive; an axis name the spec does not know gives 1.
func (s *Spec) AxisScale(axis string) float64 {
	pick := func(limit, def float64) float64 {
		if isLimit(limit) {
			return limit
		}
		return def
	}
	t := s.Targets
	switch axis {
	case AxisGMRipple:
		return pick(t.GMRippleMax, DefaultScaleGMRipple)
	case AxisPower:
		return pick(t.PowerMax, DefaultScalePower)
	case AxisArea:
		return pick(t.AreaMax, DefaultScaleArea)
	case AxisGMMin:
		return pick(t.GMMin, DefaultScaleGMMin)
	case AxisTransitionWidth:
		return pick(t.TransitionWidthMax, DefaultScaleTransitionWidth)
	}
	return defaultScaleUnknown
}

// Tightened returns the targets moved inwards by the fraction margin: the
// gm floor raised by it, every maximum and the switchover tolerance
// lowered by it. A search that meets the tightened targets leaves that
// much room for the difference between its models and the designer's
// simulator (a guard band: common practice, no source).
func (t Targets) Tightened(margin float64) Targets {
	u := t
	if t.Has(TargetGMMin) {
		u.GMMin = t.GMMin * (1 + margin)
	}
	if t.Has(TargetGMRippleMax) {
		u.GMRippleMax = t.GMRippleMax * (1 - margin)
	}
	if t.Has(TargetPowerMax) {
		u.PowerMax = t.PowerMax * (1 - margin)
	}
	if t.Has(TargetAreaMax) {
		u.AreaMax = t.AreaMax * (1 - margin)
	}
	if t.Has(TargetSwitchover) {
		u.Switchover.Tolerance = t.Switchover.Tolerance * (1 - margin)
	}
	if t.Has(TargetTransitionWidthMax) {
		u.TransitionWidthMax = t.TransitionWidthMax * (1 - margin)
	}
	return u
}
