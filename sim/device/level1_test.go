package device

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestLevel1SquareLaw checks the Shichman–Hodges closed forms at Tnom.
func TestLevel1SquareLaw(t *testing.T) {
	for _, pol := range []Type{NMOS, PMOS} {
		s := float64(pol)
		c := &Level1{Polarity: pol, VTO: s * 0.5, KP: 120e-6, Gamma: 0.4, Phi: 0.7, LD: 0.1e-6, TnomK: ZeroC + 27}
		g := Geometry{W: 8e-6, L: 1.2e-6, M: 3}
		inst, err := c.Instance(g, c.TnomK)
		if err != nil {
			t.Fatal(err)
		}
		wl := g.M * g.W / (g.L - 2*c.LD)
		vs := 0.4
		for _, vgs := range []float64{0.9, 1.2, 1.6, 2.0} { // all above VT(VBS)
			for _, vbs := range []float64{0, -0.5, -1.5} {
				// Threshold with body effect, VT = VTO + γ(√(2φF − VBS) − √(2φF))
				// (Razavi, Design of Analog CMOS Integrated Circuits, ch. 2).
				vt := 0.5 + c.Gamma*(math.Sqrt(c.Phi-vbs)-math.Sqrt(c.Phi))
				vov := vgs - vt
				// Saturation (VDS well above VGS − VT), lambda = 0.
				vd, vg, vb := vs+s*2.5, vs+s*vgs, vs+s*vbs
				e := inst.Eval(vd, vg, vs, vb)
				id := s * e.ID
				// Square law ID = KP/2·W/L·(VGS − VT)² (Razavi).
				if want := 0.5 * c.KP * wl * vov * vov; math.Abs(id-want) > 1e-12*want {
					t.Errorf("%s vgs=%g vbs=%g: ID = %g, square law %g", pol, vgs, vbs, id, want)
				}
				// gm = √(2·KP·(W/L)·ID) = 2·ID/(VGS − VT) (Razavi).
				if want := math.Sqrt(2 * c.KP * wl * id); math.Abs(e.GG-want) > 1e-12*want {
					t.Errorf("%s vgs=%g vbs=%g: gm = %g, √(2·KP·W/L·ID) = %g", pol, vgs, vbs, e.GG, want)
				}
				if want := 2 * id / vov; math.Abs(e.GG-want) > 1e-12*want {
					t.Errorf("%s vgs=%g vbs=%g: gm = %g, 2·ID/(VGS−VT) = %g", pol, vgs, vbs, e.GG, want)
				}
				// gmb = gm·γ/(2√(2φF − VBS)) (Razavi).
				if want := e.GG * c.Gamma / (2 * math.Sqrt(c.Phi-vbs)); math.Abs(e.GB-want) > 1e-12*want {
					t.Errorf("%s vgs=%g vbs=%g: gmb = %g, want %g", pol, vgs, vbs, e.GB, want)
				}
				op := inst.Op(vd, vg, vs, vb)
				if math.Abs(op.VTH-s*vt) > 1e-12 || math.Abs(op.VDSAT-s*vov) > 1e-12 || op.Region != Saturation {
					t.Errorf("%s vgs=%g vbs=%g: Op VTH %g VDSAT %g %s, want %g %g saturation", pol, vgs, vbs, op.VTH, op.VDSAT, op.Region, s*vt, s*vov)
				}
				// Triode, VDS = VOV/3: ID = KP·W/L·(VOV·VDS − VDS²/2) (Razavi).
				vds := vov / 3
				e = inst.Eval(vs+s*vds, vg, vs, vb)
				if want := c.KP * wl * (vov*vds - vds*vds/2); math.Abs(s*e.ID-want) > 1e-12*want {
					t.Errorf("%s vgs=%g vbs=%g triode: ID = %g, want %g", pol, vgs, vbs, s*e.ID, want)
				}
				if op := inst.Op(vs+s*vds, vg, vs, vb); op.Region != Triode {
					t.Errorf("%s vgs=%g triode: region %s", pol, vgs, op.Region)
				}
			}
		}
		// Below threshold the level-1 channel carries nothing (Shichman–Hodges).
		e := inst.Eval(vs+s*1, vs+s*0.3, vs, vs)
		if e != (Eval{}) {
			t.Errorf("%s off: %+v, want zero", pol, e)
		}
		if op := inst.Op(vs+s*1, vs+s*0.3, vs, vs); op.Region != Off || op.VDSAT != 0 {
			t.Errorf("%s off: region %s VDSAT %g", pol, op.Region, op.VDSAT)
		}
	}
}

