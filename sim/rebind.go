package sim

import (
	"fmt"

	"pairsmith/sim/device"
)

// Rebind makes s solve c, a circuit of the same shape as the one s was
// compiled from, without compiling again: the same nodes (names and
// order), the same elements in the same order with the same names and
// terminals, the same probes naming the same sources, the same output,
// and every source's drive depending on the sweep (common mode or
// differential input) where the compiled one's did and nowhere else.
// What may differ is what a candidate of a search changes: transistor
// geometries and model cards, source values and drives, resistances,
// controlled-source gains, probe coefficients, the temperature, the title
// and the starting guess.
//
// A rebound solver gives, bit for bit, what NewSolver(c) would: the
// compiled values are recomputed in the order compile computes them, and
// nothing of an earlier solution is kept (each sweep starts afresh from
// c's guess). Instances set with SetInstance are replaced by c's own.
// A circuit of another shape, or whose values cannot be compiled (a
// geometry or card an instance refuses, a resistance not above zero), is
// refused with an error that names what differs, and s is left as it was.
func (s *Solver) Rebind(c *Circuit) error {
	sys := s.sys
	if c == nil {
		return fmt.Errorf("rebind circuit %q: no circuit given", sys.c.Title)
	}
	cur := shapeCursor{sig: &sys.sig}
	walkShape(c, &cur)
	if err := cur.err(sys.c, c); err != nil {
		return err
	}
	// The columns of JE are the fixed nodes that move with vid: the new
	// drives must give the same ones.
	if cap(s.dmBuf) < len(sys.fixed) {
		s.dmBuf = make([]fixedNode, len(sys.fixed))
	}
	fixed := s.dmBuf[:len(sys.fixed)]
	copy(fixed, sys.fixed)
	sys.fixedDM(fixed, c)
	for k := 1; k < len(fixed); k++ {
		if fixed[k].moves() != sys.fixed[k].moves() {
			return fmt.Errorf("rebind circuit %q to %q: node %s moves with the inputs in one and not the other",
				sys.c.Title, c.Title, c.NodeName(nodeOf(sys, k)))
		}
	}
	if cap(s.instBuf) < len(c.Mosfets) {
		s.instBuf = make([]device.Instance, len(c.Mosfets))
	}
	insts := s.instBuf[:len(c.Mosfets)]
	if err := sys.checkValues(c, insts); err != nil {
		clear(insts)
		return fmt.Errorf("rebind: %w", err)
	}
	sys.bind(c, insts)
	clear(insts) // the system holds them now
	s.setBase()
	clear(s.memo)
	s.cvalid = false
	return nil
}

// nodeOf returns the node that fixed node k of sys is.
func nodeOf(sys *system, k int) Node {
	for node, v := range sys.idx {
		if v == sys.fixed[k].idx {
			return Node(node)
		}
	}
	return Ground
}

// shapeSig is what compile recorded of a circuit's shape: a sequence of
// numbers (counts, terminal nodes, sweep dependence, probe sources) and
// of names, in the order walkShape visits them.
type shapeSig struct {
	ints  []int
	names []string
}

// newShapeSig returns an empty signature with room for c's shape.
func newShapeSig(c *Circuit) shapeSig {
	ints := 8 + 4*len(c.Mosfets) + 2*len(c.Resistors) + 3*len(c.VSources) + 3*len(c.ISources) +
		4*len(c.VCCSs) + 4*len(c.VCVSs) + len(c.Probes)
	names := 1 + len(c.names) + len(c.Mosfets) + len(c.Resistors) + len(c.VSources) + len(c.ISources) +
		len(c.VCCSs) + len(c.VCVSs) + len(c.Probes)
	for _, p := range c.Probes {
		names += len(p.Terms)
	}
	return shapeSig{ints: make([]int, 0, ints), names: make([]string, 0, names)}
}

