package sim

import "testing"

// BenchmarkDiffPairSweep times a fine sweep of a level-1 pair with exact
// gm, where continuation needs about one Newton iteration per point.
func BenchmarkDiffPairSweep(b *testing.B) {
	c := diffPair(40e-6, 20e-6, 1e-6)
	s, err := NewSolver(c, Options{})
	if err != nil {
		b.Fatal(err)
	}
	res := &Result{}
	sp := SweepSpec{Low: 1.2, High: 2.0, Step: 1e-4}
	if err := s.Sweep(sp, res); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	it0 := s.Iterations()
	for b.Loop() {
		if err := s.Sweep(sp, res); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*res.Len()), "ns/point")
	b.ReportMetric(float64(s.Iterations()-it0)/float64(b.N*res.Len()), "iter/point")
}
