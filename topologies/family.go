// Package topologies holds the input-stage families pairsmith can size:
// one file per family, each a published way of keeping the summed gm of
// an NMOS and a PMOS differential pair flat over the common-mode range.
//
// A Family declares its parameters (name, unit, bounds, scale, default)
// and builds, for one set of values and conditions, a transistor-level
// circuit for the sim package: the stage itself plus the bench around it
// (the supply, the two inputs driven from a common-mode and a
// differential voltage, and the summing nodes the pairs' drains go to, held
// at a headroom from the rails as a folded-cascode summing stage would
// hold them). Tail currents come from transistors mirrored from reference
// branches, never from ideal sources, so a pair turns off near its rail as
// in silicon.
package topologies

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"pairsmith/sim"
	"pairsmith/units"
)

// Scale says how a parameter is searched.
type Scale int

// Parameter scales.
const (
	Linear Scale = iota
	Log
	// Choice is one of a list of words (Param.Choices), held as its index
	// 0, 1, … and searched as a choice among them.
	Choice
)

// String returns "lin", "log" or "choice".
func (s Scale) String() string {
	switch s {
	case Log:
		return "log"
	case Choice:
		return "choice"
	}
	return "lin"
}

// Param is one sizing or bias parameter of a family.
type Param struct {
	Name     string
	Unit     units.Dim
	Min, Max float64 // SI
	Default  float64 // SI
	Scale    Scale
	// Size says which process rule bounds the parameter (ParamsFor).
	Size SizeKind
	Doc  string
	// Choices are the words of a Choice parameter, its values being
	// their indices (Min 0, Max len−1).
	Choices []string
}

// Text writes a value of the parameter as files take it: the word of a
// choice, else the quantity in its unit.
func (p Param) Text(v float64) string {
	if p.Scale == Choice {
		if i := int(v); float64(i) == v && i >= 0 && i < len(p.Choices) {
			return p.Choices[i]
		}
	}
	return units.Format(v, p.Unit)
}

// FromUnit maps u in [0, 1] onto the parameter's bounds as its scale
// says: log or linear, and for a choice the index of the equal share of
// [0, 1] u falls in. The bounds' faces map exactly onto the bounds.
func (p Param) FromUnit(u float64) float64 {
	u = math.Min(1, math.Max(0, u))
	var v float64
	switch p.Scale {
	case Log:
		v = p.Min * math.Pow(p.Max/p.Min, u)
	case Choice:
		v = math.Min(p.Max, p.Min+math.Floor(u*(p.Max-p.Min+1)))
	default:
		v = p.Min + u*(p.Max-p.Min)
	}
	return math.Min(p.Max, math.Max(p.Min, v))
}

// ToUnit is FromUnit's inverse, clamped to [0, 1]: a choice maps to the
// middle of its share.
func (p Param) ToUnit(v float64) float64 {
	var u float64
	switch p.Scale {
	case Log:
		u = math.Log(v/p.Min) / math.Log(p.Max/p.Min)
	case Choice:
		u = (v - p.Min + 0.5) / (p.Max - p.Min + 1)
	default:
		u = (v - p.Min) / (p.Max - p.Min)
	}
	return math.Min(1, math.Max(0, u))
}

// Choose returns the index of a choice's word, and whether it is one.
func (p Param) Choose(word string) (float64, bool) {
	for i, c := range p.Choices {
		if c == word {
			return float64(i), true
		}
	}
	return 0, false
}

// Values maps parameter names to SI values.
type Values map[string]float64

// Family is one topology family.
type Family interface {
	// Name is the family's name as written in files: "current-switch".
	Name() string
	// Summary is a one-line description.
	Summary() string
	// Params declares the parameters, in the order they are listed.
	Params() []Param
	// Build makes the circuit for complete values (see Complete).
	Build(v Values, c Conditions) (*Stage, error)
}

