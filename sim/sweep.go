package sim

import (
	"fmt"
	"math"
	"sync"

	"pairsmith/sim/device"
)

// SweepSpec is a common-mode sweep from Low to High in steps of Step at a
// fixed differential input VID.
type SweepSpec struct {
	Low, High, Step float64
	VID             float64
}

// Points returns the number of sweep points: Low, Low+Step, … and High
// itself even when the range is not a whole number of steps.
func (sp SweepSpec) Points() (int, error) {
	if !(sp.Step > 0) || math.IsInf(sp.Step, 0) {
		return 0, fmt.Errorf("sweep step %g V, want > 0", sp.Step)
	}
	if !(sp.High >= sp.Low) {
		return 0, fmt.Errorf("sweep from %g V to %g V: want low ≤ high", sp.Low, sp.High)
	}
	span := (sp.High - sp.Low) / sp.Step
	if span > 1e7 {
		return 0, fmt.Errorf("sweep from %g V to %g V in %g V steps has too many points", sp.Low, sp.High, sp.Step)
	}
	k := int(math.Floor(span + 1e-9))
	if sp.Low+float64(k)*sp.Step < sp.High-1e-12*math.Max(1, math.Abs(sp.High)) {
		k++
	}
	return k + 1, nil
}

// At returns the common-mode voltage of point i.
func (sp SweepSpec) At(i, points int) float64 {
	if i == points-1 {
		return sp.High
	}
	return sp.Low + float64(i)*sp.Step
}

// Result is a solved sweep. Its slices are reused by the next sweep into
// the same Result.
type Result struct {
	VID float64 // the sweep's differential input, V
	VCM []float64
	// GM is d I_out / d V_id at every point (S), where I_out is the
	// circuit's output probe; nil when the circuit names no output.
	GM []float64
	// Probe[k][i] is probe k at point i.
	Probe [][]float64
	// X holds the solver's unknowns at every point, Unknowns per point
	// (node voltages fixed by sources are not stored: they follow from
	// the point).
	X        []float64
	Unknowns int
	// Tangent holds d x / d vcm of the unknowns that move with the sweep
	// (Moving of them) at every point, recorded with Ops: what lets a finer sweep guided by
	// this one take its points where the two coincide (SweepFrom).
	Tangent []float64
	Moving  int
	// Ops holds every transistor's large-signal operating point at every
	// point, point after point (transistor k of point i at
	// Ops[i·transistors+k]), recorded by sweeps shorter than SplitPoints
	// from the Newton loads that solved them (recordOps: within
	// opTolerance of the solution); empty for longer ones. DeviceColumn
	// reads them, or evaluates the transistors where there are none.
	Ops []device.LargeSignal
}

// Len returns the number of points.
func (r *Result) Len() int { return len(r.VCM) }

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

// Sweep solves the circuit at every point of sp into res. The first point
// is found from scratch; each later one starts from the quadratic
// extrapolation of the last three, falls back to sub-steps from the last
// solution and, only then, to a fresh solve. A point without a solution
// ends the sweep with a *ConvergenceError.
func (s *Solver) Sweep(sp SweepSpec, res *Result) error {
	npts, err := s.prepare(sp, res)
	if err != nil {
		return err
	}
	return s.sweepRange(sp, npts, 0, npts, res, nil, nil, 0)
}

// SweepStart is Sweep whose first point starts from start, the unknowns
// of a solution of a circuit of the same shape at the same point (a
// reference design's, say), instead of from the circuit's guess; Newton
// gets referenceIterations from there before the fresh solve takes over.
// The points agree with Sweep's within the convergence tolerance, not
// bitwise, provided both reach the same solution of a circuit that has
// more than one.
func (s *Solver) SweepStart(sp SweepSpec, res *Result, start []float64) error {
	if len(start) != s.sys.n {
		return fmt.Errorf("sweep of %s: a start of %d unknowns, want %d", s.sys.c.Title, len(start), s.sys.n)
	}
	npts, err := s.prepare(sp, res)
	if err != nil {
		return err
	}
	return s.sweepRange(sp, npts, 0, npts, res, start, nil, referenceIterations)
}

