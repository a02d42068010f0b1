//go:build !unix

package report

import "os"

// lockFile does nothing where flock(2) is missing: there, runs into one
// directory are not kept apart.
func lockFile(*os.File) error { return nil }
