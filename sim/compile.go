package sim

import (
	"fmt"

	"pairsmith/sim/device"
)

// The compiled system orders its variables as
//
//	[0, nD)       unknowns (node voltages, currents of floating voltage
//	              sources and VCVSs) that move with the sweep
//	[nD, n)       unknowns that do not: bias branches whose equations
//	              involve no input, solved once per sweep
//	[n, N)        node voltages fixed by grounded (chains of) voltage sources,
//	              ground first
//
// The Newton loop needs only the n×n Jacobian J of the unknowns; the exact
// gm and the source currents also need the columns of the inputs that move
// with vid (JE), the rows of the fixed nodes whose source currents the
// probes read (F), and where those meet (FE). Each element's stamps are
// resolved at compile time to slots of one compact work array
//
//	[ J (n×n) | JE (n×nE) | F (nF×n) | FE (nF×nE) | trash ]
//
// so that a load starts from a short copy of the constant entries and
// writes every stamp without a branch; stamps nobody reads go to the
// trash slot. The residual is compact the same way: [ unknown rows | F
// rows | trash ].

// fixedNode is a node whose voltage a voltage source sets relative to an
// already fixed node: v[idx] = v[parent] + sign·drive.
type fixedNode struct {
	idx    int
	parent int // index into system.fixed of the parent, -1 for ground
	src    int // index into Circuit.VSources, -1 for ground
	sign   float64
	drive  Drive
	dm     float64 // d v / d vid, accumulated along the chain
}

type mosStamp struct {
	inst       device.Instance // this transistor's own
	id         int             // class: equal for transistors whose instances are alike
	frozen     bool            // all terminals constant during a sweep's continuation
	d, g, s, b int             // variable indices
	// work slots of the channel's eight Jacobian entries: rows d and s,
	// columns d, g, s, b; and residual rows of d, s, b.
	dd, dg, ds, db, sd, sg, ss, sb int
	rd, rs, rb                     int
}

type resStamp struct {
	a, b   int // variables
	ra, rb int // residual rows
	g      float64
}

type isrcStamp struct {
	ra, rb int
	drive  Drive
}

type vccsStamp struct {
	cp, cn int // controlling variables
	rp, rn int // residual rows
	g      float64
}

type branchStamp struct {
	idx    int // variable (and row) of the branch current
	p, n   int // variables
	rp, rn int // residual rows of p and n
	cp, cn int // controlling variables (VCVS)
	gain   float64
	drive  Drive
	vsrc   int // index into Circuit.VSources, -1 for a VCVS
}

type sourceRef struct {
	kind  int // 0 fixed-node source, 1 branch
	index int // into system.fixed or system.branches
	sign  float64
}

type probeTerm struct {
	src  int // VSource index
	coef float64
}

// flatTerm is a probe term resolved to where its current is: coef times
// the delivered current of needed fixed node q (see system.needed) or,
// with q < 0, coef times the branch current variable v.
type flatTerm struct {
	q, v int
	coef float64
}

// trashSlots is the size of the work and residual arrays' trash areas.
const trashSlots = 8

type system struct {
	c      *Circuit
	n, N   int
	nD     int    // unknowns [0, nD) move with the sweep; [nD, n) do not
	isNode []bool // for each unknown, whether it is a node voltage
	idx    []int  // node → variable index

	fixed    []fixedNode
	mos      []mosStamp
	res      []resStamp
	isrc     []isrcStamp
	vccs     []vccsStamp
	branches []branchStamp

	flat   [][]flatTerm // probe terms resolved, per probe
	output int          // probe index or -1

	// Compact layout (see the comment at the top of the file).
	needed []int // fixed nodes whose delivered current is read, parents first
	// parentQ[q] is the position in needed of needed[q]'s parent, or -1;
	// chains says whether any is not -1.
	parentQ []int
	chains  bool
	eVal    []float64 // d v / d vid of each of JE's columns
	nE      int
	oJE     int
	oF      int
	oFE     int
	trash   int // work slot
	rTrash  int // residual row
	rowOf   []int
	colOf   []int
	// base is the constant part of the work array: resistors, controlled
	// sources, branch incidence (junction gmin is added per solver).
	base []float64
	// direct[i] is ∂r_i/∂vid at fixed voltages, for unknown rows.
	direct []float64
}

