// Command benchinterrupt measures a long `pairsmith run`: its wall time
// and peak memory to completion, and the time from SIGINT (and SIGTERM)
// to exit when the run is stopped at given fractions of that time — the
// search's phases and the re-evaluation and writing after it.
// scripts/bench-interrupt builds pairsmith and runs it.
//
//	go run ./internal/benchinterrupt -bin ./pairsmith -evaluations 200000
package main

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"time"

	"pairsmith/internal/signalrun"
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
	full, err := signalrun.Run(bin, spec, out, evaluations, nil)
	if err != nil {
		return err
	}
	whole := full.End.Sub(full.Start)
	fmt.Printf("%d evaluations: %.1f s, peak resident memory %.0f MB, exit %d\n", evaluations, whole.Seconds(), float64(full.MaxRSS)/1024, full.Code)
	for _, f := range strings.Split(at, ",") {
		frac, err := strconv.ParseFloat(f, 64)
		if err != nil {
			return fmt.Errorf("-at %q: %w", f, err)
		}
		for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM} {
			delay := time.Duration(frac * float64(whole))
			o, err := signalrun.Run(bin, spec, out, evaluations, &signalrun.Stop{Signal: sig, Delay: delay})
			if err != nil {
				return err
			}
			if o.Sent.IsZero() {
				fmt.Printf("%v at %3.0f %% (%5.1f s): the run had ended, exit %d\n", sig, 100*frac, delay.Seconds(), o.Code)
				continue
			}
			fmt.Printf("%v at %3.0f %% (%5.1f s): exit %d, %4.0f ms from the signal to exit\n",
				sig, 100*frac, delay.Seconds(), o.Code, o.End.Sub(o.Sent).Seconds()*1000)
		}
	}
	return nil
}
