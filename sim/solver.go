package sim

import (
	"fmt"
	"math"

	"pairsmith/sim/device"
)

// Options tune the Newton solver. The zero value of a field takes its
// default.
type Options struct {
	// Gmin is the conductance SPICE places across the drain–bulk and
	// source–bulk junctions of every transistor (default 1e-12 S, as in
	// SPICE); it keeps nodes of switched-off level-1 devices defined.
	Gmin float64
	// RelTol and VnTol set convergence: every node voltage change of the
	// last Newton step below RelTol·|v| + VnTol (defaults 1e-6 and 1e-7 V).
	RelTol float64
	VnTol  float64
	// AbsTol is the absolute tolerance of branch currents (default 1e-12 A).
	AbsTol float64
	// MaxStep limits the change of any node voltage in one Newton step
	// (default 0.5 V).
	MaxStep float64
	// MaxIter bounds the iterations of one Newton solve (default 80).
	MaxIter int
}

func (o Options) withDefaults() Options {
	if o.Gmin == 0 {
		o.Gmin = 1e-12
	}
	if o.RelTol == 0 {
		o.RelTol = 1e-6
	}
	if o.VnTol == 0 {
		o.VnTol = 1e-7
	}
	if o.AbsTol == 0 {
		o.AbsTol = 1e-12
	}
	if o.MaxStep == 0 {
		o.MaxStep = 0.5
	}
	if o.MaxIter == 0 {
		o.MaxIter = 80
	}
	return o
}

// dampAfter is the Newton iteration after which steps are halved.
const dampAfter = 12

// ConvergenceError reports a point where no DC solution was found. It
// never becomes a number in a result.
type ConvergenceError struct {
	Circuit  string  // the circuit's title: what and under which conditions
	VCM, VID float64 // the point, V
	Reason   string
}

func (e *ConvergenceError) Error() string {
	return fmt.Sprintf("%s: no DC solution at vcm = %.6g V, vid = %.6g V: %s", e.Circuit, e.VCM, e.VID, e.Reason)
}

// Solver solves one compiled circuit. It is not safe for concurrent use;
// make one per goroutine.
type Solver struct {
	sys *system
	opt Options

	v    []float64 // all variables, system order
	w    []float64 // compact work array: J (factored in place), JE, F, FE
	r    []float64 // compact residual: unknown rows, then the F rows
	piv  []int
	dx   []float64 // last Newton step
	rhs  []float64 // d x / d vid after post
	base []float64 // constant part of w, junction gmin included

	deliv []float64 // current delivered into each needed fixed node

	// active is how many unknowns the last converged solve moved: n, or
	// nD for a sweep's reduced step, whose factors are then the leading
	// nD×nD block of J.
	active int
	// memo holds each transistor's last inputs and evaluation.
	memo []mosMemo

	save []float64 // scratch copy of v

	iterations int // Newton iterations since the solver was made
}

// mosMemo is a transistor's last evaluation and its inputs.
type mosMemo struct {
	vd, vg, vs, vb float64
	ev             device.Eval
	ok             bool
}

// Iterations returns the number of Newton iterations (Jacobian loads and
// factorisations) the solver has done since it was made.
func (s *Solver) Iterations() int { return s.iterations }

// NewSolver compiles the circuit.
func NewSolver(c *Circuit, opt Options) (*Solver, error) {
	sys, err := compile(c)
	if err != nil {
		return nil, err
	}
	s := &Solver{sys: sys, opt: opt.withDefaults()}
	s.newBuffers()
	// The junction gmin of every transistor is constant: stamp it into the
	// base once, for this solver's gmin.
	s.base = append([]float64(nil), sys.base...)
	g := s.opt.Gmin
	for _, m := range sys.mos {
		add := func(i, j int, v float64) { s.base[sys.slot(i, j)] += v }
		add(m.d, m.d, g)
		add(m.d, m.b, -g)
		add(m.s, m.s, g)
		add(m.s, m.b, -g)
		add(m.b, m.b, 2*g)
		add(m.b, m.d, -g)
		add(m.b, m.s, -g)
	}
	clear(s.base[sys.trash:])
	return s, nil
}

// clone returns a solver of the same compiled circuit with buffers of its
// own, for use on another goroutine (the compiled system and the device
// instances are read-only once built).
func (s *Solver) clone() *Solver {
	c := &Solver{sys: s.sys, opt: s.opt, base: s.base}
	c.newBuffers()
	copy(c.v, s.v)
	return c
}

