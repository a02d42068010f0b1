package device

import (
	"math/rand/v2"
	"testing"
)

// TestLargeSignalIsOp: LargeSignal gives Op's fields bit for bit, and
// EvalLarge both Eval and LargeSignal, for
// both models, both polarities and every region, over random bias points
// (source and drain either way round, forward-biased bulk included) —
// the checks read LargeSignal where the reports read Op, and the two must never
// tell a designer different things. The fields' own meaning is checked
// against the papers and ngspice by TestEKVOp and the level-1 tests.
func TestLargeSignalIsOp(t *testing.T) {
	const tempK = ZeroC + 27
	cards := map[string]Model{
		"ekv nmos": demoEKV(NMOS, 0.5, 0.05), "ekv pmos": demoEKV(PMOS, 0.5, 0.05),
		"ekv nmos no body effect": demoEKV(NMOS, 0, 0.05),
	}
	for name, c := range demoLevel1Cards() {
		cards["level1 "+name] = c
	}
	rng := rand.New(rand.NewPCG(8, 9))
	for name, c := range cards {
		inst, err := c.Instance(Geometry{W: 4e-6, L: 0.5e-6}, tempK)
		if err != nil {
			t.Fatal(err)
		}
		for range 20000 {
			// Terminals within ±2 V of each other (common practice, no
			// source: wider than any rail of the demo processes).
			vd, vg, vs, vb := 4*rng.Float64()-2, 4*rng.Float64()-2, 4*rng.Float64()-2, 4*rng.Float64()-2
			op, ls := inst.Op(vd, vg, vs, vb), inst.LargeSignal(vd, vg, vs, vb)
			if want := (LargeSignal{ID: op.ID, VTH: op.VTH, VDSAT: op.VDSAT, IC: op.IC, Region: op.Region}); ls != want {
				t.Fatalf("%s at vd %g vg %g vs %g vb %g: LargeSignal %+v, Op %+v", name, vd, vg, vs, vb, ls, op)
			}
			var both LargeSignal
			if ev := inst.EvalLarge(vd, vg, vs, vb, &both); ev != inst.Eval(vd, vg, vs, vb) || both != ls {
				t.Fatalf("%s at vd %g vg %g vs %g vb %g: EvalLarge %+v and %+v, Eval %+v and LargeSignal %+v",
					name, vd, vg, vs, vb, ev, both, inst.Eval(vd, vg, vs, vb), ls)
			}
		}
	}
}

// BenchmarkLargeSignal compares LargeSignal with Op and Eval on the EKV card in moderate
// inversion, and on a level-1 card, saturated.
func BenchmarkLargeSignal(b *testing.B) {
	for _, card := range []struct {
		name string
		m    Model
	}{{"ekv", demoEKV(NMOS, 0.5, 0.05)}, {"level1", demoLevel1Cards()["nsp"]}} {
		inst, err := card.m.Instance(Geometry{W: 4e-6, L: 0.5e-6}, ZeroC+27)
		if err != nil {
			b.Fatal(err)
		}
		for _, tc := range []struct {
			name string
			f    func(vd, vg, vs, vb float64) float64
		}{
			{"op", func(vd, vg, vs, vb float64) float64 { return inst.Op(vd, vg, vs, vb).ID }},
			{"large", func(vd, vg, vs, vb float64) float64 { return inst.LargeSignal(vd, vg, vs, vb).ID }},
			{"eval", func(vd, vg, vs, vb float64) float64 { return inst.Eval(vd, vg, vs, vb).ID }},
		} {
			b.Run(card.name+"/"+tc.name, func(b *testing.B) {
				x := 0.0
				for b.Loop() {
					x += tc.f(1.2, 0.7, 0.1, 0)
				}
				if x == 0 {
					b.Fatal("no current")
				}
			})
		}
	}
}
