package sim

import (
	"errors"
	"math"
	"testing"

	"pairsmith/sim/device"
)

const t27 = 300.15

// squareLaw returns level-1 cards without body effect or channel-length
// modulation, so that the circuits below have textbook closed forms.
func squareLaw() (*device.Level1, *device.Level1) {
	n := &device.Level1{Polarity: device.NMOS, VTO: 0.5, KP: 200e-6, Phi: 0.7, TnomK: t27}
	p := &device.Level1{Polarity: device.PMOS, VTO: -0.5, KP: 80e-6, Phi: 0.7, TnomK: t27}
	return n, p
}

func near(got, want, rel, abs float64) bool {
	return math.Abs(got-want) <= rel*math.Abs(want)+abs
}

// TestDiodeConnected checks a diode-connected NMOS fed by a current
// source against the square law, V_GS = V_T + √(2·I/β) (any analog design
// text, e.g. Razavi, Design of Analog CMOS Integrated Circuits, ch. 2).
func TestDiodeConnected(t *testing.T) {
	nm, pm := squareLaw()
	for _, tc := range []struct {
		name string
		pmos bool
		i    float64
		w, l float64
	}{
		{"nmos 10uA", false, 10e-6, 10e-6, 1e-6},
		{"nmos 1mA", false, 1e-3, 50e-6, 0.5e-6},
		{"pmos 20uA", true, 20e-6, 40e-6, 2e-6},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := New(tc.name, t27)
			vdd, g := c.Node("vdd"), c.Node("g")
			c.AddVSource("VDD", vdd, Ground, Const(3), true)
			kp, vt := nm.KP, nm.VTO
			if tc.pmos {
				c.AddMosfet("M1", g, g, vdd, vdd, pm, device.Geometry{W: tc.w, L: tc.l})
				c.AddISource("I1", g, Ground, Const(tc.i), false)
				kp, vt = pm.KP, -pm.VTO
			} else {
				c.AddMosfet("M1", g, g, Ground, Ground, nm, device.Geometry{W: tc.w, L: tc.l})
				c.AddISource("I1", vdd, g, Const(tc.i), false)
			}
			c.AddProbe("isupply", Term{Source: "VDD", Coef: -1})
			s, err := NewSolver(c, Options{})
			if err != nil {
				t.Fatal(err)
			}
			p, err := s.Solve(0, 0)
			if err != nil {
				t.Fatal(err)
			}
			// The drain junction's gmin (1e-12 S, as in SPICE) carries
			// gmin·V_GS of the reference current, so the channel carries
			// the rest: solve V_GS = V_T + √(2·(I − gmin·V_GS)/β).
			vgs := vt
			for k := 0; k < 50; k++ {
				vgs = vt + math.Sqrt(2*(tc.i-1e-12*vgs)/(kp*tc.w/tc.l))
			}
			got := p.Voltage(g)
			if tc.pmos {
				got = 3 - got
			}
			if !near(got, vgs, 1e-9, 1e-9) {
				t.Errorf("V_GS = %.12g V, square law %.12g V", got, vgs)
			}
			if !near(p.Probe[0], tc.i, 1e-6, 1e-11) {
				t.Errorf("supply current %g A, want %g A", p.Probe[0], tc.i)
			}
		})
	}
}

