package topologies

import "pairsmith/sim/device"

// Conditions are the operating conditions a stage is built for and
// measured at: the process, one supply and one temperature. It is the one
// type for them: a design file and a spec sheet each hold one
// (objectives.Design, objectives.Spec), and a Family builds a stage for
// one. A spec that asks for several (supply and temperature corners)
// holds a list of Conditions, each complete in itself, so that every
// stage is still built and measured for exactly one and the figures
// measured under each combine to a worst case (objectives.Worst).
type Conditions struct {
	Process *device.Process
	Supply  float64 // V
	TempK   float64 // K
	// BiasRefK is the temperature at which the reference currents take
	// their parameter values (the design's nominal temperature), K; 0 is
	// TempK. Away from it they follow the family's bias_law.
	BiasRefK float64
}
