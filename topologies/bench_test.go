package topologies_test

import (
	"fmt"
	"testing"
	"time"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
)

// BenchmarkSweep times one rail-to-rail sweep at 10 mV with exact gm at
// every point, for every family at its defaults, on the EKV and the
// level-1 demo processes. It reports the time per sweep point; a warm
// sweep allocates nothing (see TestSweepAllocates).
func BenchmarkSweep(b *testing.B) {
	for _, process := range []string{"demo18", "demo18-l1"} {
		proc, _ := device.Builtin(process)
		for _, f := range topologies.All() {
			b.Run(fmt.Sprintf("%s/%s", f.Name(), process), func(b *testing.B) {
				st, err := f.Build(topologies.Defaults(f), topologies.Conditions{Process: proc, Supply: 1.8, TempK: 27 + device.ZeroC})
				if err != nil {
					b.Fatal(err)
				}
				s, err := sim.NewSolver(st.Circuit, sim.Options{})
				if err != nil {
					b.Fatal(err)
				}
				sp := sim.SweepSpec{Low: 0, High: 1.8, Step: 0.01}
				res := &sim.Result{}
				if err := s.Sweep(sp, res); err != nil {
					b.Fatal(err)
				}
				b.ReportAllocs()
				it0 := s.Iterations()
				start := time.Now()
				for b.Loop() {
					if err := s.Sweep(sp, res); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(time.Since(start).Nanoseconds())/float64(b.N*res.Len()), "ns/point")
				b.ReportMetric(float64(s.Iterations()-it0)/float64(b.N*res.Len()), "iter/point")
				b.ReportMetric(float64(len(st.Circuit.Mosfets)), "transistors")
				b.ReportMetric(float64(s.Unknowns()), "unknowns")
			})
		}
	}
}

// TestSweepAllocates checks that a warm sweep of every family allocates
// nothing, whatever the number of points.
func TestSweepAllocates(t *testing.T) {
	proc, _ := device.Builtin("demo18")
	for _, f := range topologies.All() {
		st, err := f.Build(topologies.Defaults(f), topologies.Conditions{Process: proc, Supply: 1.8, TempK: 27 + device.ZeroC})
		if err != nil {
			t.Fatal(err)
		}
		s, err := sim.NewSolver(st.Circuit, sim.Options{})
		if err != nil {
			t.Fatal(err)
		}
		res := &sim.Result{}
		sp := sim.SweepSpec{Low: 0, High: 1.8, Step: 0.01}
		if err := s.Sweep(sp, res); err != nil {
			t.Fatal(err)
		}
		if n := testing.AllocsPerRun(3, func() { _ = s.Sweep(sp, res) }); n != 0 {
			t.Errorf("%s: a warm sweep allocates %v times, want 0", f.Name(), n)
		}
	}
}

// BenchmarkLongSweep times the 50 000-point sweep scripts/bench-vs-ngspice
// runs, on one goroutine and split over two, for the level-1
// current-switch demo: per point, continuation needs one Newton iteration.
func BenchmarkLongSweep(b *testing.B) {
	proc, _ := device.Builtin("demo18-l1")
	f, _ := topologies.Lookup("current-switch")
	st, err := f.Build(topologies.Defaults(f), topologies.Conditions{Process: proc, Supply: 1.8, TempK: 27 + device.ZeroC})
	if err != nil {
		b.Fatal(err)
	}
	sp := sim.SweepSpec{Low: 0, High: 1.8, Step: 1.8 / 49999}
	for _, workers := range []int{1, 2} {
		b.Run(fmt.Sprintf("workers=%d", workers), func(b *testing.B) {
			s, err := sim.NewSolver(st.Circuit, sim.Options{})
			if err != nil {
				b.Fatal(err)
			}
			res := &sim.Result{}
			run := func() error {
				if workers == 1 {
					return s.Sweep(sp, res)
				}
				return s.SweepParallel(sp, res, workers)
			}
			if err := run(); err != nil {
				b.Fatal(err)
			}
			it0 := s.Iterations()
			start := time.Now()
			for b.Loop() {
				if err := run(); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(time.Since(start).Nanoseconds())/float64(b.N*res.Len()), "ns/point")
			b.ReportMetric(float64(s.Iterations()-it0)/float64(b.N*res.Len()), "iter/point")
		})
	}
}
