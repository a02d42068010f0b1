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
	TargetOffsetMax          = "offset_max"
	TargetOffsetDriftMax     = "offset_drift_max"
	TargetSlewMin            = "slew_min"
	TargetMinSupplyMax       = "min_supply_max"
	TargetNoiseMax           = "noise_max"
)

// targetOrder is the order of Check and Names: the spec keys of the
// entries that a spec may bound, in the catalog's order.
func targetOrder() []string { return targetKeysOf(catalog) }

func targetKeysOf(entries []Entry) []string {
	var out []string
	for _, e := range entries {
		if e.HasTarget() {
			out = append(out, e.Target.Key)
		}
	}
	return out
}

// The trade-off axes a spec sheet's pareto list may name. Every axis is
// minimised except gm_min, which Spec.Axes negates (see there).
const (
	AxisGMRipple        = "gm_ripple"
	AxisPower           = "power"
	AxisArea            = "area"
	AxisGMMin           = "gm_min"
	AxisTransitionWidth = "transition_width"
	AxisOffset          = "offset"
	AxisOffsetDrift     = "offset_drift"
	AxisSlew            = "slew"
	AxisMinSupply       = "min_supply"
	AxisNoise           = "noise"
)

// AxisNames returns every trade-off axis a spec may name, in a fixed
// order: those of DefaultPareto, then the others, each in the catalog's
// order.
func AxisNames() []string { return axisNamesOf(catalog) }

func axisNamesOf(entries []Entry) []string {
	out := defaultParetoOf(entries)
	for _, e := range entries {
		if e.IsAxis() && !e.Axis.Default {
			out = append(out, e.Key)
		}
	}
	return out
}

// DefaultPareto returns the trade-off axes of a spec that names none:
// gm ripple, power and area (docs/search.md#trade-off-axes).
func DefaultPareto() []string { return defaultParetoOf(catalog) }

func defaultParetoOf(entries []Entry) []string {
	var out []string
	for _, e := range entries {
		if e.IsAxis() && e.Axis.Default {
			out = append(out, e.Key)
		}
	}
	return out
}

// Natural scales of the trade-off axes when the spec sets no target on
// them; see Spec.AxisScale.
const (
	DefaultScaleGMRipple        = 1.0   // a doubling of gm across the range
	DefaultScalePower           = 1e-3  // 1 mW
	DefaultScaleArea            = 1e-8  // 10 000 µm²
	DefaultScaleGMMin           = 1e-4  // 100 µS
	DefaultScaleTransitionWidth = 0.2   // 200 mV
	DefaultScaleOffset          = 1e-3  // 1 mV
	DefaultScaleSlew            = 1e6   // 1 V/µs
	DefaultScaleMinSupply       = 0.1   // 100 mV
	DefaultScaleNoise           = 10e-9 // 10 nV/√Hz
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
	OffsetMax          float64          // V, k-sigma
	OffsetDriftMax     float64          // V, k-sigma
	SlewMin            float64          // V/s into the load
	MinSupplyMax       float64          // V
	NoiseMax           float64          // V/√Hz at NoiseAt
	NoiseAt            float64          // Hz; the frequency of NoiseMax (NaN when it is not set)
}

// SwitchoverTarget asks for the handover's centre (Metrics.Switchover)
// within At ± Tolerance. It is set when Tolerance is a positive finite
// number and At a finite one.
type SwitchoverTarget struct {
	At        float64 // V
	Tolerance float64 // V, > 0
}

// NoTargets returns Targets with every target unset (NaN).
func NoTargets() Targets { return noTargetsOf(catalog) }

func noTargetsOf(entries []Entry) Targets {
	var t Targets
	nan := math.NaN()
	t.NoiseAt = nan
	for _, e := range entries {
		switch {
		case !e.HasTarget():
		case e.Target.Window != nil:
			*e.Target.Window(&t) = SwitchoverTarget{At: nan, Tolerance: nan}
		default:
			*e.Target.Limit(&t) = nan
		}
	}
	return t
}

// isLimit reports whether x is a set limit: positive and finite (NaN is
// not).
func isLimit(x float64) bool { return x > 0 && !math.IsInf(x, 1) }

func isFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// Has reports whether the target with that spec key is set; false for a
// name that is no target.
func (t Targets) Has(name string) bool {
	e := find(catalog, name)
	return e != nil && e.HasTarget() && e.Target.Key == name && t.has(e)
}

// has reports whether e's target is set in t.
func (t *Targets) has(e *Entry) bool {
	if e.Target.Window != nil {
		w := e.Target.Window(t)
		return isLimit(w.Tolerance) && isFinite(w.At)
	}
	return isLimit(*e.Target.Limit(t))
}

// Bound returns the target with that spec key: its limit (a window's
// centre At) and a window's tolerance (0 for a limit); NaN, NaN for a
// name that is no target. Whether it is set is Has's to say.
func (t Targets) Bound(name string) (limit, tol float64) {
	e := find(catalog, name)
	if e == nil || !e.HasTarget() || e.Target.Key != name {
		return math.NaN(), math.NaN()
	}
	return t.limit(e)
}

