package main

import (
	"os/exec"
	"path/filepath"
	"testing"
)

// TestKillRounds runs a few rounds of scripts/kill-test: `pairsmith run`
// stopped by SIGINT, SIGTERM and SIGKILL at random moments, during the
// search and while it writes, must leave the earlier complete result or
// the new complete one, never a mix, with every candidate reproducing
// summary.json under `eval` (issue 7's kill tests; the script runs more
// rounds).
func TestKillRounds(t *testing.T) {
	bin := filepath.Join(t.TempDir(), "pairsmith")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	cmd := exec.Command("go", "run", "../../internal/killtest", "-bin", bin, "-rounds", "6", "-evaluations", "1500",
		"-spec", filepath.Join(specsDir, "strain-gauge.yaml"), "-dir", filepath.Join(t.TempDir(), "out"))
	out, err := cmd.CombinedOutput()
	t.Logf("%s", out)
	if err != nil {
		t.Fatalf("kill rounds: %v", err)
	}
}
