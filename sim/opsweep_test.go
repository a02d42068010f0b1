package sim

import (
	"testing"

	"pairsmith/sim/device"
)

// TestDeviceColumn: the columns the checks read equal, bit for bit, each
// transistor's own operating point (Solver.Devices at Solver.PointAt,
// which rebuild every node's voltage from the point), at every point of a
// segmented sweep, for every transistor of the rail-to-rail stage — the
// frozen bias devices, the input devices and the switch. (Internal
// consistency: the operating points themselves are checked against
// ngspice in objectives' saturation test.)
func TestDeviceColumn(t *testing.T) {
	for _, ekv := range []bool{false, true} {
		s, err := NewSolver(railStage(ekv, 1, 1), Options{})
		if err != nil {
			t.Fatal(err)
		}
		sp := SweepSpec{Low: 0, High: 1.8, Step: 1.8 / (3*SplitPoints/2 - 1)}
		var res Result
		if err := s.SweepParallel(sp, &res, 2); err != nil {
			t.Fatal(err)
		}
		var v Voltages
		s.Voltages(&res, &v)
		cols := make([]OpColumn, len(s.sys.mos))
		frozen := 0
		for k := range cols {
			s.DeviceColumn(&v, k, &cols[k])
			if s.Frozen(k) {
				frozen++
			}
		}
		if frozen == 0 || frozen == len(cols) {
			t.Fatalf("ekv %v: %d of %d devices frozen, want some of each kind", ekv, frozen, len(cols))
		}
		for i := 0; i < res.Len(); i += 97 {
			for k, op := range s.Devices(s.PointAt(&res, i)) {
				c := &cols[k]
				got := [5]float64{c.ID[i], c.VGS[i], c.VDS[i], c.VTH[i], c.VDSAT[i]}
				want := [5]float64{op.ID, op.VGS, op.VDS, op.VTH, op.VDSAT}
				if got != want || c.Off[i] != (op.Region == device.Off) {
					t.Fatalf("ekv %v, %s at vcm %g: column %v off %v, operating point %v region %s",
						ekv, op.Name, res.VCM[i], got, c.Off[i], want, op.Region)
				}
			}
		}
	}
}
