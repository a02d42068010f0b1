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

// A circuit compiles in two steps: shape, the variables, slots and rows
// that follow from the nodes, the elements and which sources move with
// the sweep; and values (bind), the device instances, conductances,
// drives, probe coefficients and the constant work array. A solver can
// take the values of another circuit of the same shape without the first
// step (Rebind).

// fixedNode is a node whose voltage a voltage source sets relative to an
// already fixed node: v[idx] = v[parent] + sign·drive.
type fixedNode struct {
	idx    int
	parent int // index into system.fixed of the parent, -1 for ground
	src    int // index into Circuit.VSources, -1 for ground
	sign   float64
	drive  Drive
	dm     float64 // d v / d vid, accumulated along the chain
	cm     float64 // d v / d vcm, accumulated along the chain
}

// moves reports whether the node moves with vid or vcm: it then has a
// JE column, which gm and the sweep's tangent read.
func (f fixedNode) moves() bool { return f.dm != 0 || f.cm != 0 }

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
	a, b   int // variables
	ra, rb int // residual rows
	drive  Drive
}

type vccsStamp struct {
	p, n   int // variables the current flows between
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
	vcvs   int // index into Circuit.VCVSs, -1 for a voltage source
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

// A probe is resolved to where its currents are: coefficients of the
// currents delivered into needed fixed nodes (at is the node's position q
// in system.needed; each node's own current, those of the nodes hanging
// from it being terms of their own), and of branch current variables (at
// is the variable v).
type flatTerm struct {
	at   int
	coef float64
}

// flatPart says that term of a probe adds sign times its coefficient to
// the probe's qTerm at (or vTerm at, for a branch).
type flatPart struct {
	term, at int
	branch   bool
	sign     float64
}

// trashSlots is the size of the work and residual arrays' trash areas.
const trashSlots = 8

type system struct {
	c      *Circuit
	n, N   int
	nD     int    // unknowns [0, nD) move with the sweep; [nD, n) do not
	isNode []bool // for each unknown, whether it is a node voltage
	idx    []int  // node → variable index

	fixed       []fixedNode
	fixedMoving []int // indices into fixed of the nodes that move with the sweep
	mos         []mosStamp
	moving      []int // indices into mos of the transistors that are not frozen
	frozen      []int // indices into mos of the transistors that are
	all         []int // 0 … len(mos)−1
	res         []resStamp
	isrc        []isrcStamp
	isrcSweep   []int // indices into isrc of the sources whose drive sweeps
	vccs        []vccsStamp
	branches    []branchStamp

	// probeQ and probeV hold each probe's terms resolved, on delivered
	// currents and on branch currents; parts says how the probe's own
	// terms make them up (one term reads a node and every node hanging
	// from it).
	probeQ [][]flatTerm
	probeV [][]flatTerm
	parts  [][]flatPart
	output int // probe index or -1

	// sig is the shape of the circuit compiled, for Rebind to compare.
	sig shapeSig
	// eFix is the fixed node of each JE column: those that move with vid or vcm.
	eFix []int

	// Compact layout (see the comment at the top of the file).
	needed []int     // fixed nodes whose delivered current is read, parents first
	eVal   []float64 // d v / d vid of each of JE's columns
	nE     int
	oJE    int
	oF     int
	oFE    int
	trash  int // work slot
	rTrash int // residual row
	rowOf  []int
	colOf  []int
	// base is the constant part of the work array: resistors, controlled
	// sources, branch incidence (junction gmin is added per solver).
	base []float64
	// direct[i] is ∂r_i/∂vid at fixed voltages, for unknown rows.
	direct []float64
	// eCM and directCM are eVal and direct for vcm: what the sweep's
	// tangent dx/dvcm needs.
	eCM      []float64
	directCM []float64
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
	s, err := shape(c)
	if err != nil {
		return nil, err
	}
	insts := make([]device.Instance, len(c.Mosfets))
	if err := s.checkValues(c, insts); err != nil {
		return nil, err
	}
	s.bind(c, insts)
	return s, nil
}

// shape checks the circuit's structure and lays out its system: every
// index, slot and row, with the values left for bind.
func shape(c *Circuit) (*system, error) {
	if err := checkNodes(c); err != nil {
		return nil, err
	}
	nNodes := len(c.names)
	fixedOf := make([]int, nNodes) // node → index in fixed, -1 if not fixed
	for i := range fixedOf {
		fixedOf[i] = -1
	}
	nm := len(c.Mosfets)
	s := &system{c: c, mos: make([]mosStamp, 0, nm), all: make([]int, 0, nm), moving: make([]int, 0, nm), frozen: make([]int, 0, nm),
		res: make([]resStamp, 0, len(c.Resistors)), isrc: make([]isrcStamp, 0, len(c.ISources)),
		vccs: make([]vccsStamp, 0, len(c.VCCSs))}
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
	for k, mv := range moves {
		if mv {
			s.fixedMoving = append(s.fixedMoving, k)
		}
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
	s.fixedDM(s.fixed, c)
	for k := range s.fixed {
		if f := &s.fixed[k]; f.parent >= 0 {
			srcOf[f.src] = sourceRef{kind: 0, index: k, sign: -f.sign}
		}
	}
	probeTerms, err := s.resolveProbes()
	if err != nil {
		return nil, err
	}
	s.layout(srcOf, probeTerms)
	s.direct = make([]float64, s.n)
	s.directCM = make([]float64, s.n)

	for k, i := range floating {
		v := c.VSources[i]
		srcOf[i] = sourceRef{kind: 1, index: len(s.branches), sign: 1}
		s.branches = append(s.branches, s.newBranch(branchIdx[k], s.idx[v.P], s.idx[v.N], -1, -1, i, -1))
	}
	for k, e := range c.VCVSs {
		s.branches = append(s.branches, s.newBranch(branchIdx[len(floating)+k], s.idx[e.P], s.idx[e.N], s.idx[e.CP], s.idx[e.CN], -1, k))
	}
	constant := func(v int) bool { // an unknown kept during continuation, or a fixed node that does not move
		if v < s.n {
			return v >= s.nD
		}
		return !moves[v-s.n]
	}
	for i, m := range c.Mosfets {
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
		ms := mosStamp{
			frozen: constant(d) && constant(g) && constant(so) && constant(b),
			d:      d, g: g, s: so, b: b,
			dd: sl(0, d, d), dg: sl(1, d, g), ds: sl(2, d, so), db: sl(3, d, b),
			sd: sl(4, so, d), sg: sl(5, so, g), ss: sl(6, so, so), sb: sl(7, so, b),
			rd: rr(0, d), rs: rr(1, so), rb: rr(2, b)}
		s.mos = append(s.mos, ms)
		s.all = append(s.all, i)
		if ms.frozen {
			s.frozen = append(s.frozen, i)
		} else {
			s.moving = append(s.moving, i)
		}
	}
	for _, r := range c.Resistors {
		a, b := s.idx[r.A], s.idx[r.B]
		s.res = append(s.res, resStamp{a: a, b: b, ra: s.rrow(a), rb: s.rrow(b)})
	}
	for k, i := range c.ISources {
		a, b := s.idx[i.P], s.idx[i.N]
		s.isrc = append(s.isrc, isrcStamp{a: a, b: b, ra: s.rrow(a), rb: s.rrow(b)})
		if i.Value.sweeps() {
			s.isrcSweep = append(s.isrcSweep, k)
		}
	}
	for _, g := range c.VCCSs {
		p, n, cp, cn := s.idx[g.P], s.idx[g.N], s.idx[g.CP], s.idx[g.CN]
		s.vccs = append(s.vccs, vccsStamp{p: p, n: n, cp: cp, cn: cn, rp: s.rrow(p), rn: s.rrow(n)})
	}
	s.flatten(probeTerms, srcOf)
	s.sig = newShapeSig(c)
	walkShape(c, &shapeCursor{sig: &s.sig, record: true})
	return s, nil
}

// fixedDM computes into fixed the drives of c's sources and each fixed
// node's d v / d vid and d v / d vcm along its chain (parents come before
// children).
func (s *system) fixedDM(fixed []fixedNode, c *Circuit) {
	for k := 1; k < len(fixed); k++ {
		f := &fixed[k]
		f.drive = c.VSources[f.src].Value
		f.dm = fixed[f.parent].dm + f.sign*f.drive.DM
		f.cm = fixed[f.parent].cm + f.sign*f.drive.CM
	}
}

// flatten resolves each probe's terms to flat terms: a term that reads a
// fixed node's source reads the current delivered into that node and
// into every node hanging from it; terms that read the same current are
// merged. The coefficients are left for bind.
func (s *system) flatten(probeTerms [][]probeTerm, srcOf []sourceRef) {
	for _, terms := range probeTerms {
		qs := make([]flatTerm, 0, len(terms))
		var vs []flatTerm
		parts := make([]flatPart, 0, len(terms))
		for ti, t := range terms {
			ref := srcOf[t.src]
			if ref.kind != 0 {
				var at int
				vs, at = termAt(vs, s.branches[ref.index].idx)
				parts = append(parts, flatPart{term: ti, at: at, branch: true, sign: 1})
				continue
			}
			for q := range s.needed {
				if s.hangsFrom(q, ref.index) {
					var at int
					qs, at = termAt(qs, q)
					parts = append(parts, flatPart{term: ti, at: at, sign: ref.sign})
				}
			}
		}
		s.probeQ = append(s.probeQ, qs)
		s.probeV = append(s.probeV, vs)
		s.parts = append(s.parts, parts)
	}
}

// termAt returns ts with a term at x, appended unless there is one, and
// that term's index.
func termAt(ts []flatTerm, x int) ([]flatTerm, int) {
	for j, t := range ts {
		if t.at == x {
			return ts, j
		}
	}
	return append(ts, flatTerm{at: x}), len(ts)
}

// hangsFrom reports whether needed node q is fixed node k or hangs from
// it through a chain of sources.
func (s *system) hangsFrom(q, k int) bool {
	for a := s.needed[q]; a >= 1; a = s.fixed[a].parent {
		if a == k {
			return true
		}
	}
	return false
}

// newBranch lays out the branch of a floating voltage source (vsrc ≥ 0)
// or a VCVS (vcvs ≥ 0) whose current is variable idx.
func (s *system) newBranch(idx, p, n, cp, cn, vsrc, vcvs int) branchStamp {
	return branchStamp{idx: idx, p: p, n: n, rp: s.rrow(p), rn: s.rrow(n),
		cp: cp, cn: cn, vsrc: vsrc, vcvs: vcvs}
}

// checkValues checks the values of c, a circuit of s's shape, that bind
// would take, and sizes its transistors into insts; it changes nothing
// in s.
func (s *system) checkValues(c *Circuit, insts []device.Instance) error {
	for i, m := range c.Mosfets {
		inst, err := m.Model.Instance(m.Geom, c.TempK)
		if err != nil {
			return fmt.Errorf("circuit %q: transistor %s: %w", c.Title, m.Name, err)
		}
		insts[i] = inst
	}
	for _, r := range c.Resistors {
		if !(r.R > 0) {
			return fmt.Errorf("circuit %q: resistor %s: resistance %g Ω, want > 0", c.Title, r.Name, r.R)
		}
	}
	return nil
}

// bind takes the values of c, a circuit of s's shape whose values
// checkValues accepted, with its transistors' instances: drives,
// conductances, gains, probe coefficients, the constant work array and
// the direct vid terms. The result is the same, bit for bit, whatever
// circuit s was shaped from.
func (s *system) bind(c *Circuit, insts []device.Instance) {
	s.c = c
	s.fixedDM(s.fixed, c)
	for e, k := range s.eFix {
		s.eVal[e] = s.fixed[k].dm
		s.eCM[e] = s.fixed[k].cm
	}
	// Every transistor has an instance of its own, so that a per-device
	// variation (SetInstance) changes that device alone. Transistors of
	// the same card and size share a class number, so that load can
	// recognise two evaluations with identical inputs (the two halves of
	// a pair at vid = 0) and do the work once.
	classes := 0
	for i, m := range c.Mosfets {
		ms := &s.mos[i]
		ms.inst = insts[i]
		ms.id = -1
		for j := range i {
			if o := c.Mosfets[j]; o.Model == m.Model && o.Geom == m.Geom {
				ms.id = s.mos[j].id
				break
			}
		}
		if ms.id < 0 {
			ms.id = classes
			classes++
		}
	}
	clear(s.base)
	clear(s.direct)
	clear(s.directCM)
	for k := range s.branches {
		b := &s.branches[k]
		s.stamp(b.p, b.idx, 1)
		s.stamp(b.n, b.idx, -1)
		s.stamp(b.idx, b.p, 1)
		s.stamp(b.idx, b.n, -1)
		if b.vsrc < 0 {
			b.gain = c.VCVSs[b.vcvs].Gain
			s.stamp(b.idx, b.cp, -b.gain)
			s.stamp(b.idx, b.cn, b.gain)
		} else {
			b.drive = c.VSources[b.vsrc].Value
			s.direct[b.idx] -= b.drive.DM
			s.directCM[b.idx] -= b.drive.CM
		}
	}
	for k := range s.res {
		t := &s.res[k]
		g := 1 / c.Resistors[k].R
		t.g = g
		s.stamp(t.a, t.a, g)
		s.stamp(t.a, t.b, -g)
		s.stamp(t.b, t.a, -g)
		s.stamp(t.b, t.b, g)
	}
	for k := range s.isrc {
		t := &s.isrc[k]
		t.drive = c.ISources[k].Value
		if t.a < s.n {
			s.direct[t.a] += t.drive.DM
			s.directCM[t.a] += t.drive.CM
		}
		if t.b < s.n {
			s.direct[t.b] -= t.drive.DM
			s.directCM[t.b] -= t.drive.CM
		}
	}
	for k := range s.vccs {
		t := &s.vccs[k]
		t.g = c.VCCSs[k].G
		s.stamp(t.p, t.cp, t.g)
		s.stamp(t.p, t.cn, -t.g)
		s.stamp(t.n, t.cp, -t.g)
		s.stamp(t.n, t.cn, t.g)
	}
	for p, parts := range s.parts {
		qs, vs := s.probeQ[p], s.probeV[p]
		for j := range qs {
			qs[j].coef = 0
		}
		for j := range vs {
			vs[j].coef = 0
		}
		terms := c.Probes[p].Terms
		for _, pt := range parts {
			if pt.branch {
				vs[pt.at].coef += pt.sign * terms[pt.term].Coef
			} else {
				qs[pt.at].coef += pt.sign * terms[pt.term].Coef
			}
		}
	}
}

// stamp adds a constant Jacobian entry.
func (s *system) stamp(row, col int, v float64) { s.base[s.slot(row, col)] += v }

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
// current (its fixed-node entries at least).
func (s *system) layout(srcOf []sourceRef, probeTerms [][]probeTerm) {
	for k, f := range s.fixed {
		if f.moves() {
			s.eFix = append(s.eFix, k)
		}
	}
	s.eVal = make([]float64, len(s.eFix))
	s.eCM = make([]float64, len(s.eFix))
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
	for e, k := range s.eFix {
		s.colOf[s.fixed[k].idx] = s.n + e
	}
	nF := len(s.needed)
	s.nE = len(s.eFix)
	s.oJE = s.n * s.n
	s.oF = s.oJE + s.n*s.nE
	s.oFE = s.oF + nF*s.n
	s.trash = s.oFE + nF*s.nE
	s.rTrash = s.n + nF
	s.base = make([]float64, s.trash+trashSlots)
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
