// Command benchinterrupt measures a long `pairsmith run`: its wall time
// and peak memory to completion, and the time from SIGINT (and SIGTERM)
// to exit when the run is stopped at given fractions of that time — the
// search's phases and the re-evaluation and writing after it.
// scripts/bench-interrupt builds pairsmith and runs it.
//
//	go run ./internal/benchinterrupt -bin ./pairsmith -evaluations 200000
package main

import (
	"bufio"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"time"
)

func main() {
	var (
		bin         = flag.String("bin", "pairsmith", "the pairsmith binary")
		spec        = flag.String("spec", "testdata/specs/strain-gauge.yaml", "the spec sheet to run")
		evaluations = flag.Int("evaluations", 200000, "the budget of the run")
		at          = flag.String("at", "0.1,0.5,0.9,0.99", "fractions of the whole run's time at which to interrupt")
	)
	flag.Parse()
	if err := bench(*bin, *spec, *evaluations, *at); err != nil {
		fmt.Fprintln(os.Stderr, "benchinterrupt:", err)
		os.Exit(1)
	}
}

func bench(bin, spec string, evaluations int, at string) error {
	tmp, err := os.MkdirTemp("", "benchinterrupt")
	if err != nil {
		return err
	}
	defer os.RemoveAll(tmp)
	out := filepath.Join(tmp, "out")
	whole, rss, code, _, err := run(bin, spec, out, evaluations, 0, 0)
	if err != nil {
		return err
	}
	fmt.Printf("%d evaluations: %.1f s, peak resident memory %.0f MB, exit %d\n", evaluations, whole.Seconds(), float64(rss)/1024, code)
	for _, f := range strings.Split(at, ",") {
		frac, err := strconv.ParseFloat(f, 64)
		if err != nil {
			return fmt.Errorf("-at %q: %w", f, err)
		}
		for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM} {
			delay := time.Duration(frac * float64(whole))
			_, _, code, latency, err := run(bin, spec, out, evaluations, sig, delay)
			if err != nil {
				return err
			}
			if latency == 0 {
				fmt.Printf("%v at %3.0f %% (%5.1f s): the run had ended, exit %d\n", sig, 100*frac, delay.Seconds(), code)
				continue
			}
			fmt.Printf("%v at %3.0f %% (%5.1f s): exit %d, %4.0f ms from the signal to exit\n",
				sig, 100*frac, delay.Seconds(), code, latency.Seconds()*1000)
		}
	}
	return nil
}

// run runs pairsmith once; with sig it sends sig after delay and returns
// the time from the signal to the exit.
func run(bin, spec, dir string, evaluations int, sig syscall.Signal, delay time.Duration) (whole time.Duration, rssKB int64, code int, latency time.Duration, err error) {
	cmd := exec.Command(bin, "run", spec, "-o", dir, "--force", "--evaluations", strconv.Itoa(evaluations))
	stderr, err := cmd.StderrPipe()
	if err != nil {
		return 0, 0, 0, 0, err
	}
	start := time.Now()
	if err := cmd.Start(); err != nil {
		return 0, 0, 0, 0, err
	}
	go func() { // drain stderr
		sc := bufio.NewScanner(stderr)
		for sc.Scan() {
		}
	}()
	var sent time.Time
	exited := make(chan struct{})
	signalled := make(chan time.Time, 1)
	if sig != 0 {
		go func() {
			select {
			case <-time.After(delay):
				t := time.Now()
				_ = cmd.Process.Signal(sig)
				signalled <- t
			case <-exited:
				signalled <- time.Time{}
			}
		}()
	}
	werr := cmd.Wait()
	end := time.Now()
	close(exited)
	if sig != 0 {
		sent = <-signalled
		if !sent.IsZero() {
			latency = end.Sub(sent)
		}
	}
	if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
		rssKB = ru.Maxrss
	}
	code = cmd.ProcessState.ExitCode()
	if werr != nil && code < 0 {
		return 0, 0, 0, 0, werr
	}
	return end.Sub(start), rssKB, code, latency, nil
}
