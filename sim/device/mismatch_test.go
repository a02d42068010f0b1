package device

import (
	"math"
	"testing"
)

// TestPelgrom: σ(ΔV_T) = A_VT/√(W·L·M) and σ(Δβ/β) = A_β/√(W·L·M)
// (Pelgrom, Duinmaijer, Welbers, IEEE JSSC 1989), here for demo18's NMOS
// coefficients (5 mV·µm, 1 %·µm) and a 10 µm / 1 µm device with m = 2:
// 5 mV/√20 = 1.118 mV and 1 %/√20 = 0.2236 %.
func TestPelgrom(t *testing.T) {
	p, _ := Builtin("demo18")
	if !p.Mismatch.Given {
		t.Fatal("demo18 has no mismatch coefficients")
	}
	pg := p.Mismatch.For(NMOS)
	g := Geometry{W: 10e-6, L: 1e-6, M: 2}
	if got, want := pg.SigmaVT(g), 5e-3/math.Sqrt(20); math.Abs(got-want) > 1e-12*want {
		t.Errorf("σ(ΔV_T) = %g V, want %g V", got, want)
	}
	if got, want := pg.SigmaBeta(g), 0.01/math.Sqrt(20); math.Abs(got-want) > 1e-12*want {
		t.Errorf("σ(Δβ/β) = %g, want %g", got, want)
	}
	// Four times the area halves both (the 1/√area law).
	big := Geometry{W: 20e-6, L: 2e-6, M: 2}
	if r := pg.SigmaVT(g) / pg.SigmaVT(big); math.Abs(r-2) > 1e-12 {
		t.Errorf("σ ratio for four times the area %g, want 2", r)
	}
	for _, name := range BuiltinNames() {
		q, _ := Builtin(name)
		if !q.Mismatch.Given || q.Mismatch.P.AVT <= q.Mismatch.N.AVT*0.5 {
			t.Errorf("%s: mismatch %+v, want both device types' coefficients", name, q.Mismatch)
		}
	}
}

// TestMismatchErrors: a bad mismatch section is refused at its line,
// naming the field; a file without the section has none.
func TestMismatchErrors(t *testing.T) {
	base := "name: x\nmodel: level1\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n"
	checkSectionErrors(t, base, []sectionError{
		{"out of range", "mismatch:\n  nmos: {avt: 500mV*um, abeta: 1%*um}\n  pmos: {avt: 5mV*um, abeta: 1%*um}\n", "avt", 6},
		{"wrong unit", "mismatch:\n  nmos: {avt: 5mV, abeta: 1%*um}\n  pmos: {avt: 5mV*um, abeta: 1%*um}\n", "avt", 6},
		{"missing coefficient", "mismatch:\n  nmos: {avt: 5mV*um}\n  pmos: {avt: 5mV*um, abeta: 1%*um}\n", "abeta", 6},
		{"missing device", "mismatch:\n  nmos: {avt: 5mV*um, abeta: 1%*um}\n", "pmos", 5},
		{"unknown key", "mismatch:\n  nmos: {avt: 5mV*um, abeta: 1%*um, akf: 1}\n  pmos: {avt: 5mV*um, abeta: 1%*um}\n", "akf", 6},
	})
	p, err := ReadProcess("x.yaml", []byte(base))
	if err != nil {
		t.Fatal(err)
	}
	if p.Mismatch.Given {
		t.Errorf("a file without a mismatch section has coefficients %+v", p.Mismatch)
	}
}
