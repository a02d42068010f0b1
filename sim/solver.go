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

	deliv  []float64 // current each fixed node's source delivers into it
	dDeliv []float64

	save []float64 // scratch copy of v

	iterations int // Newton iterations since the solver was made
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
	n, N := sys.n, sys.N
	s.v = make([]float64, N)
	s.w = make([]float64, len(sys.base))
	s.r = make([]float64, sys.rTrash+1)
	s.piv = make([]int, n)
	s.dx = make([]float64, n)
	s.rhs = make([]float64, n)
	s.deliv = make([]float64, len(sys.fixed))
	s.dDeliv = make([]float64, len(sys.fixed))
	s.save = make([]float64, N)
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
	s.base[sys.trash] = 0
	return s, nil
}

// Circuit returns the circuit the solver was built from.
func (s *Solver) Circuit() *Circuit { return s.sys.c }

// Unknowns returns the number of variables Newton solves for.
func (s *Solver) Unknowns() int { return s.sys.n }

// setFixed computes the voltages of fixed nodes; scale multiplies every
// independent source (source stepping).
func (s *Solver) setFixed(vcm, vid, scale float64) {
	fx := s.sys.fixed
	s.v[fx[0].idx] = 0
	for k := 1; k < len(fx); k++ {
		f := &fx[k]
		s.v[f.idx] = s.v[fx[f.parent].idx] + f.sign*scale*f.drive.At(vcm, vid)
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
	var last device.Instance
	var lvd, lvg, lvs, lvb float64
	var ev device.Eval
	for i := range sys.mos {
		m := &sys.mos[i]
		vd, vg, vs, vb := v[m.d], v[m.g], v[m.s], v[m.b]
		if m.inst != last || vd != lvd || vg != lvg || vs != lvs || vb != lvb {
			ev = m.inst.Eval(vd, vg, vs, vb)
			last, lvd, lvg, lvs, lvb = m.inst, vd, vg, vs, vb
		}
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
		for i := 0; i < sys.nu; i++ {
			r[i] += gshunt * v[i]
			w[i*n+i] += gshunt
		}
	}
}

// newton iterates from the present s.v. On success the LU factors of the
// Jacobian at the last evaluation are in the J part of s.w, the rest of
// s.w and s.r hold that evaluation, and s.dx the final (applied) step.
func (s *Solver) newton(vcm, vid, scale, gshunt float64, maxIter int) bool {
	sys := s.sys
	n, nu := sys.n, sys.nu
	s.setFixed(vcm, vid, scale)
	if n == 0 {
		s.load(vcm, vid, scale, gshunt)
		return true
	}
	o := &s.opt
	lu := s.w[:n*n]
	for it := 0; it < maxIter; it++ {
		s.iterations++
		s.load(vcm, vid, scale, gshunt)
		for i := 0; i < n; i++ {
			s.dx[i] = -s.r[i]
		}
		if !luFactor(lu, n, s.piv) {
			return false
		}
		luSolve(lu, n, s.piv, s.dx)
		limited := false
		converged := true
		for i := 0; i < n; i++ {
			d := s.dx[i]
			if d != d || d-d != 0 { // NaN or ±Inf
				return false
			}
			tol := o.AbsTol
			if i < nu {
				if d > o.MaxStep {
					d, limited = o.MaxStep, true
				} else if d < -o.MaxStep {
					d, limited = -o.MaxStep, true
				}
				s.dx[i] = d
				tol = o.VnTol
			}
			old := s.v[i]
			nv := old + d
			s.v[i] = nv
			ad, ao, an := d, old, nv
			if ad < 0 {
				ad = -ad
			}
			if ao < 0 {
				ao = -ao
			}
			if an < 0 {
				an = -an
			}
			if ao < an {
				ao = an
			}
			if ad > o.RelTol*ao+tol {
				converged = false
			}
		}
		if converged && !limited {
			return true
		}
	}
	return false
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
				if k := sys.idx[node]; k < sys.nu {
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
// sources of fixed nodes that probes read, and their derivatives with
// respect to vid, from the last evaluation corrected to first order by the
// final step.
func (s *Solver) post(wantGM bool) {
	sys := s.sys
	n, nE := sys.n, sys.nE
	fx := sys.fixed
	w := s.w
	for q, k := range sys.needed {
		row := w[sys.oF+q*n : sys.oF+q*n+n]
		c := s.r[n+q]
		for j, aj := range row {
			c += aj * s.dx[j]
		}
		s.deliv[k] = c
	}
	for q := len(sys.needed) - 1; q >= 0; q-- {
		k := sys.needed[q]
		if p := fx[k].parent; p >= 1 {
			s.deliv[p] += s.deliv[k]
		}
	}
	if !wantGM {
		return
	}
	// J·dx/dvid = −(∂r/∂v_fixed · dv_fixed/dvid + ∂r/∂vid directly).
	for i := 0; i < n; i++ {
		acc := sys.direct[i]
		je := w[sys.oJE+i*nE : sys.oJE+i*nE+nE]
		for e, c := range sys.eCols {
			acc += je[e] * c.e
		}
		s.rhs[i] = -acc
	}
	if n > 0 {
		luSolve(w[:n*n], n, s.piv, s.rhs)
	}
	for q, k := range sys.needed {
		row := w[sys.oF+q*n : sys.oF+q*n+n]
		d := 0.0
		for j, aj := range row {
			d += aj * s.rhs[j]
		}
		fe := w[sys.oFE+q*nE : sys.oFE+q*nE+nE]
		for e, c := range sys.eCols {
			d += fe[e] * c.e
		}
		s.dDeliv[k] = d
	}
	for q := len(sys.needed) - 1; q >= 0; q-- {
		k := sys.needed[q]
		if p := fx[k].parent; p >= 1 {
			s.dDeliv[p] += s.dDeliv[k]
		}
	}
}

// sourceCurrent returns the SPICE current of voltage source i (from P
// through the source to N) and, when post computed it, its derivative
// with respect to vid.
func (s *Solver) sourceCurrent(i int) (cur, dcur float64) {
	ref := s.sys.srcOf[i]
	if ref.kind == 0 {
		return ref.sign * s.deliv[ref.index], ref.sign * s.dDeliv[ref.index]
	}
	b := s.sys.branches[ref.index]
	return s.v[b.idx], s.rhs[b.idx]
}

// probe returns the value of probe p and its derivative with respect to vid.
func (s *Solver) probe(p int) (val, dval float64) {
	for _, t := range s.sys.probeTerms[p] {
		c, dc := s.sourceCurrent(t.src)
		val += t.coef * c
		dval += t.coef * dc
	}
	return val, dval
}
