package topologies

import (
	"math"
	"strings"
	"testing"

	"pairsmith/sim/device"
)

// TestParamsFor: widths and lengths are bounded by the process's rules,
// on its grid; the headroom by the summing stage's need
// (docs/buildable.md#geometry-rules).
func TestParamsFor(t *testing.T) {
	p, _ := device.Builtin("demo33")
	r := p.Rules
	for _, f := range All() {
		ps, err := ParamsFor(f, p, 0.08)
		if err != nil {
			t.Fatalf("%s: %v", f.Name(), err)
		}
		for i, q := range ps {
			orig := f.Params()[i]
			switch q.Size {
			case Width, Length:
				min := r.WMin
				if q.Size == Length {
					min = r.LMin
				}
				if want := math.Max(orig.Min, min); q.Min < want*(1-1e-12) || !r.OnGrid(q.Min) || !r.OnGrid(q.Max) {
					t.Errorf("%s.%s: bounds %g … %g, want from %g, on the %g grid", f.Name(), q.Name, q.Min, q.Max, want, r.Grid)
				}
			case Headroom:
				if want := FoldOverdrive + 0.08; math.Abs(q.Min-want) > 1e-12 {
					t.Errorf("%s.%s: min %g, want FoldOverdrive + margin = %g", f.Name(), q.Name, q.Min, want)
				}
			default:
				if q.Min != orig.Min || q.Max != orig.Max {
					t.Errorf("%s.%s: bounds changed to %g … %g", f.Name(), q.Name, q.Min, q.Max)
				}
			}
			if q.Default < q.Min || q.Default > q.Max {
				t.Errorf("%s.%s: default %g outside %g … %g", f.Name(), q.Name, q.Default, q.Min, q.Max)
			}
		}
	}
	// A process whose minimum length exceeds a family's longest: no room.
	big := *p
	big.Rules.LMin, big.Rules.Grid = 12e-6, 10e-9
	if _, err := ParamsFor(nPair{}, &big, 0.05); err == nil || !strings.Contains(err.Error(), "ln") {
		t.Errorf("lmin 12 µm: error %v, want one naming ln", err)
	}
}

// undeclared reads a parameter it does not declare.
type undeclared struct{ nPair }

func (f undeclared) Build(v Values, cond Conditions) (*Stage, error) {
	b, err := newBuilder(f, v, cond)
	if err != nil {
		return nil, err
	}
	tn := b.c.Node("tn")
	b.nPair(tn)
	b.mos(device.NMOS, "nmos tail", Saturated, tn, b.gnd, b.gnd, b.p(pWTP), b.p(pLT))
	return b.finish()
}

// TestUndeclaredParam: a family that reads a parameter it does not
// declare fails to build instead of reading zero.
func TestUndeclaredParam(t *testing.T) {
	p, _ := device.Builtin("demo18")
	f := undeclared{}
	_, err := f.Build(Defaults(f), Conditions{Process: p, Supply: 1.8, TempK: 300})
	if err == nil || !strings.Contains(err.Error(), "wtp") {
		t.Errorf("error %v, want one naming wtp", err)
	}
}

// TestBuildSnapsAndFlags: a derived device below wmin is snapped to the
// grid and recorded as a geometry violation naming it.
func TestBuildSnapsAndFlags(t *testing.T) {
	p, _ := device.Builtin("demo18")
	v := Defaults(complementary{})
	v["wtp"], v["kbias"] = 1.17e-6, 10 // reference 117 nm wide
	st, err := complementary{}.Build(v, Conditions{Process: p, Supply: 1.8, TempK: 300})
	if err != nil {
		t.Fatal(err)
	}
	var ref *Device
	for i := range st.Devices {
		if st.Devices[i].Role == "pmos reference" {
			ref = &st.Devices[i]
		}
	}
	if ref == nil || ref.Geom.W != 115e-9 {
		t.Fatalf("pmos reference %+v, want W snapped to 115 nm", ref)
	}
	if len(st.Geometry) != 1 || st.Geometry[0].Device != ref.Name || st.Geometry[0].Field != "w" {
		t.Errorf("geometry violations %v, want one: %s's width", st.Geometry, ref.Name)
	}
}
