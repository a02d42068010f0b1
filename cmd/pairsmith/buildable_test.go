package main

import (
	"path/filepath"
	"testing"

	"pairsmith/internal/resultcheck"
)

// TestDemoRunsBuildable re-runs the demo specs and checks every reported
// candidate as written: each design file, re-read and evaluated as
// `pairsmith eval` does, passes every always-on check (geometry rules,
// saturation margins, level-1 validity: docs/buildable.md) when it is
// feasible, and fails one exactly when summary.json says it does.
func TestDemoRunsBuildable(t *testing.T) {
	for _, spec := range []string{"strain-gauge.yaml", "sensor-l1.yaml"} {
		t.Run(spec, func(t *testing.T) {
			dir := filepath.Join(t.TempDir(), "out")
			code, _, stderr := runCmd(t, "run", filepath.Join(specsDir, spec), "-o", dir, "--evaluations", "3000")
			if code != exitOK && code != exitInfeasible {
				t.Fatalf("run: exit %d: %s", code, stderr)
			}
			if _, err := resultcheck.Verify(dir); err != nil {
				t.Error(err)
			}
		})
	}
}