// newBuffers gives s zeroed work buffers of its own, sized for s.sys.
func (s *Solver) newBuffers() {
	sys := s.sys
	n, N := sys.n, sys.N
	s.v = make([]float64, N)
	s.w = make([]float64, len(sys.base))
	s.r = make([]float64, sys.rTrash+trashSlots)
	s.piv = make([]int, n)
	s.dx = make([]float64, n)
	s.rhs = make([]float64, n)
	s.deliv = make([]float64, len(sys.needed))
	s.save = make([]float64, N)
	s.memo = make([]mosMemo, len(sys.mos))
}

// SetInstance replaces the instance of transistor i (its index in
// Circuit.Mosfets) with inst: a variation of that device alone, such as a
// mismatch made by sizing a perturbed copy of its card,
//
//	card := *nmos
//	card.VTO += dvt
//	inst, err := card.Instance(geom, c.TempK)
//
// Every transistor has an instance of its own, so no other device
// changes. The circuit's element keeps its card and geometry (a netlist
// exports the nominal device); the next sweep or solve uses inst.
func (s *Solver) SetInstance(i int, inst device.Instance) error {
	sys := s.sys
	if i < 0 || i >= len(sys.mos) {
		return fmt.Errorf("circuit %q: transistor index %d, want 0 … %d", sys.c.Title, i, len(sys.mos)-1)
	}
	if inst == nil {
		return fmt.Errorf("circuit %q: transistor %s: no instance given", sys.c.Title, sys.c.Mosfets[i].Name)
	}
	m := &sys.mos[i]
	m.inst = inst
	// A class of its own (classes are numbered below len(sys.mos)): no
	// evaluation of another transistor stands for this one's.
	m.id = len(sys.mos) + i
	s.memo[i].ok = false
	return nil
}

// Circuit returns the circuit the solver was built from.
func (s *Solver) Circuit() *Circuit { return s.sys.c }

// Unknowns returns the number of variables Newton solves for.
func (s *Solver) Unknowns() int { return s.sys.n }

// setFixed computes the voltages of fixed nodes into v, a slice of all
// variables in system order; scale multiplies every independent source
// (source stepping).
func (s *Solver) setFixed(v []float64, vcm, vid, scale float64) {
	fx := s.sys.fixed
	v[fx[0].idx] = 0
	for k := 1; k < len(fx); k++ {
		f := &fx[k]
		v[f.idx] = v[fx[f.parent].idx] + f.sign*scale*f.drive.At(vcm, vid)
	}
}

// load evaluates every element at s.v and fills the work array and the
// residual.
func (s *Solver) load(vcm, vid, scale, gshunt float64) {
	sys := s.sys
	w, r, v := s.w, s.r, s.v
	copy(w, s.base)
	clear(r)
	gmin := s.opt.Gmin
	// An evaluation is skipped, exactly, when its inputs are bitwise those
	// of the transistor's last one (a bias branch frozen during a sweep's
	// continuation) or of the transistor just evaluated with the same
	// instance (the two halves of a pair at vid = 0).
	last := -1
	var lvd, lvg, lvs, lvb float64
	var ev device.Eval
	for i := range sys.mos {
		m := &sys.mos[i]
		vd, vg, vs, vb := v[m.d], v[m.g], v[m.s], v[m.b]
		if m.frozen {
			me := &s.memo[i]
			if !me.ok || vd != me.vd || vg != me.vg || vs != me.vs || vb != me.vb {
				me.ev = m.inst.Eval(vd, vg, vs, vb)
				me.vd, me.vg, me.vs, me.vb, me.ok = vd, vg, vs, vb, true
			}
			ev = me.ev
		} else if m.id != last || vd != lvd || vg != lvg || vs != lvs || vb != lvb {
			ev = m.inst.Eval(vd, vg, vs, vb)
		}
		last, lvd, lvg, lvs, lvb = m.id, vd, vg, vs, vb
		w[m.dd] += ev.GD
		w[m.dg] += ev.GG
		w[m.ds] += ev.GS
		w[m.db] += ev.GB
		w[m.sd] -= ev.GD
		w[m.sg] -= ev.GG
		w[m.ss] -= ev.GS
		w[m.sb] -= ev.GB
		// Channel current plus the junctions' gmin, drain–bulk and
		// source–bulk (their conductances are in base).
		idb := gmin * (vd - vb)
		isb := gmin * (vs - vb)
		r[m.rd] += ev.ID + idb
		r[m.rs] += isb - ev.ID
		r[m.rb] -= idb + isb
	}
	for _, t := range sys.res {
		cur := t.g * (v[t.a] - v[t.b])
		r[t.ra] += cur
		r[t.rb] -= cur
	}
	for _, t := range sys.isrc {
		cur := scale * t.drive.At(vcm, vid)
		r[t.ra] += cur
		r[t.rb] -= cur
	}
	for _, g := range sys.vccs {
		cur := g.g * (v[g.cp] - v[g.cn])
		r[g.rp] += cur
		r[g.rn] -= cur
	}
	for _, b := range sys.branches {
		cur := v[b.idx]
		r[b.rp] += cur
		r[b.rn] -= cur
		var val float64
		if b.vsrc >= 0 {
			val = scale * b.drive.At(vcm, vid)
		} else {
			val = b.gain * (v[b.cp] - v[b.cn])
		}
		r[b.idx] = v[b.p] - v[b.n] - val
	}
	if gshunt > 0 {
		n := sys.n
		for i := 0; i < n; i++ {
			if sys.isNode[i] {
				r[i] += gshunt * v[i]
				w[i*n+i] += gshunt
			}
		}
	}
}

