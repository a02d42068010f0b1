package sim

import (
	"testing"

	"pairsmith/sim/device"
)

// demoCards returns level-1 or EKV cards with the numbers of the built-in
// demo18 processes (invented demo data, not any foundry's process).
func demoCards(ekv bool) (nm, pm device.Model) {
	if ekv {
		return &device.EKV{Polarity: device.NMOS, VTO: 0.45, KP: 280e-6, Gamma: 0.5, Phi: 0.8, Lambda: 0.05, TCV: 1e-3, BEX: -1.5, TnomK: t27},
			&device.EKV{Polarity: device.PMOS, VTO: -0.45, KP: 70e-6, Gamma: 0.45, Phi: 0.8, Lambda: 0.06, TCV: 1e-3, BEX: -1.2, TnomK: t27}
	}
	return &device.Level1{Polarity: device.NMOS, VTO: 0.45, KP: 280e-6, Gamma: 0.5, Phi: 0.8, Lambda: 0.05, TnomK: t27},
		&device.Level1{Polarity: device.PMOS, VTO: -0.45, KP: 70e-6, Gamma: 0.45, Phi: 0.8, Lambda: 0.06, TnomK: t27}
}

// railStage builds a rail-to-rail input stage of the shape the search
// evaluates most: an NMOS and a PMOS pair whose drains sit on summing
// nodes held by sources, a PMOS tail mirrored from a reference, and a
// switch that steers the PMOS tail into the NMOS pair's tail mirror as the
// common mode rises. Nine transistors, four unknowns, four probes; wn and
// wp scale the input pairs' widths (20 µm and 80 µm at 1).
func railStage(ekv bool, wn, wp float64) *Circuit {
	nm, pm := demoCards(ekv)
	const sup = 1.8
	c := New("rail-to-rail stage (demo cards)", t27)
	vdd, inp, inn := c.Node("vdd"), c.Node("inp"), c.Node("inn")
	tn, tp, bp, sw, vref := c.Node("tn"), c.Node("tp"), c.Node("bp"), c.Node("sw"), c.Node("vref")
	dn1, dn2, dp1, dp2 := c.Node("dn1"), c.Node("dn2"), c.Node("dp1"), c.Node("dp2")
	c.AddVSource("VDD", vdd, Ground, Const(sup), true)
	c.AddVSource("VINP", inp, Ground, Drive{CM: 1, DM: 0.5}, true)
	c.AddVSource("VINN", inn, Ground, Drive{CM: 1, DM: -0.5}, true)
	c.AddMosfet("M1", dn1, inp, tn, Ground, nm, device.Geometry{W: wn * 20e-6, L: 1e-6})
	c.AddMosfet("M2", dn2, inn, tn, Ground, nm, device.Geometry{W: wn * 20e-6, L: 1e-6})
	c.AddVSource("VDN1", dn1, Ground, Const(sup-0.2), true)
	c.AddVSource("VDN2", dn2, Ground, Const(sup-0.2), true)
	c.AddMosfet("M3", dp1, inp, tp, vdd, pm, device.Geometry{W: wp * 80e-6, L: 1e-6})
	c.AddMosfet("M4", dp2, inn, tp, vdd, pm, device.Geometry{W: wp * 80e-6, L: 1e-6})
	c.AddVSource("VDP1", dp1, Ground, Const(0.2), true)
	c.AddVSource("VDP2", dp2, Ground, Const(0.2), true)
	c.AddMosfet("M5", bp, bp, vdd, vdd, pm, device.Geometry{W: 10e-6, L: 2e-6})
	c.AddISource("Ibp", bp, Ground, Const(5e-6), false)
	c.AddMosfet("M6", tp, bp, vdd, vdd, pm, device.Geometry{W: 40e-6, L: 2e-6})
	c.AddVSource("Vvref", vref, Ground, Const(0.95), true)
	c.AddMosfet("M7", sw, vref, tp, vdd, pm, device.Geometry{W: 160e-6, L: 1e-6})
	c.AddMosfet("M8", sw, sw, Ground, Ground, nm, device.Geometry{W: 10e-6, L: 2e-6})
	c.AddMosfet("M9", tn, sw, Ground, Ground, nm, device.Geometry{W: 10e-6, L: 2e-6})
	c.AddProbe("iout", Term{Source: "VDN1", Coef: -1}, Term{Source: "VDN2", Coef: 1},
		Term{Source: "VDP1", Coef: -1}, Term{Source: "VDP2", Coef: 1})
	c.AddProbe("i_n", Term{Source: "VDN1", Coef: -1}, Term{Source: "VDN2", Coef: -1})
	c.AddProbe("i_p", Term{Source: "VDP1", Coef: 1}, Term{Source: "VDP2", Coef: 1})
	c.AddProbe("power", Term{Source: "VDD", Coef: -sup}, Term{Source: "VDN1", Coef: -sup}, Term{Source: "VDN2", Coef: -sup})
	c.Output = "iout"
	c.Guess[tn] = 0.1
	c.Guess[tp] = sup - 0.1
	c.Guess[sw] = 0.3
	return c
}