// referenceIterations bounds Newton from a reference's solution: a start
// that has not converged in that many (damping begins at dampAfter) is
// too far for it to be worth more than a fresh solve.
const referenceIterations = 20

// SweepFrom is Sweep guided by guide, a result of the same circuit over
// the same range at another step (a coarser look at the same candidate):
// the first point starts from the guide's first solution instead of from
// scratch, and every later one from the polynomial through the last two
// solutions and the guide's next two, an interpolation where Sweep
// extrapolates — the guide's own solution where the points coincide. A
// start it cannot converge from falls back as Sweep's do. The points
// agree with Sweep's within the convergence tolerance, not bitwise. res
// and guide must not share storage.
func (s *Solver) SweepFrom(sp SweepSpec, res *Result, guide *Result) error {
	if guide.Unknowns != s.sys.n || guide.Len() == 0 || len(guide.X) != guide.Len()*guide.Unknowns {
		return fmt.Errorf("sweep of %s: a guide of %d points of %d unknowns, want at least one point of %d", s.sys.c.Title, guide.Len(), guide.Unknowns, s.sys.n)
	}
	npts, err := s.prepare(sp, res)
	if err != nil {
		return err
	}
	return s.sweepRange(sp, npts, 0, npts, res, guide.X[:guide.Unknowns], guide, 0)
}

// prepare sizes res for the sweep.
func (s *Solver) prepare(sp SweepSpec, res *Result) (int, error) {
	npts, err := sp.Points()
	if err != nil {
		return 0, err
	}
	sys := s.sys
	res.VCM = grow(res.VCM, npts)
	if sys.output >= 0 {
		res.GM = grow(res.GM, npts)
	} else {
		res.GM = res.GM[:0]
	}
	if len(res.Probe) != len(sys.probeQ) {
		res.Probe = make([][]float64, len(sys.probeQ))
	}
	for k := range res.Probe {
		res.Probe[k] = grow(res.Probe[k], npts)
	}
	res.Unknowns = sys.n
	res.X = grow(res.X, npts*sys.n)
	res.VID = sp.VID
	res.Ops, res.Tangent, res.Moving = res.Ops[:0], res.Tangent[:0], sys.nD
	if npts < SplitPoints {
		res.Tangent = grow(res.Tangent, npts*sys.nD)
		if nr := npts * len(sys.mos); cap(res.Ops) < nr {
			res.Ops = make([]device.LargeSignal, nr)
		} else {
			res.Ops = res.Ops[:nr]
		}
	}
	return npts, nil
}

