package sizing

import (
	"testing"

	"pairsmith/objectives"
)

// TestCandidateBuildable: a candidate is buildable while every always-on
// check (docs/buildable.md) passes, whatever targets it misses — the
// report calls an infeasible one a "nearest miss" then, and "not
// buildable" otherwise.
func TestCandidateBuildable(t *testing.T) {
	for _, tc := range []struct {
		name string
		vs   []objectives.Violation
		want bool
	}{
		{"nothing missed", []objectives.Violation{{Target: "gm_min"}, {Target: objectives.CheckSaturation}}, true},
		{"a target missed", []objectives.Violation{{Target: "gm_min", Amount: 0.4}, {Target: objectives.CheckGeometry}}, true},
		{"saturation failed", []objectives.Violation{{Target: "gm_min"}, {Target: objectives.CheckSaturation, Amount: 0.1}}, false},
		{"geometry failed", []objectives.Violation{{Target: objectives.CheckGeometry, Amount: 1}}, false},
		{"validity failed", []objectives.Violation{{Target: objectives.CheckValidity, Amount: 0.02}}, false},
	} {
		c := &Candidate{Violations: tc.vs}
		if got := c.Buildable(); got != tc.want {
			t.Errorf("%s: Buildable = %v, want %v", tc.name, got, tc.want)
		}
	}
}
