package objectives

import (
	"errors"
	"fmt"
	"path/filepath"
	"strings"
	"unicode"
	"unicode/utf8"

	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// conditions are what a design file and a spec sheet both give: the
// process and the operating point.
type conditions struct {
	ProcessRef  string // as written
	ProcessPath string // absolute path of a process file; "" for a built-in
	topologies.Conditions
	// Margin is the file's saturation_margin, V; 0 when it gives none
	// (the process's then holds). Process carries it already.
	Margin float64
	// Signoff is what the stage must hold over; Conditions are its
	// nominal condition (Process at its nominal corner).
	Signoff Signoff
	// corners holds the process at each corner of Signoff, the nominal
	// one being Process itself.
	corners map[string]*device.Process
}

// readConditions reads the process (a built-in name or a file relative to
// baseDir) and the sign-off (readSignoff: the supply, from MinSupply of the
// process to MaxSupply, the temperature, 27C when not given, the corners,
// the mismatch k and the load).
func readConditions(m *units.Map, baseDir string) (conditions, error) {
	var c conditions
	var err error
	if c.ProcessRef, _, err = m.String("process"); err != nil {
		return c, err
	}
	if c.Process, err = device.ResolveProcess(c.ProcessRef, baseDir); err != nil {
		var ue *units.Error
		if errors.As(err, &ue) {
			return c, err // an error inside the process file names its own place
		}
		return c, m.ErrorAt("process", c.ProcessRef,
			"a built-in process ("+strings.Join(device.BuiltinNames(), ", ")+") or the path of a process file", err)
	}
	if _, builtin := device.Builtin(c.ProcessRef); !builtin {
		path := c.ProcessRef
		if !filepath.IsAbs(path) {
			path = filepath.Join(baseDir, path)
		}
		if abs, err := filepath.Abs(path); err == nil {
			path = abs
		}
		c.ProcessPath = path
	}
	if c.Signoff, err = readSignoff(m, c.Process); err != nil {
		return c, err
	}
	if err := checkSignoffCards(m, c.Process, c.Signoff); err != nil {
		return c, err
	}
	c.Supply, c.TempK = c.Signoff.Supply.Nominal, c.Signoff.Temperature.Nominal
	c.BiasRefK = c.TempK // the reference currents' values hold at the nominal temperature
	if m.Has("saturation_margin") {
		if c.Margin, _, err = m.Quantity("saturation_margin", units.Volt); err != nil {
			return c, err
		}
		for _, r := range device.RuleRanges() {
			if r.Field == "saturation_margin" && !(r.Contains(c.Margin) && c.Margin > 0) {
				return c, m.ErrorAt("saturation_margin", m.Text("saturation_margin"), r.Want()+", above 0", errors.New(r.Why))
			}
		}
		// The file's margin overrides the process's, in a copy of it.
		p := *c.Process
		p.Rules.SaturationMargin = c.Margin
		c.Process = &p
	}
	typical := c.Process
	if c.Signoff.Nominal != typical.CornerNames()[0] {
		if c.Process, err = typical.AtCorner(c.Signoff.Nominal); err != nil {
			return c, err
		}
	}
	c.corners = map[string]*device.Process{c.Signoff.Nominal: c.Process}
	for _, name := range c.Signoff.Corners {
		if name == c.Signoff.Nominal {
			continue
		}
		if c.corners[name], err = typical.AtCorner(name); err != nil {
			return c, err
		}
	}
	return c, nil
}

// checkFollowing refuses a range that does not hold at the sign-off's
// lowest supply, which readRange (at the nominal one) cannot see: a high
// end that follows the supply less than one step above the low end, or
// an end more than that supply beyond a rail.
func checkFollowing(rm *units.Map, low, high, step float64, follows bool, s Signoff) error {
	v := func(x float64) string { return units.Format(x, units.Volt) }
	lowest := s.Supply.Min
	switch {
	case follows && lowest-low < step:
		return rm.Errorf("low", "a low end at least one step (%s) below the lowest supply (%s)", v(step), v(lowest))
	case low < -lowest:
		return rm.Errorf("low", "a low end at most the lowest supply below the negative rail (at least %s)", v(-lowest))
	case !follows && high > 2*lowest:
		return rm.Errorf("high", "a high end at most the lowest supply above the positive rail (at most %s)", v(2*lowest))
	}
	return nil
}

// HighSupply is what a range's high end is written as to follow the
// supply: the positive rail at every supply of the sign-off.
const HighSupply = "supply"

// readRange reads a common-mode range {low, high, step} (a design's sweep,
// a spec's input_range): rail to rail at DefaultStep by default, a high
// end that follows the supply (follows) when it is not written or is
// written as HighSupply, within a
// supply beyond either rail, low below high, a step no larger than the
// range and at most a million points. A range narrower than a step the
// file does not write is blamed on the end it writes, not on the step.
func readRange(rm *units.Map, supply float64) (low, high, step float64, follows bool, err error) {
	if err = rm.Check("low", "high", "step"); err != nil {
		return
	}
	if low, err = rm.QuantityOr("low", units.Volt, 0); err != nil {
		return
	}
	high, follows = supply, true
	if t, ok, _ := rm.String("high"); !ok || t != HighSupply {
		follows = false
		if high, err = rm.QuantityOr("high", units.Volt, supply); err != nil {
			if w, _ := utf8.DecodeRuneInString(t); unicode.IsLetter(w) { // a word, not a quantity
				err = rm.Errorf("high", "a voltage, for example 1.7V, or %s to follow the supply", HighSupply)
			}
			return
		}
		follows = !ok
	}
	if step, err = rm.QuantityOr("step", units.Volt, DefaultStep); err != nil {
		return
	}
	v := func(x float64) string { return units.Format(x, units.Volt) }
	switch {
	case low < -supply:
		err = rm.Errorf("low", "a low end at most the supply below the negative rail (at least %s)", v(-supply))
	case high > 2*supply:
		err = rm.Errorf("high", "a high end at most the supply above the positive rail (at most %s)", v(2*supply))
	case !(high > low):
		key := "high"
		if follows {
			key = "low"
		}
		err = rm.Errorf(key, "low below high (low %s, high %s)", v(low), v(high))
	case !(step > 0):
		err = rm.Errorf("step", "a step above 0 V, for example 10mV")
	case step > high-low && rm.Has("step"):
		err = rm.Errorf("step", "a step no larger than the range (%s)", short(high-low, units.Volt))
	case step > high-low:
		key, want := "high", fmt.Sprintf("a high end at least one step (%s) above low (%s)", v(step), v(low))
		if follows {
			key, want = "low", fmt.Sprintf("a low end at least one step (%s) below high (%s)", v(step), v(high))
		}
		err = rm.Errorf(key, "%s, or a smaller step", want)
	case (high-low)/step > 1e6:
		err = rm.Errorf("step", "a step giving at most a million points")
	}
	return
}

// supplyOK reports whether a supply is one pairsmith takes on process p
// (supplyWant says which).
func supplyOK(p *device.Process, v float64) bool { return v >= MinSupply(p) && v <= MaxSupply }

// temperatureOK reports whether a temperature (K) is one pairsmith takes
// (temperatureWant says which).
func temperatureOK(k float64) bool { return k >= 200 && k <= 500 }

// temperatureWant says what a temperature field takes.
const temperatureWant = "a temperature from -73C to 226C"

// cardsHoldAt returns the first device type whose card of process p does
// not hold at tempK (a 1 µm device cannot be sized there), with why.
func cardsHoldAt(p *device.Process, tempK float64) (device.Type, error) {
	for _, t := range []device.Type{device.NMOS, device.PMOS} {
		g := device.Geometry{W: 1e-6, L: 1e-6 + 2*p.LateralDiffusion(t)}
		if _, err := p.Card(t).Instance(g, tempK); err != nil {
			return t, err
		}
	}
	return 0, nil
}
