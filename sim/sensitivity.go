package sim

import (
	"fmt"

	"pairsmith/sim/device"
)

// luSolveT solves Aᵀ·x = b in place, with A's factors from luFactor (the
// same a, n, ld and piv): P·A = L·U gives Aᵀ = Uᵀ·Lᵀ·P, so Uᵀ·z = b by
// forward substitution (U's diagonal holds its pivots' reciprocals), then
// Lᵀ·y = z by back substitution (L has a unit diagonal), then x = Pᵀ·y,
// the row swaps undone in reverse order (Golub and Van Loan, Matrix
// Computations, §3.4: solving with the transpose from the same factors).
func luSolveT(a []float64, n, ld int, piv []int, b []float64) {
	if n == 0 {
		return
	}
	a = a[:(n-1)*ld+n]
	b = b[:n]
	for j := 0; j < n; j++ {
		z := b[j]
		for i := 0; i < j; i++ {
			z -= a[i*ld+j] * b[i]
		}
		b[j] = z * a[j*ld+j]
	}
	for j := n - 2; j >= 0; j-- {
		y := b[j]
		for i := j + 1; i < n; i++ {
			y -= a[i*ld+j] * b[i]
		}
		b[j] = y
	}
	for k := n - 1; k >= 0; k-- {
		if p := piv[k]; p != k {
			b[k], b[p] = b[p], b[k]
		}
	}
}

// Sensitivities computes, at point i of res (a sweep of this solver's
// circuit), how each of the given probes moves with a current added to
// each transistor's channel — the transistor's drain current I_D, in SPICE
// signs, made larger by δ: out[p][k] is ∂probe_p/∂δ_k (A/A for a current
// probe) for transistor k in the circuit's order. Device mismatch enters
// exactly so to first order (a threshold shift moves I_D by −g_m·ΔV_T, a
// gain shift by I_D·Δβ/β), and evs receives each transistor's evaluation
// there: I_D and its derivatives, g_m being GG.
//
// It loads the circuit at the stored solution, factors the whole Jacobian
// J once and solves Jᵀ·λ = c once per probe, c being the probe's gradient
// with respect to the unknowns (the adjoint method: S. W. Director and
// R. A. Rohrer, "The generalized adjoint network and network
// sensitivities", IEEE Trans. Circuit Theory 16(3), 1969): a current δ
// into the channel from drain to source changes the probe by
// g_drain − g_source, where g is −λ on an unknown's row and the probe's
// own coefficient on a fixed node's. It leaves the solver's state at that
// point; a later sweep starts afresh as usual.
func (s *Solver) Sensitivities(res *Result, i int, probes []int, out [][]float64, evs []device.Eval) error {
	sys := s.sys
	n := sys.n
	if res.Unknowns != n || i < 0 || i >= res.Len() {
		return fmt.Errorf("sensitivities of %s: point %d of a result of %d points of %d unknowns, want one of this circuit's (%d unknowns)",
			sys.c.Title, i, res.Len(), res.Unknowns, n)
	}
	if len(out) != len(probes) || len(evs) != len(sys.mos) {
		return fmt.Errorf("sensitivities of %s: %d outputs for %d probes, %d evaluations for %d transistors",
			sys.c.Title, len(out), len(probes), len(evs), len(sys.mos))
	}
	copy(s.v[:n], res.X[i*n:(i+1)*n])
	s.setFixed(s.v, res.VCM[i], res.VID, 1)
	s.keep = evs // the load's own evaluations
	s.load(res.VCM[i], res.VID, 1, 0, false)
	s.keep = nil
	w := s.w
	if !luFactor(w[:n*n], n, n, s.piv) {
		return fmt.Errorf("sensitivities of %s at vcm = %g V: the Jacobian is singular", sys.c.Title, res.VCM[i])
	}
	rows := len(s.r)
	if cap(s.adj) < rows {
		s.adj = make([]float64, rows)
	}
	g := s.adj[:rows]
	for j, p := range probes {
		if p < 0 || p >= len(sys.probeQ) {
			return fmt.Errorf("sensitivities of %s: no probe %d", sys.c.Title, p)
		}
		if len(out[j]) != len(sys.mos) {
			return fmt.Errorf("sensitivities of %s: %d outputs for %d transistors", sys.c.Title, len(out[j]), len(sys.mos))
		}
		clear(g)
		lam := s.rhs[:n]
		clear(lam)
		for _, t := range sys.probeQ[p] {
			row := w[sys.oF+t.at*n : sys.oF+t.at*n+n]
			for c, x := range row {
				lam[c] += t.coef * x
			}
			g[n+t.at] += t.coef
		}
		for _, t := range sys.probeV[p] {
			lam[t.at] += t.coef
		}
		luSolveT(w[:n*n], n, n, s.piv, lam)
		for r := range n {
			g[r] = -lam[r]
		}
		g[sys.rTrash] = 0
		for k := range sys.mos {
			m := &sys.mos[k]
			out[j][k] = g[m.rd] - g[m.rs]
		}
	}
	return nil
}

// LoadedOps returns each transistor's large-signal operating point at the
// solver's last load (after Sensitivities: at its point), in the
// circuit's order; the slice is the solver's own, read-only, valid until
// the next load.
func (s *Solver) LoadedOps() []device.LargeSignal { return s.ops }

// OutputNear solves the circuit at (vcm, vid) by Newton from start, the
// unknowns of a solution nearby (a sweep's point at another vid, say),
// falling back to a fresh solve, and returns the output probe's value
// and its derivative with respect to vid (gm) there; into, when it has
// as many elements as the circuit has unknowns, receives the solution
// (the start of the next solve along a path, say).
func (s *Solver) OutputNear(start []float64, vcm, vid float64, into []float64) (out, gm float64, err error) {
	sys := s.sys
	if sys.output < 0 {
		return 0, 0, fmt.Errorf("circuit %q names no output", sys.c.Title)
	}
	if len(start) != sys.n {
		return 0, 0, fmt.Errorf("solve %s near a start of %d unknowns, want %d", sys.c.Title, len(start), sys.n)
	}
	if err := s.SolveNear(start, vcm, vid, into); err != nil {
		return 0, 0, err
	}
	return s.probeValue(sys.output), s.probeSlope(sys.output), nil
}

// SolveNear solves the circuit at (vcm, vid) by Newton from start, the
// unknowns of a solution nearby (the same stage's under another
// condition, say), given referenceIterations, falling back to a fresh
// solve, or by a fresh solve when start is nil; into, when it has as
// many elements as the circuit has unknowns, receives the solution.
func (s *Solver) SolveNear(start []float64, vcm, vid float64, into []float64) error {
	sys := s.sys
	switch {
	case start == nil:
		if err := s.solveFresh(vcm, vid); err != nil {
			return err
		}
	case len(start) != sys.n:
		return fmt.Errorf("solve %s near a start of %d unknowns, want %d", sys.c.Title, len(start), sys.n)
	default:
		copy(s.v[:sys.n], start)
		s.setFixed(s.v, vcm, vid, 1)
		if !s.newton(vcm, vid, 1, 0, referenceIterations) {
			if err := s.solveFresh(vcm, vid); err != nil {
				return err
			}
		}
	}
	s.post(sys.output >= 0)
	if len(into) == sys.n {
		copy(into, s.v[:sys.n])
	}
	return nil
}
