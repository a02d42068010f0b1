package device

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"pairsmith/internal/ngspice"
	"pairsmith/units"
)

// TestBuiltinCorners: every built-in demo process defines tt, ff, ss, fs
// and sf, tt first and unshifted; ff makes both device types faster
// (smaller |VTO|, larger kp), ss both slower, fs the NMOS fast and the
// PMOS slow, sf the reverse (the corners' usual meaning: common practice,
// no source).
func TestBuiltinCorners(t *testing.T) {
	faster := func(a, b Model) bool { // a is faster than b
		va, ka := a.(thresholdCard).vtoKP()
		vb, kb := b.(thresholdCard).vtoKP()
		return math.Abs(va) < math.Abs(vb) && ka > kb
	}
	for _, name := range BuiltinNames() {
		p, _ := Builtin(name)
		if got := p.CornerNames(); !slices.Equal(got, []string{"tt", "ff", "ss", "fs", "sf"}) {
			t.Fatalf("%s: corners %v, want tt ff ss fs sf", name, got)
		}
		tt, err := p.AtCorner("tt")
		if err != nil {
			t.Fatal(err)
		}
		if fmt.Sprint(tt.N, tt.P) != fmt.Sprint(p.N, p.P) || tt.Corner != "tt" {
			t.Errorf("%s: tt moved the cards", name)
		}
		want := map[string][2]bool{"ff": {true, true}, "ss": {false, false}, "fs": {true, false}, "sf": {false, true}}
		for c, fast := range want {
			q, err := p.AtCorner(c)
			if err != nil {
				t.Fatal(err)
			}
			if q.Corner != c || faster(q.N, p.N) != fast[0] || faster(p.N, q.N) == fast[0] ||
				faster(q.P, p.P) != fast[1] || faster(p.P, q.P) == fast[1] {
				t.Errorf("%s at %s: nmos %+v, pmos %+v against %+v, %+v", name, c, q.N, q.P, p.N, p.P)
			}
		}
		// A corner is taken from the cards as written, also from a copy
		// already at another corner.
		ff, _ := p.AtCorner("ff")
		ss, _ := p.AtCorner("ss")
		ffss, _ := ff.AtCorner("ss")
		if fmt.Sprint(ffss.N, ffss.P) != fmt.Sprint(ss.N, ss.P) {
			t.Errorf("%s: ss from ff %+v %+v, from tt %+v %+v", name, ffss.N, ffss.P, ss.N, ss.P)
		}
		if _, err := p.AtCorner("xx"); err == nil || !strings.Contains(err.Error(), "tt ff ss fs sf") {
			t.Errorf("%s: unknown corner: %v, want an error listing the corners", name, err)
		}
	}
}

// TestCornerSquareLaw: at a corner a level-1 device in saturation carries
// ID = (KP·(1 + dkp)/2)·(W/L)·(|VGS| − (|VTO| + dvt))²·(1 + λ·|VDS|) (the
// textbook square law with the corner's card), for both device types.
func TestCornerSquareLaw(t *testing.T) {
	p, _ := Builtin("demo18-l1")
	c := Corner{Name: "x", N: Shift{DVT: -0.04, DKP: 0.08}, P: Shift{DVT: 0.05, DKP: -0.08}}
	p.Corners = append(p.Corners, c)
	q, err := p.AtCorner("x")
	if err != nil {
		t.Fatal(err)
	}
	g := Geometry{W: 10e-6, L: 1e-6, M: 1}
	for _, side := range []struct {
		t    Type
		card *Level1
		sh   Shift
	}{{NMOS, q.N.(*Level1), c.N}, {PMOS, q.P.(*Level1), c.P}} {
		typ := p.Card(side.t).(*Level1)
		inst, err := side.card.Instance(g, typ.TnomK)
		if err != nil {
			t.Fatal(err)
		}
		s := float64(side.t)
		vgs, vds := 1.0, 1.2
		got := s * inst.Eval(s*vds, s*vgs, 0, 0).ID
		vov := vgs - (math.Abs(typ.VTO) + side.sh.DVT)
		want := typ.KP * (1 + side.sh.DKP) / 2 * g.W / g.L * vov * vov * (1 + typ.Lambda*vds)
		if math.Abs(got-want) > 1e-12*want {
			t.Errorf("%v: ID %.12g A at the corner, square law %.12g A", side.t, got, want)
		}
	}
}