// TestLevel1ChannelLengthModulation checks the (1 + λ·VDS) factor in both
// regions and the saturation output conductance gds = λ·ID/(1 + λ·VDS)
// (Razavi, ch. 2).
func TestLevel1ChannelLengthModulation(t *testing.T) {
	c := &Level1{Polarity: NMOS, VTO: 0.5, KP: 100e-6, Phi: 0.7, Lambda: 0.08, TnomK: 300}
	inst, err := c.Instance(Geometry{W: 5e-6, L: 1e-6}, 300)
	if err != nil {
		t.Fatal(err)
	}
	beta := 100e-6 * 5.0
	for _, vds := range []float64{0.1, 0.4, 1.0, 2.0} {
		vov := 0.6
		e := inst.Eval(vds, 0.5+vov, 0, 0)
		var want float64
		if vds >= vov {
			want = beta / 2 * vov * vov * (1 + c.Lambda*vds)
			if g := c.Lambda * want / (1 + c.Lambda*vds); math.Abs(e.GD-g) > 1e-12*g {
				t.Errorf("vds=%g: gds = %g, λ·ID/(1+λ·VDS) = %g", vds, e.GD, g)
			}
		} else {
			want = beta * (vov*vds - vds*vds/2) * (1 + c.Lambda*vds)
		}
		if math.Abs(e.ID-want) > 1e-12*want {
			t.Errorf("vds=%g: ID = %g, want %g", vds, e.ID, want)
		}
	}
}

// TestLevel1SourceDrainSwap checks that reversing VDS swaps the roles of
// source and drain: the device is symmetric (common practice, no source).
func TestLevel1SourceDrainSwap(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, c := range demoLevel1Cards() {
		inst, err := c.Instance(Geometry{W: 4e-6, L: 0.8e-6}, ZeroC+60)
		if err != nil {
			t.Fatal(err)
		}
		for range 200 {
			vd, vg, vs, vb := 3*r.Float64()-1, 3*r.Float64()-1, 3*r.Float64()-1, 3*r.Float64()-1
			a, b := inst.Eval(vd, vg, vs, vb), inst.Eval(vs, vg, vd, vb)
			// Equal up to the rounding of the swapped voltage differences.
			gsum := math.Abs(a.GD) + math.Abs(a.GG) + math.Abs(a.GS) + math.Abs(a.GB)
			tol := 1e-12 * gsum
			if math.Abs(a.ID+b.ID) > 1e-12*math.Abs(a.ID)+1e-15*gsum || math.Abs(a.GD+b.GS) > tol || math.Abs(a.GS+b.GD) > tol ||
				math.Abs(a.GG+b.GG) > tol || math.Abs(a.GB+b.GB) > tol {
				t.Fatalf("%s: Eval(%g,%g,%g,%g) = %+v, swapped %+v", c.Polarity, vd, vg, vs, vb, a, b)
			}
		}
	}
}

// TestLevel1Temperature checks the temperature laws: with LinearTemp the
// closed forms of cards.go; with the SPICE law, no change at Tnom and the
// (T/Tnom)^-1.5 mobility law (SPICE level-1 temperature law, as documented
// for ngspice's MOS1 model).
func TestLevel1Temperature(t *testing.T) {
	lin := &Level1{Polarity: PMOS, VTO: -0.5, KP: 60e-6, Gamma: 0.3, Phi: 0.8, TnomK: 300, LinearTemp: true, TCV: 1.5e-3, BEX: -1.6}
	for _, tk := range []float64{250, 300, 400} {
		_, vto, phi, kp := lin.temperature(tk)
		if want := -0.5 + 1.5e-3*(tk-300); math.Abs(vto-want) > 1e-15 {
			t.Errorf("linear VTO(%g K) = %.15g, want %.15g", tk, vto, want)
		}
		if want := 60e-6 * math.Pow(tk/300, -1.6); math.Abs(kp-want) > 1e-15*want {
			t.Errorf("linear KP(%g K) = %g, want %g", tk, kp, want)
		}
		if phi != 0.8 {
			t.Errorf("linear PHI(%g K) = %g, want 0.8", tk, phi)
		}
	}
	sp := demoLevel1Cards()["nsp"]
	_, vto, phi, kp := sp.temperature(sp.TnomK)
	if math.Abs(vto-sp.VTO) > 1e-15 || math.Abs(phi-sp.Phi) > 1e-15 || kp != sp.KP {
		t.Errorf("SPICE law at Tnom: VTO %g PHI %g KP %g, want the card's %g %g %g", vto, phi, kp, sp.VTO, sp.Phi, sp.KP)
	}
	_, vhot, phot, khot := sp.temperature(ZeroC + 125)
	if want := sp.KP * math.Pow((ZeroC+125)/sp.TnomK, -1.5); math.Abs(khot-want) > 1e-15*want {
		t.Errorf("SPICE law KP(125 C) = %g, want %g", khot, want)
	}
	// Silicon: the surface potential and the threshold of an NMOS fall as
	// temperature rises (common practice, no source).
	if !(phot < sp.Phi && vhot < sp.VTO) {
		t.Errorf("SPICE law at 125 C: PHI %g, VTO %g; want both below the 27 C values %g, %g", phot, vhot, sp.Phi, sp.VTO)
	}
}

