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
	"errors"
	"flag"
	"fmt"
	"math/rand"
	"os"
	"path/filepath"
	"syscall"
	"time"

	"pairsmith/internal/resultcheck"
	"pairsmith/internal/signalrun"
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
	if o, err := signalrun.Run(bin, spec, dir, evaluations, nil); err != nil || (o.Code != 0 && o.Code != 3) {
		return fmt.Errorf("the first run: exit %d, %v", o.Code, err)
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
		stop := &signalrun.Stop{Signal: sig, AfterSearch: round%2 == 1}
		if stop.AfterSearch {
			stop.Delay = time.Duration(rng.Int63n(int64(300 * time.Millisecond)))
		} else {
			stop.Delay = time.Duration(rng.Int63n(int64(whole * 12 / 10)))
		}
		o, err := signalrun.Run(bin, spec, dir, evaluations, stop)
		code, sent := o.Code, !o.Sent.IsZero()
		verdict := ""
		switch got, verr := resultcheck.Verify(dir); {
		case err != nil:
			verdict = err.Error()
		case verr != nil:
			verdict = "a broken result: " + verr.Error()
		case got != current && got != o.RunID:
			verdict = fmt.Sprintf("results of run %s, neither the earlier %s nor this round's %s", got, current, o.RunID)
		case got == current && (code == 0 || code == 3 || code == 4):
			verdict = fmt.Sprintf("exit %d but the earlier run's results are still there", code)
		case sent && sig != syscall.SIGKILL && code != 4 && code != 0 && code != 3:
			verdict = fmt.Sprintf("exit %d after %v, want 4 (interrupted), or 0 or 3 if it had finished", code, sig)
		default:
			current = got
		}
		what := "the earlier result"
		if current == o.RunID {
			what = "the new result"
		}
		if verdict == "" {
			passed++
			fmt.Printf("round %2d: %-7v %s after %-6v exit %3d, %s\n", round+1, sig, when(stop), stop.Delay.Round(time.Millisecond), code, what)
		} else {
			failed++
			fmt.Printf("round %2d: %-7v %s after %-6v exit %3d: FAIL: %s\n", round+1, sig, when(stop), stop.Delay.Round(time.Millisecond), code, verdict)
		}
	}
	fmt.Printf("%d passed, %d failed\n", passed, failed)
	if failed > 0 {
		return errors.New("some rounds left a broken or mixed result")
	}
	return nil
}

// when says from which moment a stop's delay counts.
func when(s *signalrun.Stop) string {
	if s.AfterSearch {
		return "after the search"
	}
	return "from the start  "
}
