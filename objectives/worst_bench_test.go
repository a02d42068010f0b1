package objectives_test

import (
	"testing"

	"pairsmith/objectives"
)

// worstBenchDesign is the current switch at its defaults on demo18 (EKV),
// rail to rail in 10 mV steps, at one condition or over the whole demo
// sign-off: 5 corners × 3 supplies × 3 temperatures.
func worstBenchDesign(b *testing.B, whole bool) *objectives.Design {
	signoff := "supply: 1.8V\ncorners: tt\n"
	if whole {
		signoff = "supply: {min: 1.62V, max: 1.98V}\ntemperature: {min: -40C, max: 125C}\ncorners: [tt, ff, ss, fs, sf]\n"
	}
	d, err := objectives.ReadDesign("d.yaml", []byte("topology: current-switch\nprocess: demo18\n"+signoff), "")
	if err != nil {
		b.Fatal(err)
	}
	return d
}

// BenchmarkEvaluateNominal is one evaluation at the nominal condition
// alone, as `eval` makes it: the sweep, the checks, the mismatch
// sensitivities and noise, the slew and the lowest working supply.
func BenchmarkEvaluateNominal(b *testing.B) {
	d := worstBenchDesign(b, false)
	for b.Loop() {
		if _, err := objectives.Evaluate(d); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkEvaluateWorstCase is the same evaluation over the whole
// sign-off, 45 conditions (issue 9: keep it under 12 times
// BenchmarkEvaluateNominal).
func BenchmarkEvaluateWorstCase(b *testing.B) {
	d := worstBenchDesign(b, true)
	for b.Loop() {
		if _, err := objectives.Evaluate(d); err != nil {
			b.Fatal(err)
		}
	}
}

// benchMeasure runs MeasureWorst as a search judges a candidate that it
// keeps (no look rejects it), with the extra figures ex asks for, over
// the design's conditions.
func benchMeasure(b *testing.B, whole bool, ex objectives.Extras) {
	d := worstBenchDesign(b, whole)
	order := d.AllConditions()
	var cache objectives.SolverCache
	for b.Loop() {
		cs, _, err := objectives.MeasureWorst(d, order, &cache, 0.05, nil, objectives.NoTargets(), ex,
			func([]objectives.ConditionEval) bool { return false })
		if err != nil || len(cs) != len(order) {
			b.Fatal(err)
		}
	}
}

// BenchmarkMeasureNominal is a search's evaluation of a kept candidate at
// one condition: its coarse and its fine look, with mismatch
// sensitivities and noise from each look's coarse sweep.
func BenchmarkMeasureNominal(b *testing.B) {
	benchMeasure(b, false, objectives.Extras{Mismatch: true, Noise: true, Coarse: true})
}

// BenchmarkMeasureWorstCase is the same over the whole demo sign-off, 45
// conditions, met lazily (objectives.MeasureWorst): issue 9 asks for
// under 12 times BenchmarkMeasureNominal.
func BenchmarkMeasureWorstCase(b *testing.B) {
	benchMeasure(b, true, objectives.Extras{Mismatch: true, Noise: true, Coarse: true})
}
