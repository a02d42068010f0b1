package objectives

import (
	"fmt"

	"pairsmith/units"
)

// At returns a copy of the design under another condition: the process
// at corner (device.Process.AtCorner; "" keeps the design's cards), the
// supply (V) and the temperature (K). A sweep that ran rail to rail (from
// 0 V to the design's supply) runs rail to rail at the new supply with
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
	if d.Sweep.Low == 0 && d.Sweep.High == d.Supply {
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
	return &out, nil
}
