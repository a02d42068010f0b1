package sim

import (
	"math"
	"strings"
	"testing"

	"pairsmith/sim/device"
)

// sameResults reports where two sweeps differ in any bit, or "".
func sameResults(a, b *Result) string {
	eq := func(x, y []float64) bool {
		if len(x) != len(y) {
			return false
		}
		for i := range x {
			if math.Float64bits(x[i]) != math.Float64bits(y[i]) {
				return false
			}
		}
		return true
	}
	switch {
	case !eq(a.VCM, b.VCM):
		return "vcm"
	case !eq(a.GM, b.GM):
		return "gm"
	case !eq(a.X, b.X):
		return "unknowns"
	case len(a.Probe) != len(b.Probe):
		return "probe count"
	}
	for k := range a.Probe {
		if !eq(a.Probe[k], b.Probe[k]) {
			return "probe " + string(rune('0'+k))
		}
	}
	return ""
}

// variant is railStage with other values everywhere Rebind allows them:
// geometries, cards (another model kind), source values, probe
// coefficients, temperature and guess.
func variant(ekv bool) *Circuit {
	c := railStage(ekv, 1.7, 0.6)
	c.Title = "rail-to-rail stage, resized"
	c.TempK = 358.15
	for i := range c.VSources {
		switch v := &c.VSources[i]; v.Name {
		case "VDN1", "VDN2":
			v.Value.DC = 1.5
		case "Vvref":
			v.Value.DC = 0.9
		}
	}
	c.ISources[0].Value.DC = 7e-6
	c.Probes[3].Terms[0].Coef = -1.9
	c.Guess[c.Node("sw")] = 0.35
	return c
}

