package device

import (
	"math"
	"testing"
)

// TestNoiseErrors: a bad noise section names its field and line; a file
// without one has no flicker coefficients; one with them reads them.
func TestNoiseErrors(t *testing.T) {
	base := "name: x\nmodel: level1\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n"
	checkSectionErrors(t, base, []sectionError{
		{"out of range", "noise:\n  nmos: {kf: 1e-10, af: 1, tox: 4nm}\n  pmos: {kf: 1e-29, af: 1, tox: 4nm}\n", "kf", 6},
		{"wrong unit", "noise:\n  nmos: {kf: 1e-29, af: 1, tox: 4V}\n  pmos: {kf: 1e-29, af: 1, tox: 4nm}\n", "tox", 6},
		{"missing coefficient", "noise:\n  nmos: {kf: 1e-29, af: 1}\n  pmos: {kf: 1e-29, af: 1, tox: 4nm}\n", "tox", 6},
		{"missing device", "noise:\n  nmos: {kf: 1e-29, af: 1, tox: 4nm}\n", "pmos", 5},
		{"unknown key", "noise:\n  nmos: {kf: 1e-29, af: 1, tox: 4nm, ef: 1}\n  pmos: {kf: 1e-29, af: 1, tox: 4nm}\n", "ef", 6},
	})
	p, err := ReadProcess("x.yaml", []byte(base))
	if err != nil {
		t.Fatal(err)
	}
	if p.Noise.Given {
		t.Errorf("a file without a noise section has coefficients %+v", p.Noise)
	}
	q, err := ReadProcess("x.yaml", []byte(base+"noise: {nmos: {kf: 2e-29, af: 1.2, tox: 5nm}, pmos: {kf: 1e-29, af: 1, tox: 6nm}}\n"))
	if err != nil {
		t.Fatal(err)
	}
	if n := q.Noise.For(NMOS); !q.Noise.Given || n.KF != 2e-29 || n.AF != 1.2 || n.TOX != 5e-9 || q.Noise.For(PMOS).TOX != 6e-9 {
		t.Errorf("noise read as %+v", q.Noise)
	}
	// The flicker density's form: KF·|I_D|^AF/(C_ox²·W·L_eff), with
	// C_ox = 3.9·ε₀/TOX (the form ngspice's level 1 uses; checked
	// against ngspice in report's TestNoiseAgainstNgspice).
	c := q.Noise.For(NMOS)
	g := Geometry{W: 10e-6, L: 1e-6}
	cox := 3.9 * 8.8541878128e-12 / 5e-9
	want := 2e-29 * math.Pow(1e-4, 1.2) / (cox * cox * 10e-6 * 0.9e-6)
	if got := c.Flicker(g, 0.05e-6, -1e-4); math.Abs(got-want) > 1e-12*want {
		t.Errorf("flicker %g, want %g", got, want)
	}
}
