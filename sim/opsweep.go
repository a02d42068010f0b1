package sim

import "pairsmith/sim/device"

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
// computed from the point's common mode — in system order, so that any
// number of transistors' operating points are read from it without
// working the fixed nodes out again for each.
type Voltages struct {
	stride int
	v      []float64
}

// Voltages fills into with the variables of res, a result of this
// solver's last sweep (before the solver is rebound to another circuit).
func (s *Solver) Voltages(res *Result, into *Voltages) {
	n, u, N := res.Len(), res.Unknowns, s.sys.N
	into.stride = N
	into.v = grow(into.v, n*N)
	for i := 0; i < n; i++ {
		row := into.v[i*N : (i+1)*N]
		copy(row[:u], res.X[i*u:(i+1)*u])
		s.setFixed(row, res.VCM[i], res.VID, 1)
	}
}

// DeviceColumn fills col with transistor k's operating point (in the
// circuit's order of transistors) at every point of the sweep whose
// voltages v holds, from the model's Bias. Any number of goroutines may
// fill columns of the same solver and voltages at once, each into a
// column of its own.
func (s *Solver) DeviceColumn(v *Voltages, k int, col *OpColumn) {
	N := v.stride
	n := 0
	if N > 0 {
		n = len(v.v) / N
	}
	col.ID, col.VGS, col.VDS = grow(col.ID, n), grow(col.VGS, n), grow(col.VDS, n)
	col.VTH, col.VDSAT = grow(col.VTH, n), grow(col.VDSAT, n)
	if cap(col.Off) < n {
		col.Off = make([]bool, n)
	}
	col.Off = col.Off[:n]
	m := s.sys.mos[k]
	for i := 0; i < n; i++ {
		row := v.v[i*N : (i+1)*N]
		op := m.inst.Bias(row[m.d], row[m.g], row[m.s], row[m.b])
		col.ID[i], col.VGS[i], col.VDS[i], col.VTH[i], col.VDSAT[i] = op.ID, op.VGS, op.VDS, op.VTH, op.VDSAT
		col.Off[i] = op.Region == device.Off
	}
}
