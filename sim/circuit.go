// Package sim is pairsmith's DC circuit solver: modified nodal analysis of
// MOSFETs, resistors and sources, Newton–Raphson with voltage limiting,
// gmin stepping and source stepping, continuation along a common-mode
// sweep, and the exact small-signal transconductance d I_out / d V_id at
// every point from the factored Jacobian.
//
// A Circuit is built once per design and set of conditions; a Solver
// compiles it into a dense system whose unknowns are only the node
// voltages not fixed by voltage sources (and the currents of the few
// floating sources), and then sweeps it without allocating per point.
package sim

import (
	"fmt"

	"pairsmith/sim/device"
)

// Node identifies a circuit node. Ground is node 0.
type Node int

// Ground is the reference node (SPICE node 0).
const Ground Node = 0

// Drive is the value of an independent source as a function of the sweep
// variables: value = DC + CM·vcm + DM·vid.
type Drive struct {
	DC float64 // constant part, V or A
	CM float64 // coefficient of the common-mode voltage
	DM float64 // coefficient of the differential input voltage
}

// Const returns a constant Drive.
func Const(v float64) Drive { return Drive{DC: v} }

// At evaluates the drive.
func (d Drive) At(vcm, vid float64) float64 { return d.DC + d.CM*vcm + d.DM*vid }

// sweeps reports whether the drive depends on the sweep variables.
func (d Drive) sweeps() bool { return d.CM != 0 || d.DM != 0 }

// Mosfet is a four-terminal transistor.
type Mosfet struct {
	Name       string
	D, G, S, B Node
	Model      device.Model
	Geom       device.Geometry
}

// Resistor is a linear resistor between A and B.
type Resistor struct {
	Name string
	A, B Node
	R    float64 // ohms, > 0
}

// VSource is an independent voltage source: V(P) − V(N) = Value. Its
// current, as in SPICE, flows from P through the source to N.
type VSource struct {
	Name  string
	P, N  Node
	Value Drive
	// Bench marks a source that belongs to the test bench around the
	// stage (supply, inputs, summing nodes) rather than to the stage.
	Bench bool
}

// ISource is an independent current source; as in SPICE its current
// flows from P through the source to N (it leaves node P and enters N).
type ISource struct {
	Name  string
	P, N  Node
	Value Drive
	Bench bool
	// Law, when not nil, says how the current depends on temperature
	// (Value holds it at the circuit's temperature): a netlist writes it
	// as a source ngspice evaluates at its own .temp.
	Law *TempLaw
}

// TempLaw is a current's power law in temperature: Ref·(T/RefK)^Exp.
type TempLaw struct {
	Ref  float64 // A, the current at RefK
	RefK float64 // K
	Exp  float64
}

// VCCS is a voltage-controlled current source (SPICE G element): a current
// G·(V(CP) − V(CN)) flows from P through the source to N.
type VCCS struct {
	Name         string
	P, N, CP, CN Node
	G            float64
}

// VCVS is a voltage-controlled voltage source (SPICE E element):
// V(P) − V(N) = Gain·(V(CP) − V(CN)).
type VCVS struct {
	Name         string
	P, N, CP, CN Node
	Gain         float64
}

// Term is one contribution to a Probe: Coef times the current of the named
// voltage source (SPICE sign: from its P terminal through it to N).
type Term struct {
	Source string
	Coef   float64
}

// Probe is a named linear combination of voltage-source currents, recorded
// at every sweep point.
type Probe struct {
	Name  string
	Terms []Term
}

// Circuit is a netlist. The zero value is not usable; call New.
type Circuit struct {
	// Title says what the circuit is and under which conditions; it is
	// quoted in convergence errors and netlist headers.
	Title string
	// TempK is the temperature of every device, in kelvin.
	TempK float64

	names []string
	index map[string]Node

	Mosfets   []Mosfet
	Resistors []Resistor
	VSources  []VSource
	ISources  []ISource
	VCCSs     []VCCS
	VCVSs     []VCVS
	Probes    []Probe
	// Output names the probe whose derivative with respect to vid is the
	// transconductance recorded by a sweep; empty means no gm.
	Output string
	// Guess holds initial node voltages for the first solve (like SPICE
	// .nodeset); nodes not listed start at 0 V.
	Guess map[Node]float64
}

