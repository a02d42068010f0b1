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

	deliv []float64 // current delivered into each needed fixed node itself
	slope []float64 // d deliv / d vid, after a post with the gm

	// cbase and cres are the work array and residual with which a sweep's
	// continuation steps start: base plus the stamps of the frozen
	// transistors and the constant current sources, valid (cvalid) while
	// the unknowns they rest on keep their values.
	cbase, cres []float64
	cvalid      bool

	// Scratch of Rebind, kept from one call to the next.
	dmBuf   []fixedNode
	instBuf []device.Instance

	// active is how many unknowns the last converged solve moved: n, or
	// nD for a sweep's reduced step, whose factors are then the leading
	// nD×nD block of J.
	active int
	// memo holds each transistor's last inputs and evaluation.
	memo []mosMemo
	// ops holds each transistor's large-signal operating point at its
	// last evaluation, which a sweep records at every point (Result.Ops).
	ops []device.LargeSignal

	save []float64 // scratch copy of v
	adj  []float64 // Sensitivities' weights of the residual rows
	// keep, when not nil, receives each transistor's evaluation at every
	// load (Sensitivities asks for it; a sweep leaves it nil).
	keep []device.Eval
	// tan[k] is d x / d vcm at a sweep's k-th last point, newest first
	// (the sweeps that record tangents: shorter than SplitPoints).
	tan [hermitePoints][]float64

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
	s.base = make([]float64, len(sys.base))
	s.setBase()
	return s, nil
}

