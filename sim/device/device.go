// Package device holds the MOSFET compact models the circuit solver stamps,
// and the process files that give their parameters.
//
// Every model follows the pattern of SPICE device code: a Model is a model
// card for one device type (its parameters, as read from a process file);
// Model.Instance sizes it and applies the temperature once; Instance.Eval is
// the hot call the Newton loop makes, returning the drain current and all
// its partial derivatives in one go. The solver never knows which model it
// holds, so adding a model is a one-file change.
//
// Sign conventions are those of SPICE: terminal voltages are absolute node
// voltages, ID is the current flowing into the drain terminal (negative for
// a conducting PMOS), and the derivatives are ∂ID/∂V of each terminal.
package device

import "fmt"

// Type is the polarity of a transistor.
type Type int

// The two polarities. Their values are the sign SPICE multiplies voltages
// and currents by to map a PMOS onto NMOS equations.
const (
	NMOS Type = 1
	PMOS Type = -1
)

// String returns "nmos" or "pmos".
func (t Type) String() string {
	switch t {
	case NMOS:
		return "nmos"
	case PMOS:
		return "pmos"
	}
	return fmt.Sprintf("Type(%d)", int(t))
}

// Geometry is the drawn size of one transistor.
type Geometry struct {
	W float64 // drawn channel width, m
	L float64 // drawn channel length, m
	M float64 // multiplier (parallel devices); 0 means 1
}

// Mult returns the multiplier, treating 0 as 1.
func (g Geometry) Mult() float64 {
	if g.M == 0 {
		return 1
	}
	return g.M
}

// Area returns the gate area W·L·M in m².
func (g Geometry) Area() float64 { return g.W * g.L * g.Mult() }

// Eval is the drain current of one transistor at one bias point with its
// partial derivatives. Because the current depends only on voltage
// differences, GD+GG+GS+GB is zero.
type Eval struct {
	ID float64 // current into the drain, A
	GD float64 // ∂ID/∂VD, S
	GG float64 // ∂ID/∂VG, S
	GS float64 // ∂ID/∂VS, S
	GB float64 // ∂ID/∂VB, S
}

// Region names the operating region reported for a device. It is a
// small number (String gives its word), so that the operating points a
// sweep records at every Newton load hold no pointer.
type Region uint8

// Operating regions, in the words designers use.
const (
	NoRegion   Region = iota // not given
	Off                      // below threshold (level-1: no current)
	Weak                     // weak inversion (EKV, inversion coefficient < 0.1)
	Moderate                 // moderate inversion (EKV, 0.1 … 10)
	Strong                   // strong inversion, saturated
	Triode                   // conducting, not saturated
	Saturation               // level-1 saturation
)

// String returns the region's word: "off", "weak", "moderate", "strong",
// "triode" or "saturation" ("" for NoRegion).
func (r Region) String() string {
	switch r {
	case NoRegion:
		return ""
	case Off:
		return "off"
	case Weak:
		return "weak"
	case Moderate:
		return "moderate"
	case Strong:
		return "strong"
	case Triode:
		return "triode"
	case Saturation:
		return "saturation"
	}
	return fmt.Sprintf("Region(%d)", uint8(r))
}

// OpPoint describes a transistor at a bias point for reports: what a
// designer reads off a SPICE operating-point listing. Signs follow SPICE
// (a PMOS has negative VGS, VDS, VTH, VDSAT and ID).
type OpPoint struct {
	ID     float64 // drain current, A
	VGS    float64 // V
	VDS    float64 // V
	VBS    float64 // V
	VTH    float64 // threshold at this VBS, V
	VDSAT  float64 // saturation voltage, V
	GM     float64 // ∂ID/∂VGS, S (positive)
	GDS    float64 // ∂ID/∂VDS, S (positive)
	GMB    float64 // ∂ID/∂VBS, S (positive)
	IC     float64 // inversion coefficient (EKV); 0 where the model has none
	Region Region
}

// Instance is one sized transistor at one temperature.
type Instance interface {
	// Eval returns the drain current and its derivatives at the given
	// absolute terminal voltages. It must not allocate.
	Eval(vd, vg, vs, vb float64) Eval
	// Op returns the operating-point details at the given voltages.
	Op(vd, vg, vs, vb float64) OpPoint
	// LargeSignal returns Op's ID, VTH, VDSAT, IC and Region, bitwise
	// equal to Op's, for less than Op costs: what the operating-region
	// checks read at every point of a sweep. It must not allocate.
	LargeSignal(vd, vg, vs, vb float64) LargeSignal
	// EvalLarge returns Eval and fills ls with LargeSignal, both bitwise
	// as those give them, for little more than Eval costs: a sweep
	// records every transistor's operating point from its last Newton
	// load with it. It must not allocate.
	EvalLarge(vd, vg, vs, vb float64, ls *LargeSignal) Eval
}

// LargeSignal is the part of an OpPoint that needs no derivative: the
// current, the threshold and saturation voltages, the inversion
// coefficient and the region (SPICE signs, as OpPoint).
type LargeSignal struct {
	ID, VTH, VDSAT, IC float64
	Region             Region
}

// Model is a model card for one device type.
type Model interface {
	// Kind names the model: "level1" or "ekv".
	Kind() string
	// Type is the polarity of the card.
	Type() Type
	// Instance sizes the card and applies the temperature (kelvin).
	Instance(g Geometry, tempK float64) (Instance, error)
}

// SpiceCarder is implemented by models that a SPICE simulator can run as
// they are. SpiceCard returns a whole `.model NAME nmos (...)` line, valid
// at the given temperature (kelvin) when the deck also sets `.temp` to
// that temperature.
type SpiceCarder interface {
	SpiceCard(name string, tempK float64) string
}

// mobilityCard is a card whose KP follows a power law in temperature.
type mobilityCard interface{ mobilityExponent() float64 }

// MobilityExponent returns e of a card whose KP scales as (T/Tnom)^e:
// −1.5 for the SPICE level-1 law, BEX for EKV and for level 1's linear
// law; false for a card without such a law.
func MobilityExponent(m Model) (float64, bool) {
	c, ok := m.(mobilityCard)
	if !ok {
		return 0, false
	}
	return c.mobilityExponent(), true
}

func (c *Level1) mobilityExponent() float64 {
	if c.LinearTemp {
		return c.BEX
	}
	return spiceMobilityExponent
}

// spiceMobilityExponent is the SPICE level-1 law's: KP ∝ (T/Tnom)^−1.5,
// which Level1.temperature writes as KP/(r·√r), SPICE's own form.
const spiceMobilityExponent = -1.5

func (c *EKV) mobilityExponent() float64 { return c.BEX }
