package objectives

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// Span is a range a stage must work over, Min ≤ Nominal ≤ Max: a supply
// range (V) or a temperature range (K). A single value has all three
// equal.
type Span struct {
	Min, Nominal, Max float64
}

// Single returns the span of one value.
func Single(v float64) Span { return Span{v, v, v} }

// IsSingle reports whether the span holds one value.
func (s Span) IsSingle() bool { return s.Min == s.Nominal && s.Nominal == s.Max }

// Values returns the span's distinct values, nominal first, then the
// minimum and the maximum: the points of the range a stage is signed off
// at (docs/conditions.md).
func (s Span) Values() []float64 {
	out := []float64{s.Nominal}
	for _, v := range []float64{s.Min, s.Max} {
		if !slices.Contains(out, v) {
			out = append(out, v)
		}
	}
	return out
}

// Defaults of the sign-off section.
const (
	DefaultSigma = 3.0 // k of the k-sigma mismatch targets
	// MaxSigma is the largest k a sheet may ask for: beyond 10 the
	// Gaussian tail means nothing.
	MaxSigma = 10.0
	// MaxLoad is the largest load capacitance a sheet may set, F: 1 µF
	// is no on-chip load.
	MaxLoad = 1e-6
)

// Signoff is what a spec sheet or a design file asks a stage to hold
// over, beyond its nominal condition (docs/conditions.md): a supply range,
// a temperature range, the process corners, the k of k-sigma mismatch
// and the load the output current slews.
type Signoff struct {
	Supply      Span // V
	Temperature Span // K
	// Corners are the process corners to sign off at, in the process's
	// order (typical first); every corner the process defines when the
	// file names none.
	Corners []string
	// Nominal is the corner of the nominal condition: the process's
	// typical corner when it is among Corners, else the first of them.
	Nominal string
	Sigma   float64 // k, default DefaultSigma
	Load    float64 // F; 0 when none is given
}

// Condition is one condition a stage is measured at: a process corner,
// a supply and a temperature.
type Condition struct {
	Corner string
	Supply float64 // V
	TempK  float64 // K
}

// String names the condition for reading: "ss, 1.62 V, 125 °C".
func (c Condition) String() string {
	return fmt.Sprintf("%s, %s V, %s °C", c.Corner, strconv.FormatFloat(c.Supply, 'g', 6, 64),
		strconv.FormatFloat(math.Round((c.TempK-units.ZeroCelsius)*1e6)/1e6, 'g', 6, 64))
}

// Conditions returns every condition of the sign-off, the nominal one
// first, then each corner in the process's order × each supply × each
// temperature (Span.Values' order), each once: 5 corners × 3 supplies ×
// 3 temperatures give 45. A sign-off of one corner, one supply and one
// temperature has one condition.
func (s Signoff) Conditions() []Condition {
	nom := Condition{s.Nominal, s.Supply.Nominal, s.Temperature.Nominal}
	out := []Condition{nom}
	for _, c := range s.Corners {
		for _, v := range s.Supply.Values() {
			for _, t := range s.Temperature.Values() {
				if k := (Condition{c, v, t}); k != nom {
					out = append(out, k)
				}
			}
		}
	}
	return out
}

// effectiveSignoff returns so, or, when it names no corner (a design or
// sheet made in code, without a sign-off), the one condition of cond: its
// process's corner, supply and temperature, at the default k.
func effectiveSignoff(so Signoff, cond topologies.Conditions) Signoff {
	if len(so.Corners) > 0 {
		return so
	}
	c := ""
	if cond.Process != nil {
		c = cond.Process.Corner
	}
	return Signoff{Supply: Single(cond.Supply), Temperature: Single(cond.TempK), Corners: []string{c}, Nominal: c,
		Sigma: DefaultSigma, Load: so.Load}
}

// Single reports whether the sign-off has one condition only.
func (s Signoff) Single() bool {
	return len(s.Corners) <= 1 && s.Supply.IsSingle() && s.Temperature.IsSingle()
}

// signoffKeys are the top-level fields readSignoff reads.
func signoffKeys() []string { return []string{"supply", "temperature", "corners", "mismatch", "load"} }

// readSignoff reads a sheet's or design's supply (one value, or {min,
// max, nominal} with the midpoint as nominal by default), temperature
// (one value, default 27 °C, or {min, max, nominal} with 27 °C as nominal
// when it is in the range, else the midpoint), corners (default every
// corner of p), mismatch {sigma} and load, each checked at its own field.
// Every supply must be one the process takes, every temperature one at
// which each listed corner's cards hold.
func readSignoff(m *units.Map, p *device.Process) (Signoff, error) {
	var s Signoff
	var err error
	if s.Supply, err = readSpan(m, "supply", units.Volt, math.NaN(), func(v float64) bool { return supplyOK(p, v) }, supplyWant(p)); err != nil {
		return s, err
	}
	if s.Temperature, err = readSpan(m, "temperature", units.Temperature, 27+units.ZeroCelsius, temperatureOK, temperatureWant); err != nil {
		return s, err
	}
	if s.Corners, err = readCornerList(m, p); err != nil {
		return s, err
	}
	s.Nominal = s.Corners[0]
	if slices.Contains(s.Corners, p.CornerNames()[0]) {
		s.Nominal = p.CornerNames()[0]
	}
	s.Sigma = DefaultSigma
	if mm, ok, err := m.Map("mismatch"); err != nil {
		return s, err
	} else if ok {
		if err := mm.Check("sigma"); err != nil {
			return s, err
		}
		if s.Sigma, err = mm.QuantityOr("sigma", units.Dimensionless, DefaultSigma); err != nil {
			return s, err
		}
		if !(s.Sigma > 0 && s.Sigma <= MaxSigma) {
			return s, mm.Errorf("sigma", "a k above 0 and at most %g, for example 3", MaxSigma)
		}
	}
	if m.Has("load") {
		if s.Load, _, err = m.Quantity("load", units.Farad); err != nil {
			return s, err
		}
		if !(s.Load > 0 && s.Load <= MaxLoad) {
			return s, m.Errorf("load", "a capacitance above 0 F and at most 1uF, for example 5pF")
		}
	}
	return s, nil
}