// newton iterates from the present s.v over every unknown. On success the
// LU factors of the Jacobian at the last evaluation are in the J part of
// s.w, the rest of s.w and s.r hold that evaluation, and s.dx the final
// (applied) step.
func (s *Solver) newton(vcm, vid, scale, gshunt float64, maxIter int) bool {
	return s.iterate(s.sys.n, vcm, vid, scale, gshunt, maxIter)
}

// newtonMoving is newton over the unknowns that move with the sweep only,
// the others kept at their values: the continuation step of a sweep once
// its first point has solved the bias branches. Its factors are the
// leading nD×nD block of J.
func (s *Solver) newtonMoving(vcm, vid float64, maxIter int) bool {
	return s.iterate(s.sys.nD, vcm, vid, 1, 0, maxIter)
}

// iterate is Newton's method over the first m unknowns.
func (s *Solver) iterate(m int, vcm, vid, scale, gshunt float64, maxIter int) bool {
	n := s.sys.n
	s.setFixed(s.v, vcm, vid, scale)
	lu, dx := s.w[:n*n], s.dx[:m]
	for it := 0; it < maxIter; it++ {
		s.iterations++
		s.load(vcm, vid, scale, gshunt)
		for i := range dx {
			dx[i] = -s.r[i]
		}
		if !luFactor(lu, m, n, s.piv) {
			return false
		}
		luSolve(lu, m, n, s.piv, dx)
		// Damping: a solve that has not converged in its first iterations
		// is likely cycling between regions of the device equations;
		// shortening its steps breaks the cycle (damped Newton, as in
		// Deuflhard, Newton Methods for Nonlinear Problems, 2004, ch. 3,
		// in its simplest fixed-factor form).
		damp := 1.0
		if it >= dampAfter {
			damp = 0.5
		}
		ok, converged, limited := s.applyStep(m, damp)
		if !ok {
			return false
		}
		if converged && !limited {
			s.active = m
			return true
		}
	}
	return false
}

// applyStep adds the Newton step in s.dx[:m] to the first m unknowns, each
// node voltage's change limited to MaxStep, and leaves the applied step in
// s.dx. A step that has not converged is shortened by damp; one that has
// (every change within the convergence tolerance) is taken whole. It
// reports false for a step that is not finite, whether the step had
// converged, and whether it was limited or damped.
func (s *Solver) applyStep(m int, damp float64) (ok, converged, limited bool) {
	sys, o := s.sys, &s.opt
	dx, v := s.dx[:m], s.v[:m]
	tol := func(i int, old, nv float64) float64 {
		t := o.AbsTol
		if sys.isNode[i] {
			t = o.VnTol
		}
		return o.RelTol*math.Max(math.Abs(old), math.Abs(nv)) + t
	}
	converged = true
	for i, d := range dx {
		if d != d || d-d != 0 { // NaN or ±Inf
			return false, false, false
		}
		if math.Abs(d) > tol(i, v[i], v[i]+d) {
			converged = false
		}
	}
	if converged {
		damp = 1
	}
	limited = damp != 1
	for i, d := range dx {
		d *= damp
		if sys.isNode[i] {
			if d > o.MaxStep {
				d, limited = o.MaxStep, true
			} else if d < -o.MaxStep {
				d, limited = -o.MaxStep, true
			}
		}
		dx[i] = d
		v[i] += d
	}
	return true, converged, limited
}

// solveFresh finds the operating point without a nearby solution: plain
// Newton from the circuit's guess, then gmin stepping, then source
// stepping (the strategies of SPICE's DC operating point).
func (s *Solver) solveFresh(vcm, vid float64) error {
	sys := s.sys
	guess := func() {
		clear(s.v[:sys.n])
		for node, val := range sys.c.Guess {
			if int(node) >= 0 && int(node) < len(sys.idx) {
				if k := sys.idx[node]; k < sys.n && sys.isNode[k] {
					s.v[k] = val
				}
			}
		}
	}
	guess()
	if s.newton(vcm, vid, 1, 0, 2*s.opt.MaxIter) {
		return nil
	}
	guess()
	if s.gminStepping(vcm, vid) {
		return nil
	}
	clear(s.v[:sys.n])
	if s.sourceStepping(vcm, vid) {
		return nil
	}
	return &ConvergenceError{Circuit: sys.c.Title, VCM: vcm, VID: vid,
		Reason: "Newton did not converge, nor did gmin stepping or source stepping"}
}

