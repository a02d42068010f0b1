// Package signalrun runs `pairsmith run` as a separate process and stops
// it with a signal at a chosen moment: the common part of the kill tests
// (internal/killtest) and the interrupt benchmark (internal/benchinterrupt).
package signalrun

import (
	"bufio"
	"errors"
	"os/exec"
	"strconv"
	"strings"
	"syscall"
	"time"
)

// Stop says when and how a run is stopped.
type Stop struct {
	Signal syscall.Signal
	// Delay is counted from the start, or with AfterSearch from the end
	// of the search (the progress line that says "done in" or
	// "interrupted"), so that the signal lands while the run re-evaluates
	// and writes its results.
	Delay       time.Duration
	AfterSearch bool
}

// Outcome is how a run ended.
type Outcome struct {
	// Code is the exit code, 128 + the signal when a signal ended it.
	Code int
	// RunID is the run's id, from its first stderr line ("" if it never
	// printed one).
	RunID string
	// Sent is when the signal was sent; zero when the run ended first.
	Sent       time.Time
	Start, End time.Time
	// MaxRSS is the run's peak resident memory, kB.
	MaxRSS int64
}

// Run runs `bin run spec -o dir --force --evaluations N` and, with stop,
// stops it as stop says.
func Run(bin, spec, dir string, evaluations int, stop *Stop) (Outcome, error) {
	var o Outcome
	cmd := exec.Command(bin, "run", spec, "-o", dir, "--force", "--evaluations", strconv.Itoa(evaluations))
	stderr, err := cmd.StderrPipe()
	if err != nil {
		return o, err
	}
	o.Start = time.Now()
	if err := cmd.Start(); err != nil {
		return o, err
	}
	searched := make(chan struct{})
	lines := make(chan string, 1) // the run id
	go func() {
		id, closed := "", false
		sc := bufio.NewScanner(stderr)
		for sc.Scan() {
			l := sc.Text()
			if f := strings.Fields(l); id == "" && len(f) > 2 && f[0] == "pairsmith" && f[1] == "run" {
				id = strings.TrimSuffix(f[2], ":")
			}
			if !closed && (strings.Contains(l, "done in") || strings.Contains(l, "interrupted")) {
				close(searched)
				closed = true
			}
		}
		if !closed {
			close(searched)
		}
		lines <- id
	}()
	exited := make(chan struct{})
	sent := make(chan time.Time, 1)
	if stop != nil {
		go func() {
			if stop.AfterSearch {
				<-searched
			}
			select {
			case <-time.After(stop.Delay):
				t := time.Now()
				if cmd.Process.Signal(stop.Signal) != nil {
					t = time.Time{}
				}
				sent <- t
			case <-exited:
				sent <- time.Time{}
			}
		}()
	} else {
		sent <- time.Time{}
	}
	o.RunID = <-lines
	err = cmd.Wait()
	o.End = time.Now()
	close(exited)
	o.Sent = <-sent
	if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
		o.MaxRSS = ru.Maxrss
	}
	var ee *exec.ExitError
	switch {
	case err == nil:
	case errors.As(err, &ee):
		o.Code = ee.ExitCode()
		if ws, ok := ee.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
			o.Code = 128 + int(ws.Signal())
		}
	default:
		return o, err
	}
	return o, nil
}