// slot returns the work-array slot of Jacobian entry (row, col), in
// variable indices.
func (s *system) slot(row, col int) int {
	r, c := s.rowOf[row], s.colOf[col]
	if r < 0 || c < 0 {
		return s.trash
	}
	if r < s.n {
		if c < s.n {
			return r*s.n + c
		}
		return s.oJE + r*s.nE + (c - s.n)
	}
	k := r - s.n
	if c < s.n {
		return s.oF + k*s.n + c
	}
	return s.oFE + k*s.nE + (c - s.n)
}

// rrow returns the compact residual row of a variable.
func (s *system) rrow(v int) int {
	if r := s.rowOf[v]; r >= 0 {
		return r
	}
	return s.rTrash
}

// compile checks the circuit and builds its system.
func compile(c *Circuit) (*system, error) {
	if err := checkNodes(c); err != nil {
		return nil, err
	}
	nNodes := len(c.names)
	fixedOf := make([]int, nNodes) // node → index in fixed, -1 if not fixed
	for i := range fixedOf {
		fixedOf[i] = -1
	}
	s := &system{c: c}
	s.fixed = append(s.fixed, fixedNode{parent: -1, src: -1})
	fixedOf[Ground] = 0

	defines := make([]bool, len(c.VSources))
	for changed := true; changed; {
		changed = false
		for i, v := range c.VSources {
			if defines[i] {
				continue
			}
			fp, fn := fixedOf[v.P], fixedOf[v.N]
			switch {
			case fp >= 0 && fn >= 0:
				continue // resolved below
			case fn >= 0:
				fixedOf[v.P] = len(s.fixed)
				s.fixed = append(s.fixed, fixedNode{parent: fn, src: i, sign: 1, drive: v.Value})
			case fp >= 0:
				fixedOf[v.N] = len(s.fixed)
				s.fixed = append(s.fixed, fixedNode{parent: fp, src: i, sign: -1, drive: v.Value})
			default:
				continue
			}
			defines[i] = true
			changed = true
		}
	}

	var floating []int
	for i, v := range c.VSources {
		if defines[i] {
			continue
		}
		if fixedOf[v.P] >= 0 && fixedOf[v.N] >= 0 {
			return nil, fmt.Errorf("circuit %q: voltage source %s closes a loop of voltage sources between %s and %s",
				c.Title, v.Name, c.NodeName(v.P), c.NodeName(v.N))
		}
		floating = append(floating, i)
	}
	for _, e := range c.VCVSs {
		if fixedOf[e.P] >= 0 && fixedOf[e.N] >= 0 {
			return nil, fmt.Errorf("circuit %q: VCVS %s drives two nodes already fixed by voltage sources", c.Title, e.Name)
		}
	}

	// Variable indices: the unknowns that move with the sweep first, then
	// those that do not (bias branches), then the fixed nodes. Unknowns
	// are the unfixed nodes ("things" 0…nNodes−1) and the branch currents
	// of floating sources and VCVSs (things nNodes…).
	nb := len(floating) + len(c.VCVSs)
	// moves[k] says whether fixed node k moves with the sweep: whether any
	// source on its chain to ground has a sweep-dependent drive.
	moves := make([]bool, len(s.fixed))
	for k := 1; k < len(s.fixed); k++ {
		f := s.fixed[k]
		moves[k] = moves[f.parent] || f.drive.sweeps()
	}
	dyn := movingUnknowns(c, fixedOf, moves, floating)
	s.idx = make([]int, nNodes)
	branchIdx := make([]int, nb)
	var order []int
	for pass := 0; pass < 2; pass++ {
		want := pass == 0
		for node := 0; node < nNodes; node++ {
			if fixedOf[node] < 0 && dyn[node] == want {
				order = append(order, node)
			}
		}
		for k := 0; k < nb; k++ {
			if dyn[nNodes+k] == want {
				order = append(order, nNodes+k)
			}
		}
		if pass == 0 {
			s.nD = len(order)
		}
	}
	s.isNode = make([]bool, len(order))
	for v, th := range order {
		if th < nNodes {
			s.idx[th] = v
			s.isNode[v] = true
		} else {
			branchIdx[th-nNodes] = v
		}
	}
	srcOf := make([]sourceRef, len(c.VSources)) // for each VSource, where its current is found
	s.n = len(order)
	s.N = s.n + len(s.fixed)
	for node := 0; node < nNodes; node++ {
		if f := fixedOf[node]; f >= 0 {
			s.idx[node] = s.n + f
			s.fixed[f].idx = s.n + f
		}
	}
	for k := range s.fixed {
		f := &s.fixed[k]
		if f.parent >= 0 {
			f.dm = s.fixed[f.parent].dm + f.sign*f.drive.DM
			srcOf[f.src] = sourceRef{kind: 0, index: k, sign: -f.sign}
		}
	}
	probeTerms, err := s.resolveProbes()
	if err != nil {
		return nil, err
	}
	pos := s.layout(srcOf, probeTerms)
	s.direct = make([]float64, s.n)

	for k, i := range floating {
		v := c.VSources[i]
		srcOf[i] = sourceRef{kind: 1, index: len(s.branches), sign: 1}
		s.addBranch(branchIdx[k], s.idx[v.P], s.idx[v.N], -1, -1, 0, v.Value, i)
	}
	for k, e := range c.VCVSs {
		s.addBranch(branchIdx[len(floating)+k], s.idx[e.P], s.idx[e.N], s.idx[e.CP], s.idx[e.CN], e.Gain, Drive{}, -1)
	}
	// Every transistor has an instance of its own, so that a per-device
	// variation (SetInstance) changes that device alone. Transistors of
	// the same card and size share a class number, so that load can
	// recognise two evaluations with identical inputs (the two halves of
	// a pair at vid = 0) and do the work once.
	type instKey struct {
		m device.Model
		g device.Geometry
	}
	ids := map[instKey]int{}
	constant := func(v int) bool { // an unknown kept during continuation, or a fixed node that does not move
		if v < s.n {
			return v >= s.nD
		}
		return !moves[v-s.n]
	}
	for _, m := range c.Mosfets {
		inst, err := m.Model.Instance(m.Geom, c.TempK)
		if err != nil {
			return nil, fmt.Errorf("circuit %q: transistor %s: %w", c.Title, m.Name, err)
		}
		key := instKey{m.Model, m.Geom}
		id, ok := ids[key]
		if !ok {
			id = len(ids)
			ids[key] = id
		}
		d, g, so, b := s.idx[m.D], s.idx[m.G], s.idx[m.S], s.idx[m.B]
		// Stamps nobody reads go to trash slots, a different one for each
		// position, so that they do not queue behind each other's stores.
		sl := func(k, row, col int) int {
			if x := s.slot(row, col); x != s.trash {
				return x
			}
			return s.trash + k
		}
		rr := func(k, v int) int {
			if x := s.rrow(v); x != s.rTrash {
				return x
			}
			return s.rTrash + k
		}
		s.mos = append(s.mos, mosStamp{inst: inst, id: id,
			frozen: constant(d) && constant(g) && constant(so) && constant(b),
			d:      d, g: g, s: so, b: b,
			dd: sl(0, d, d), dg: sl(1, d, g), ds: sl(2, d, so), db: sl(3, d, b),
			sd: sl(4, so, d), sg: sl(5, so, g), ss: sl(6, so, so), sb: sl(7, so, b),
			rd: rr(0, d), rs: rr(1, so), rb: rr(2, b)})
	}
	for _, r := range c.Resistors {
		if !(r.R > 0) {
			return nil, fmt.Errorf("circuit %q: resistor %s: resistance %g Ω, want > 0", c.Title, r.Name, r.R)
		}
		a, b, g := s.idx[r.A], s.idx[r.B], 1/r.R
		s.res = append(s.res, resStamp{a: a, b: b, ra: s.rrow(a), rb: s.rrow(b), g: g})
		s.stamp(a, a, g)
		s.stamp(a, b, -g)
		s.stamp(b, a, -g)
		s.stamp(b, b, g)
	}
	for _, i := range c.ISources {
		a, b := s.idx[i.P], s.idx[i.N]
		s.isrc = append(s.isrc, isrcStamp{ra: s.rrow(a), rb: s.rrow(b), drive: i.Value})
		if a < s.n {
			s.direct[a] += i.Value.DM
		}
		if b < s.n {
			s.direct[b] -= i.Value.DM
		}
	}
	for _, g := range c.VCCSs {
		p, n, cp, cn := s.idx[g.P], s.idx[g.N], s.idx[g.CP], s.idx[g.CN]
		s.vccs = append(s.vccs, vccsStamp{cp: cp, cn: cn, rp: s.rrow(p), rn: s.rrow(n), g: g.G})
		s.stamp(p, cp, g.G)
		s.stamp(p, cn, -g.G)
		s.stamp(n, cp, -g.G)
		s.stamp(n, cn, g.G)
	}
	for _, terms := range probeTerms {
		var ft []flatTerm
		for _, t := range terms {
			ref := srcOf[t.src]
			if ref.kind == 0 {
				q, ok := pos[ref.index]
				if !ok {
					q = -1
				}
				ft = append(ft, flatTerm{q: q, coef: ref.sign * t.coef})
			} else {
				ft = append(ft, flatTerm{q: -1, v: s.branches[ref.index].idx, coef: t.coef})
			}
		}
		s.flat = append(s.flat, ft)
	}
	return s, nil
}

