package topologies

import (
	"fmt"
	"math"

	"pairsmith/sim/device"
	"pairsmith/units"
)

// SizeKind says which process rule bounds a parameter.
type SizeKind int

// Parameter kinds the process bounds.
const (
	NoSize   SizeKind = iota // not a drawn size
	Width                    // a drawn width: wmin … wmax
	Length                   // a drawn length: lmin … lmax
	Headroom                 // the summing nodes' headroom: at least MinVHead
)

// Duty says what a transistor's function needs of its operating point
// (docs/buildable.md, "Saturation").
type Duty int

// Duties.
const (
	// Saturated: a current source, a mirror output, a switch or an input
	// device. It must keep V_DS ≥ V_DSAT + margin wherever it carries its
	// working current.
	Saturated Duty = iota
	// Diode: diode-connected (V_DS = V_GS), saturated by construction.
	Diode
	// Exempt: a device whose function does not rest on saturation (the
	// zener's shunt, which clamps a voltage in whatever region).
	Exempt
)

// String names the duty as reports write it.
func (d Duty) String() string {
	switch d {
	case Diode:
		return "diode"
	case Exempt:
		return "exempt"
	}
	return "saturated"
}

// Side says which input pair's current a device carries or sets.
type Side int

// Sides.
const (
	NoSide Side = iota // neither: a switch's path, a bias or loop device
	NSide              // the NMOS pair's: its inputs, its tail, what feeds its tail
	PSide              // the PMOS pair's
)

// Device is one transistor of a stage as drawn.
type Device struct {
	Name, Role string
	Type       device.Type
	Geom       device.Geometry // grid-snapped
	Duty       Duty
	// Side is the pair whose current the device's drain or source
	// carries (a node of that pair's tail, or of a replica of it).
	Side Side
}

// GeometryViolation is one process rule a device's drawn size breaks.
type GeometryViolation struct {
	Device, Role string
	device.GeometryIssue
}

func (g GeometryViolation) String() string {
	return fmt.Sprintf("%s (%s): %s", g.Device, g.Role, g.GeometryIssue)
}

// The summing stage the pairs' drains fold into (docs/buildable.md, "The
// summing stage's cost"): a folded cascode whose PMOS current sources at the
// supply carry each NMOS input's drain current plus the cascode branch's,
// with an NMOS cascoded mirror at ground taking each PMOS input's drain
// current. Its sources and mirror devices sit between the rails and the
// summing nodes, so they have vhead to work in.
const (
	// FoldOverdrive is the overdrive, and so the V_DSAT, at which the
	// summing stage's devices are sized: 150 mV (common practice, no
	// source).
	FoldOverdrive = 0.15
	// CascodeFraction is the least current each cascode branch keeps,
	// as a fraction of the largest drain current of one input device:
	// 10 %, so that the cascodes never starve as the pairs' currents move
	// (common practice, no source).
	CascodeFraction = 0.1
)

// MinVHead returns the least headroom the summing stage's devices need:
// FoldOverdrive plus the saturation margin.
func MinVHead(margin float64) float64 { return FoldOverdrive + margin }

// SummingCurrent returns the supply current of the summing stage for
// pairs whose total currents peak at inMax (NMOS) and ipMax (PMOS) over
// the range, A. Each of the two PMOS sources at the supply carries the
// largest drain current of one NMOS input, inMax/2, plus the cascode
// branch's least current CascodeFraction·max(inMax, ipMax)/2; the PMOS
// pair's current reaches the mirror at ground through its own tail, which
// the supply already pays for. So the summing stage draws
// inMax + CascodeFraction·max(inMax, ipMax) from the supply, whatever the
// common mode.
func SummingCurrent(inMax, ipMax float64) float64 {
	return inMax + CascodeFraction*math.Max(inMax, ipMax)
}

// ParamsFor returns the family's parameters with the bounds the process
// sets: widths from wmin (and at most wmax), lengths from lmin (and at
// most lmax), the headroom from MinVHead(margin); every bound of a size
// on the grid. It refuses a process whose rules leave a parameter no
// room (an lmin above the family's largest length).
func ParamsFor(f Family, p *device.Process, margin float64) ([]Param, error) {
	r := p.Rules
	out := f.Params()
	for i := range out {
		q := &out[i]
		lo, hi := q.Min, q.Max
		switch q.Size {
		case Width:
			lo, hi = tighten(lo, hi, r.WMin, r.WMax)
		case Length:
			lo, hi = tighten(lo, hi, r.LMin, r.LMax)
		case Headroom:
			lo = math.Max(lo, MinVHead(margin))
		}
		if q.Size == Width || q.Size == Length {
			lo, hi = snapUp(r, lo), snapDown(r, hi)
		}
		if !(lo <= hi) {
			return nil, fmt.Errorf("%s: parameter %s has no legal value on process %s: the process asks for %s … %s, the family allows %s … %s",
				f.Name(), q.Name, p.Name, units.Format(lo, q.Unit), units.Format(hi, q.Unit), units.Format(q.Min, q.Unit), units.Format(q.Max, q.Unit))
		}
		q.Min, q.Max = lo, hi
		q.Default = math.Min(hi, math.Max(lo, q.Default))
		if q.Size == Width || q.Size == Length {
			q.Default = math.Min(hi, math.Max(lo, r.Snap(q.Default)))
		}
	}
	return out, nil
}

func tighten(lo, hi, min, max float64) (float64, float64) {
	if min > 0 {
		lo = math.Max(lo, min)
	}
	if max > 0 {
		hi = math.Min(hi, max)
	}
	return lo, hi
}

// snapUp and snapDown move x onto the grid, up or down.
func snapUp(r device.Rules, x float64) float64 {
	s := r.Snap(x)
	if s < x*(1-1e-12) {
		return r.Snap(s + r.Grid)
	}
	return s
}

func snapDown(r device.Rules, x float64) float64 {
	s := r.Snap(x)
	if s > x*(1+1e-12) {
		return r.Snap(s - r.Grid)
	}
	return s
}

// Snap returns the values with every drawn size on the process grid, as
// the stage is built: a design written with them builds the very devices
// that were evaluated.
func Snap(f Family, v Values, r device.Rules) Values {
	out := make(Values, len(v))
	for k, x := range v {
		out[k] = x
	}
	for _, q := range f.Params() {
		if x, ok := out[q.Name]; ok && (q.Size == Width || q.Size == Length) {
			out[q.Name] = r.Snap(x)
		}
	}
	return out
}
