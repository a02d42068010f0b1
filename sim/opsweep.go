package sim

import (
	"math"
	"slices"

	"pairsmith/sim/device"
)

// OpColumn is one transistor's operating point at every point of a
// sweep, the fields the checks read (SPICE signs, as device.OpPoint):
// flat columns without pointers, so that a long sweep costs the garbage
// collector nothing to scan and one column serves every device in turn.
type OpColumn struct {
	ID, VGS, VDS, VTH, VDSAT []float64
	Off                      []bool // the model calls the device off (level 1 below threshold)
}

// size makes the column n points long.
func (c *OpColumn) size(n int) {
	c.ID, c.VGS, c.VDS = grow(c.ID, n), grow(c.VGS, n), grow(c.VDS, n)
	c.VTH, c.VDSAT = grow(c.VTH, n), grow(c.VDSAT, n)
	if cap(c.Off) < n {
		c.Off = make([]bool, n)
	}
	c.Off = c.Off[:n]
}

// recordOps writes, after point i of a sweep converged, every
// transistor's large-signal operating point at the solution into point
// i's row of res.Ops: the transistor's last evaluation (s.ops) where the
// final Newton step moved none of its terminals by more than opTolerance,
// LargeSignal at the solution elsewhere. The final step is most often far
// smaller (Newton's convergence is quadratic), so that the row is one
// copy of s.ops and few transistors are evaluated again.
func (s *Solver) recordOps(res *Result, i int) {
	nm := len(s.ops)
	row := res.Ops[i*nm : (i+1)*nm]
	copy(row, s.ops)
	dx := s.dx[:s.active]
	if !slices.ContainsFunc(dx, beyondOpTolerance) {
		return
	}
	v := s.v
	for k := range row {
		m := &s.sys.mos[k]
		if m.movedBy(dx) {
			row[k] = m.inst.LargeSignal(v[m.d], v[m.g], v[m.s], v[m.b])
		}
	}
}

// beyondOpTolerance reports whether a step d is larger than opTolerance.
func beyondOpTolerance(d float64) bool { return d > opTolerance || d < -opTolerance }

// movedBy reports whether the step dx over the first len(dx) unknowns
// moved one of the transistor's terminals by more than opTolerance.
func (m *mosStamp) movedBy(dx []float64) bool {
	for _, j := range [4]int{m.d, m.g, m.s, m.b} {
		if j < len(dx) && beyondOpTolerance(dx[j]) {
			return true
		}
	}
	return false
}

// opTolerance is how far (V) the final Newton step may have moved a
// transistor's terminals for its last evaluation to stand for its
// operating point at the solution: V_TH and V_DSAT move by at most about
// twice that with the terminals (1 + the body effect's slope), so the
// checks read them within a few 1e-8 V of their values at the solution,
// far inside any margin. In a search's sweeps one transistor-point in
// nine is evaluated again.
const opTolerance = 1e-8

// At returns the column's point i as an OpPoint (the fields it holds).
func (c *OpColumn) At(i int) device.OpPoint {
	op := device.OpPoint{ID: c.ID[i], VGS: c.VGS[i], VDS: c.VDS[i], VTH: c.VTH[i], VDSAT: c.VDSAT[i]}
	if c.Off[i] {
		op.Region = device.Off
	}
	return op
}

// Voltages gives every variable of a swept result at every point — the
// unknowns the result stores, read in place, and the fixed nodes (rails,
// inputs) worked out from the point's common mode once for all
// transistors: a fixed node that the sweep does not move is one value,
// one that it moves a column of its own.
type Voltages struct {
	points int
	x      []float64 // the result's unknowns, point by point (Result.X)
	static []float64 // the fixed nodes that do not move, by variable
	moving []float64 // the moving fixed nodes, column after column
	at     []int     // variable → its column in moving, or −1
	// ops holds the operating points the sweep recorded (Result.Ops),
	// nil where it recorded none.
	ops []device.LargeSignal
}

// column is where one variable's values are: data[off+i·stride] is its
// value at point i.
type column struct {
	data        []float64
	off, stride int
}

// column returns variable j's values, u being the solver's unknowns.
func (v *Voltages) column(j, u int) column {
	switch {
	case j < u:
		return column{v.x, j, u}
	case v.at[j] >= 0:
		return column{v.moving, v.at[j] * v.points, 1}
	}
	return column{v.static, j, 0}
}

