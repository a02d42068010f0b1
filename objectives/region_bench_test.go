package objectives_test

import (
	"runtime"
	"testing"

	"pairsmith/objectives"
	"pairsmith/sim"
)

// BenchmarkMeasureChecked: one candidate as the search judges it on its
// coarse look (50 mV steps), with the always-on checks at every point,
// against the same sweep without them (BenchmarkSweepOnly).
func BenchmarkMeasureChecked(b *testing.B) {
	d := benchDesign(b)
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := objectives.MeasureChecked(d); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkSweepOnly(b *testing.B) {
	d := benchDesign(b)
	b.ReportAllocs()
	for b.Loop() {
		st, err := objectives.Build(d)
		if err != nil {
			b.Fatal(err)
		}
		s, err := sim.NewSolver(st.Circuit, sim.Options{})
		if err != nil {
			b.Fatal(err)
		}
		var res sim.Result
		if err := s.SweepParallel(d.Sweep, &res, runtime.GOMAXPROCS(0)); err != nil {
			b.Fatal(err)
		}
		objectives.Measure(st, &res)
	}
}

func benchDesign(b *testing.B) *objectives.Design {
	d, err := objectives.LoadDesign("../testdata/designs/current-switch.yaml")
	if err != nil {
		b.Fatal(err)
	}
	d.Sweep.Step = 50e-3
	return d
}
