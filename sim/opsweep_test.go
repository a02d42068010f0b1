package sim

import (
	"math"
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

// TestRecordedOps: the operating points a short sweep records from its
// Newton loads (Result.Ops) agree with each transistor's operating point
// at the solution (DeviceColumn, itself bitwise Solver.Devices by
// TestDeviceColumn): VGS and VDS bit for bit, V_TH and V_DSAT within
// 1e-7 V, the current within 1e-6 of the device's largest, the off flag
// exactly (our own bounds, no source: opTolerance's 1e-8 V with a margin
// for the body effect's slope) — for both models, a plain sweep at two
// steps and a guided one, every transistor at every point. Some points
// must come from the loads themselves, not from LargeSignal again, or the
// recording saves nothing; a long sweep records none.
func TestRecordedOps(t *testing.T) {
	for _, ekv := range []bool{false, true} {
		s, err := NewSolver(railStage(ekv, 1, 1), Options{})
		if err != nil {
			t.Fatal(err)
		}
		var coarse, fine, guided Result
		runs := []struct {
			name string
			res  *Result
			run  func() error
		}{
			{"50 mV", &coarse, func() error { return s.Sweep(SweepSpec{Low: 0, High: 1.8, Step: 0.05}, &coarse) }},
			{"1 mV", &fine, func() error { return s.Sweep(SweepSpec{Low: 0, High: 1.8, Step: 1e-3}, &fine) }},
			{"10 mV guided", &guided, func() error { return s.SweepFrom(SweepSpec{Low: 0, High: 1.8, Step: 0.01}, &guided, &coarse) }},
		}
		for _, r := range runs {
			if err := r.run(); err != nil {
				t.Fatal(err)
			}
			res := r.res
			if len(res.Ops) != res.Len()*len(s.sys.mos) {
				t.Fatalf("ekv %v, %s: %d recorded operating points, want one per transistor and point (%d)", ekv, r.name, len(res.Ops), res.Len()*len(s.sys.mos))
			}
			// The columns from the records, and from the solution alone.
			var v, fresh Voltages
			s.Voltages(res, &v)
			s.Voltages(res, &fresh)
			if v.ops == nil {
				t.Fatalf("ekv %v, %s: the voltages do not carry the records", ekv, r.name)
			}
			fresh.ops = nil
			fromLoads := 0
			for k := range s.sys.mos {
				var want, got OpColumn
				s.DeviceColumn(&fresh, k, &want)
				s.DeviceColumn(&v, k, &got)
				imax := 0.0
				for _, x := range want.ID {
					imax = math.Max(imax, math.Abs(x))
				}
				name := s.sys.c.Mosfets[k].Name
				for i := range res.Len() {
					if rec := res.Ops[i*len(s.sys.mos)+k]; rec.ID != got.ID[i] || rec.VTH != got.VTH[i] || rec.VDSAT != got.VDSAT[i] {
						t.Fatalf("ekv %v, %s, %s at vcm %g: column %v, record %+v", ekv, r.name, name, res.VCM[i], got.At(i), rec)
					}
					if got.VGS[i] != want.VGS[i] || got.VDS[i] != want.VDS[i] || got.Off[i] != want.Off[i] ||
						math.Abs(got.VTH[i]-want.VTH[i]) > 1e-7 || math.Abs(got.VDSAT[i]-want.VDSAT[i]) > 1e-7 ||
						math.Abs(got.ID[i]-want.ID[i]) > 1e-6*imax {
						t.Fatalf("ekv %v, %s, %s at vcm %g: recorded %v, at the solution %v", ekv, r.name, name, res.VCM[i], got.At(i), want.At(i))
					}
					if got.ID[i] != want.ID[i] || got.VTH[i] != want.VTH[i] || got.VDSAT[i] != want.VDSAT[i] {
						fromLoads++
					}
				}
			}
			if fromLoads == 0 {
				t.Errorf("ekv %v, %s: every recorded point is LargeSignal's at the solution: none from the Newton loads", ekv, r.name)
			}
		}
		var long Result
		if err := s.Sweep(SweepSpec{Low: 0, High: 1.8, Step: 1.8 / SplitPoints}, &long); err != nil {
			t.Fatal(err)
		}
		if len(long.Ops) != 0 {
			t.Errorf("ekv %v: a sweep of %d points recorded %d operating points, want none", ekv, long.Len(), len(long.Ops))
		}
	}
}

// TestTwin: at vid = 0 the two halves of each pair of the rail-to-rail
// stage are twins (Solver.Twin), and every twin's column equals its
// twin's bit for bit (the property the checks rely on to work one out
// once); at vid = 1 mV the input halves differ and fewer twins remain,
// each still equal bit for bit — for both models, a short and a long
// sweep.
func TestTwin(t *testing.T) {
	for _, ekv := range []bool{false, true} {
		s, err := NewSolver(railStage(ekv, 1, 1), Options{})
		if err != nil {
			t.Fatal(err)
		}
		twins := map[float64]int{}
		for _, vid := range []float64{0, 1e-3} {
			for _, step := range []float64{0.01, 1.8 / (SplitPoints + 99)} {
				var res Result
				if err := s.SweepParallel(SweepSpec{Low: 0, High: 1.8, Step: step, VID: vid}, &res, 2); err != nil {
					t.Fatal(err)
				}
				var v Voltages
				s.Voltages(&res, &v)
				found := 0
				for k := range s.sys.mos {
					j := s.Twin(&v, k)
					if j < 0 {
						continue
					}
					found++
					var a, b OpColumn
					s.DeviceColumn(&v, k, &a)
					s.DeviceColumn(&v, j, &b)
					for i := range res.Len() {
						if a.At(i) != b.At(i) {
							t.Fatalf("ekv=%v vid %g: transistor %d, twin of %d, at vcm %g: %+v against %+v", ekv, vid, k, j, res.VCM[i], a.At(i), b.At(i))
						}
					}
				}
				twins[vid] = found
			}
		}
		if twins[0] < 2 || twins[1e-3] >= twins[0] {
			t.Errorf("ekv=%v: %d twins at vid = 0, %d at 1 mV: want the two pairs' halves at 0 and fewer at 1 mV", ekv, twins[0], twins[1e-3])
		}
	}
}
