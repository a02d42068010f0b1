package sim

import "pairsmith/sim/device"

// DeviceSweep holds every transistor's operating point at every point of
// a sweep: Op[i][k] is transistor k (in the order the circuit added them)
// at point i.
type DeviceSweep struct {
	VCM []float64
	Op  [][]device.OpPoint
}

// DeviceOps returns the operating point of every transistor at every
// point of a sweep solved by s into res, for checks that must hold at
// every point (saturation, model validity). It evaluates each device
// once per point from the stored solution, without solving again. When
// want is not nil, only the transistors k with want[k] are evaluated (the
// others' operating points are left zero).
func (s *Solver) DeviceOps(res *Result, want []bool) *DeviceSweep {
	n := res.Len()
	nm := len(s.sys.mos)
	out := &DeviceSweep{VCM: append([]float64(nil), res.VCM...), Op: make([][]device.OpPoint, n)}
	flat := make([]device.OpPoint, n*nm)
	v := make([]float64, s.sys.N)
	u := res.Unknowns
	for i := 0; i < n; i++ {
		copy(v[:u], res.X[i*u:(i+1)*u])
		s.setFixed(v, res.VCM[i], res.VID, 1)
		row := flat[i*nm : (i+1)*nm : (i+1)*nm]
		for k, m := range s.sys.mos {
			if want == nil || want[k] {
				row[k] = m.inst.Op(v[m.d], v[m.g], v[m.s], v[m.b])
			}
		}
		out.Op[i] = row
	}
	return out
}