// TestCornerAgainstNgspice: the SPICE card of a corner's level-1 cards
// gives in ngspice (Debian package) the drain current pairsmith computes
// at that corner, within 1e-6 — so a deck exported at a corner simulates
// that corner.
func TestCornerAgainstNgspice(t *testing.T) {
	ngspice.Require(t)
	p, _ := Builtin("demo18-l1")
	g := Geometry{W: 10e-6, L: 1e-6, M: 1}
	var deck strings.Builder
	deck.WriteString("corner check\n.options reltol=1e-9 abstol=1e-16 vntol=1e-12\nvd d 0 1.2\nvg g 0 1.0\nvdp dp 0 -1.2\nvgp gp 0 -1.0\n")
	var vecs []string
	insts := map[string]Instance{}
	for i, c := range p.CornerNames() {
		q, err := p.AtCorner(c)
		if err != nil {
			t.Fatal(err)
		}
		deck.WriteString(q.N.(SpiceCarder).SpiceCard("n"+c, p.TnomK) + "\n")
		deck.WriteString(q.P.(SpiceCarder).SpiceCard("p"+c, p.TnomK) + "\n")
		fmt.Fprintf(&deck, "mn%d d g 0 0 n%s w=10u l=1u\nmp%d dp gp 0 0 p%s w=10u l=1u\n", i, c, i, c)
		vecs = append(vecs, fmt.Sprintf("@mn%d[id]", i), fmt.Sprintf("@mp%d[id]", i))
		for _, tp := range []Type{NMOS, PMOS} {
			inst, err := q.Card(tp).Instance(g, p.TnomK)
			if err != nil {
				t.Fatal(err)
			}
			insts[fmt.Sprintf("%v%d", tp, i)] = inst
		}
	}
	deck.WriteString(".op\n.end\n")
	tab, err := ngspice.Run(deck.String(), vecs...)
	if err != nil {
		t.Fatal(err)
	}
	for i, c := range p.CornerNames() {
		for _, tp := range []Type{NMOS, PMOS} {
			s := float64(tp)
			got := insts[fmt.Sprintf("%v%d", tp, i)].Eval(s*1.2, s*1.0, 0, 0).ID
			vec := fmt.Sprintf("@mn%d[id]", i)
			if tp == PMOS {
				vec = fmt.Sprintf("@mp%d[id]", i)
			}
			// ngspice's @m[id] is in the device's internal sign, the type
			// times the drain current (as in TestLevel1AgainstNgspice);
			// its junctions' gmin current (pA here) is far below 1e-6.
			want := s * tab.Vectors[vec][0]
			if math.Abs(got-want) > 1e-6*math.Abs(want) {
				t.Errorf("%s %v: ID %.9g A, ngspice %.9g A", c, tp, got, want)
			}
		}
	}
}

// TestCornerErrors: a bad corners section is refused at its line, naming
// the field, what was given and what was wanted.
func TestCornerErrors(t *testing.T) {
	base := "name: x\nmodel: level1\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.06V, kp: 70uA/V2}\n"
	checkSectionErrors(t, base, []sectionError{
		{"shift out of range", "corners:\n  ff: {nmos: {dvt: -0.8V}}\n", "dvt", 6},
		{"kp change out of range", "corners:\n  ff:\n    nmos: {dkp: 300%}\n", "dkp", 7},
		{"threshold shifted out of range", "corners:\n  ff: {pmos: {dvt: -20mV}}\n", "dvt", 6},
		{"unknown shift", "corners:\n  ff: {nmos: {dvth: 1mV}}\n", "dvth", 6},
		{"unknown device", "corners:\n  ff: {nfet: {dvt: 1mV}}\n", "nfet", 6},
		{"typical shifted", "corners:\n  tt: {nmos: {dvt: 1mV}}\n", "tt", 6},
	})
	p, err := ReadProcess("x.yaml", []byte(base+"corners:\n  slow: {nmos: {dvt: 30mV}}\n"))
	if err != nil {
		t.Fatal(err)
	}
	if got := p.CornerNames(); !slices.Equal(got, []string{"tt", "slow"}) || p.Corners[1].P != (Shift{}) {
		t.Errorf("corners %v (%+v), want tt then slow with the pmos unshifted", got, p.Corners)
	}
}

// sectionError is a process file section that must be refused: its text
// (after a valid base), and the field and line the error must name.
type sectionError struct {
	name, text, field string
	line              int
}

// checkSectionErrors reads base with each case's section appended and
// wants a *units.Error naming the file, the case's line and field.
func checkSectionErrors(t *testing.T, base string, cases []sectionError) {
	t.Helper()
	for _, c := range cases {
		_, err := ReadProcess("x.yaml", []byte(base+c.text))
		var ue *units.Error
		if !errors.As(err, &ue) {
			t.Errorf("%s: error %v, want a *units.Error", c.name, err)
			continue
		}
		if ue.File != "x.yaml" || ue.Line != c.line || !strings.HasSuffix(ue.Field, c.field) {
			t.Errorf("%s: %s:%d field %q, want line %d field %s (%v)", c.name, ue.File, ue.Line, ue.Field, c.line, c.field, err)
		}
	}
}