// sweepRange solves points [lo, hi) of a sweep of npts points. The first
// starts from start, the unknowns of a solution near it (given startIter
// Newton iterations, 0 for Options.MaxIter), or from scratch when start is
// nil; a guide (nil for none) lends its solutions to the predictor
// (SweepFrom).
func (s *Solver) sweepRange(sp SweepSpec, npts, lo, hi int, res *Result, start []float64, guide *Result, startIter int) error {
	sys := s.sys
	n := sys.n
	wantGM := sys.output >= 0
	gj := 0 // the guide's first point at or beyond the current one
	for i := lo; i < hi; i++ {
		vcm := sp.At(i, npts)
		switch {
		case i == lo && start == nil:
			if err := s.solveFresh(vcm, sp.VID); err != nil {
				return err
			}
		case i == lo:
			copy(s.v[:n], start)
			if startIter == 0 {
				startIter = s.opt.MaxIter
			}
			if !s.newton(vcm, sp.VID, 1, 0, startIter) {
				if err := s.solveFresh(vcm, sp.VID); err != nil {
					return err
				}
			}
		default:
			// s.v holds point i−1's solution (post leaves it alone); the
			// predictor moves only the unknowns that move with the sweep.
			prev := res.X[(i-1)*n : i*n]
			m := sys.nD
			same := false // the guide's point gj is this one
			if guide != nil {
				for gj < guide.Len() && guide.VCM[gj] < vcm-sameVCM {
					gj++
				}
				same = gj < guide.Len() && math.Abs(guide.VCM[gj]-vcm) <= sameVCM
			}
			if same && s.takeGuide(vcm, sp.VID, res, i, guide, gj) {
				continue
			}
			switch {
			case same:
				copy(s.v[:m], guide.X[gj*n:gj*n+m])
			case guide != nil && gj < guide.Len() && guide.records(m, len(sys.mos)):
				// The guide's next point, ahead, with the last solutions:
				// interpolation rather than extrapolation.
				ahead := hermiteNode{guide.VCM[gj], guide.X[gj*n : gj*n+m], guide.Tangent[gj*m : (gj+1)*m]}
				s.predictHermite(vcm, res, i, min(i-lo, hermitePoints), &ahead)
			case len(res.Tangent) == 0:
				s.predictLagrange(vcm, res, i, min(i-lo, lagrangePoints))
			default:
				s.predictHermite(vcm, res, i, min(i-lo, hermitePoints), nil)
			}
			if !s.newtonMoving(vcm, sp.VID, s.opt.MaxIter) {
				if err := s.recover(res.VCM[i-1], prev, vcm, sp.VID); err != nil {
					return err
				}
			}
		}
		s.post(wantGM)
		if len(res.Tangent) > 0 {
			s.tangent()
			copy(res.Tangent[i*sys.nD:(i+1)*sys.nD], s.tan[0][:sys.nD])
		}
		res.VCM[i] = vcm
		if wantGM {
			res.GM[i] = s.probeSlope(sys.output)
		}
		for k := range res.Probe {
			res.Probe[k][i] = s.probeValue(k)
		}
		if len(res.Ops) > 0 {
			s.recordOps(res, i)
		}
		copy(res.X[i*n:(i+1)*n], s.v[:n])
	}
	return nil
}

// takeGuide makes point i of res, at common mode vcm, the guide's point
// gj, at the same common mode (within sameVCM), when both record what a
// point needs (its tangent and operating points): its moving unknowns,
// gm, probes, operating points and tangent, without a Newton iteration.
// The unknowns that do not move keep this sweep's own values. It reports
// whether it took the point.
func (s *Solver) takeGuide(vcm, vid float64, res *Result, i int, guide *Result, gj int) bool {
	n, m := s.sys.n, s.sys.nD
	nm := len(s.sys.mos)
	if len(res.Tangent) == 0 || !guide.records(m, nm) {
		return false
	}
	copy(s.v[:m], guide.X[gj*n:gj*n+m])
	s.setMoving(vcm, vid)
	res.VCM[i] = vcm
	if len(res.GM) > 0 {
		res.GM[i] = guide.GM[gj]
	}
	for k := range res.Probe {
		res.Probe[k][i] = guide.Probe[k][gj]
	}
	copy(res.Ops[i*nm:(i+1)*nm], guide.Ops[gj*nm:(gj+1)*nm])
	last := s.pushTangent()
	copy(last[:m], guide.Tangent[gj*m:(gj+1)*m])
	clear(last[m:n])
	copy(res.Tangent[i*m:(i+1)*m], last[:m])
	copy(res.X[i*n:(i+1)*n], s.v[:n])
	return true
}

// records reports whether r holds at every point the tangent of its m
// moving unknowns and the operating points of its nm transistors: what a
// sweep guided by it reads.
func (r *Result) records(m, nm int) bool {
	return r.Moving == m && len(r.Tangent) == r.Len()*m && len(r.Ops) == r.Len()*nm
}

// sameVCM is how close (V) a guide's common mode must be to a point's for
// the two to be the same point: the sweeps compute their points as
// Low + i·Step, which differ in the last bits where the steps do (3·0.05
// is not 15·0.01 in binary).
const sameVCM = 1e-12

