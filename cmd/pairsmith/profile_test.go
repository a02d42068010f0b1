package main

import (
	"compress/gzip"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCPUProfile: --cpu-profile writes the command's CPU profile, in the
// format runtime/pprof writes (a gzip-compressed profile.proto message,
// per the pprof documentation), for a command that succeeds and for one
// whose work fails; a profile path that cannot be created is bad input
// (exit 2) and names the flag.
func TestCPUProfile(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		name string
		args []string
		code int
	}{
		{"eval", []string{"eval", filepath.Join(designsDir, "current-switch-l1.yaml")}, exitOK},
		{"failing eval", []string{"eval", filepath.Join(dir, "missing.yaml")}, exitBadInput},
	}
	for _, c := range cases {
		path := filepath.Join(dir, c.name+".prof")
		code, _, stderr := runCmd(t, append([]string{"--cpu-profile", path}, c.args...)...)
		if code != c.code {
			t.Fatalf("%s: exit %d, want %d; stderr %s", c.name, code, c.code, stderr)
		}
		f, err := os.Open(path)
		if err != nil {
			t.Fatalf("%s: no profile: %v", c.name, err)
		}
		z, err := gzip.NewReader(f)
		if err != nil {
			t.Fatalf("%s: the profile is not gzip-compressed: %v", c.name, err)
		}
		body, err := io.ReadAll(z)
		f.Close()
		if err != nil || len(body) == 0 {
			t.Fatalf("%s: the profile does not decompress (%d bytes): %v", c.name, len(body), err)
		}
	}
	code, _, stderr := runCmd(t, "--cpu-profile", filepath.Join(dir, "no", "such", "dir", "p.prof"), "topologies")
	if code != exitBadInput || !strings.Contains(firstLine(stderr), "--cpu-profile") {
		t.Errorf("unwritable profile: exit %d, first line %q; want %d naming --cpu-profile", code, firstLine(stderr), exitBadInput)
	}
}
