package main

import (
	"strings"
	"testing"
)

// TestVersion: --version prints one line naming the program and the Go
// toolchain it was built with, and exits 0.
func TestVersion(t *testing.T) {
	code, stdout, stderr := runCmd(t, "--version")
	if code != exitOK || stderr != "" {
		t.Fatalf("--version: exit %d, stderr %q", code, stderr)
	}
	if !strings.HasPrefix(stdout, "pairsmith ") || !strings.Contains(stdout, "go1.") || strings.Count(stdout, "\n") != 1 {
		t.Errorf("--version printed %q, want one line \"pairsmith VERSION, …, goX\"", stdout)
	}
}
