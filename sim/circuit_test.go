package sim

import (
	"testing"

	"pairsmith/sim/device"
)

// TestReserve: Reserve keeps every node and element a circuit holds and
// leaves its lists room for the reserved numbers; the circuit solves as
// the one built without it, bit for bit.
func TestReserve(t *testing.T) {
	build := func(reserve bool) *Circuit {
		c := New("reserve", 300.15)
		vdd := c.Node("vdd")
		c.AddVSource("VDD", vdd, Ground, Const(1.8), true)
		if reserve {
			c.Reserve(8, 4, 3)
		}
		if got := c.Node("vdd"); got != vdd {
			t.Fatalf("reserve %v: node vdd is %d, was %d", reserve, got, vdd)
		}
		g, d := c.Node("g"), c.Node("d")
		c.AddVSource("VG", g, Ground, Drive{CM: 1}, true)
		nm := device.Level1{Polarity: device.NMOS, VTO: 0.45, KP: 280e-6, Gamma: 0.5, Phi: 0.8, Lambda: 0.05, TnomK: 300.15} // demo numbers
		c.AddResistor("RD", vdd, d, 10e3)
		c.AddMosfet("M1", d, g, Ground, Ground, &nm, device.Geometry{W: 2e-6, L: 1e-6})
		c.AddProbe("ID", Term{Source: "VDD", Coef: -1})
		return c
	}
	plain, reserved := build(false), build(true)
	if cap(reserved.Mosfets) < 4 || cap(reserved.VSources) < 3 || len(reserved.VSources) != 2 || reserved.VSources[0].Name != "VDD" {
		t.Fatalf("reserved lists: %d transistors (cap %d), sources %v (cap %d)", len(reserved.Mosfets), cap(reserved.Mosfets), reserved.VSources, cap(reserved.VSources))
	}
	sp := SweepSpec{Low: 0.5, High: 1.5, Step: 0.1}
	var a, b Result
	for _, run := range []struct {
		c   *Circuit
		res *Result
	}{{plain, &a}, {reserved, &b}} {
		s, err := NewSolver(run.c, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if err := s.Sweep(sp, run.res); err != nil {
			t.Fatal(err)
		}
	}
	for i := range a.VCM {
		if a.Probe[0][i] != b.Probe[0][i] {
			t.Fatalf("at %g V: %g A without Reserve, %g A with it", a.VCM[i], a.Probe[0][i], b.Probe[0][i])
		}
	}
}