// stamp adds a constant Jacobian entry.
func (s *system) stamp(row, col int, v float64) { s.base[s.slot(row, col)] += v }

func (s *system) addBranch(idx, p, n, cp, cn int, gain float64, drive Drive, vsrc int) {
	s.branches = append(s.branches, branchStamp{idx: idx, p: p, n: n, rp: s.rrow(p), rn: s.rrow(n),
		cp: cp, cn: cn, gain: gain, drive: drive, vsrc: vsrc})
	s.stamp(p, idx, 1)
	s.stamp(n, idx, -1)
	s.stamp(idx, p, 1)
	s.stamp(idx, n, -1)
	if vsrc < 0 {
		s.stamp(idx, cp, -gain)
		s.stamp(idx, cn, gain)
	} else {
		s.direct[idx] -= drive.DM
	}
}

// resolveProbes turns probe terms into source indices, per probe, and
// finds the output probe.
func (s *system) resolveProbes() ([][]probeTerm, error) {
	c := s.c
	s.output = -1
	var probeTerms [][]probeTerm
	for pi, p := range c.Probes {
		terms := make([]probeTerm, 0, len(p.Terms))
		for _, t := range p.Terms {
			k := -1
			for i, v := range c.VSources {
				if v.Name == t.Source {
					k = i
					break
				}
			}
			if k < 0 {
				return nil, fmt.Errorf("circuit %q: probe %s names no voltage source %q", c.Title, p.Name, t.Source)
			}
			terms = append(terms, probeTerm{src: k, coef: t.Coef})
		}
		probeTerms = append(probeTerms, terms)
		if p.Name == c.Output {
			s.output = pi
		}
	}
	if c.Output != "" && s.output < 0 {
		return nil, fmt.Errorf("circuit %q: output probe %q is not defined", c.Title, c.Output)
	}
	return probeTerms, nil
}

