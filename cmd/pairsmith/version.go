package main

import (
	"runtime/debug"
	"strings"
)

// version says which build of pairsmith this is: the module version (a
// tagged release, or "(devel)" for a build from a work tree), the source
// revision and its time when the build recorded them, and the Go version,
// as runtime/debug reads them from the binary.
func version() string {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return "unknown (no build information)"
	}
	parts := []string{bi.Main.Version}
	var rev, at string
	modified := false
	for _, s := range bi.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.time":
			at = s.Value
		case "vcs.modified":
			modified = s.Value == "true"
		}
	}
	if rev != "" {
		r := "revision " + rev[:min(12, len(rev))]
		if modified {
			r += " with local changes"
		}
		if at != "" {
			r += " of " + at
		}
		parts = append(parts, r)
	}
	parts = append(parts, bi.GoVersion)
	return strings.Join(parts, ", ")
}
