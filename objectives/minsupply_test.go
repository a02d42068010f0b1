package objectives_test

import (
	"math"
	"testing"

	"pairsmith/objectives"
)

// TestMinSupplyAgainstSweep: the bisection's lowest working supply agrees
// within 5 mV (issue 9) with a direct scan of supplies in 5 mV steps, the
// stage evaluated at each as `eval --supply` would (Design.At), both
// without targets (gm alive rail to rail) and with gm_min and
// gm_ripple_max targets; the scan also shows the stage failing below that
// supply and working at every one above it (the monotonicity the
// bisection assumes), for the current switch at its defaults on
// demo18-l1.
func TestMinSupplyAgainstSweep(t *testing.T) {
	d, err := objectives.ReadDesign("d.yaml", []byte("topology: current-switch\nprocess: demo18-l1\nsupply: {min: 1.2V, max: 1.8V}\ncorners: tt\n"+
		"sweep: {low: 0V, high: supply, step: 20mV}\n"), "")
	if err != nil {
		t.Fatal(err)
	}
	tg := objectives.NoTargets()
	tg.GMMin, tg.GMRippleMax = 300e-6, 0.6
	for _, tt := range []struct {
		name string
		t    objectives.Targets
	}{{"no targets", objectives.NoTargets()}, {"gm_min and ripple", tg}} {
		t.Run(tt.name, func(t *testing.T) {
			got := objectives.MinSupplyOf(d, tt.t, nil)
			works := func(v float64) bool {
				at, err := d.At("", v, d.TempK)
				if err != nil {
					t.Fatal(err)
				}
				ev, err := objectives.Evaluate(at)
				if err != nil {
					return false
				}
				m := ev.Metrics
				if math.IsInf(m.GMRipple, 1) || (tt.t.Has("gm_min") && m.GMMin < tt.t.GMMin) || (tt.t.Has("gm_ripple_max") && m.GMRipple > tt.t.GMRippleMax) {
					return false
				}
				return true
			}
			lowest := math.Inf(1)
			for v := 1.8; v >= objectives.MinSupply(d.Process); v -= 0.005 {
				if !works(v) {
					break
				}
				lowest = v
			}
			for v := lowest - 0.005; v >= lowest-0.1 && v >= objectives.MinSupply(d.Process); v -= 0.005 {
				if works(v) {
					t.Errorf("works again at %g V below the scan's threshold %g V", v, lowest)
				}
			}
			if math.IsInf(lowest, 1) || math.Abs(got-lowest) > objectives.MinSupplyResolution {
				t.Errorf("bisection %g V, scan %g V", got, lowest)
			}
			t.Logf("lowest working supply: bisection %.4f V, scan %.4f V", got, lowest)
		})
	}
}