// gminStepping solves with a shunt conductance from every node to ground,
// large at first, then reduced decade by decade to zero, each solve
// starting from the last.
func (s *Solver) gminStepping(vcm, vid float64) bool {
	g := 1e-2
	for g > 1e-13 {
		copy(s.save, s.v)
		if !s.newton(vcm, vid, 1, g, s.opt.MaxIter) {
			// Retry the same conductance from the last good point with a
			// smaller reduction; give up when the step has become tiny.
			copy(s.v, s.save)
			g *= math.Sqrt(10)
			if g >= 1e-2 || !s.newton(vcm, vid, 1, g, s.opt.MaxIter) {
				return false
			}
		}
		g /= 10
	}
	return s.newton(vcm, vid, 1, 0, s.opt.MaxIter)
}

// sourceStepping ramps every independent source from zero to its value.
func (s *Solver) sourceStepping(vcm, vid float64) bool {
	if !s.newton(vcm, vid, 0, 0, s.opt.MaxIter) {
		return false
	}
	alpha, step := 0.0, 0.1
	for alpha < 1 {
		next := math.Min(1, alpha+step)
		copy(s.save, s.v)
		if s.newton(vcm, vid, next, 0, s.opt.MaxIter) {
			alpha = next
			step = math.Min(0.25, step*1.5)
			continue
		}
		copy(s.v, s.save)
		step /= 2
		if step < 1e-4 {
			return false
		}
	}
	return true
}

// post computes, after a converged solve, the currents delivered by the
// sources of the fixed nodes that probes read, corrected to first order by
// the final step, and — for the gm — the derivative of the unknowns with
// respect to vid. After a reduced solve only the moving unknowns take part:
// the others neither moved nor depend on vid.
func (s *Solver) post(wantGM bool) {
	sys := s.sys
	n, nE, m, nF := sys.n, sys.nE, s.active, len(sys.needed)
	w := s.w
	dx := s.dx[:m]
	dq := s.deliv[:nF]
	for q := range dq {
		c := s.r[n+q]
		base := sys.oF + q*n
		for j := 0; j < m; j++ {
			c += w[base+j] * dx[j]
		}
		dq[q] = c
	}
	if sys.chains {
		for q := nF - 1; q >= 0; q-- {
			if p := sys.parentQ[q]; p >= 0 {
				dq[p] += dq[q]
			}
		}
	}
	if !wantGM {
		return
	}
	// J·dx/dvid = −(∂r/∂v_fixed · dv_fixed/dvid + ∂r/∂vid directly).
	ev := sys.eVal
	je := w[sys.oJE : sys.oJE+n*nE]
	rhs := s.rhs[:m]
	for i := range rhs {
		acc := sys.direct[i]
		row := je[i*nE : i*nE+nE]
		for e, x := range ev {
			acc += row[e] * x
		}
		rhs[i] = -acc
	}
	clear(s.rhs[m:n])
	luSolve(w[:n*n], m, n, s.piv, rhs)
}

// deliveredSlope returns d/dvid of the current delivered into needed
// fixed node q (and every node hanging from it), from the rhs post left:
// its F row times dx/dvid plus its FE row times the inputs' dv/dvid.
func (s *Solver) deliveredSlope(q int) float64 {
	sys := s.sys
	n, nE, m := sys.n, sys.nE, s.active
	w, rhs := s.w, s.rhs
	d := 0.0
	base := sys.oF + q*n
	for j := 0; j < m; j++ {
		d += w[base+j] * rhs[j]
	}
	base = sys.oFE + q*nE
	for e, x := range sys.eVal {
		d += w[base+e] * x
	}
	if sys.chains {
		for c, p := range sys.parentQ {
			if p == q {
				d += s.deliveredSlope(c)
			}
		}
	}
	return d
}

// probeSlope returns, after post computed the rhs, the derivative of
// probe p with respect to vid.
func (s *Solver) probeSlope(p int) float64 {
	d := 0.0
	for _, t := range s.sys.flat[p] {
		if t.q >= 0 {
			d += t.coef * s.deliveredSlope(t.q)
		} else {
			d += t.coef * s.rhs[t.v]
		}
	}
	return d
}

// probeValue returns the value of probe p.
func (s *Solver) probeValue(p int) float64 {
	val := 0.0
	for _, t := range s.sys.flat[p] {
		if t.q >= 0 {
			val += t.coef * s.deliv[t.q]
		} else {
			val += t.coef * s.v[t.v]
		}
	}
	return val
}
