package sim

import (
	"fmt"

	"pairsmith/sim/device"
)

// The compiled system orders its variables as
//
//	[0, nu)       node voltages that are unknowns
//	[nu, n)       currents of floating voltage sources and VCVSs
//	[n, N)        node voltages fixed by grounded (chains of) voltage sources,
//	              ground first
//
// and keeps one dense N×N Jacobian. Only its leading n×n block is factored;
// the rows of fixed nodes give the currents their sources deliver, and
// their columns couple the inputs into the unknowns for the exact gm.

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
	inst       device.Instance
	d, g, s, b int
	// flat Jacobian indices of the channel's eight entries: rows d and s,
	// columns d, g, s, b.
	dd, dg, ds, db, sd, sg, ss, sb int
}

type twoTerm struct{ a, b int }

type branchStamp struct {
	idx    int // variable index of the branch current
	p, n   int
	cp, cn int     // controlling nodes (VCVS), -1 for an independent source
	gain   float64 // VCVS gain
	drive  Drive   // independent source value
	vsrc   int     // index into Circuit.VSources, -1 for a VCVS
}

type sourceRef struct {
	kind  int // 0 fixed-node source, 1 branch
	index int // into system.fixed or system.branches
	sign  float64
}

type system struct {
	c        *Circuit
	nu, n, N int
	idx      []int // node → variable index

	fixed    []fixedNode
	mos      []mosStamp
	res      []twoTerm
	resG     []float64
	isrc     []twoTerm
	isrcDrv  []Drive
	vccs     []vccsStamp
	branches []branchStamp

	// srcOf maps each VSource to where its current is found.
	srcOf []sourceRef
	// probes as (source, coef) lists resolved to sourceRefs.
	probeTerms [][]probeTerm
	output     int // probe index or -1

	// direct[i] is ∂r_i/∂vid at fixed x for unknown rows (source drives).
	direct []float64

	// base holds the Jacobian entries that do not depend on the solution
	// (junction gmin, resistors, controlled sources, branch incidence);
	// every load starts from a copy.
	base []float64
	// eCols lists the fixed variables that move with vid, and by how much.
	eCols []eCol
	// needed lists, parents first, the fixed nodes whose delivered current
	// a probe reads (with every node that hangs from them).
	needed []int
}

type eCol struct {
	idx int
	e   float64
}

type vccsStamp struct {
	p, n, cp, cn int
	g            float64
}

type probeTerm struct {
	src  int // VSource index
	coef float64
}