// setBase computes the solver's constant work array from the system's:
// the junction gmin of every transistor is constant, so it is stamped
// once, for this solver's gmin.
func (s *Solver) setBase() {
	sys := s.sys
	copy(s.base, sys.base)
	g := s.opt.Gmin
	add := func(i, j int, v float64) { s.base[sys.slot(i, j)] += v }
	for _, m := range sys.mos {
		add(m.d, m.d, g)
		add(m.d, m.b, -g)
		add(m.s, m.s, g)
		add(m.s, m.b, -g)
		add(m.b, m.b, 2*g)
		add(m.b, m.d, -g)
		add(m.b, m.s, -g)
	}
	clear(s.base[sys.trash:])
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
	n, N, nw, nr, nF := sys.n, sys.N, len(sys.base), sys.rTrash+trashSlots, len(sys.needed)
	// The float buffers are cut from one allocation.
	buf := make([]float64, 2*N+2*nw+2*nr+(2+hermitePoints)*n+2*nF)
	cut := func(k int) []float64 {
		b := buf[:k:k]
		buf = buf[k:]
		return b
	}
	s.v, s.save = cut(N), cut(N)
	s.w, s.cbase = cut(nw), cut(nw)
	s.r, s.cres = cut(nr), cut(nr)
	s.dx, s.rhs = cut(n), cut(n)
	for k := range s.tan {
		s.tan[k] = cut(n)
	}
	s.deliv, s.slope = cut(nF), cut(nF)
	s.piv = make([]int, n)
	s.memo = make([]mosMemo, len(sys.mos))
	s.ops = make([]device.LargeSignal, len(sys.mos))
	s.cvalid = false
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
	s.cvalid = false
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

// setMoving is setFixed at scale 1 for the fixed nodes that move with the
// sweep only, the others keeping their values: bitwise what setFixed
// would give when they were set at scale 1.
func (s *Solver) setMoving(vcm, vid float64) { s.moveFixed(s.v, vcm, vid) }

// moveFixed is setMoving into v.
func (s *Solver) moveFixed(v []float64, vcm, vid float64) {
	fx := s.sys.fixed
	for _, k := range s.sys.fixedMoving {
		f := &fx[k]
		v[f.idx] = v[fx[f.parent].idx] + f.sign*f.drive.At(vcm, vid)
	}
}

// load evaluates every element at s.v and fills the work array and the
// residual. A reduced load (a sweep's continuation step: scale 1, no
// shunt, the unknowns past nD kept) starts from the continuation base and
// evaluates only the transistors that move.
func (s *Solver) load(vcm, vid, scale, gshunt float64, reduced bool) {
	sys := s.sys
	w, r, v := s.w, s.r, s.v
	list := sys.all
	if reduced {
		copy(w, s.cbase)
		copy(r, s.cres)
		list = sys.moving
	} else {
		copy(w, s.base)
		clear(r)
	}
	s.loadMos(w, r, list)
	for k := range sys.res {
		t := &sys.res[k]
		cur := t.g * (v[t.a] - v[t.b])
		r[t.ra] += cur
		r[t.rb] -= cur
	}
	if reduced {
		for _, k := range sys.isrcSweep {
			t := &sys.isrc[k]
			cur := t.drive.At(vcm, vid)
			r[t.ra] += cur
			r[t.rb] -= cur
		}
	} else {
		for k := range sys.isrc {
			t := &sys.isrc[k]
			cur := scale * t.drive.At(vcm, vid)
			r[t.ra] += cur
			r[t.rb] -= cur
		}
	}
	for k := range sys.vccs {
		g := &sys.vccs[k]
		cur := g.g * (v[g.cp] - v[g.cn])
		r[g.rp] += cur
		r[g.rn] -= cur
	}
	for k := range sys.branches {
		b := &sys.branches[k]
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

// frozenEval returns the evaluation of frozen transistor i, from its
// memo when the inputs are bitwise those of its last one (and its ops
// entry, written with the memo, then still holds them).
func (s *Solver) frozenEval(i int, vd, vg, vs, vb float64) device.Eval {
	me := &s.memo[i]
	if !me.ok || vd != me.vd || vg != me.vg || vs != me.vs || vb != me.vb {
		me.ev = s.sys.mos[i].inst.EvalLarge(vd, vg, vs, vb, &s.ops[i])
		me.vd, me.vg, me.vs, me.vb, me.ok = vd, vg, vs, vb, true
	}
	return me.ev
}

// loadMos evaluates the transistors of list (indices into sys.mos, in
// increasing order) at s.v and adds their stamps to the work array w and
// the residual r: the channel, and the currents of the junctions' gmin,
// drain–bulk and source–bulk (their conductances are in the base). Each
// one's operating point goes to s.ops.
func (s *Solver) loadMos(w, r []float64, list []int) {
	sys, v, gmin, ops := s.sys, s.v, s.opt.Gmin, s.ops
	// An evaluation is skipped, exactly, when its inputs are bitwise those
	// of the transistor's last one (a bias branch frozen during a sweep's
	// continuation) or of the transistor just evaluated with the same
	// class (the two halves of a pair at vid = 0).
	last, prev := -1, -1
	var lvd, lvg, lvs, lvb float64
	var ev device.Eval
	for _, i := range list {
		m := &sys.mos[i]
		vd, vg, vs, vb := v[m.d], v[m.g], v[m.s], v[m.b]
		if m.frozen {
			ev = s.frozenEval(i, vd, vg, vs, vb)
		} else if m.id != last || vd != lvd || vg != lvg || vs != lvs || vb != lvb {
			ev = m.inst.EvalLarge(vd, vg, vs, vb, &ops[i])
		} else {
			ops[i] = ops[prev]
		}
		last, prev, lvd, lvg, lvs, lvb = m.id, i, vd, vg, vs, vb
		if s.keep != nil {
			s.keep[i] = ev
		}
		w[m.dd] += ev.GD
		w[m.dg] += ev.GG
		w[m.ds] += ev.GS
		w[m.db] += ev.GB
		w[m.sd] -= ev.GD
		w[m.sg] -= ev.GG
		w[m.ss] -= ev.GS
		w[m.sb] -= ev.GB
		idb := gmin * (vd - vb)
		isb := gmin * (vs - vb)
		r[m.rd] += ev.ID + idb
		r[m.rs] += isb - ev.ID
		r[m.rb] -= idb + isb
	}
}

// freeze computes the continuation base from the present s.v: the base
// with the stamps of every frozen transistor, and a residual with their
// currents and those of the current sources that do not sweep (at scale
// 1). A sweep's continuation keeps every input of these constant.
func (s *Solver) freeze() {
	sys, r := s.sys, s.cres
	copy(s.cbase, s.base)
	clear(r)
	s.loadMos(s.cbase, r, sys.frozen)
	for k := range sys.isrc {
		if t := &sys.isrc[k]; !t.drive.sweeps() {
			cur := t.drive.At(0, 0)
			r[t.ra] += cur
			r[t.rb] -= cur
		}
	}
	s.cvalid = true
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
	// A reduced solve (at scale 1, no shunt) keeps the unknowns past m and
	// starts from the continuation base, computed when a full solve may
	// have moved what it rests on; only the fixed nodes that move with
	// the sweep need setting then.
	reduced := m < n
	switch {
	case !reduced:
		s.cvalid = false
		s.setFixed(s.v, vcm, vid, scale)
	case !s.cvalid:
		s.setFixed(s.v, vcm, vid, 1)
		s.freeze()
	default:
		s.setMoving(vcm, vid)
	}
	lu, dx := s.w[:n*n], s.dx[:m]
	again := false
	for it := 0; it < maxIter; it++ {
		s.iterations++
		s.load(vcm, vid, scale, gshunt, reduced)
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
		ok, converged, limited, worst := s.applyStep(m, damp)
		if !ok {
			return false
		}
		if converged && !limited {
			if worst <= finalStep || again {
				s.active = m
				return true
			}
			// Converged, but the Jacobian that gm is read from was
			// evaluated a good part of the tolerance away from the
			// solution: once more from there.
			again = true
		}
	}
	return false
}

// finalStep is the largest final Newton step, as a fraction of the
// convergence tolerance, at whose starting point the solver reads the
// derivatives (gm, the tangent) and the operating points: a larger one
// gets one more iteration, from the far closer solution (Newton's
// convergence is quadratic). gm then moves by a few 1e-6 of itself at
// most (its slope with the voltages is about 1/(n·U_T)).
const finalStep = 0.1

// applyStep adds the Newton step in s.dx[:m] to the first m unknowns, each
// node voltage's change limited to MaxStep, and leaves the applied step in
// s.dx. A step that has not converged is shortened by damp; one that has
// (every change within the convergence tolerance) is taken whole. It
// reports false for a step that is not finite, whether the step had
// converged, whether it was limited or damped, and — for a converged
// step — its largest change as a fraction of that change's tolerance.
func (s *Solver) applyStep(m int, damp float64) (ok, converged, limited bool, worst float64) {
	o := &s.opt
	dx, v, isNode := s.dx[:m], s.v[:m], s.sys.isNode[:m]
	converged = true
	for i, d := range dx {
		if d != d || d-d != 0 { // NaN or ±Inf
			return false, false, false, 0
		}
		// Within RelTol·max(|old|, |new|) plus VnTol for a node voltage,
		// AbsTol for a branch current.
		big := math.Abs(v[i])
		if b := math.Abs(v[i] + d); b > big {
			big = b
		}
		t := o.AbsTol
		if isNode[i] {
			t = o.VnTol
		}
		tol := o.RelTol*big + t
		if a := math.Abs(d); a > tol {
			converged = false
		} else if a > worst*tol {
			worst = a / tol
		}
	}
	if converged {
		damp = 1
	}
	limited = damp != 1
	for i, d := range dx {
		d *= damp
		if isNode[i] {
			if d > o.MaxStep {
				d, limited = o.MaxStep, true
			} else if d < -o.MaxStep {
				d, limited = -o.MaxStep, true
			}
		}
		dx[i] = d
		v[i] += d
	}
	return true, converged, limited, worst
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

// post computes, after a converged solve, the current delivered into
// each fixed node that probes read, corrected to first order by the final
// step, and — for the gm — the derivative of the unknowns with respect to
// vid and of each of those currents. After a reduced solve only the
// moving unknowns take part: the others neither moved nor depend on vid.
func (s *Solver) post(wantGM bool) {
	sys := s.sys
	n, nE, m := sys.n, sys.nE, s.active
	w, r := s.w, s.r
	dx := s.dx[:m]
	if !wantGM {
		for q := range s.deliv {
			o := sys.oF + q*n
			s.deliv[q] = dot(r[n+q], w[o:o+m], dx)
		}
		return
	}
	// J·dx/dvid = −(∂r/∂v_fixed · dv_fixed/dvid + ∂r/∂vid directly).
	ev := sys.eVal
	rhs := s.rhs[:m]
	if nE == 2 { // the two inputs: the usual case, written out
		e0, e1 := ev[0], ev[1]
		je := w[sys.oJE : sys.oJE+2*m]
		for i := range rhs {
			rhs[i] = -(sys.direct[i] + je[2*i]*e0 + je[2*i+1]*e1)
		}
	} else {
		for i := range rhs {
			o := sys.oJE + i*nE
			rhs[i] = -dot(sys.direct[i], w[o:o+nE], ev)
		}
	}
	clear(s.rhs[m:n])
	luSolve(w[:n*n], m, n, s.piv, rhs)
	// One pass over the F rows for both: the delivered current, and its
	// slope, the F row times dx/dvid plus the FE row times the inputs'
	// dv/dvid.
	deliv, slope := s.deliv, s.slope[:len(s.deliv)]
	for q := range deliv {
		o := sys.oF + q*n
		row := w[o : o+m]
		dx, rhs := dx[:len(row)], rhs[:len(row)]
		c, d := r[n+q], 0.0
		for j, x := range row {
			c += x * dx[j]
			d += x * rhs[j]
		}
		deliv[q] = c
		o = sys.oFE + q*nE
		if nE == 2 {
			fe := w[o : o+2]
			slope[q] = d + fe[0]*ev[0] + fe[1]*ev[1]
		} else {
			slope[q] = dot(d, w[o:o+nE], ev)
		}
	}
}

// tangent computes, after a converged solve, the tangent of the solution
// curve d x / d vcm into s.tan[0], the earlier ones moved down a slot:
// J·t = −(∂r/∂v_fixed · dv_fixed/dvcm + ∂r/∂vcm directly), one solve with
// the factors the last iteration left (the continuation's tangent, as in
// E. L. Allgower and K. Georg, Numerical Continuation Methods, Springer,
// 1990, ch. 2). After a reduced solve only the moving unknowns move.
func (s *Solver) tangent() {
	sys := s.sys
	n, nE, m := sys.n, sys.nE, s.active
	t, w := s.pushTangent(), s.w
	for i := range m {
		o := sys.oJE + i*nE
		t[i] = -dot(sys.directCM[i], w[o:o+nE], sys.eCM)
	}
	clear(t[m:n])
	luSolve(w[:n*n], m, n, s.piv, t[:m])
}

// pushTangent moves the tangents down by one and returns the slot of the
// newest, s.tan[0] (the oldest's storage).
func (s *Solver) pushTangent() []float64 {
	last := s.tan[len(s.tan)-1]
	copy(s.tan[1:], s.tan[:len(s.tan)-1])
	s.tan[0] = last
	return last
}

// dot returns c + a·b (b at least as long as a), summed from c and the
// first element on.
func dot(c float64, a, b []float64) float64 {
	b = b[:len(a)]
	j := 0
	for ; j+1 < len(a); j += 2 { // unrolled by two: the rows are short
		c += a[j] * b[j]
		c += a[j+1] * b[j+1]
	}
	if j < len(a) {
		c += a[j] * b[j]
	}
	return c
}

// probeSlope returns, after post computed the slopes, the derivative of
// probe p with respect to vid.
func (s *Solver) probeSlope(p int) float64 {
	d := 0.0
	qs := s.sys.probeQ[p]
	for i := range qs {
		d += qs[i].coef * s.slope[qs[i].at]
	}
	for _, t := range s.sys.probeV[p] {
		d += t.coef * s.rhs[t.at]
	}
	return d
}

// probeValue returns the value of probe p.
func (s *Solver) probeValue(p int) float64 {
	val := 0.0
	qs := s.sys.probeQ[p]
	for i := range qs {
		val += qs[i].coef * s.deliv[qs[i].at]
	}
	for _, t := range s.sys.probeV[p] {
		val += t.coef * s.v[t.at]
	}
	return val
}
