package sim

import (
	"math"

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

// At returns the column's point i as an OpPoint (the fields it holds).
func (c *OpColumn) At(i int) device.OpPoint {
	op := device.OpPoint{ID: c.ID[i], VGS: c.VGS[i], VDS: c.VDS[i], VTH: c.VTH[i], VDSAT: c.VDSAT[i]}
	if c.Off[i] {
		op.Region = device.Off
	}
	return op
}

// Voltages holds every variable of a swept result at every point — the
// unknowns the result stores and the fixed nodes (rails, inputs)
// computed from the point's common mode — variable by variable, so that
// any number of transistors' operating points are read from it without
// working the fixed nodes out again for each, each transistor reading
// four contiguous columns.
type Voltages struct {
	points int
	v      []float64 // variable j at point i is v[j*points+i]
	row    []float64
}

// Voltages fills into with the variables of res, a result of this
// solver's last sweep (before the solver is rebound to another circuit).
func (s *Solver) Voltages(res *Result, into *Voltages) {
	n, u, N := res.Len(), res.Unknowns, s.sys.N
	into.points = n
	into.v = grow(into.v, n*N)
	into.row = grow(into.row, N)
	row := into.row
	for i := 0; i < n; i++ {
		copy(row[:u], res.X[i*u:(i+1)*u])
		s.setFixed(row, res.VCM[i], res.VID, 1)
		for j, x := range row {
			into.v[j*n+i] = x
		}
	}
}

// DeviceColumn fills col with transistor k's operating point (in the
// circuit's order of transistors) at every point of the sweep whose
// voltages v holds, from the model's LargeSignal (computed again only
// where the four terminal voltages changed). Any number of goroutines may
// fill columns of the same solver and voltages at once, each into a
// column of its own.
func (s *Solver) DeviceColumn(v *Voltages, k int, col *OpColumn) {
	n := v.points
	col.ID, col.VGS, col.VDS = grow(col.ID, n), grow(col.VGS, n), grow(col.VDS, n)
	col.VTH, col.VDSAT = grow(col.VTH, n), grow(col.VDSAT, n)
	if cap(col.Off) < n {
		col.Off = make([]bool, n)
	}
	col.Off = col.Off[:n]
	m := s.sys.mos[k]
	vd, vg, vs, vb := v.v[m.d*n:(m.d+1)*n], v.v[m.g*n:(m.g+1)*n], v.v[m.s*n:(m.s+1)*n], v.v[m.b*n:(m.b+1)*n]
	var ls device.LargeSignal
	last := [4]float64{math.NaN()}
	for i := range n {
		// A transistor whose terminals did not move since the last point
		// (a bias branch, frozen during the continuation) has the same
		// operating point: LargeSignal is a function of the four voltages.
		at := [4]float64{vd[i], vg[i], vs[i], vb[i]}
		if at != last {
			ls, last = m.inst.LargeSignal(at[0], at[1], at[2], at[3]), at
		}
		col.ID[i], col.VGS[i], col.VDS[i], col.VTH[i], col.VDSAT[i] = ls.ID, at[1]-at[2], at[0]-at[2], ls.VTH, ls.VDSAT
		col.Off[i] = ls.Region == device.Off
	}
}
