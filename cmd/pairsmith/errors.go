package main

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"pairsmith/report"
	"pairsmith/sim"
	"pairsmith/topologies"
	"pairsmith/units"
)

// Exit codes.
const (
	exitOK       = 0
	exitFailed   = 1 // anything else: a solver failure, an unwritable output
	exitBadInput = 2 // a bad file, flag, argument or value
	// exitInfeasible: `run` found no candidate that meets the spec; its
	// results, with the nearest candidates, are still written.
	exitInfeasible = 3
	// exitInterrupted: `run` was stopped by Ctrl-C or SIGTERM before its
	// budget was spent; what it had found is written, complete.
	exitInterrupted = 4
)

// runError marks an error returned by a command's own work, as opposed to
// one cobra found in the flags and arguments.
type runError struct{ err error }

func (e *runError) Error() string { return e.err.Error() }
func (e *runError) Unwrap() error { return e.err }

// inputError marks a problem with what the user gave that has no error
// type of its own, such as a file that cannot be read.
type inputError struct{ err error }

func (e *inputError) Error() string { return e.err.Error() }
func (e *inputError) Unwrap() error { return e.err }

// badInput wraps err as bad input with context.
func badInput(format string, args ...any) error {
	return &inputError{fmt.Errorf(format, args...)}
}

// infeasibleError is the outcome of a run in which no candidate met the
// spec: not a failure of the program, but an answer a script tells apart
// by the exit code (exitInfeasible).
type infeasibleError struct {
	binding []string // the targets that bind, worst first
	at      []string // where each binds ("" at a single condition)
	dir     string   // where the results are
}

func (e *infeasibleError) Error() string {
	msg := "no candidate meets the spec"
	if len(e.binding) > 0 {
		msg += "; the targets that bind: " + report.BindingText(e.binding, e.at)
	}
	return msg + " (the nearest candidates are in " + e.dir + ")"
}

// interruptedError is the outcome of a run stopped by a signal: its
// results, complete for what it found, are written.
type interruptedError struct {
	evaluations int
	dir         string
}

func (e *interruptedError) Error() string {
	return fmt.Sprintf("interrupted after %d evaluations; what was found is in %s", e.evaluations, e.dir)
}

// exitCode says how the program ends for an error from a command's work.
func exitCode(err error) int {
	var (
		ue *units.Error
		re *topologies.RangeError
		fe *report.FormatError
		ie *inputError
		ne *infeasibleError
		xe *interruptedError
		oe *report.OutputError
		we *report.OwnedError
	)
	if errors.As(err, &xe) {
		return exitInterrupted
	}
	if errors.As(err, &ne) {
		return exitInfeasible
	}
	if errors.As(err, &ue) || errors.As(err, &re) || errors.As(err, &fe) || errors.As(err, &ie) ||
		errors.As(err, &oe) || errors.As(err, &we) {
		return exitBadInput
	}
	return exitFailed
}

// reportError writes an error to stderr, its first line "pairsmith: …", and
// returns the exit code. A solver failure is said to be one. Usage
// errors (bad flags or arguments) are followed by the command's usage.
func reportError(stderr io.Writer, cmd *cobra.Command, err error) int {
	var re *runError
	if !errors.As(err, &re) {
		fmt.Fprintf(stderr, "pairsmith: %v\n", err)
		if cmd != nil {
			fmt.Fprintf(stderr, "\n%s", cmd.UsageString())
		}
		return exitBadInput
	}
	msg := re.err.Error()
	var ce *sim.ConvergenceError
	if errors.As(err, &ce) && !strings.Contains(msg, "no DC solution") {
		msg = "no DC solution: " + msg
	}
	fmt.Fprintf(stderr, "pairsmith: %s\n", msg)
	return exitCode(re.err)
}