// layout finds the inputs' columns and the fixed rows the probes read, and
// sizes the compact work array. srcOf locates each voltage source's
// current (its fixed-node entries at least). It returns the position in
// s.needed of each needed fixed node.
func (s *system) layout(srcOf []sourceRef, probeTerms [][]probeTerm) map[int]int {
	var eIdx []int // the fixed variables that move with vid (JE's columns)
	for _, f := range s.fixed {
		if f.dm != 0 {
			eIdx = append(eIdx, f.idx)
			s.eVal = append(s.eVal, f.dm)
		}
	}
	want := make([]bool, len(s.fixed))
	for _, terms := range probeTerms {
		for _, t := range terms {
			if ref := srcOf[t.src]; ref.kind == 0 {
				want[ref.index] = true
			}
		}
	}
	// A node's delivered current includes that of every node hanging from
	// it; parents come before children in s.fixed.
	for k := 1; k < len(s.fixed); k++ {
		if p := s.fixed[k].parent; p >= 1 && want[p] {
			want[k] = true
		}
	}
	s.rowOf = make([]int, s.N)
	s.colOf = make([]int, s.N)
	for v := 0; v < s.N; v++ {
		s.rowOf[v], s.colOf[v] = -1, -1
		if v < s.n {
			s.rowOf[v], s.colOf[v] = v, v
		}
	}
	for k := 1; k < len(s.fixed); k++ {
		if want[k] {
			s.rowOf[s.fixed[k].idx] = s.n + len(s.needed)
			s.needed = append(s.needed, k)
		}
	}
	for e, v := range eIdx {
		s.colOf[v] = s.n + e
	}
	pos := map[int]int{}
	for q, k := range s.needed {
		pos[k] = q
	}
	for _, k := range s.needed {
		pq, ok := pos[s.fixed[k].parent]
		if !ok {
			pq = -1
		}
		s.parentQ = append(s.parentQ, pq)
		s.chains = s.chains || pq >= 0
	}
	nF := len(s.needed)
	s.nE = len(eIdx)
	s.oJE = s.n * s.n
	s.oF = s.oJE + s.n*s.nE
	s.oFE = s.oF + nF*s.n
	s.trash = s.oFE + nF*s.nE
	s.rTrash = s.n + nF
	s.base = make([]float64, s.trash+trashSlots)
	return pos
}