// TestRebindBitIdentical checks that a solver rebound to a circuit of the
// same shape sweeps, solves and reports devices exactly as one compiled
// from that circuit, back and forth between circuits of both model kinds,
// and that its results still solve the circuit: the sweep's gm matches a
// central difference of the output current over vid (the definition of
// the derivative).
func TestRebindBitIdentical(t *testing.T) {
	sp := SweepSpec{Low: 0, High: 1.8, Step: 0.005}
	sweep := func(s *Solver) *Result {
		t.Helper()
		res := &Result{}
		if err := s.Sweep(sp, res); err != nil {
			t.Fatal(err)
		}
		return res
	}
	fresh := func(c *Circuit) *Solver {
		t.Helper()
		s, err := NewSolver(c, Options{})
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	circuits := []*Circuit{railStage(false, 1, 1), variant(false), variant(true), railStage(true, 1, 1), railStage(false, 1, 1)}
	s := fresh(circuits[0])
	for k, c := range circuits {
		if k > 0 {
			if err := s.Rebind(c); err != nil {
				t.Fatalf("rebind to circuit %d: %v", k, err)
			}
		}
		ref := fresh(c)
		got, want := sweep(s), sweep(ref)
		if d := sameResults(got, want); d != "" {
			t.Errorf("circuit %d (%s): rebound and fresh sweeps differ in %s", k, c.Title, d)
		}
		par, wantPar := &Result{}, &Result{}
		long := SweepSpec{Low: 0, High: 1.8, Step: 1.8 / (SplitPoints + 5)}
		if err := s.SweepParallel(long, par, 2); err != nil {
			t.Fatal(err)
		}
		if err := ref.SweepParallel(long, wantPar, 2); err != nil {
			t.Fatal(err)
		}
		if d := sameResults(par, wantPar); d != "" {
			t.Errorf("circuit %d: rebound and fresh segmented sweeps differ in %s", k, d)
		}
		p, err := s.Solve(0.9, 1e-3)
		if err != nil {
			t.Fatal(err)
		}
		q, err := ref.Solve(0.9, 1e-3)
		if err != nil {
			t.Fatal(err)
		}
		if p.GM != q.GM || p.Probe[1] != q.Probe[1] {
			t.Errorf("circuit %d: Solve gives gm %v, i_n %v; fresh %v, %v", k, p.GM, p.Probe[1], q.GM, q.Probe[1])
		}
		for i, op := range s.Devices(p) {
			if op != ref.Devices(q)[i] {
				t.Errorf("circuit %d: %s: rebound %+v, fresh %+v", k, op.Name, op.OpPoint, ref.Devices(q)[i].OpPoint)
			}
		}
		// The exact gm of the rebound solver against a central difference
		// of its own output over vid, at the middle of the sweep.
		const h = 1e-5
		up, err := s.Solve(0.9, h)
		if err != nil {
			t.Fatal(err)
		}
		dn, err := s.Solve(0.9, -h)
		if err != nil {
			t.Fatal(err)
		}
		mid, err := s.Solve(0.9, 0)
		if err != nil {
			t.Fatal(err)
		}
		if fd := (up.Probe[0] - dn.Probe[0]) / (2 * h); !near(mid.GM, fd, 1e-4, 1e-9) {
			t.Errorf("circuit %d: gm %.8g S, central difference %.8g S", k, mid.GM, fd)
		}
	}
}

// TestRebindRefused checks that a circuit of another shape, or with
// values that do not compile, is refused with an error naming what
// differs, and that the refused solver still gives what it gave before.
func TestRebindRefused(t *testing.T) {
	for _, tc := range []struct {
		name, want string
		change     func(c *Circuit)
	}{
		{"extra node", "circuit", func(c *Circuit) { c.AddResistor("RX", c.Node("x"), Ground, 1e3) }},
		{"moved terminal", "transistor 7 (M7)", func(c *Circuit) { c.Mosfets[6].G = c.Node("bp") }},
		{"renamed transistor", "transistor 2 (MB)", func(c *Circuit) { c.Mosfets[1].Name = "MB" }},
		{"extra transistor", "circuit", func(c *Circuit) {
			nm, _ := demoCards(false)
			c.AddMosfet("M10", c.Node("sw"), c.Node("sw"), Ground, Ground, nm, device.Geometry{W: 1e-6, L: 1e-6})
		}},
		{"renamed source", "voltage source 4 (VD1)", func(c *Circuit) { c.VSources[3].Name = "VD1" }},
		{"source starts to sweep", "voltage source 8 (Vvref)", func(c *Circuit) { c.VSources[7].Value.CM = 0.5 }},
		{"current source starts to sweep", "current source 1 (Ibp)", func(c *Circuit) { c.ISources[0].Value.DM = 1e-6 }},
		{"input stops moving with the inputs", "VINP", func(c *Circuit) { c.VSources[1].Value.CM, c.VSources[1].Value.DM = 0, 0 }},
		{"probe reads another source", "probe 2 (i_n)", func(c *Circuit) { c.Probes[1].Terms[0].Source = "VDP1" }},
		{"other output", "circuit", func(c *Circuit) { c.Output = "i_n" }},
		{"geometry an instance refuses", "transistor M3", func(c *Circuit) { c.Mosfets[2].Geom.L = 0 }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := NewSolver(railStage(false, 1, 1), Options{})
			if err != nil {
				t.Fatal(err)
			}
			sp := SweepSpec{Low: 0, High: 1.8, Step: 0.01}
			before := &Result{}
			if err := s.Sweep(sp, before); err != nil {
				t.Fatal(err)
			}
			c := railStage(false, 1.2, 1.1)
			tc.change(c)
			err = s.Rebind(c)
			if err == nil {
				t.Fatal("rebound without error")
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %q does not name %q", err, tc.want)
			}
			after := &Result{}
			if err := s.Sweep(sp, after); err != nil {
				t.Fatal(err)
			}
			if d := sameResults(before, after); d != "" {
				t.Errorf("after the refusal the sweep differs in %s", d)
			}
		})
	}
	s, err := NewSolver(railStage(false, 1, 1), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Rebind(nil); err == nil {
		t.Error("a nil circuit rebound without error")
	}
}

// TestRebindAllocations checks that rebinding allocates only the
// transistors' instances, one each.
func TestRebindAllocations(t *testing.T) {
	a, b := railStage(false, 1, 1), variant(false)
	s, err := NewSolver(a, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Rebind(b); err != nil { // the scratch buffers, once
		t.Fatal(err)
	}
	next := a
	allocs := testing.AllocsPerRun(20, func() {
		if err := s.Rebind(next); err != nil {
			t.Fatal(err)
		}
		next = map[*Circuit]*Circuit{a: b, b: a}[next]
	})
	// The map literal above allocates too (at most a few); the rebind
	// itself one instance per transistor.
	if limit := float64(len(a.Mosfets) + 4); allocs > limit {
		t.Errorf("a rebind allocates %v times, want at most %v (one instance per transistor)", allocs, limit)
	}
}

// linear is TestLinearElements' circuit with its resistances scaled by r,
// its source by v and its controlled sources' gains by g.
func linear(r, v, g float64) *Circuit {
	c := New("linear", t27)
	a, b, x, y, z := c.Node("a"), c.Node("b"), c.Node("x"), c.Node("y"), c.Node("z")
	c.AddVSource("V1", a, Ground, Drive{DC: 2 * v, CM: 1}, true)
	c.AddResistor("R1", a, b, r*1e3)
	c.AddResistor("R2", b, Ground, r*1e3)
	c.AddVSource("V2", x, b, Drive{DC: 0.5 * v, DM: 1}, false)
	c.AddResistor("R3", x, Ground, r*2e3)
	c.AddVCVS("E1", y, Ground, x, Ground, 3*g)
	c.AddResistor("R4", y, Ground, r*1e3)
	c.AddVCCS("G1", Ground, z, y, Ground, 1e-3*g)
	c.AddResistor("R5", z, Ground, r*100)
	c.AddProbe("i1", Term{Source: "V1", Coef: 1})
	c.AddProbe("i2", Term{Source: "V2", Coef: 1})
	c.Output = "i2"
	return c
}

// TestRebindLinear checks rebinding where the constant work array
// changes (resistances, gains, a floating source's drive): bit for bit
// what a fresh solver gives, and the voltages of nodal analysis by hand
// (Kirchhoff's laws, as in TestLinearElements, with the values scaled).
func TestRebindLinear(t *testing.T) {
	s, err := NewSolver(linear(1, 1, 1), Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range [][3]float64{{2, 1, 1}, {1, 1.5, 0.5}, {0.5, 0.8, 2}, {1, 1, 1}} {
		c := linear(tc[0], tc[1], tc[2])
		if err := s.Rebind(c); err != nil {
			t.Fatal(err)
		}
		ref, err := NewSolver(c, Options{})
		if err != nil {
			t.Fatal(err)
		}
		p, err := s.Solve(0.1, 0.02)
		if err != nil {
			t.Fatal(err)
		}
		q, err := ref.Solve(0.1, 0.02)
		if err != nil {
			t.Fatal(err)
		}
		for i := range p.V {
			if p.V[i] != q.V[i] {
				t.Errorf("%v: variable %d rebound %v, fresh %v", tc, i, p.V[i], q.V[i])
			}
		}
		if p.GM != q.GM || p.Probe[0] != q.Probe[0] || p.Probe[1] != q.Probe[1] {
			t.Errorf("%v: probes %v gm %v, fresh %v gm %v", tc, p.Probe, p.GM, q.Probe, q.GM)
		}
		// KCL at b, with R3 hanging off it through V2 (x = b + w):
		// (va − b)/R1 = b/R2 + (b + w)/R3, R1 = R2 = R, R3 = 2R.
		va, w := 2*tc[1]+0.1, 0.5*tc[1]+0.02
		vb := (va - w/2) / 2.5
		vy := 3 * tc[2] * (vb + w)
		vz := 1e-3 * tc[2] * vy * tc[0] * 100
		for _, chk := range []struct {
			node      string
			got, want float64
		}{{"b", p.Voltage(c.Node("b")), vb}, {"y", p.Voltage(c.Node("y")), vy}, {"z", p.Voltage(c.Node("z")), vz}} {
			if !near(chk.got, chk.want, 1e-9, 1e-12) {
				t.Errorf("%v: V(%s) = %.12g, by hand %.12g", tc, chk.node, chk.got, chk.want)
			}
		}
	}
}

// TestRebindFrozenDevice rebinds a circuit whose only change is a
// transistor between fixed nodes, whose inputs are bitwise the same in
// both circuits: the rebound solver must evaluate the new device (its
// current shows in the supply probe) rather than recall the old one's,
// as a fresh solver does, and draw the square-law current
// β/2·(V_GS − V_T)² (Razavi, Design of Analog CMOS Integrated Circuits,
// ch. 2) for the size it was given.
func TestRebindFrozenDevice(t *testing.T) {
	nm, _ := squareLaw()
	leak := func(w float64) *Circuit {
		c := diffPair(40e-6, 20e-6, 1e-6)
		g := c.Node("g")
		c.AddVSource("VG", g, Ground, Const(0.7), true)
		c.AddMosfet("ML", c.Node("vdd"), g, Ground, Ground, nm, device.Geometry{W: w, L: 1e-6})
		return c
	}
	s, err := NewSolver(leak(1e-6), Options{})
	if err != nil {
		t.Fatal(err)
	}
	sp := SweepSpec{Low: 1.2, High: 2.0, Step: 0.01}
	first := &Result{}
	if err := s.Sweep(sp, first); err != nil {
		t.Fatal(err)
	}
	c := leak(3e-6)
	if err := s.Rebind(c); err != nil {
		t.Fatal(err)
	}
	ref, err := NewSolver(c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	got, want := &Result{}, &Result{}
	if err := s.Sweep(sp, got); err != nil {
		t.Fatal(err)
	}
	if err := ref.Sweep(sp, want); err != nil {
		t.Fatal(err)
	}
	if d := sameResults(got, want); d != "" {
		t.Errorf("rebound and fresh sweeps differ in %s", d)
	}
	ov := 0.7 - nm.VTO
	for i := range got.VCM {
		extra := got.Probe[1][i] - first.Probe[1][i]
		if w := 0.5 * nm.KP * 2 * ov * ov; !near(extra, w, 1e-6, 1e-11) {
			t.Errorf("vcm %.2f: the wider device draws %g A more, square law %g A", got.VCM[i], extra, w)
		}
	}
}