// readSpan reads a field holding one value or {min, max, nominal}; def is
// the value of a field not written (NaN: the field is required, which
// the caller has checked) and the nominal of a range that gives none
// when def lies in it (else the midpoint). ok says which values the
// field takes, want says it in words.
func readSpan(m *units.Map, key string, d units.Dim, def float64, ok func(float64) bool, want string) (Span, error) {
	if !m.IsMap(key) {
		v, err := m.QuantityOr(key, d, def)
		if err != nil {
			return Span{}, err
		}
		if !ok(v) {
			return Span{}, m.Errorf(key, "%s", want)
		}
		return Single(v), nil
	}
	rm, _, err := m.Map(key)
	if err != nil {
		return Span{}, err
	}
	if err := rm.Check("min", "max", "nominal"); err != nil {
		return Span{}, err
	}
	if err := rm.Require("min", "max"); err != nil {
		return Span{}, err
	}
	var s Span
	for _, f := range []struct {
		key string
		v   *float64
	}{{"min", &s.Min}, {"max", &s.Max}} {
		if *f.v, _, err = rm.Quantity(f.key, d); err != nil {
			return Span{}, err
		}
		if !ok(*f.v) {
			return Span{}, rm.Errorf(f.key, "%s", want)
		}
	}
	if !(s.Max >= s.Min) {
		return Span{}, rm.Errorf("max", "a maximum at least the minimum (%s)", units.Format(s.Min, d))
	}
	s.Nominal = (s.Min + s.Max) / 2
	if def >= s.Min && def <= s.Max {
		s.Nominal = def
	}
	if rm.Has("nominal") {
		if s.Nominal, _, err = rm.Quantity("nominal", d); err != nil {
			return Span{}, err
		}
		if !(s.Nominal >= s.Min && s.Nominal <= s.Max) {
			return Span{}, rm.Errorf("nominal", "a nominal value from the minimum to the maximum (%s … %s)",
				units.Format(s.Min, d), units.Format(s.Max, d))
		}
	}
	return s, nil
}

// readCornerList reads the corners field: a corner's name or a list of
// them, each one p defines and each once, returned in p's order; every
// corner of p when the field is not written.
func readCornerList(m *units.Map, p *device.Process) ([]string, error) {
	known := p.CornerNames()
	names, ok, at, err := nameList(m, "corners")
	if err != nil {
		return nil, err
	}
	if !ok {
		return known, nil
	}
	if len(names) == 0 {
		return nil, m.Errorf("corners", "at least one corner of process %s (%s)", p.Name, strings.Join(known, ", "))
	}
	for i, n := range names {
		if !slices.Contains(known, n) {
			return nil, at(i, fmt.Sprintf("a corner of process %s: one of %s", p.Name, strings.Join(known, ", ")))
		}
		if j := slices.Index(names, n); j < i {
			return nil, at(i, fmt.Sprintf("each corner once (%s is also corners[%d])", n, j))
		}
	}
	return inOrderOf(known, names), nil
}

// checkSignoffCards refuses a temperature of the sign-off at which a
// listed corner's card has no valid instance, at the temperature field
// (its min or max when it is a range).
func checkSignoffCards(m *units.Map, p *device.Process, s Signoff) error {
	for _, c := range s.Corners {
		q, err := p.AtCorner(c)
		if err != nil {
			return m.ErrorAt("corners", c, "a corner of the process", err)
		}
		for _, t := range s.Temperature.Values() {
			typ, err := cardsHoldAt(q, t)
			if err == nil {
				continue
			}
			want := fmt.Sprintf("a temperature at which the %s card holds at corner %s", typ, c)
			field, at := m, "temperature"
			if m.IsMap("temperature") {
				field, _, _ = m.Map("temperature")
				at = "max"
				if t == s.Temperature.Min {
					at = "min"
				}
				if t == s.Temperature.Nominal && field.Has("nominal") {
					at = "nominal"
				}
			}
			if !field.Has(at) {
				return p.ErrorAt("tnom", fmt.Sprintf("a tnom from which the %s card holds at %s", typ,
					units.Format(t, units.Temperature)), err)
			}
			return field.ErrorAt(at, field.Text(at), want, err)
		}
	}
	return nil
}
