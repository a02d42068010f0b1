package objectives

import (
	"fmt"

	"pairsmith/sim/device"
	"pairsmith/units"
)

// At returns a copy of the design under another condition, as its only
// condition: the process at corner (device.Process.AtCorner; "" keeps the
// design's cards), the supply (V) and the temperature (K). A sweep whose
// high end follows the supply (FollowSupply) ends at the new supply, with
// the same step; any other sweep is kept. It refuses what a design file
// may not hold — a corner the process does not define, a supply outside
// MinSupply … MaxSupply, a temperature outside −73 °C … 226 °C or at
// which a card does not hold, a sweep that the supply leaves beyond a
// supply past either rail or shorter than a step — with what was given
// and what is wanted.
func (d *Design) At(corner string, supply, tempK float64) (*Design, error) {
	p := d.Process
	if corner != "" {
		var err error
		if p, err = d.Process.AtCorner(corner); err != nil {
			return nil, err
		}
	}
	if !supplyOK(p, supply) {
		return nil, fmt.Errorf("supply %s: want %s", units.Format(supply, units.Volt), supplyWant(p))
	}
	if !temperatureOK(tempK) {
		return nil, fmt.Errorf("temperature %s: want %s", units.Format(tempK, units.Temperature), temperatureWant)
	}
	if t, err := cardsHoldAt(p, tempK); err != nil {
		return nil, fmt.Errorf("the process's %s card does not hold at %s: %w", t, units.Format(tempK, units.Temperature), err)
	}
	out := d.put(p, supply, tempK)
	if sw := out.Sweep; sw.Low < -supply || sw.High > 2*supply || sw.High-sw.Low < sw.Step {
		v := func(x float64) string { return units.Format(x, units.Volt) }
		return nil, fmt.Errorf("sweep from %s to %s at a supply of %s: want its ends at most the supply beyond either rail (%s to %s) and at least one step (%s) apart",
			v(sw.Low), v(sw.High), v(supply), v(-supply), v(2*supply), v(sw.Step))
	}
	return out, nil
}

// put returns a copy of the design with process p at supply (V) and
// tempK (K) as its only condition, its sweep's high end following the
// supply when it does (FollowSupply). It checks nothing.
func (d *Design) put(p *device.Process, supply, tempK float64) *Design {
	out := *d
	out.Process = p
	if d.FollowSupply {
		out.Sweep.High = supply
	}
	out.Supply, out.TempK = supply, tempK
	so := d.signoff()
	so.Supply, so.Temperature = Single(supply), Single(tempK)
	so.Corners, so.Nominal = []string{p.Corner}, p.Corner
	out.Signoff, out.corners = so, nil
	return &out
}

// signoff returns the design's sign-off, or, for a design made in code
// without one, its one condition (effectiveSignoff).
func (d *Design) signoff() Signoff { return effectiveSignoff(d.Signoff, d.Conditions) }

// AllConditions returns the conditions the design is measured at
// (Signoff.Conditions): the nominal one first. A design made in code,
// without a sign-off, has its one condition.
func (d *Design) AllConditions() []Condition { return d.signoff().Conditions() }

// Nominal returns the design's nominal condition.
func (d *Design) Nominal() Condition {
	c := ""
	if d.Process != nil {
		c = d.Process.Corner
	}
	return Condition{Corner: c, Supply: d.Supply, TempK: d.TempK}
}

// Under returns the design at condition c, one of AllConditions, as its
// only condition; the nominal condition gives d itself, whole sign-off
// and all. The conditions were checked when the file was read, so Under
// does not check again.
func (d *Design) Under(c Condition) *Design {
	if c == d.Nominal() {
		return d
	}
	p := d.Process
	if q, ok := d.corners[c.Corner]; ok {
		p = q
	}
	return d.put(p, c.Supply, c.TempK)
}

// noiseFrequency returns where the design's noise figure is taken, Hz.
func (d *Design) noiseFrequency() float64 {
	if d.NoiseFrequency > 0 {
		return d.NoiseFrequency
	}
	return DefaultNoiseFrequency
}

// sigma returns the k of the design's k-sigma mismatch figures.
func (d *Design) sigma() float64 {
	if d.Signoff.Sigma > 0 {
		return d.Signoff.Sigma
	}
	return DefaultSigma
}