// TestLevel1SpiceCard checks the exported card text.
func TestLevel1SpiceCard(t *testing.T) {
	c := &Level1{Polarity: PMOS, VTO: -0.45, KP: 70e-6, Gamma: 0.45, Phi: 0.8, Lambda: 0.06, LD: 0.1e-6, TnomK: ZeroC + 27}
	got := c.SpiceCard("pch", ZeroC+85)
	want := ".model pch pmos (level=1 vto=-0.45 kp=7e-05 gamma=0.45 phi=0.8 lambda=0.06 ld=1e-07 tnom=27)"
	if got != want {
		t.Errorf("SPICE-law card\n got %s\nwant %s", got, want)
	}
	c.LinearTemp, c.TCV, c.BEX = true, 2e-3, -1.5
	got = c.SpiceCard("pch", ZeroC+85)
	_, vto, _, kp := c.temperature(ZeroC + 85)
	for _, part := range []string{"vto=" + spiceNumber(vto), "kp=" + spiceNumber(kp), "phi=0.8", "tnom=" + spiceNumber(85+ZeroC-ZeroC)} {
		if !strings.Contains(got, part) {
			t.Errorf("linear-law card %q lacks %q", got, part)
		}
	}
	if math.Abs(vto-(-0.45+2e-3*58)) > 1e-15 {
		t.Errorf("exported PMOS VTO at 85 C = %g, want %g", vto, -0.45+2e-3*58)
	}
}

// TestLevel1Derivatives checks every analytic derivative against a central
// finite difference (step 1e-6 V: truncation error h²·∂³ID/∂V³/6 and rounding
// error ε·ID/h both stay far below 1e-6 of the conductances) at random bias
// points of both polarities, in every region including reversed VDS and a
// forward-biased source junction beyond the floor of the linearised body
// effect.
func TestLevel1Derivatives(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for name, c := range demoLevel1Cards() {
		for _, tk := range []float64{ZeroC - 40, ZeroC + 27, ZeroC + 125} {
			inst, err := c.Instance(Geometry{W: 6e-6, L: 0.7e-6, M: 2}, tk)
			if err != nil {
				t.Fatal(err)
			}
			s := float64(c.Polarity)
			for range 300 {
				vs := 0.5
				v := [4]float64{vs + s*(4*r.Float64()-2), vs + s*(3*r.Float64()-0.5), vs, vs + s*(4.5*r.Float64()-2.5)}
				checkDerivatives(t, fmt.Sprintf("level1 %s %g K", name, tk), inst, v, 1e-6, 1e-6)
			}
		}
	}
}

// checkDerivatives compares Eval's derivatives at v = (vd, vg, vs, vb) with
// central differences of step h, to rel × the largest conductance there.
func checkDerivatives(t *testing.T, what string, inst Instance, v [4]float64, h, rel float64) {
	t.Helper()
	e := inst.Eval(v[0], v[1], v[2], v[3])
	got := [4]float64{e.GD, e.GG, e.GS, e.GB}
	scale := 0.0
	for _, g := range got {
		scale = math.Max(scale, math.Abs(g))
	}
	// The current depends only on voltage differences (device.go).
	if sum := e.GD + e.GG + e.GS + e.GB; math.Abs(sum) > 1e-12*scale {
		t.Errorf("%s at %v: GD+GG+GS+GB = %g", what, v, sum)
	}
	for k := range 4 {
		up, dn := v, v
		up[k] += h
		dn[k] -= h
		fd := (inst.Eval(up[0], up[1], up[2], up[3]).ID - inst.Eval(dn[0], dn[1], dn[2], dn[3]).ID) / (2 * h)
		if math.Abs(got[k]-fd) > rel*scale+1e-30 {
			t.Errorf("%s at %v: ∂ID/∂%c = %.10g, finite difference %.10g", what, v, "dgsb"[k], got[k], fd)
		}
	}
}