// shapeCursor records a shape into sig, or compares one with it: the
// first difference stops the comparison and keeps which element (kind,
// index and name) it was found in.
type shapeCursor struct {
	sig            *shapeSig
	record         bool
	i, j           int
	kind, elem     string
	index          int
	bad            bool
	badAt, badElem string
	badIdx         int
}

// at says which element (of the circuit walked) the values that follow
// belong to, and records its name and terminals.
func (k *shapeCursor) at(kind string, index int, name string, nodes ...Node) {
	k.kind, k.index, k.elem = kind, index, name
	k.name(name)
	for _, n := range nodes {
		k.num(int(n))
	}
}

func (k *shapeCursor) num(v int) {
	switch {
	case k.record:
		k.sig.ints = append(k.sig.ints, v)
	case k.bad:
	case k.i >= len(k.sig.ints) || k.sig.ints[k.i] != v:
		k.fail()
	default:
		k.i++
	}
}

func (k *shapeCursor) name(v string) {
	switch {
	case k.record:
		k.sig.names = append(k.sig.names, v)
	case k.bad:
	case k.j >= len(k.sig.names) || k.sig.names[k.j] != v:
		k.fail()
	default:
		k.j++
	}
}

func (k *shapeCursor) flag(x bool) {
	if x {
		k.num(1)
	} else {
		k.num(0)
	}
}

func (k *shapeCursor) fail() { k.bad, k.badAt, k.badIdx, k.badElem = true, k.kind, k.index, k.elem }

// err returns the error a comparison found between the compiled circuit
// was and c, the circuit walked, or nil.
func (k *shapeCursor) err(was, c *Circuit) error {
	if !k.bad && k.i == len(k.sig.ints) && k.j == len(k.sig.names) {
		return nil
	}
	what := "the circuit"
	if k.bad {
		what = fmt.Sprintf("%s %d", k.badAt, k.badIdx+1)
		if k.badElem != "" {
			what += " (" + k.badElem + ")"
		}
	}
	return fmt.Errorf("rebind circuit %q to %q: %s differs in shape (nodes, elements, terminals, names, probes or which sources sweep)",
		was.Title, c.Title, what)
}

// walkShape visits what the shape of c is made of: everything compile's
// first step reads, and nothing bind takes.
func walkShape(c *Circuit, k *shapeCursor) {
	k.kind, k.index, k.elem = "circuit", 0, ""
	for _, n := range []int{len(c.names), len(c.Mosfets), len(c.Resistors), len(c.VSources),
		len(c.ISources), len(c.VCCSs), len(c.VCVSs), len(c.Probes)} {
		k.num(n)
	}
	k.name(c.Output)
	for i, n := range c.names {
		k.at("node", i, n)
	}
	for i := range c.Mosfets {
		m := &c.Mosfets[i]
		k.at("transistor", i, m.Name, m.D, m.G, m.S, m.B)
	}
	for i := range c.Resistors {
		r := &c.Resistors[i]
		k.at("resistor", i, r.Name, r.A, r.B)
	}
	for i := range c.VSources {
		v := &c.VSources[i]
		k.at("voltage source", i, v.Name, v.P, v.N)
		k.flag(v.Value.sweeps())
	}
	for i := range c.ISources {
		v := &c.ISources[i]
		k.at("current source", i, v.Name, v.P, v.N)
		k.flag(v.Value.sweeps())
	}
	for i := range c.VCCSs {
		g := &c.VCCSs[i]
		k.at("VCCS", i, g.Name, g.P, g.N, g.CP, g.CN)
	}
	for i := range c.VCVSs {
		e := &c.VCVSs[i]
		k.at("VCVS", i, e.Name, e.P, e.N, e.CP, e.CN)
	}
	for i := range c.Probes {
		p := &c.Probes[i]
		k.at("probe", i, p.Name)
		k.num(len(p.Terms))
		for _, t := range p.Terms {
			k.name(t.Source)
		}
	}
}