// compile checks the circuit and builds its system.
func compile(c *Circuit) (*system, error) {
	nNodes := len(c.names)
	fixedOf := make([]int, nNodes) // node → index in fixed, -1 if not fixed
	for i := range fixedOf {
		fixedOf[i] = -1
	}
	s := &system{c: c}
	s.fixed = append(s.fixed, fixedNode{parent: -1, src: -1})
	fixedOf[Ground] = 0

	if err := checkNodes(c); err != nil {
		return nil, err
	}

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

	// Variable indices: unknown nodes, then branches, then fixed nodes.
	s.idx = make([]int, nNodes)
	nu := 0
	for node := 0; node < nNodes; node++ {
		if fixedOf[node] < 0 {
			s.idx[node] = nu
			nu++
		}
	}
	s.nu = nu
	s.srcOf = make([]sourceRef, len(c.VSources))
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
	nb := len(floating) + len(c.VCVSs)
	s.n = nu + nb
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
			s.srcOf[f.src] = sourceRef{kind: 0, index: k, sign: -f.sign}
		}
	}
	for k, i := range floating {
		v := c.VSources[i]
		s.srcOf[i] = sourceRef{kind: 1, index: len(s.branches), sign: 1}
		s.branches = append(s.branches, branchStamp{
			idx: nu + k, p: s.idx[v.P], n: s.idx[v.N], cp: -1, cn: -1, drive: v.Value, vsrc: i,
		})
	}
	for k, e := range c.VCVSs {
		if fixedOf[e.P] >= 0 && fixedOf[e.N] >= 0 {
			return nil, fmt.Errorf("circuit %q: VCVS %s drives two nodes already fixed by voltage sources", c.Title, e.Name)
		}
		s.branches = append(s.branches, branchStamp{
			idx: nu + len(floating) + k, p: s.idx[e.P], n: s.idx[e.N],
			cp: s.idx[e.CP], cn: s.idx[e.CN], gain: e.Gain, vsrc: -1,
		})
	}

	for _, m := range c.Mosfets {
		inst, err := m.Model.Instance(m.Geom, c.TempK)
		if err != nil {
			return nil, fmt.Errorf("circuit %q: transistor %s: %w", c.Title, m.Name, err)
		}
		d, g, so, b := s.idx[m.D], s.idx[m.G], s.idx[m.S], s.idx[m.B]
		N := s.N
		s.mos = append(s.mos, mosStamp{inst: inst, d: d, g: g, s: so, b: b,
			dd: d*N + d, dg: d*N + g, ds: d*N + so, db: d*N + b,
			sd: so*N + d, sg: so*N + g, ss: so*N + so, sb: so*N + b})
	}
	for _, r := range c.Resistors {
		if !(r.R > 0) {
			return nil, fmt.Errorf("circuit %q: resistor %s: resistance %g Ω, want > 0", c.Title, r.Name, r.R)
		}
		s.res = append(s.res, twoTerm{s.idx[r.A], s.idx[r.B]})
		s.resG = append(s.resG, 1/r.R)
	}
	for _, i := range c.ISources {
		s.isrc = append(s.isrc, twoTerm{s.idx[i.P], s.idx[i.N]})
		s.isrcDrv = append(s.isrcDrv, i.Value)
	}
	for _, g := range c.VCCSs {
		s.vccs = append(s.vccs, vccsStamp{p: s.idx[g.P], n: s.idx[g.N], cp: s.idx[g.CP], cn: s.idx[g.CN], g: g.G})
	}

	s.output = -1
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
		s.probeTerms = append(s.probeTerms, terms)
		if p.Name == c.Output {
			s.output = pi
		}
	}
	if c.Output != "" && s.output < 0 {
		return nil, fmt.Errorf("circuit %q: output probe %q is not defined", c.Title, c.Output)
	}

	s.buildPlans(c)
	s.direct = make([]float64, s.n)
	for k, i := range s.isrc {
		dm := s.isrcDrv[k].DM
		if i.a < s.n {
			s.direct[i.a] += dm
		}
		if i.b < s.n {
			s.direct[i.b] -= dm
		}
	}
	for _, b := range s.branches {
		if b.vsrc >= 0 {
			s.direct[b.idx] -= b.drive.DM
		}
	}
	return s, nil
}

// buildPlans precomputes the constant part of the Jacobian, the inputs'
// columns and the fixed nodes whose currents the probes read.
func (s *system) buildPlans(c *Circuit) {
	N := s.N
	a := make([]float64, N*N)
	add := func(i, j int, v float64) { a[i*N+j] += v }
	for i, t := range s.res {
		g := s.resG[i]
		add(t.a, t.a, g)
		add(t.a, t.b, -g)
		add(t.b, t.a, -g)
		add(t.b, t.b, g)
	}
	for _, g := range s.vccs {
		add(g.p, g.cp, g.g)
		add(g.p, g.cn, -g.g)
		add(g.n, g.cp, -g.g)
		add(g.n, g.cn, g.g)
	}
	for _, b := range s.branches {
		add(b.p, b.idx, 1)
		add(b.n, b.idx, -1)
		add(b.idx, b.p, 1)
		add(b.idx, b.n, -1)
		if b.vsrc < 0 {
			add(b.idx, b.cp, -b.gain)
			add(b.idx, b.cn, b.gain)
		}
	}
	s.base = a
	for _, f := range s.fixed {
		if f.dm != 0 {
			s.eCols = append(s.eCols, eCol{idx: f.idx, e: f.dm})
		}
	}
	want := make([]bool, len(s.fixed))
	for _, terms := range s.probeTerms {
		for _, t := range terms {
			if ref := s.srcOf[t.src]; ref.kind == 0 {
				want[ref.index] = true
			}
		}
	}
	// A node's delivered current includes that of every node hanging
	// from it; parents come before children in s.fixed.
	for k := 1; k < len(s.fixed); k++ {
		if p := s.fixed[k].parent; p >= 1 && want[p] {
			want[k] = true
		}
	}
	for k := 1; k < len(s.fixed); k++ {
		if want[k] {
			s.needed = append(s.needed, k)
		}
	}
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