// hermitePoints is how many of the last solutions, with their tangents,
// the sweep's predictor interpolates: three, a polynomial of degree five.
const hermitePoints = 3

// lagrangePoints is how many of the last solutions a long sweep's
// predictor extrapolates, without tangents: three, a quadratic.
const lagrangePoints = 3

// predictLagrange sets the moving unknowns to the prediction at vcm for
// point i: the polynomial through the last k ≤ lagrangePoints solutions
// (Lagrange form, uneven steps allowed; Burden and Faires, §3.1). A long
// sweep (SplitPoints or more, which records no tangents) takes it
// instead of the Hermite predictor: its steps are so short (at most a
// few tenths of a millivolt on any supply) that the quadratic's error,
// the step cubed times the third derivative, is far inside the Newton
// tolerance, and it saves the tangent's solve at every point.
func (s *Solver) predictLagrange(vcm float64, res *Result, i, k int) {
	n, m := s.sys.n, s.sys.nD
	var at [lagrangePoints]float64
	for a := range k {
		at[a] = res.VCM[i-1-a]
	}
	var l [maxHermiteNodes]float64
	lagrangeBasis(vcm, at[:k], &l, nil)
	v := s.v[:m]
	if k == 3 { // the rule: written out
		x0, x1, x2 := res.X[(i-1)*n:(i-1)*n+len(v)], res.X[(i-2)*n:(i-2)*n+len(v)], res.X[(i-3)*n:(i-3)*n+len(v)]
		for j := range v {
			v[j] = l[0]*x0[j] + l[1]*x1[j] + l[2]*x2[j]
		}
		return
	}
	clear(v)
	for a := range k {
		x := res.X[(i-1-a)*n : (i-1-a)*n+len(v)]
		for j := range v {
			v[j] += l[a] * x[j]
		}
	}
}

// lagrangeBasis sets l to the Lagrange basis L_a(vcm) over the nodes at
// (at most maxHermiteNodes, uneven steps allowed) and, unless dl is nil,
// dl to each L_a's slope at its own node, L_a'(at_a) (Burden and Faires,
// §3.1 and §3.4): one division a pair of nodes.
func lagrangeBasis(vcm float64, at []float64, l, dl *[maxHermiteNodes]float64) {
	k := len(at)
	var inv [maxHermiteNodes][maxHermiteNodes]float64 // 1/(at_a − at_b)
	for a := range k {
		for b := a + 1; b < k; b++ {
			q := 1 / (at[a] - at[b])
			inv[a][b], inv[b][a] = q, -q
		}
	}
	for a := range k {
		la := 1.0
		for b := range k {
			if b != a {
				la *= (vcm - at[b]) * inv[a][b]
			}
		}
		l[a] = la
	}
	if dl == nil {
		return
	}
	for a := range k {
		d := 0.0
		for b := range k {
			if b != a {
				d += inv[a][b]
			}
		}
		dl[a] = d
	}
}

// hermiteNode is a point the sweep's predictor interpolates: its common
// mode, and its moving unknowns and their tangent dx/dvcm.
type hermiteNode struct {
	vcm  float64
	x, t []float64
}

// maxHermiteNodes is the most points predictFrom interpolates: the last
// hermitePoints solutions and a guide's point ahead.
const maxHermiteNodes = hermitePoints + 1

// predictHermite sets the moving unknowns to the prediction at vcm for
// point i of res from the last k ≤ hermitePoints solutions and their
// tangents (s.tan), and ahead, a guide's point (nil for none).
func (s *Solver) predictHermite(vcm float64, res *Result, i, k int, ahead *hermiteNode) {
	n, m := s.sys.n, s.sys.nD
	var nodes [maxHermiteNodes]hermiteNode
	for a := range k {
		nodes[a] = hermiteNode{res.VCM[i-1-a], res.X[(i-1-a)*n : (i-1-a)*n+m], s.tan[a][:m]}
	}
	if ahead != nil {
		nodes[k] = *ahead
		k++
	}
	s.predictFrom(vcm, nodes[:k])
}

