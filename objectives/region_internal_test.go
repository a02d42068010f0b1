package objectives

import "testing"

// TestRailTurnOff: the saturation exemption covers a device turning off
// at an end of the range where the other pair has taken over, and
// nothing else (docs/buildable.md#saturation). Each case is a row of
// sweep points: s short of the margin, w carrying the working current,
// m its pair in the minority.
func TestRailTurnOff(t *testing.T) {
	tests := []struct {
		name               string
		short, work, minor string
		want               string // e: exempt, .: checked
	}{
		// An NMOS tail at the bottom rail of a complementary stage: off at
		// the rail, short up to the knee, the PMOS pair carrying most.
		{"tail at its rail", "sss...", "..wwww", "mmm...", "eee..."},
		// The same tail short into mid-range where its own pair carries
		// most: exempt only where the other pair carries most.
		{"tail short into mid-range", "sssss.", "..wwww", "mm....", "ee...."},
		// A tail whose current a switch takes over: short at the rail at
		// full current, never off: not exempt.
		{"switch-fed tail", "...sss", "wwwwww", "mmmmmm", "......"},
		// Short in mid-range only, away from both ends: not exempt.
		{"mid-range", ".sss..", "wwwwww", "mmmmmm", "......"},
		// Both ends.
		{"both rails", "ss..ss", ".wwww.", "mm..mm", "ee..ee"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			n := len(tt.short)
			// Stale flags in the scratch space must not survive.
			got := make([]bool, n)
			for i := range got {
				got[i] = true
			}
			railTurnOff(got,
				func(i int) bool { return tt.short[i] == 's' },
				func(i int) bool { return tt.work[i] == 'w' },
				func(i int) bool { return tt.minor[i] == 'm' })
			out := make([]byte, n)
			for i, e := range got {
				out[i] = '.'
				if e {
					out[i] = 'e'
				}
			}
			if string(out) != tt.want {
				t.Errorf("exempt %s, want %s", out, tt.want)
			}
		})
	}
}
