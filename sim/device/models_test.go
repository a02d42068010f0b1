package device

import (
	"math"
	"strings"
	"testing"
)

// TestInstanceRejectsBadInput checks that both models refuse geometry, card
// values and temperatures their equations cannot use, and say which value
// is wrong.
func TestInstanceRejectsBadInput(t *testing.T) {
	good := Geometry{W: 10e-6, L: 1e-6, M: 2}
	l1 := func() *Level1 { return demoLevel1Cards()["nsp"] } // LD = 0.08 µm
	ek := func() *EKV { return demoEKV(PMOS, 0.5, 0.05) }    // LD = 0.05 µm
	tests := []struct {
		name  string
		g     Geometry
		tempK float64
		l1    func(*Level1)
		ek    func(*EKV)
		want  string // part of the error
	}{
		{name: "zero width", g: Geometry{W: 0, L: 1e-6}, want: "W = 0"},
		{name: "negative width", g: Geometry{W: -1e-6, L: 1e-6}, want: "W = -1e-06"},
		{name: "NaN width", g: Geometry{W: math.NaN(), L: 1e-6}, want: "W = NaN"},
		{name: "infinite width", g: Geometry{W: math.Inf(1), L: 1e-6}, want: "W = +Inf"},
		{name: "zero length", g: Geometry{W: 1e-6, L: 0}, want: "L = 0"},
		{name: "length eaten by LD", g: Geometry{W: 1e-6, L: 0.1e-6}, want: "L − 2·LD"},
		{name: "fractional multiplier", g: Geometry{W: 1e-6, L: 1e-6, M: 0.5}, want: "M = 0.5"},
		{name: "negative multiplier", g: Geometry{W: 1e-6, L: 1e-6, M: -2}, want: "M = -2"},
		{name: "zero kelvin", g: good, tempK: -1, want: "temperature"},
		{name: "kp", g: good, l1: func(c *Level1) { c.KP = 0 }, ek: func(c *EKV) { c.KP = -1 }, want: "kp ="},
		{name: "phi", g: good, l1: func(c *Level1) { c.Phi = 0 }, ek: func(c *EKV) { c.Phi = math.NaN() }, want: "phi ="},
		{name: "gamma", g: good, l1: func(c *Level1) { c.Gamma = -0.1 }, ek: func(c *EKV) { c.Gamma = -0.1 }, want: "gamma ="},
		{name: "polarity", g: good, l1: func(c *Level1) { c.Polarity = 0 }, ek: func(c *EKV) { c.Polarity = 2 }, want: "polarity"},
		{name: "tnom", g: good, l1: func(c *Level1) { c.TnomK = 0 }, ek: func(c *EKV) { c.TnomK = 0 }, want: "tnom ="},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tk := tc.tempK
			if tk == 0 {
				tk = 300
			} else if tk < 0 {
				tk = 0
			}
			a, b := l1(), ek()
			if tc.l1 != nil {
				tc.l1(a)
			}
			if tc.ek != nil {
				tc.ek(b)
			}
			for _, m := range []Model{a, b} {
				inst, err := m.Instance(tc.g, tk)
				if err == nil {
					t.Errorf("%s: no error (instance %v)", m.Kind(), inst)
					continue
				}
				if !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), m.Kind()) {
					t.Errorf("%s: error %q does not name %q and the model", m.Kind(), err, tc.want)
				}
			}
		})
	}
	// Accepted: M left at 0 (meaning 1) and a non-integer M ≥ 1.
	for _, g := range []Geometry{{W: 1e-6, L: 1e-6}, {W: 1e-6, L: 1e-6, M: 1.5}} {
		for _, m := range []Model{l1(), ek()} {
			if _, err := m.Instance(g, 300); err != nil {
				t.Errorf("%s %+v: %v", m.Kind(), g, err)
			}
		}
	}
}

// TestMultiplier checks that M parallel devices carry M times the current
// (common practice, no source).
func TestMultiplier(t *testing.T) {
	for _, m := range []Model{demoLevel1Cards()["psp"], demoEKV(NMOS, 0.5, 0.05)} {
		one, err1 := m.Instance(Geometry{W: 3e-6, L: 1e-6}, 300)
		three, err3 := m.Instance(Geometry{W: 3e-6, L: 1e-6, M: 3}, 300)
		if err1 != nil || err3 != nil {
			t.Fatal(err1, err3)
		}
		s := float64(m.Type())
		a, b := one.Eval(0.9+s, 0.9+s*1.2, 0.9, 0.9), three.Eval(0.9+s, 0.9+s*1.2, 0.9, 0.9)
		if a.ID == 0 || math.Abs(b.ID-3*a.ID) > 1e-14*math.Abs(b.ID) {
			t.Errorf("%s: ID %g with M=3, %g with M=1", m.Kind(), b.ID, a.ID)
		}
	}
}

// TestEvalDoesNotAllocate: Eval is the solver's hot loop (device.go contract).
func TestEvalDoesNotAllocate(t *testing.T) {
	for _, m := range []Model{demoLevel1Cards()["nsp"], demoLevel1Cards()["plin"], demoEKV(NMOS, 0.5, 0.05), demoEKV(PMOS, 0, 0.05)} {
		inst, err := m.Instance(Geometry{W: 5e-6, L: 1e-6, M: 2}, 320)
		if err != nil {
			t.Fatal(err)
		}
		var sink float64
		v := 0.0
		allocs := testing.AllocsPerRun(1000, func() {
			v += 1e-3
			e := inst.Eval(1.2-v, 0.9+v, 0.1, 0)
			sink += e.ID + e.GD
		})
		if allocs != 0 {
			t.Errorf("%s %s: Eval allocates %g times per call", m.Kind(), m.Type(), allocs)
		}
		_ = sink
	}
}

var benchSink Eval

// benchmarkEval calls Eval through the Instance interface, as the solver
// does, over a spread of bias points in every region.
func benchmarkEval(b *testing.B, m Model) {
	inst, err := m.Instance(Geometry{W: 10e-6, L: 1e-6, M: 2}, 300)
	if err != nil {
		b.Fatal(err)
	}
	s := float64(m.Type())
	var pts [64][4]float64
	for i := range pts {
		f := float64(i) / 64
		pts[i] = [4]float64{0.9 + s*(1.8*f-0.3), 0.9 + s*(1.5*math.Mod(7*f, 1)), 0.9, 0.9 - s*0.4*math.Mod(3*f, 1)}
	}
	b.ReportAllocs()
	b.ResetTimer()
	var acc Eval
	for i := 0; i < b.N; i++ {
		p := &pts[i&63]
		e := inst.Eval(p[0], p[1], p[2], p[3])
		acc.ID += e.ID
		acc.GG += e.GG
	}
	benchSink = acc
}

func BenchmarkLevel1Eval(b *testing.B) { benchmarkEval(b, demoLevel1Cards()["nsp"]) }

func BenchmarkEKVEval(b *testing.B) { benchmarkEval(b, demoEKV(NMOS, 0.5, 0.05)) }
