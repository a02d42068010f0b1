package device

import (
	"math/rand/v2"
	"testing"
)

// TestBiasIsOp: Bias gives Op's large-signal fields bit for bit, for
// both models, both polarities and every region, over random bias points
// (source and drain either way round, forward-biased bulk included) —
// the checks read Bias where the reports read Op, and the two must never
// tell a designer different things. The fields' own meaning is checked
// against the papers and ngspice by TestEKVOp and the level-1 tests.
func TestBiasIsOp(t *testing.T) {
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
			op, b := inst.Op(vd, vg, vs, vb), inst.Bias(vd, vg, vs, vb)
			op.GM, op.GDS, op.GMB = 0, 0, 0
			b.GM, b.GDS, b.GMB = 0, 0, 0
			if op != b {
				t.Fatalf("%s at vd %g vg %g vs %g vb %g: Bias %+v, Op %+v", name, vd, vg, vs, vb, b, op)
			}
		}
	}
}

// BenchmarkBias compares Bias with Op and Eval on the EKV card in moderate
// inversion, saturated.
func BenchmarkBias(b *testing.B) {
	inst, err := demoEKV(NMOS, 0.5, 0.05).Instance(Geometry{W: 4e-6, L: 0.5e-6}, ZeroC+27)
	if err != nil {
		b.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		f    func(vd, vg, vs, vb float64) OpPoint
	}{{"op", inst.Op}, {"bias", inst.Bias}, {"eval", func(vd, vg, vs, vb float64) OpPoint {
		return OpPoint{ID: inst.Eval(vd, vg, vs, vb).ID}
	}}} {
		b.Run(tc.name, func(b *testing.B) {
			x := 0.0
			for b.Loop() {
				x += tc.f(1.2, 0.7, 0.1, 0).ID
			}
			if x == 0 {
				b.Fatal("no current")
			}
		})
	}
}