// predictFrom sets the moving unknowns to the Hermite polynomial at vcm
// through the nodes' solutions x_a and tangents t_a (at most
// maxHermiteNodes, uneven steps allowed),
//
//	p(s) = Σ_a [(1 − 2·L_a'(s_a)·(s − s_a))·x_a + (s − s_a)·t_a]·L_a(s)²
//
// with L_a the Lagrange basis over the nodes (R. L. Burden and J. D.
// Faires, Numerical Analysis, 9th ed., §3.4): the predictor of a
// predictor–corrector continuation (Allgower and Georg, Numerical
// Continuation Methods, 1990, ch. 2). Its error grows as the product of
// the squared distances to the nodes, where extrapolating k+1 solutions
// alone grows as the product of the distances. The weights are the same
// for every unknown: 2k products a point each.
func (s *Solver) predictFrom(vcm float64, nodes []hermiteNode) {
	k := len(nodes)
	var at [maxHermiteNodes]float64
	for a, nd := range nodes {
		at[a] = nd.vcm
	}
	var l, dl [maxHermiteNodes]float64
	lagrangeBasis(vcm, at[:k], &l, &dl)
	var wx, wt [maxHermiteNodes]float64
	for a := range k {
		l2, d := l[a]*l[a], vcm-at[a]
		wx[a], wt[a] = (1-2*dl[a]*d)*l2, d*l2
	}
	v := s.v[:s.sys.nD]
	if k == 3 { // an unguided sweep's rule: written out
		x0, t0, x1, t1 := nodes[0].x[:len(v)], nodes[0].t[:len(v)], nodes[1].x[:len(v)], nodes[1].t[:len(v)]
		x2, t2 := nodes[2].x[:len(v)], nodes[2].t[:len(v)]
		for j := range v {
			v[j] = wx[0]*x0[j] + wt[0]*t0[j] + wx[1]*x1[j] + wt[1]*t1[j] + wx[2]*x2[j] + wt[2]*t2[j]
		}
		return
	}
	clear(v)
	for a, nd := range nodes {
		x, t := nd.x[:len(v)], nd.t[:len(v)]
		for j := range v {
			v[j] += wx[a]*x[j] + wt[a]*t[j]
		}
	}
}

// SplitPoints is the sweep length from which SweepParallel splits a
// sweep into segments.
const SplitPoints = 16384

// segmentLength is the length of the segments SweepParallel solves, short
// against SplitPoints so that the workers, taking the next segment as
// they finish one, end together whatever the segments cost.
const segmentLength = 2048

// SweepParallel solves the same sweep as Sweep; one of at least
// SplitPoints points it splits into segments of about segmentLength
// points, solved concurrently on up to workers goroutines (at least one),
// each taking the next segment as it finishes one. Every segment starts
// from the continuation solution at its first point, found by stepping
// sequentially from the start of the sweep from one segment start to the
// next, so each follows the same branch of solutions a single sweep
// would. The number of segments depends only on the number of points: the
// result is the same whatever the number of workers.
func (s *Solver) SweepParallel(sp SweepSpec, res *Result, workers int) error {
	npts, err := s.prepare(sp, res)
	if err != nil {
		return err
	}
	if npts < SplitPoints {
		return s.sweepRange(sp, npts, 0, npts, res, nil, nil, 0)
	}
	segs := npts / segmentLength
	workers = max(workers, 1)
	n := s.sys.n
	bounds := make([]int, segs+1)
	for k := range bounds {
		bounds[k] = k * npts / segs
	}
	// Continuation from one segment start to the next.
	starts := make([][]float64, segs)
	for k := 0; k < segs; k++ {
		vcm := sp.At(bounds[k], npts)
		if k == 0 {
			if err := s.solveFresh(vcm, sp.VID); err != nil {
				return err
			}
		} else {
			copy(s.v[:n], starts[k-1])
			if !s.newton(vcm, sp.VID, 1, 0, s.opt.MaxIter) {
				if err := s.recover(sp.At(bounds[k-1], npts), starts[k-1], vcm, sp.VID); err != nil {
					return err
				}
			}
		}
		starts[k] = append([]float64(nil), s.v[:n]...)
	}
	if workers > segs {
		workers = segs
	}
	errs := make([]error, segs)
	iters := make([]int, workers)
	next := make(chan int, segs)
	for k := range segs {
		next <- k
	}
	close(next)
	var wg sync.WaitGroup
	for wk := range workers {
		wg.Go(func() {
			c := s.clone()
			for k := range next {
				errs[k] = c.sweepRange(sp, npts, bounds[k], bounds[k+1], res, starts[k], nil, 0)
			}
			iters[wk] = c.iterations
		})
	}
	wg.Wait()
	for _, it := range iters {
		s.iterations += it
	}
	for _, e := range errs {
		if e != nil {
			return e
		}
	}
	return nil
}