// Stage is a built circuit and what reports need to know about it.
type Stage struct {
	Family  string
	Circuit *sim.Circuit
	// Ports are the stage's terminals in .subckt order.
	Ports []sim.Node
	// PairN and PairP name the input transistors (empty for a family
	// without that pair).
	PairN, PairP [2]string
	// Roles says what each transistor does ("nmos input", "pmos tail", …).
	Roles map[string]string
	// Devices are the transistors in the order they were added, with the
	// drawn (grid-snapped) sizes and what their function needs.
	Devices []Device
	// Geometry lists the process rules the devices' drawn sizes break.
	Geometry []GeometryViolation
	// VHead is the summing nodes' headroom from the rails, V; Supply the
	// supply, V.
	VHead, Supply float64
}

// Probe names every stage defines.
const (
	ProbeOut   = "iout"  // differential output current (A); gm is its derivative
	ProbeIN    = "i_n"   // total current of the NMOS input pair (A)
	ProbeIP    = "i_p"   // total current of the PMOS input pair (A)
	ProbePower = "power" // supply power (W)
)

// All returns every family, in a fixed order.
func All() []Family {
	return []Family{
		nPair{}, pPair{}, complementary{}, currentSwitch{}, mirror1to3{}, zener{}, sqrtBias{},
	}
}

// Names returns the names of all families.
func Names() []string {
	var out []string
	for _, f := range All() {
		out = append(out, f.Name())
	}
	return out
}

// Lookup returns the family called name; the error lists the known ones
// and suggests the nearest.
func Lookup(name string) (Family, error) {
	for _, f := range All() {
		if f.Name() == name {
			return f, nil
		}
	}
	msg := fmt.Sprintf("unknown topology %q (known: %s)", name, strings.Join(Names(), ", "))
	if near, ok := units.Nearest(name, Names()); ok {
		msg = fmt.Sprintf("unknown topology %q; did you mean %q? (known: %s)", name, near, strings.Join(Names(), ", "))
	}
	return nil, fmt.Errorf("%s", msg)
}

// ParamOf returns the family's parameter called name.
func ParamOf(f Family, name string) (Param, bool) {
	for _, p := range f.Params() {
		if p.Name == name {
			return p, true
		}
	}
	return Param{}, false
}

// Defaults returns the family's default values.
func Defaults(f Family) Values {
	v := Values{}
	for _, p := range f.Params() {
		v[p.Name] = p.Default
	}
	return v
}

// RangeError is a parameter value outside the family's bounds, or a name
// the family does not have.
type RangeError struct {
	Param string
	Given float64
	Want  string
}

func (e *RangeError) Error() string {
	return fmt.Sprintf("parameter %s: got %g, want %s", e.Param, e.Given, e.Want)
}

// Complete fills in defaults for parameters not given and checks every
// value against the family's bounds.
func Complete(f Family, given Values) (Values, error) {
	v := Defaults(f)
	names := make([]string, 0, len(given))
	for k := range given {
		names = append(names, k)
	}
	sort.Strings(names)
	for _, k := range names {
		p, ok := ParamOf(f, k)
		if !ok {
			var known []string
			for _, q := range f.Params() {
				known = append(known, q.Name)
			}
			want := "one of " + strings.Join(known, ", ")
			if near, ok := units.Nearest(k, known); ok {
				want = fmt.Sprintf("a parameter of %s (did you mean %q?)", f.Name(), near)
			}
			return nil, &RangeError{Param: k, Given: given[k], Want: want}
		}
		x := given[k]
		if math.IsNaN(x) || x < p.Min || x > p.Max || (p.Scale == Choice && x != math.Trunc(x)) {
			want := fmt.Sprintf("%s … %s", units.Format(p.Min, p.Unit), units.Format(p.Max, p.Unit))
			if p.Scale == Choice {
				want = "one of " + strings.Join(p.Choices, ", ")
			}
			return nil, &RangeError{Param: k, Given: x, Want: want}
		}
		v[k] = x
	}
	return v, nil
}
