// Package external lets a test depend on a program outside the project
// (ngspice, chromium): in CI a missing program fails the test, elsewhere
// it skips it with the command that installs it.
package external

import (
	"os"
	"testing"
)

// Require returns the path that find gives for the program name. When
// find fails it fails the test if the environment variable CI is set, and
// otherwise skips it, saying how to install the program (hint).
func Require(t testing.TB, name string, find func() (string, error), hint string) string {
	t.Helper()
	p, err := find()
	if err == nil {
		return p
	}
	if _, ci := os.LookupEnv("CI"); ci {
		t.Fatalf("%s is required in CI: %v (install it with %q)", name, err, hint)
		return ""
	}
	t.Skipf("%s is not installed (%v); install it with %q to run this test", name, err, hint)
	return ""
}
