package sim

import (
	"testing"

	"pairsmith/sim/device"
)

func BenchmarkLoad(b *testing.B) {
	nm, pm := squareLaw()
	c := New("x", t27)
	vdd := c.Node("vdd")
	c.AddVSource("VDD", vdd, Ground, Const(1.8), true)
	prev := vdd
	for k := 0; k < 9; k++ {
		a := c.Node(string(rune('a' + k)))
		if k%2 == 0 {
			c.AddMosfet("M", a, a, prev, vdd, pm, device.Geometry{W: 10e-6, L: 1e-6})
		} else {
			c.AddMosfet("M", a, a, prev, Ground, nm, device.Geometry{W: 10e-6, L: 1e-6})
		}
		prev = a
	}
	c.AddISource("I", prev, Ground, Const(1e-5), false)
	s, err := NewSolver(c, Options{})
	if err != nil {
		b.Fatal(err)
	}
	for i := range s.v {
		s.v[i] = 0.1 * float64(i)
	}
	for b.Loop() {
		s.load(0, 0, 1, 0)
	}
}

func BenchmarkEvalOnly(b *testing.B) {
	nm, _ := squareLaw()
	inst, _ := nm.Instance(device.Geometry{W: 10e-6, L: 1e-6}, t27)
	var insts [9]device.Instance
	for i := range insts {
		insts[i] = inst
	}
	sum := 0.0
	for b.Loop() {
		for i := range insts {
			e := insts[i].Eval(1.0, 0.9+0.01*float64(i), 0.1, 0)
			sum += e.ID + e.GD + e.GG + e.GS + e.GB
		}
	}
	_ = sum
}