// movingUnknowns finds which unknowns can move with the sweep: those whose
// equations involve, directly or through other unknowns, a node or source
// driven by vcm or vid. The rest form a block that depends on constants
// only (reference branches, bias chains), whose solution a sweep can keep
// from its first point. Things are indexed as nodes 0…nNodes−1, then the
// branch currents of the floating sources and VCVSs; the result is
// meaningful for unknown things only.
func movingUnknowns(c *Circuit, fixedOf []int, moves []bool, floating []int) []bool {
	nNodes := len(c.names)
	nThings := nNodes + len(floating) + len(c.VCVSs)
	dyn := make([]bool, nThings)
	deps := make([][]int, nThings) // row thing → column things it depends on
	dep := func(rows []int, cols ...int) {
		for _, r := range rows {
			if r < nNodes && fixedOf[r] >= 0 {
				continue // a fixed node's row is not an equation
			}
			for _, col := range cols {
				if col < nNodes && fixedOf[col] >= 0 {
					if moves[fixedOf[col]] {
						dyn[r] = true
					}
					continue
				}
				deps[r] = append(deps[r], col)
			}
		}
	}
	node := func(ns ...Node) []int {
		out := make([]int, len(ns))
		for i, n := range ns {
			out[i] = int(n)
		}
		return out
	}
	for _, m := range c.Mosfets {
		dep(node(m.D, m.S, m.B), node(m.D, m.G, m.S, m.B)...)
	}
	for _, r := range c.Resistors {
		dep(node(r.A, r.B), node(r.A, r.B)...)
	}
	for _, i := range c.ISources {
		if i.Value.sweeps() {
			for _, r := range node(i.P, i.N) {
				dyn[r] = true
			}
		}
	}
	for _, g := range c.VCCSs {
		dep(node(g.P, g.N), node(g.CP, g.CN)...)
	}
	for k, i := range floating {
		v, b := c.VSources[i], nNodes+k
		dep(node(v.P, v.N), b)
		dep([]int{b}, node(v.P, v.N)...)
		if v.Value.sweeps() {
			dyn[b] = true
		}
	}
	for k, e := range c.VCVSs {
		b := nNodes + len(floating) + k
		dep(node(e.P, e.N), b)
		dep([]int{b}, node(e.P, e.N, e.CP, e.CN)...)
	}
	for changed := true; changed; {
		changed = false
		for r := range deps {
			if dyn[r] {
				continue
			}
			for _, col := range deps[r] {
				if dyn[col] {
					dyn[r], changed = true, true
					break
				}
			}
		}
	}
	return dyn
}

// checkNodes rejects node indices out of range and nodes that no element
// touches, which would make the Jacobian singular.
func checkNodes(c *Circuit) error {
	count := make([]int, len(c.names))
	var bad error
	touch := func(elem string, ns ...Node) {
		for _, n := range ns {
			if int(n) < 0 || int(n) >= len(count) {
				if bad == nil {
					bad = fmt.Errorf("circuit %q: %s: node index %d out of range", c.Title, elem, int(n))
				}
				continue
			}
			count[n]++
		}
	}
	for _, m := range c.Mosfets {
		touch(m.Name, m.D, m.G, m.S, m.B)
	}
	for _, r := range c.Resistors {
		touch(r.Name, r.A, r.B)
	}
	for _, v := range c.VSources {
		touch(v.Name, v.P, v.N)
	}
	for _, i := range c.ISources {
		touch(i.Name, i.P, i.N)
	}
	for _, g := range c.VCCSs {
		touch(g.Name, g.P, g.N, g.CP, g.CN)
	}
	for _, e := range c.VCVSs {
		touch(e.Name, e.P, e.N, e.CP, e.CN)
	}
	if bad != nil {
		return bad
	}
	for n := 1; n < len(count); n++ {
		if count[n] == 0 {
			return fmt.Errorf("circuit %q: node %s is connected to nothing", c.Title, c.names[n])
		}
	}
	return nil
}
