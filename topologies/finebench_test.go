package topologies_test

import (
	"testing"
	"time"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
)

func BenchmarkFine(b *testing.B) {
	proc, _ := device.Builtin("demo18-l1")
	f, _ := topologies.Lookup("current-switch")
	st, _ := f.Build(topologies.Defaults(f), topologies.Conditions{Process: proc, Supply: 1.8, TempK: 300.15})
	s, _ := sim.NewSolver(st.Circuit, sim.Options{})
	sp := sim.SweepSpec{Low: 0, High: 1.8, Step: 1.8 / 49999}
	res := &sim.Result{}
	s.Sweep(sp, res)
	it0 := s.Iterations()
	start := time.Now()
	for b.Loop() {
		s.Sweep(sp, res)
	}
	b.ReportMetric(float64(time.Since(start).Nanoseconds())/float64(b.N*res.Len()), "ns/point")
	b.ReportMetric(float64(s.Iterations()-it0)/float64(b.N*res.Len()), "iter/point")
}
