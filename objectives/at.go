package objectives

import (
	"fmt"

	"pairsmith/units"
)

// At returns a copy of the design under another condition, as its only
// condition: the process at corner (device.Process.AtCorner; "" keeps the
// design's cards), the supply (V) and the temperature (K). A sweep whose
// high end follows the supply (FollowSupply) ends at the new supply, with
// the same step; any other sweep is kept. It refuses what a design file
// may not hold — a corner the process does not define, a supply outside
// MinSupply … MaxSupply, a temperature outside −73 °C … 226 °C or at
// which a card does not hold — with what was given and what is wanted.
func (d *Design) At(corner string, supply, tempK float64) (*Design, error) {
	out := *d
	if corner != "" {
		p, err := d.Process.AtCorner(corner)
		if err != nil {
			return nil, err
		}
		out.Process = p
	}
	if !supplyOK(out.Process, supply) {
		return nil, fmt.Errorf("supply %s: want %s", units.Format(supply, units.Volt), supplyWant(out.Process))
	}
	if d.FollowSupply || (len(d.Signoff.Corners) == 0 && d.Sweep.Low == 0 && d.Sweep.High == d.Supply) {
		out.Sweep.High = supply
	}
	out.Supply = supply
	if !temperatureOK(tempK) {
		return nil, fmt.Errorf("temperature %s: want %s", units.Format(tempK, units.Temperature), temperatureWant)
	}
	out.TempK = tempK
	if t, err := cardsHoldAt(out.Process, tempK); err != nil {
		return nil, fmt.Errorf("the process's %s card does not hold at %s: %w", t, units.Format(tempK, units.Temperature), err)
	}
	c := out.Process.Corner
	out.Signoff.Supply, out.Signoff.Temperature = Single(supply), Single(tempK)
	out.Signoff.Corners, out.Signoff.Nominal = []string{c}, c
	if out.Signoff.Sigma == 0 {
		out.Signoff.Sigma = DefaultSigma
	}
	out.corners = nil
	return &out, nil
}

// AllConditions returns the conditions the design is measured at
// (Signoff.Conditions): the nominal one first. A design made in code,
// without a sign-off, has its one condition.
func (d *Design) AllConditions() []Condition {
	if len(d.Signoff.Corners) == 0 {
		return []Condition{d.Nominal()}
	}
	return d.Signoff.Conditions()
}

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
// and all. The conditions
// were checked when the file was read, so Under does not check again.
func (d *Design) Under(c Condition) *Design {
	if c == d.Nominal() {
		return d
	}
	out := *d
	if p, ok := d.corners[c.Corner]; ok {
		out.Process = p
	}
	if d.FollowSupply {
		out.Sweep.High = c.Supply
	}
	out.Supply, out.TempK = c.Supply, c.TempK
	out.Signoff.Supply, out.Signoff.Temperature = Single(c.Supply), Single(c.TempK)
	out.Signoff.Corners, out.Signoff.Nominal = []string{c.Corner}, c.Corner
	out.corners = nil
	return &out
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