// Voltages fills into with the variables of res, a result of this
// solver's last sweep (before the solver is rebound to another circuit).
// into reads res's unknowns in place: res must not change while into is
// in use.
func (s *Solver) Voltages(res *Result, into *Voltages) {
	n, N := res.Len(), s.sys.N
	into.points, into.x, into.ops = n, res.X, nil
	if nm := len(s.sys.mos); nm > 0 && len(res.Ops) == n*nm {
		into.ops = res.Ops
	}
	into.static = grow(into.static, N)
	if cap(into.at) < N {
		into.at = make([]int, N)
	}
	into.at = into.at[:N]
	for j := range into.at {
		into.at[j] = -1
	}
	fx := s.sys.fixed
	for c, k := range s.sys.fixedMoving {
		into.at[fx[k].idx] = c
	}
	into.moving = grow(into.moving, n*len(s.sys.fixedMoving))
	if n == 0 {
		return
	}
	// Every fixed node once, then at each point the moving ones as a
	// sweep sets them (setMoving: bitwise what setFixed gives), copied
	// out column by column.
	row := into.static
	s.setFixed(row, res.VCM[0], res.VID, 1)
	for i, vcm := range res.VCM {
		s.moveFixed(row, vcm, res.VID)
		for c, k := range s.sys.fixedMoving {
			into.moving[c*n+i] = row[fx[k].idx]
		}
	}
}

// Frozen reports whether transistor k's four terminals hold still during
// a sweep's continuation (a bias branch): its column costs one model
// evaluation, however long the sweep.
func (s *Solver) Frozen(k int) bool { return s.sys.mos[k].frozen }

// Twin returns an earlier transistor j < k whose instance is alike k's
// (the same card and size, no SetInstance of its own) and whose four
// terminals have bitwise the voltages of k's at every point of v — the
// two halves of a pair swept at vid = 0 — or −1: a twin's operating points
// are k's, bit for bit, and need not be worked out again.
func (s *Solver) Twin(v *Voltages, k int) int {
	mos, u := s.sys.mos, s.sys.n
	mk := &mos[k]
	for j := range k {
		mj := &mos[j]
		if mj.id != mk.id {
			continue
		}
		same := true
		for t, a := range [4]int{mk.d, mk.g, mk.s, mk.b} {
			b := [4]int{mj.d, mj.g, mj.s, mj.b}[t]
			if a != b && !v.column(a, u).equal(v.column(b, u), v.points) {
				same = false
				break
			}
		}
		if same {
			return j
		}
	}
	return -1
}

// equal reports whether two columns hold bitwise the same n values.
func (c column) equal(o column, n int) bool {
	for i, jc, jo := 0, c.off, o.off; i < n; i, jc, jo = i+1, jc+c.stride, jo+o.stride {
		if math.Float64bits(c.data[jc]) != math.Float64bits(o.data[jo]) {
			return false
		}
	}
	return true
}

// DeviceColumn fills col with transistor k's operating point (in the
// circuit's order of transistors) at every point of the sweep whose
// voltages v holds: VGS and VDS from the voltages, the rest from what
// the sweep recorded (Result.Ops) where it recorded it, from the model's
// LargeSignal elsewhere (computed again only where the four terminal
// voltages changed). Any number of goroutines may fill columns of the
// same solver and voltages at once, each into a column of its own.
func (s *Solver) DeviceColumn(v *Voltages, k int, col *OpColumn) {
	n := v.points
	col.size(n)
	m := s.sys.mos[k]
	u := s.sys.n
	d, g, src, b := v.column(m.d, u), v.column(m.g, u), v.column(m.s, u), v.column(m.b, u)
	id := col.ID[:n]
	vgs, vds, vth, vdsat, off := col.VGS[:len(id)], col.VDS[:len(id)], col.VTH[:len(id)], col.VDSAT[:len(id)], col.Off[:len(id)]
	if v.ops != nil {
		nm := len(s.sys.mos)
		jd, jg, js, j := d.off, g.off, src.off, k
		for i := range id {
			vd, vg, vs := d.data[jd], g.data[jg], src.data[js]
			jd, jg, js = jd+d.stride, jg+g.stride, js+src.stride
			ls := &v.ops[j]
			j += nm
			id[i], vgs[i], vds[i], vth[i], vdsat[i], off[i] = ls.ID, vg-vs, vd-vs, ls.VTH, ls.VDSAT, ls.Region == device.Off
		}
		return
	}
	// The last operating point, as scalars (a LargeSignal kept across
	// iterations costs a store-to-load stall at every point).
	var lid, lvth, lvdsat float64
	var loff bool
	ld, lg, lsrc, lb := math.NaN(), 0.0, 0.0, 0.0
	jd, jg, js, jb := d.off, g.off, src.off, b.off
	for i := range id {
		vd, vg, vs, vb := d.data[jd], g.data[jg], src.data[js], b.data[jb]
		jd, jg, js, jb = jd+d.stride, jg+g.stride, js+src.stride, jb+b.stride
		// A transistor whose terminals did not move since the last point
		// (a bias branch, frozen during the continuation) has the same
		// operating point: LargeSignal is a function of the four voltages.
		if vd != ld || vg != lg || vs != lsrc || vb != lb {
			ls := m.inst.LargeSignal(vd, vg, vs, vb)
			lid, lvth, lvdsat, loff = ls.ID, ls.VTH, ls.VDSAT, ls.Region == device.Off
			ld, lg, lsrc, lb = vd, vg, vs, vb
		}
		id[i], vgs[i], vds[i], vth[i], vdsat[i], off[i] = lid, vg-vs, vd-vs, lvth, lvdsat, loff
	}
}