// stageSweep is the sweep the whole-process comparison with ngspice runs
// (scripts/bench-vs-ngspice at 36 001 points): rail to rail in 50 µV.
var stageSweep = SweepSpec{Low: 0, High: 1.8, Step: 1.8 / 36000}

// BenchmarkStageSweep times a warm 36 001-point rail-to-rail sweep of
// railStage on one goroutine, with exact gm, for each model.
func BenchmarkStageSweep(b *testing.B) {
	for _, tc := range []struct {
		name string
		ekv  bool
	}{{"level1", false}, {"ekv", true}} {
		b.Run(tc.name, func(b *testing.B) {
			s, err := NewSolver(railStage(tc.ekv, 1, 1), Options{})
			if err != nil {
				b.Fatal(err)
			}
			res := &Result{}
			if err := s.Sweep(stageSweep, res); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			it0 := s.Iterations()
			for b.Loop() {
				if err := s.Sweep(stageSweep, res); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*res.Len()), "ns/point")
			b.ReportMetric(float64(s.Iterations()-it0)/float64(b.N*res.Len()), "iter/point")
		})
	}
}

// BenchmarkCompile times compiling railStage into a solver: what every
// candidate of a search pays before its sweep.
func BenchmarkCompile(b *testing.B) {
	for _, tc := range []struct {
		name string
		ekv  bool
	}{{"level1", false}, {"ekv", true}} {
		b.Run(tc.name, func(b *testing.B) {
			c := railStage(tc.ekv, 1, 1)
			b.ReportAllocs()
			for b.Loop() {
				if _, err := NewSolver(c, Options{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkRebind times taking the values of another circuit of the same
// shape into a compiled solver, alternating between two sizings of
// railStage: what a candidate of a search pays instead of a compile.
func BenchmarkRebind(b *testing.B) {
	for _, tc := range []struct {
		name string
		ekv  bool
	}{{"level1", false}, {"ekv", true}} {
		b.Run(tc.name, func(b *testing.B) {
			cs := []*Circuit{railStage(tc.ekv, 1, 1), railStage(tc.ekv, 1.5, 0.7)}
			s, err := NewSolver(cs[0], Options{})
			if err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			k := 0
			for b.Loop() {
				k ^= 1
				if err := s.Rebind(cs[k]); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkCandidate times one candidate's solver and a 181-point sweep
// (rail to rail in 10 mV), with a compile per candidate or a rebind of
// one solver, on level-1 cards.
func BenchmarkCandidate(b *testing.B) {
	cs := []*Circuit{railStage(false, 1, 1), railStage(false, 1.5, 0.7)}
	sp := SweepSpec{Low: 0, High: 1.8, Step: 0.01}
	for _, rebind := range []bool{false, true} {
		name := "compile"
		if rebind {
			name = "rebind"
		}
		b.Run(name, func(b *testing.B) {
			s, err := NewSolver(cs[0], Options{})
			if err != nil {
				b.Fatal(err)
			}
			res := &Result{}
			b.ReportAllocs()
			k := 0
			for b.Loop() {
				k ^= 1
				if rebind {
					err = s.Rebind(cs[k])
				} else {
					s, err = NewSolver(cs[k], Options{})
				}
				if err != nil {
					b.Fatal(err)
				}
				if err := s.Sweep(sp, res); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
