package sim

import "pairsmith/sim/device"

// OpColumn is one transistor's operating point at every point of a
// sweep, the fields the checks read (SPICE signs, as device.OpPoint):
// flat columns without pointers, so that a long sweep costs the garbage
// collector nothing to scan and one column serves every device in turn.
type OpColumn struct {
	ID, VGS, VDS, VTH, VDSAT []float64
	Off                      []bool // the model calls the device off (level 1 below threshold)
	v                        []float64
}

// At returns the column's point i as an OpPoint (the fields it holds).
func (c *OpColumn) At(i int) device.OpPoint {
	op := device.OpPoint{ID: c.ID[i], VGS: c.VGS[i], VDS: c.VDS[i], VTH: c.VTH[i], VDSAT: c.VDSAT[i]}
	if c.Off[i] {
		op.Region = device.Off
	}
	return op
}

// DeviceColumn fills col with transistor k's operating point (in the
// order the circuit added them) at every point of a sweep solved by s
// into res, for checks that must hold at every point (saturation, model
// validity). It evaluates the device once per point from the stored
// solution, without solving again, and reuses col's storage.
func (s *Solver) DeviceColumn(res *Result, k int, col *OpColumn) {
	n := res.Len()
	col.ID, col.VGS, col.VDS = grow(col.ID, n), grow(col.VGS, n), grow(col.VDS, n)
	col.VTH, col.VDSAT = grow(col.VTH, n), grow(col.VDSAT, n)
	if cap(col.Off) < n {
		col.Off = make([]bool, n)
	}
	col.Off = col.Off[:n]
	m := s.sys.mos[k]
	col.v = grow(col.v, s.sys.N)
	v := col.v
	u := res.Unknowns
	for i := 0; i < n; i++ {
		copy(v[:u], res.X[i*u:(i+1)*u])
		s.setFixed(v, res.VCM[i], res.VID, 1)
		op := m.inst.Op(v[m.d], v[m.g], v[m.s], v[m.b])
		col.ID[i], col.VGS[i], col.VDS[i], col.VTH[i], col.VDSAT[i] = op.ID, op.VGS, op.VDS, op.VTH, op.VDSAT
		col.Off[i] = op.Region == device.Off
	}
}
