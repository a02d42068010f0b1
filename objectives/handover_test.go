package objectives_test

import (
	"testing"

	"pairsmith/objectives"
)

// TestHandoverCentreInside checks the switchover of shares that move both
// ways with a net change small beside the moves, where ∫ v ds / ∫ ds
// falls outside the sweep (the first case: −99.5 V): it is then the
// centre of all the moves, ∫ v |ds| / ∫ |ds|, each linear piece
// contributing |its change| times its centre (as in
// TestHandoverNonMonotoneSwitchover). The second case, whose signed
// centre is inside, keeps it. Found by FuzzEvaluate: a mirror-1to3 stage
// reported a switchover of −1.78 V on a 0 … 2.03 V sweep.
func TestHandoverCentreInside(t *testing.T) {
	type piece struct{ a, b, s0, s1 float64 }
	tests := []struct {
		name   string
		pieces []piece
		signed bool // the signed centre is inside and is kept
	}{
		{"up and nearly all the way back", []piece{{0.2, 0.4, 0, 1}, {0.4, 0.6, 1, 0.002}}, false},
		{"down, then up beyond", []piece{{0.1, 0.3, 0.5, 0}, {0.5, 0.9, 0, 0.52}}, false},
		{"a dip inside a handover", []piece{{0.2, 0.4, 0, 0.95}, {0.4, 0.5, 0.95, 0.85}, {0.5, 0.6, 0.85, 1}}, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			v := grid(0, 0.01, 101)
			share := make([]float64, len(v))
			for i := range share {
				share[i] = tt.pieces[0].s0
			}
			var num, den, absNum, absDen float64
			for _, p := range tt.pieces {
				d := p.s1 - p.s0
				num += d * (p.a + p.b) / 2
				den += d
				if d < 0 {
					d = -d
				}
				absNum += d * (p.a + p.b) / 2
				absDen += d
				for i, x := range v {
					if x >= p.a-1e-12 && x <= p.b+1e-12 {
						share[i] = p.s0 + (p.s1-p.s0)*(x-p.a)/(p.b-p.a)
					} else if x > p.b {
						share[i] = p.s1
					}
				}
			}
			want := absNum / absDen
			if signed := num / den; tt.signed {
				want = signed
			} else if signed >= 0 && signed <= 1 {
				t.Fatalf("the case's signed centre %g V is inside the sweep; it tests nothing", signed)
			}
			in, ip := pairCurrents(share, 20e-6)
			sw, _ := objectives.Handover(v, in, ip)
			if !near(sw, want, 1e-9) || sw < 0 || sw > 1 {
				t.Errorf("switchover = %.15g V, want %.15g V", sw, want)
			}
		})
	}
}
