package optimize

import "testing"

// TestBetter: Deb's feasibility rules (Deb 2000: feasible before
// infeasible, infeasible by total violation, feasible by score), with
// the outcomes free of a hard violation ahead of those with one whatever
// the totals.
func TestBetter(t *testing.T) {
	scales := []float64{1, 1}
	feasLow := Outcome{Objectives: []float64{0.1, 0.1}}
	feasHigh := Outcome{Objectives: []float64{0.5, 0.5}}
	soft := Outcome{Objectives: []float64{0, 0}, Violations: []float64{3}}
	softSmall := Outcome{Objectives: []float64{0, 0}, Violations: []float64{0.5}}
	hard := Outcome{Objectives: []float64{0, 0}, Violations: []float64{0, 0.2}, Hard: 0.2}
	hardBig := Outcome{Objectives: []float64{0, 0}, Violations: []float64{0, 2}, Hard: 2}
	for _, tc := range []struct {
		name string
		a, b Outcome
		want bool
	}{
		{"feasible before infeasible", feasHigh, softSmall, true},
		{"infeasible after feasible", softSmall, feasHigh, false},
		{"feasible by score", feasLow, feasHigh, true},
		{"soft by violation", softSmall, soft, true},
		{"no hard violation before a hard one, whatever the totals", soft, hard, true},
		{"a hard violation after none", hard, soft, false},
		{"hard by violation", hard, hardBig, true},
		{"equal: not better", soft, soft, false},
	} {
		if got := better(tc.a, tc.b, scales); got != tc.want {
			t.Errorf("%s: better = %v, want %v", tc.name, got, tc.want)
		}
	}
}