// TestLinearElements checks resistors, a floating source, a VCVS and a
// VCCS against nodal analysis done by hand (Kirchhoff's laws).
func TestLinearElements(t *testing.T) {
	c := New("linear", t27)
	a, b, x, y, z := c.Node("a"), c.Node("b"), c.Node("x"), c.Node("y"), c.Node("z")
	c.AddVSource("V1", a, Ground, Const(2), true)
	c.AddResistor("R1", a, b, 1e3)
	c.AddResistor("R2", b, Ground, 1e3)
	c.AddVSource("V2", x, b, Const(0.5), false) // floating: x = b + 0.5
	c.AddResistor("R3", x, Ground, 2e3)
	c.AddVCVS("E1", y, Ground, x, Ground, 3) // y = 3·x
	c.AddResistor("R4", y, Ground, 1e3)
	c.AddVCCS("G1", Ground, z, y, Ground, 1e-3) // 1 mS · y into z
	c.AddResistor("R5", z, Ground, 100)
	c.AddProbe("i1", Term{Source: "V1", Coef: 1})
	c.AddProbe("i2", Term{Source: "V2", Coef: 1})
	s, err := NewSolver(c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	p, err := s.Solve(0, 0)
	if err != nil {
		t.Fatal(err)
	}
	// KCL at b with the V2–R3 branch hanging off it:
	// (2−b)/1k = b/1k + (b+0.5)/2k  →  b = 0.7 V, x = 1.2 V.
	vb := 0.7
	vx := vb + 0.5
	vy := 3 * vx
	vz := 1e-3 * vy * 100
	for _, chk := range []struct {
		name      string
		got, want float64
	}{
		{"V(b)", p.Voltage(b), vb},
		{"V(x)", p.Voltage(x), vx},
		{"V(y)", p.Voltage(y), vy},
		{"V(z)", p.Voltage(z), vz},
		// SPICE sign: V1 delivers (2−b)/1k, so its current is negative.
		{"I(V1)", p.Probe[0], -(2 - vb) / 1e3},
		// V2 carries R3's current from b up to x: into its N terminal.
		{"I(V2)", p.Probe[1], -vx / 2e3},
	} {
		if !near(chk.got, chk.want, 1e-9, 1e-12) {
			t.Errorf("%s = %.12g, want %.12g", chk.name, chk.got, chk.want)
		}
	}
}

// diffPair builds an NMOS pair with an ideal tail current and drains held
// by voltage sources; its output is I(D1 side) − I(D2 side).
func diffPair(tail, w, l float64) *Circuit {
	nm, _ := squareLaw()
	c := New("nmos pair", t27)
	vdd, inp, inn, t1, d1, d2 := c.Node("vdd"), c.Node("inp"), c.Node("inn"), c.Node("t"), c.Node("d1"), c.Node("d2")
	c.AddVSource("VDD", vdd, Ground, Const(3), true)
	c.AddVSource("VINP", inp, Ground, Drive{CM: 1, DM: 0.5}, true)
	c.AddVSource("VINN", inn, Ground, Drive{CM: 1, DM: -0.5}, true)
	c.AddVSource("VD1", d1, vdd, Const(-0.5), true) // chained: d1 = vdd − 0.5
	c.AddVSource("VD2", d2, Ground, Const(2.5), true)
	c.AddMosfet("M1", d1, inp, t1, Ground, nm, device.Geometry{W: w, L: l})
	c.AddMosfet("M2", d2, inn, t1, Ground, nm, device.Geometry{W: w, L: l})
	c.AddISource("IT", t1, Ground, Const(tail), false)
	c.AddProbe("iout", Term{Source: "VD1", Coef: -1}, Term{Source: "VD2", Coef: 1})
	c.AddProbe("isupply", Term{Source: "VDD", Coef: -1})
	c.Output = "iout"
	return c
}

// TestPairGM checks the exact small-signal gm of a differential pair with
// an ideal tail against the square law, gm = √(β·I_tail) for each side at
// I_tail/2 (textbook: gm = √(2·β·I_D)), and against a central difference
// of the output current over V_id.
func TestPairGM(t *testing.T) {
	const tail, w, l = 40e-6, 20e-6, 1e-6
	c := diffPair(tail, w, l)
	s, err := NewSolver(c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	res := &Result{}
	if err := s.Sweep(SweepSpec{Low: 1.2, High: 2.0, Step: 0.1}, res); err != nil {
		t.Fatal(err)
	}
	beta := 200e-6 * w / l
	want := math.Sqrt(beta * tail)
	for i, g := range res.GM {
		if !near(g, want, 1e-7, 0) {
			t.Errorf("vcm %.2f: gm = %.10g S, square law %.10g S", res.VCM[i], g, want)
		}
		// The chained source VD1 hangs from VDD, VD2 from ground: the
		// supply delivers M1's half of the tail current (plus the pA of
		// M1's drain junction gmin).
		if !near(res.Probe[1][i], tail/2, 1e-6, 1e-11) {
			t.Errorf("vcm %.2f: supply current %g A, want %g A", res.VCM[i], res.Probe[1][i], tail/2)
		}
	}
	// Central difference of I_out over V_id (a check of the exact
	// derivative against the definition).
	const h = 1e-4
	up, err := s.Solve(1.5, h)
	if err != nil {
		t.Fatal(err)
	}
	dn, err := s.Solve(1.5, -h)
	if err != nil {
		t.Fatal(err)
	}
	fd := (up.Probe[0] - dn.Probe[0]) / (2 * h)
	if !near(fd, want, 1e-5, 0) {
		t.Errorf("central difference gm = %.10g S, exact %.10g S", fd, want)
	}
}

// TestSteppingStrategies solves a diode stack with each fallback strategy
// alone and checks they reach the square-law answer.
func TestSteppingStrategies(t *testing.T) {
	nm, _ := squareLaw()
	c := New("stack", t27)
	vdd, a, b := c.Node("vdd"), c.Node("a"), c.Node("b")
	c.AddVSource("VDD", vdd, Ground, Const(3.3), true)
	c.AddISource("I1", vdd, a, Const(100e-6), false)
	c.AddMosfet("M1", a, a, b, b, nm, device.Geometry{W: 10e-6, L: 1e-6})
	c.AddMosfet("M2", b, b, Ground, Ground, nm, device.Geometry{W: 10e-6, L: 1e-6})
	vgs := 0.5 + math.Sqrt(2*100e-6/(200e-6*10))
	for name, strategy := range map[string]func(*Solver) bool{
		"gmin":   func(s *Solver) bool { return s.gminStepping(0, 0) },
		"source": func(s *Solver) bool { return s.sourceStepping(0, 0) },
	} {
		t.Run(name, func(t *testing.T) {
			s, err := NewSolver(c, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if !strategy(s) {
				t.Fatal("strategy failed")
			}
			// M1's bulk is tied to its source, so neither sees body effect.
			if got := s.v[s.sys.idx[a]]; !near(got, 2*vgs, 1e-9, 1e-9) {
				t.Errorf("V(a) = %.12g V, want 2·V_GS = %.12g V", got, 2*vgs)
			}
		})
	}
}

// TestNoSolution checks that a circuit without a physical operating point
// — a current forced into a node that only an off transistor touches —
// is reported as a convergence error naming the point, not as a number.
func TestNoSolution(t *testing.T) {
	nm, _ := squareLaw()
	c := New("forced current into an off transistor", t27)
	d := c.Node("d")
	c.AddISource("I1", Ground, d, Const(1e-3), false)
	c.AddMosfet("M1", d, Ground, Ground, Ground, nm, device.Geometry{W: 1e-6, L: 1e-6})
	s, err := NewSolver(c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	res := &Result{}
	err = s.Sweep(SweepSpec{Low: 0.3, High: 0.5, Step: 0.1}, res)
	var ce *ConvergenceError
	if !errors.As(err, &ce) {
		t.Fatalf("got %v, want a *ConvergenceError", err)
	}
	if ce.VCM != 0.3 || ce.Circuit != c.Title {
		t.Errorf("error names vcm %g in %q, want 0.3 in %q", ce.VCM, ce.Circuit, c.Title)
	}
}

// TestCompileErrors checks the circuits the solver refuses.
func TestCompileErrors(t *testing.T) {
	nm, _ := squareLaw()
	for _, tc := range []struct {
		name  string
		build func(c *Circuit)
	}{
		{"voltage loop", func(c *Circuit) {
			a := c.Node("a")
			c.AddVSource("V1", a, Ground, Const(1), true)
			c.AddVSource("V2", a, Ground, Const(2), true)
		}},
		{"dangling node", func(c *Circuit) {
			c.Node("lonely")
			c.AddResistor("R1", c.Node("a"), Ground, 1)
		}},
		{"bad resistor", func(c *Circuit) { c.AddResistor("R1", c.Node("a"), Ground, 0) }},
		{"unknown probe source", func(c *Circuit) {
			c.AddResistor("R1", c.Node("a"), Ground, 1)
			c.AddProbe("p", Term{Source: "VX", Coef: 1})
		}},
		{"bad geometry", func(c *Circuit) {
			a := c.Node("a")
			c.AddMosfet("M1", a, a, Ground, Ground, nm, device.Geometry{W: -1, L: 1e-6})
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := New(tc.name, t27)
			tc.build(c)
			if _, err := NewSolver(c, Options{}); err == nil {
				t.Error("compiled without error")
			}
		})
	}
}

// TestSweepPoints checks the point count, including a range that is not
// a whole number of steps.
func TestSweepPoints(t *testing.T) {
	for _, tc := range []struct {
		sp   SweepSpec
		want int
	}{
		{SweepSpec{Low: 0, High: 1.8, Step: 0.01}, 181},
		{SweepSpec{Low: 0, High: 1, Step: 0.3}, 5}, // 0, .3, .6, .9, 1
		{SweepSpec{Low: 0.5, High: 0.5, Step: 0.1}, 1},
	} {
		got, err := tc.sp.Points()
		if err != nil || got != tc.want {
			t.Errorf("%+v: %d points (%v), want %d", tc.sp, got, err, tc.want)
		}
		if got > 0 && tc.sp.At(got-1, got) != tc.sp.High {
			t.Errorf("%+v: last point %g, want %g", tc.sp, tc.sp.At(got-1, got), tc.sp.High)
		}
	}
	for _, bad := range []SweepSpec{{Low: 1, High: 0, Step: 0.1}, {Low: 0, High: 1, Step: 0}, {Low: 0, High: 1, Step: -1}} {
		if _, err := bad.Points(); err == nil {
			t.Errorf("%+v accepted", bad)
		}
	}
}

// TestSweepAllocations checks that a warm sweep allocates nothing per
// point.
func TestSweepAllocations(t *testing.T) {
	c := diffPair(40e-6, 20e-6, 1e-6)
	s, err := NewSolver(c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	res := &Result{}
	sp := SweepSpec{Low: 1.2, High: 2.0, Step: 0.001}
	if err := s.Sweep(sp, res); err != nil {
		t.Fatal(err)
	}
	allocs := testing.AllocsPerRun(5, func() {
		if err := s.Sweep(sp, res); err != nil {
			t.Fatal(err)
		}
	})
	if allocs != 0 {
		t.Errorf("a warm %d-point sweep allocates %v times, want 0", res.Len(), allocs)
	}
}

// TestSweepParallel checks that a sweep split into segments gives the
// points of a single sweep (to the Newton tolerance), and the same bits
// whatever the number of workers.
func TestSweepParallel(t *testing.T) {
	c := diffPair(40e-6, 20e-6, 1e-6)
	sp := SweepSpec{Low: 1.2, High: 2.0, Step: 0.8 / (3*SplitPoints/2 + 17)}
	solve := func(workers int) *Result {
		s, err := NewSolver(c, Options{})
		if err != nil {
			t.Fatal(err)
		}
		res := &Result{}
		if workers == 0 {
			err = s.Sweep(sp, res)
		} else {
			err = s.SweepParallel(sp, res, workers)
		}
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	one, w1, w3 := solve(0), solve(1), solve(3)
	if one.Len() != w1.Len() || one.Len() != w3.Len() {
		t.Fatalf("point counts %d, %d, %d", one.Len(), w1.Len(), w3.Len())
	}
	for i := range one.VCM {
		if w1.GM[i] != w3.GM[i] || w1.Probe[1][i] != w3.Probe[1][i] {
			t.Fatalf("point %d: 1 and 3 workers differ: gm %v vs %v", i, w1.GM[i], w3.GM[i])
		}
		// Segments start from a solution one Newton step further
		// converged than the single sweep's; both meet the voltage
		// tolerance (1e-6·|v| + 1e-7 V), which moves gm by about
		// δV/V_ov ≈ 1e-6 of itself.
		if !near(w1.GM[i], one.GM[i], 1e-6, 0) || !near(w1.Probe[1][i], one.Probe[1][i], 1e-6, 1e-15) {
			t.Fatalf("point %d: segmented gm %v, single sweep %v", i, w1.GM[i], one.GM[i])
		}
	}
}

// TestLongNewtonConverges runs a solve far past the iteration at which
// steps are damped (a 20 mV MaxStep from 0 V) and checks that it still
// converges, to the square-law answer of TestDiodeConnected's first case.
func TestLongNewtonConverges(t *testing.T) {
	nm, _ := squareLaw()
	c := New("slow diode", t27)
	vdd, g := c.Node("vdd"), c.Node("g")
	geom, iref := device.Geometry{W: 10e-6, L: 1e-6}, 10e-6
	c.AddVSource("VDD", vdd, Ground, Const(3), true)
	c.AddMosfet("M1", g, g, Ground, Ground, nm, geom)
	c.AddISource("I1", vdd, g, Const(iref), false)
	s, err := NewSolver(c, Options{MaxStep: 0.02, MaxIter: 400})
	if err != nil {
		t.Fatal(err)
	}
	if !s.newton(0, 0, 1, 0, 400) {
		t.Fatal("no convergence")
	}
	if s.Iterations() <= 2*dampAfter {
		t.Fatalf("converged in %d iterations; the test wants a solve well past the damping point %d", s.Iterations(), dampAfter)
	}
	vgs := nm.VTO
	for k := 0; k < 50; k++ {
		vgs = nm.VTO + math.Sqrt(2*(iref-1e-12*vgs)/(nm.KP*geom.W/geom.L))
	}
	if got := s.v[s.sys.idx[g]]; !near(got, vgs, 1e-9, 1e-9) {
		t.Errorf("V_GS = %.12g V after %d iterations, square law %.12g V", got, s.Iterations(), vgs)
	}
}
