package sim

import (
	"math"
	"reflect"
	"testing"

	"pairsmith/sim/device"
)

// TestInstancesPerDevice checks that transistors of the same card and size
// are compiled into instances of their own, alike in every constant.
func TestInstancesPerDevice(t *testing.T) {
	for _, ekv := range []bool{false, true} {
		c := railStage(ekv, 1, 1)
		s, err := NewSolver(c, Options{})
		if err != nil {
			t.Fatal(err)
		}
		mos := s.sys.mos
		for i := range mos {
			for j := i + 1; j < len(mos); j++ {
				if mos[i].inst == mos[j].inst {
					t.Errorf("ekv=%v: %s and %s share one instance", ekv, c.Mosfets[i].Name, c.Mosfets[j].Name)
				}
				same := c.Mosfets[i].Model == c.Mosfets[j].Model && c.Mosfets[i].Geom == c.Mosfets[j].Geom
				if alike := reflect.DeepEqual(mos[i].inst, mos[j].inst); alike != same {
					t.Errorf("ekv=%v: %s and %s: instances alike %v, same card and size %v",
						ekv, c.Mosfets[i].Name, c.Mosfets[j].Name, alike, same)
				}
			}
		}
	}
}

// TestSetInstanceOneDevice shifts the threshold of one transistor of a
// pair at vid = 0, where both halves have the same inputs, and checks
// that only that device changes: the output current is the square-law
// pair's at vid = −ΔV_T, I_1 − I_2 = ½·β·V_id·√(4·I_T/β − V_id²)
// (Razavi, Design of Analog CMOS Integrated Circuits, 2001, eq. 4.12),
// and the sweep is bit for bit that of a circuit whose M1 has a card of
// its own with the shifted threshold.
func TestSetInstanceOneDevice(t *testing.T) {
	const tail, w, l, dvt = 40e-6, 20e-6, 1e-6, 0.02
	sp := SweepSpec{Low: 1.2, High: 2.0, Step: 0.01}
	sweep := func(c *Circuit, shift func(*Solver) error) *Result {
		t.Helper()
		s, err := NewSolver(c, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if shift != nil {
			if err := shift(s); err != nil {
				t.Fatal(err)
			}
		}
		res := &Result{}
		if err := s.Sweep(sp, res); err != nil {
			t.Fatal(err)
		}
		return res
	}
	nominal := diffPair(tail, w, l)
	shifted := *nominal.Mosfets[0].Model.(*device.Level1)
	shifted.VTO += dvt
	geom := nominal.Mosfets[0].Geom
	hooked := sweep(nominal, func(s *Solver) error {
		inst, err := shifted.Instance(geom, nominal.TempK)
		if err != nil {
			return err
		}
		return s.SetInstance(0, inst)
	})
	own := diffPair(tail, w, l)
	own.Mosfets[0].Model = &shifted
	ref := sweep(own, nil)
	plain := sweep(diffPair(tail, w, l), nil)

	beta := 200e-6 * w / l // squareLaw's KP
	vid := -dvt
	want := 0.5 * beta * vid * math.Sqrt(4*tail/beta-vid*vid)
	for i := range hooked.VCM {
		if got := hooked.Probe[0][i]; !near(got, want, 1e-6, 1e-11) {
			t.Errorf("vcm %.2f: I1 − I2 = %.10g A, square-law pair %.10g A", hooked.VCM[i], got, want)
		}
		if hooked.Probe[0][i] != ref.Probe[0][i] || hooked.GM[i] != ref.GM[i] || hooked.Probe[1][i] != ref.Probe[1][i] {
			t.Errorf("vcm %.2f: SetInstance gives iout %v, gm %v; a card of its own %v, %v",
				hooked.VCM[i], hooked.Probe[0][i], hooked.GM[i], ref.Probe[0][i], ref.GM[i])
		}
		if math.Abs(plain.Probe[0][i]) > 1e-11 {
			t.Errorf("vcm %.2f: the nominal pair's output is %g A, want 0", plain.VCM[i], plain.Probe[0][i])
		}
	}
}

// TestSetInstanceErrors checks the indices and values SetInstance refuses.
func TestSetInstanceErrors(t *testing.T) {
	s, err := NewSolver(diffPair(40e-6, 20e-6, 1e-6), Options{})
	if err != nil {
		t.Fatal(err)
	}
	inst := s.sys.mos[0].inst
	for _, tc := range []struct {
		name string
		i    int
		inst device.Instance
	}{{"negative index", -1, inst}, {"index past the end", 2, inst}, {"nil instance", 0, nil}} {
		if err := s.SetInstance(tc.i, tc.inst); err == nil {
			t.Errorf("%s: accepted", tc.name)
		}
	}
}
