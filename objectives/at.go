package objectives

import (
	"fmt"

	"pairsmith/sim/device"
	"pairsmith/units"
)

// At returns a copy of the design under another condition: the process
// at corner (device.Process.AtCorner; "" keeps the design's), the supply
// (V; 0 keeps the design's) and the temperature (K; 0 keeps the
// design's). A sweep that ran rail to rail (from 0 V to the design's
// supply) runs rail to rail at the new supply with the same step; any
// other sweep is kept. It refuses a corner the process does not define, a
// supply outside MinSupply … MaxSupply, and a temperature outside
// −73 °C … 226 °C or at which a card does not hold; each error says what
// was given and what is wanted.
func (d *Design) At(corner string, supply, tempK float64) (*Design, error) {
	out := *d
	if corner != "" {
		p, err := d.Process.AtCorner(corner)
		if err != nil {
			return nil, err
		}
		out.Process = p
	}
	if supply != 0 {
		if !(supply >= MinSupply(out.Process)) || supply > MaxSupply {
			return nil, fmt.Errorf("supply %s: want %s", units.Format(supply, units.Volt), supplyWant(out.Process))
		}
		if d.Sweep.Low == 0 && d.Sweep.High == d.Supply {
			out.Sweep.High = supply
		}
		out.Supply = supply
	}
	if tempK != 0 {
		if !(tempK >= 200 && tempK <= 500) {
			return nil, fmt.Errorf("temperature %s: want a temperature from -73C to 226C", units.Format(tempK, units.Temperature))
		}
		out.TempK = tempK
	}
	for _, t := range []device.Type{device.NMOS, device.PMOS} {
		g := device.Geometry{W: 1e-6, L: 1e-6 + 2*out.Process.LateralDiffusion(t)}
		if _, err := out.Process.Card(t).Instance(g, out.TempK); err != nil {
			return nil, fmt.Errorf("the process's %s card does not hold at %s: %w", t, units.Format(out.TempK, units.Temperature), err)
		}
	}
	return &out, nil
}