// recover reaches vcm from the solution prev at vfrom in ever smaller
// steps, then tries a fresh solve.
func (s *Solver) recover(vfrom float64, prev []float64, vcm, vid float64) error {
	n := s.sys.n
	for parts := 2; parts <= 256; parts *= 4 {
		copy(s.v[:n], prev[:n])
		ok := true
		for k := 1; k <= parts; k++ {
			x := vfrom + (vcm-vfrom)*float64(k)/float64(parts)
			if !s.newton(x, vid, 1, 0, s.opt.MaxIter) {
				ok = false
				break
			}
		}
		if ok {
			return nil
		}
	}
	return s.solveFresh(vcm, vid)
}

// Point is the solution at one operating point.
type Point struct {
	VCM, VID float64
	GM       float64   // d I_out / d V_id, S (0 without an output probe)
	Probe    []float64 // the circuit's probes, in order
	V        []float64 // solver variables; use Voltage
	sys      *system
}

// Voltage returns the voltage of node n.
func (p *Point) Voltage(n Node) float64 { return p.V[p.sys.idx[n]] }

// Solve finds the operating point at (vcm, vid) from scratch.
func (s *Solver) Solve(vcm, vid float64) (*Point, error) {
	if err := s.solveFresh(vcm, vid); err != nil {
		return nil, err
	}
	wantGM := s.sys.output >= 0
	s.post(wantGM)
	p := &Point{VCM: vcm, VID: vid, V: append([]float64(nil), s.v...), sys: s.sys}
	if wantGM {
		p.GM = s.probeSlope(s.sys.output)
	}
	for k := range s.sys.probeQ {
		p.Probe = append(p.Probe, s.probeValue(k))
	}
	return p, nil
}

// PointAt returns point i of a sweep result as a Point.
func (s *Solver) PointAt(res *Result, i int) *Point {
	n := res.Unknowns
	v := make([]float64, s.sys.N)
	copy(v[:n], res.X[i*n:(i+1)*n])
	s.setFixed(v, res.VCM[i], res.VID, 1)
	p := &Point{VCM: res.VCM[i], VID: res.VID, V: v, sys: s.sys}
	if len(res.GM) > i {
		p.GM = res.GM[i]
	}
	for k := range res.Probe {
		p.Probe = append(p.Probe, res.Probe[k][i])
	}
	return p
}

// DeviceOp is a transistor's operating point in a solution.
type DeviceOp struct {
	Name string
	Type device.Type
	Geom device.Geometry
	device.OpPoint
}

// Devices returns the operating point of every transistor at p, in the
// order they were added.
func (s *Solver) Devices(p *Point) []DeviceOp {
	out := make([]DeviceOp, len(s.sys.mos))
	for i, m := range s.sys.mos {
		el := s.sys.c.Mosfets[i]
		out[i] = DeviceOp{
			Name:    el.Name,
			Type:    el.Model.Type(),
			Geom:    el.Geom,
			OpPoint: m.inst.Op(p.V[m.d], p.V[m.g], p.V[m.s], p.V[m.b]),
		}
	}
	return out
}
