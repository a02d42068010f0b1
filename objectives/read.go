package objectives

import (
	"errors"
	"fmt"
	"path/filepath"
	"strings"

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
}

// readConditions reads the process (a built-in name or a file relative to
// baseDir), the supply (from MinSupply of the process to MaxSupply) and
// the temperature (27C when not given).
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
	if c.Supply, _, err = m.Quantity("supply", units.Volt); err != nil {
		return c, err
	}
	if !supplyOK(c.Process, c.Supply) {
		return c, m.Errorf("supply", "%s", supplyWant(c.Process))
	}
	if c.TempK, err = m.QuantityOr("temperature", units.Temperature, 27+units.ZeroCelsius); err != nil {
		return c, err
	}
	if !temperatureOK(c.TempK) {
		return c, m.Errorf("temperature", temperatureWant)
	}
	if err := checkCardsAt(m, c); err != nil {
		return c, err
	}
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
	return c, nil
}

// readRange reads a common-mode range {low, high, step} (a design's sweep,
// a spec's input_range): rail to rail at DefaultStep by default, within a
// supply beyond either rail, low below high, a step no larger than the
// range and at most a million points. A range narrower than a step the
// file does not write is blamed on the end it writes, not on the step.
func readRange(rm *units.Map, supply float64) (low, high, step float64, err error) {
	if err = rm.Check("low", "high", "step"); err != nil {
		return
	}
	if low, err = rm.QuantityOr("low", units.Volt, 0); err != nil {
		return
	}
	if high, err = rm.QuantityOr("high", units.Volt, supply); err != nil {
		return
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
		if !rm.Has("high") {
			key = "low"
		}
		err = rm.Errorf(key, "low below high (low %s, high %s)", v(low), v(high))
	case !(step > 0):
		err = rm.Errorf("step", "a step above 0 V, for example 10mV")
	case step > high-low && rm.Has("step"):
		err = rm.Errorf("step", "a step no larger than the range (%s)", short(high-low, units.Volt))
	case step > high-low:
		key, want := "high", fmt.Sprintf("a high end at least one step (%s) above low (%s)", v(step), v(low))
		if !rm.Has("high") {
			key, want = "low", fmt.Sprintf("a low end at least one step (%s) below high (%s)", v(step), v(high))
		}
		err = rm.Errorf(key, "%s, or a smaller step", want)
	case (high-low)/step > 1e6:
		err = rm.Errorf("step", "a step giving at most a million points")
	}
	return
}

// checkCardsAt refuses a temperature at which a card of the process has
// no valid instance (the SPICE level-1 law can drive PHI below zero when
// the temperature is far from a low tnom): at the temperature field when
// it is written, else at the process's tnom.
func checkCardsAt(m *units.Map, c conditions) error {
	t, err := cardsHoldAt(c.Process, c.TempK)
	if err == nil {
		return nil
	}
	want := fmt.Sprintf("a temperature at which the process's %s card holds", t)
	if m.Has("temperature") {
		return m.ErrorAt("temperature", m.Text("temperature"), want, err)
	}
	return c.Process.ErrorAt("tnom", fmt.Sprintf("a tnom from which the %s card holds at %s", t,
		units.Format(c.TempK, units.Temperature)), err)
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