// New returns an empty circuit at the given temperature (kelvin).
func New(title string, tempK float64) *Circuit {
	return &Circuit{
		Title: title,
		TempK: tempK,
		names: []string{"0"},
		index: map[string]Node{"0": Ground, "gnd": Ground},
		Guess: map[Node]float64{},
	}
}

// Node returns the node called name, creating it on first use. "0" and
// "gnd" are ground.
func (c *Circuit) Node(name string) Node {
	if n, ok := c.index[name]; ok {
		return n
	}
	n := Node(len(c.names))
	c.names = append(c.names, name)
	c.index[name] = n
	return n
}

// NodeName returns the name of node n ("0" for ground).
func (c *Circuit) NodeName(n Node) string {
	if int(n) < 0 || int(n) >= len(c.names) {
		return fmt.Sprintf("?%d", int(n))
	}
	return c.names[n]
}

// NumNodes returns the number of nodes, ground included.
func (c *Circuit) NumNodes() int { return len(c.names) }

// Reserve makes room for about nodes nodes, mosfets transistors and
// vsources voltage sources, so that a builder that knows its circuit's
// size adds them without growing the lists (a search builds a circuit
// per candidate). It changes nothing else.
func (c *Circuit) Reserve(nodes, mosfets, vsources int) {
	if cap(c.names) < nodes+1 {
		c.names = append(make([]string, 0, nodes+1), c.names...)
	}
	if len(c.index) < nodes {
		index := make(map[string]Node, nodes+2) // and "0", "gnd"
		for k, v := range c.index {
			index[k] = v
		}
		c.index = index
	}
	if cap(c.Mosfets) < mosfets {
		c.Mosfets = append(make([]Mosfet, 0, mosfets), c.Mosfets...)
	}
	if cap(c.VSources) < vsources {
		c.VSources = append(make([]VSource, 0, vsources), c.VSources...)
	}
}

// AddMosfet adds a transistor.
func (c *Circuit) AddMosfet(name string, d, g, s, b Node, m device.Model, geom device.Geometry) {
	c.Mosfets = append(c.Mosfets, Mosfet{Name: name, D: d, G: g, S: s, B: b, Model: m, Geom: geom})
}

// AddResistor adds a resistor.
func (c *Circuit) AddResistor(name string, a, b Node, r float64) {
	c.Resistors = append(c.Resistors, Resistor{Name: name, A: a, B: b, R: r})
}

// AddVSource adds an independent voltage source.
func (c *Circuit) AddVSource(name string, p, n Node, v Drive, bench bool) {
	c.VSources = append(c.VSources, VSource{Name: name, P: p, N: n, Value: v, Bench: bench})
}

// AddISource adds an independent current source.
func (c *Circuit) AddISource(name string, p, n Node, i Drive, bench bool) {
	c.ISources = append(c.ISources, ISource{Name: name, P: p, N: n, Value: i, Bench: bench})
}

// AddVCCS adds a voltage-controlled current source.
func (c *Circuit) AddVCCS(name string, p, n, cp, cn Node, g float64) {
	c.VCCSs = append(c.VCCSs, VCCS{Name: name, P: p, N: n, CP: cp, CN: cn, G: g})
}

// AddVCVS adds a voltage-controlled voltage source.
func (c *Circuit) AddVCVS(name string, p, n, cp, cn Node, gain float64) {
	c.VCVSs = append(c.VCVSs, VCVS{Name: name, P: p, N: n, CP: cp, CN: cn, Gain: gain})
}

// AddProbe records a linear combination of source currents at every point.
func (c *Circuit) AddProbe(name string, terms ...Term) {
	c.Probes = append(c.Probes, Probe{Name: name, Terms: terms})
}

// ProbeIndex returns the index of the named probe in results, or -1.
func (c *Circuit) ProbeIndex(name string) int {
	for i, p := range c.Probes {
		if p.Name == name {
			return i
		}
	}
	return -1
}
