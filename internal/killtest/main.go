// Command killtest stops `pairsmith run` with SIGINT, SIGTERM and SIGKILL
// at random moments — during the search and while it writes its results —
// and checks after each round that the output directory holds either the
// earlier complete result or the new complete one, never a mix, and that
// `eval` of every listed candidate reproduces summary.json bit for bit
// (resultcheck.Verify). scripts/kill-test builds pairsmith and runs it.
//
//	go run ./internal/killtest -bin ./pairsmith -rounds 30
package main

import (
	"bufio"
	"errors"
	"flag"
	"fmt"
	"math/rand"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"time"

	"pairsmith/internal/resultcheck"
)

func main() {
	var (
		bin         = flag.String("bin", "pairsmith", "the pairsmith binary")
		spec        = flag.String("spec", "testdata/specs/strain-gauge.yaml", "the spec sheet to run")
		evaluations = flag.Int("evaluations", 4000, "the budget of each run")
		rounds      = flag.Int("rounds", 24, "how many interrupted runs")
		seed        = flag.Int64("seed", time.Now().UnixNano(), "seed of the random moments")
		dir         = flag.String("dir", "", "output directory (default: a fresh temporary one)")
	)
	flag.Parse()
	if err := killTest(*bin, *spec, *dir, *evaluations, *rounds, *seed); err != nil {
		fmt.Fprintln(os.Stderr, "killtest:", err)
		os.Exit(1)
	}
}

// signals are the ways a round stops the run.
var signals = []syscall.Signal{syscall.SIGINT, syscall.SIGTERM, syscall.SIGKILL}

func killTest(bin, spec, dir string, evaluations, rounds int, seed int64) error {
	if dir == "" {
		tmp, err := os.MkdirTemp("", "killtest")
		if err != nil {
			return err
		}
		defer os.RemoveAll(tmp)
		dir = filepath.Join(tmp, "out")
	}
	rng := rand.New(rand.NewSource(seed))
	fmt.Printf("killtest: seed %d, %d rounds of %d evaluations into %s\n", seed, rounds, evaluations, dir)

	// A first run to completion: the earlier result of the first round.
	start := time.Now()
	if code, err := runOnce(bin, spec, dir, evaluations, nil); err != nil || (code != 0 && code != 3) {
		return fmt.Errorf("the first run: exit %d, %v", code, err)
	}
	whole := time.Since(start)
	current, err := resultcheck.Verify(dir)
	if err != nil {
		return fmt.Errorf("after the first run: %w", err)
	}
	passed, failed := 0, 0
	for round := range rounds {
		sig := signals[round%len(signals)]
		// Half the rounds stop the run at a random moment of its whole
		// length; the other half at a random moment after its search,
		// while it re-evaluates and writes.
		k := &kill{sig: sig, afterSearch: round%2 == 1}
		if k.afterSearch {
			k.delay = time.Duration(rng.Int63n(int64(300 * time.Millisecond)))
		} else {
			k.delay = time.Duration(rng.Int63n(int64(whole * 12 / 10)))
		}
		code, err := runOnce(bin, spec, dir, evaluations, k)
		verdict := ""
		switch got, verr := resultcheck.Verify(dir); {
		case err != nil:
			verdict = err.Error()
		case verr != nil:
			verdict = "a broken result: " + verr.Error()
		case got != current && got != k.runID:
			verdict = fmt.Sprintf("results of run %s, neither the earlier %s nor this round's %s", got, current, k.runID)
		case got == current && (code == 0 || code == 3 || code == 4):
			verdict = fmt.Sprintf("exit %d but the earlier run's results are still there", code)
		case k.sent && sig != syscall.SIGKILL && code != 4 && code != 0 && code != 3:
			verdict = fmt.Sprintf("exit %d after %v, want 4 (interrupted), or 0 or 3 if it had finished", code, sig)
		default:
			current = got
		}
		what := "the earlier result"
		if current == k.runID {
			what = "the new result"
		}
		if verdict == "" {
			passed++
			fmt.Printf("round %2d: %-7v %s after %-6v exit %3d, %s\n", round+1, sig, k.when(), k.delay.Round(time.Millisecond), code, what)
		} else {
			failed++
			fmt.Printf("round %2d: %-7v %s after %-6v exit %3d: FAIL: %s\n", round+1, sig, k.when(), k.delay.Round(time.Millisecond), code, verdict)
		}
	}
	fmt.Printf("%d passed, %d failed\n", passed, failed)
	if failed > 0 {
		return errors.New("some rounds left a broken or mixed result")
	}
	return nil
}

// kill says how a round stops its run.
type kill struct {
	sig         syscall.Signal
	delay       time.Duration
	afterSearch bool   // count the delay from the end of the search
	sent        bool   // the signal was sent before the run ended
	runID       string // the run's id, from its first stderr line
}

func (k *kill) when() string {
	if k.afterSearch {
		return "after the search"
	}
	return "from the start  "
}

// runOnce runs pairsmith into dir (replacing its results) and, with k,
// stops it; it returns the exit code (128 + the signal when killed).
func runOnce(bin, spec, dir string, evaluations int, k *kill) (int, error) {
	cmd := exec.Command(bin, "run", spec, "-o", dir, "--force", "--evaluations", strconv.Itoa(evaluations))
	stderr, err := cmd.StderrPipe()
	if err != nil {
		return 0, err
	}
	if err := cmd.Start(); err != nil {
		return 0, err
	}
	searched := make(chan struct{})
	lines := make(chan struct{})
	go func() {
		defer close(lines)
		sc := bufio.NewScanner(stderr)
		closed := false
		for sc.Scan() {
			l := sc.Text()
			if k != nil && k.runID == "" {
				if f := strings.Fields(l); len(f) > 2 && f[0] == "pairsmith" && f[1] == "run" {
					k.runID = strings.TrimSuffix(f[2], ":")
				}
			}
			if !closed && (strings.Contains(l, "done in") || strings.Contains(l, "interrupted")) {
				close(searched)
				closed = true
			}
		}
		if !closed {
			close(searched)
		}
	}()
	exited := make(chan struct{})
	sent := make(chan bool, 1)
	if k != nil {
		go func() {
			if k.afterSearch {
				<-searched
			}
			select {
			case <-time.After(k.delay):
				sent <- cmd.Process.Signal(k.sig) == nil
			case <-exited:
				sent <- false
			}
		}()
	} else {
		sent <- false
	}
	<-lines
	err = cmd.Wait()
	close(exited)
	if k != nil {
		k.sent = <-sent
	}
	var ee *exec.ExitError
	switch {
	case err == nil:
		return 0, nil
	case errors.As(err, &ee):
		if ws, ok := ee.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
			return 128 + int(ws.Signal()), nil
		}
		return ee.ExitCode(), nil
	}
	return 0, err
}
