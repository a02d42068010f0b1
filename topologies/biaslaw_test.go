package topologies_test

import (
	"math"
	"testing"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
)

// TestBiasLaws checks the reference currents' temperature laws on the
// n-pair on demo18-l1 (the SPICE level-1 law, KP ∝ (T/Tnom)^−1.5),
// referred to 27 °C and built at 125 °C: every reference current is its
// parameter value × (T/T_ref)^e with e = 0, 1 and 1.5 (constant, ptat,
// constant-gm: 1/KP_n); at 27 °C every law gives the same stage, bit for
// bit; and the pair's gm in strong inversion, √(2·β·I_D) (the square law,
// any analog text), falls as √KP ∝ T^−0.75 with a constant reference and
// stays within 2 % with constant-gm (2 %: our allowance for channel-length
// modulation and the body effect, no source).
func TestBiasLaws(t *testing.T) {
	proc, _ := device.Builtin("demo18-l1")
	f, _ := topologies.Lookup("n-pair")
	const ref, hot = 300.15, 398.15
	gmAt := func(law int, tempK float64) (float64, []float64) {
		t.Helper()
		v := topologies.Defaults(f)
		v["itail"], v["wn"] = 50e-6, 4e-6 // strong inversion, the tail saturated at 1.5 V
		v[topologies.PBiasLaw.Name] = float64(law)
		st, err := f.Build(v, topologies.Conditions{Process: proc, Supply: 1.8, TempK: tempK, BiasRefK: ref})
		if err != nil {
			t.Fatal(err)
		}
		var is []float64
		for _, s := range st.Circuit.ISources {
			if !s.Bench {
				is = append(is, s.Value.DC)
			}
		}
		s, err := sim.NewSolver(st.Circuit, sim.Options{})
		if err != nil {
			t.Fatal(err)
		}
		res := &sim.Result{}
		if err := s.Sweep(sim.SweepSpec{Low: 1.5, High: 1.5, Step: 0.01}, res); err != nil {
			t.Fatal(err)
		}
		return res.GM[0], is
	}
	gm0, i0 := gmAt(topologies.LawConstant, ref)
	for law, exp := range []float64{0, 1, 1.5} {
		g, is := gmAt(law, ref)
		if g != gm0 {
			t.Errorf("%s at 27 °C: gm %g, want the constant law's %g bit for bit", topologies.BiasLaws[law], g, gm0)
		}
		_, ih := gmAt(law, hot)
		for k := range ih {
			if want := is[k] * math.Pow(hot/ref, exp); math.Abs(ih[k]-want) > 1e-12*want {
				t.Errorf("%s at 125 °C: reference current %g, want %g", topologies.BiasLaws[law], ih[k], want)
			}
		}
	}
	if len(i0) == 0 {
		t.Fatal("the n-pair has no reference current")
	}
	gc, _ := gmAt(topologies.LawConstant, hot)
	if want := gm0 * math.Pow(hot/ref, -0.75); math.Abs(gc-want) > 0.02*want {
		t.Errorf("constant reference: gm %g at 125 °C, want about %g (√KP)", gc, want)
	}
	gg, _ := gmAt(topologies.LawConstantGM, hot)
	t.Logf("gm at 125 °C over gm at 27 °C: constant %.4f (√KP: %.4f), constant-gm %.4f", gc/gm0, math.Pow(hot/ref, -0.75), gg/gm0)
	if math.Abs(gg-gm0) > 0.02*gm0 {
		t.Errorf("constant-gm reference: gm %g at 125 °C, want within 2 %% of %g", gg, gm0)
	}
}