// limit returns e's target in t: the limit and, for a Window, the
// tolerance (0 otherwise).
func (t *Targets) limit(e *Entry) (limit, tol float64) {
	if e.Target.Window != nil {
		w := e.Target.Window(t)
		return w.At, w.Tolerance
	}
	return *e.Target.Limit(t), 0
}

// Names returns the spec keys of the set targets, in the order gm_min,
// gm_ripple_max, power_max, area_max, switchover, transition_width_max:
// the order of Check's violations.
func (t Targets) Names() []string { return t.namesOf(catalog) }

func (t Targets) namesOf(entries []Entry) []string {
	var out []string
	for i := range entries {
		if e := &entries[i]; e.HasTarget() && t.has(e) {
			out = append(out, e.Target.Key)
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
	// Condition names where the value was measured ("ss, 1.62 V,
	// 125 °C") when the design is measured at more than one condition:
	// where the target binds (CheckWorst); "" at one.
	Condition string
}

// Met reports whether the target is met.
func (v Violation) Met() bool { return v.Amount == 0 }

// MarshalJSON writes {"target", "value", "limit", "amount", "condition"}
// in SI units (condition left out at a single condition),
// with a NaN or infinite value (a missing switchover, an unbounded ripple)
// as null, as Metrics does.
func (v Violation) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Target string   `json:"target"`
		Value  *float64 `json:"value"`
		Limit  *float64 `json:"limit"`
		Amount float64  `json:"amount"`
		Cond   string   `json:"condition,omitempty"`
	}{v.Target, finite(v.Value), finite(v.Limit), v.Amount, v.Condition})
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
//
// The entries of the catalog say which targets there are, their senses
// and the unbounded figures (Entry.Unbounded, Entry.Cap).
func (t Targets) Check(m Metrics) []Violation { return t.checkOf(catalog, m) }

func (t Targets) checkOf(entries []Entry, m Metrics) []Violation {
	var out []Violation
	for i := range entries {
		e := &entries[i]
		if !e.HasTarget() || !t.has(e) {
			continue
		}
		value := e.Value(m)
		limit, tol := t.limit(e)
		amt := amount(e.Sense, value, limit, tol)
		if e.Unbounded && math.IsInf(value, 1) {
			amt = math.Max(MissingAmount, amount(e.Sense, e.Cap, limit, tol))
		}
		out = append(out, Violation{Target: e.Target.Key, Value: value, Limit: limit, Amount: amt})
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
func (t Targets) MarshalJSON() ([]byte, error) { return json.Marshal(t.jsonOf(catalog)) }

func (t Targets) jsonOf(entries []Entry) map[string]any {
	out := map[string]any{}
	for i := range entries {
		e := &entries[i]
		if !e.HasTarget() || !t.has(e) {
			continue
		}
		limit, tol := t.limit(e)
		switch {
		case e.Target.Window != nil:
			out[e.Target.Key] = map[string]float64{"at": limit, "tolerance": tol}
		case e.Target.Frequency:
			out[e.Target.Key] = map[string]*float64{"density": finite(limit), "at": finite(t.NoiseAt)}
		default:
			out[e.Target.Key] = limit
		}
	}
	return out
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
//
// The entries of the catalog give each axis's sense (Entry.Sense) and its
// stand-in for a missing value (Axis.Missing).
func (s *Spec) Axes(m Metrics) []float64 { return s.axesOf(catalog, m) }

func (s *Spec) axesOf(entries []Entry, m Metrics) []float64 {
	out := make([]float64, len(s.Pareto))
	for i, a := range s.Pareto {
		e := find(entries, a)
		if e == nil || e.Key != a || !e.IsAxis() {
			out[i] = math.NaN()
			continue
		}
		v := e.Value(m)
		if e.Sense == AtLeast {
			v = 0 - v // 0 − x, so that x = 0 gives +0, not −0
		}
		if !isFinite(v) {
			v = e.Axis.Missing(s.Range)
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
func (s *Spec) AxisScale(axis string) float64 { return s.axisScaleOf(catalog, axis) }

func (s *Spec) axisScaleOf(entries []Entry, axis string) float64 {
	e := find(entries, axis)
	if e == nil || e.Key != axis || !e.IsAxis() {
		return defaultScaleUnknown
	}
	if e.HasTarget() && e.Target.Limit != nil && s.Targets.has(e) {
		return *e.Target.Limit(&s.Targets)
	}
	return e.Axis.Scale
}

// Tightened returns the targets moved inwards by the fraction margin: the
// gm floor raised by it, every maximum and the switchover tolerance
// lowered by it. A search that meets the tightened targets leaves that
// much room for the difference between its models and the designer's
// simulator (a guard band: common practice, no source).
func (t Targets) Tightened(margin float64) Targets { return t.tightenedOf(catalog, margin) }

func (t Targets) tightenedOf(entries []Entry, margin float64) Targets {
	u := t
	for i := range entries {
		e := &entries[i]
		if !e.HasTarget() || !t.has(e) {
			continue
		}
		switch e.Sense {
		case AtLeast:
			*e.Target.Limit(&u) *= 1 + margin
		case AtMost:
			*e.Target.Limit(&u) *= 1 - margin
		case Window:
			e.Target.Window(&u).Tolerance *= 1 - margin
		}
	}
	return u
}
