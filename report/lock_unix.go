//go:build unix

package report

import (
	"os"
	"syscall"
)

// lockFile takes an exclusive advisory lock on f without waiting
// (flock(2)); the system releases it when f is closed or the process
// ends, however it ends — a killed run never leaves a stale lock.
func lockFile(f *os.File) error {
	return syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
}
