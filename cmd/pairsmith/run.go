package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
	"time"

	"github.com/spf13/cobra"

	"pairsmith/objectives"
	"pairsmith/optimize"
	"pairsmith/report"
	"pairsmith/sizing"
	"pairsmith/units"
)

// runFlags are the settings of `run` given on the command line.
type runFlags struct {
	out         string
	evaluations int
	time        string
	timeBudget  time.Duration // time parsed by check
	seed        int64
	workers     int
	force       bool
}

// check validates the flags that were given; an error here is a usage
// error (exit 2, with the usage after it).
func (f *runFlags) check(cmd *cobra.Command) error {
	fl := cmd.Flags()
	if f.out == "" {
		return errors.New("run: want an output directory (-o DIR)")
	}
	if fl.Changed("evaluations") && (f.evaluations < 1 || f.evaluations > objectives.MaxEvaluations) {
		return fmt.Errorf("--evaluations %d: want a whole number from 1 to %d", f.evaluations, objectives.MaxEvaluations)
	}
	if fl.Changed("workers") && f.workers < 0 {
		return fmt.Errorf("--workers %d: want 0 (one per core) or a positive number", f.workers)
	}
	if fl.Changed("time") {
		d, err := objectives.ParseTimeBudget(f.time)
		if err != nil {
			return fmt.Errorf("--time %q: %w; want %s", f.time, err, objectives.TimeBudgetWant)
		}
		f.timeBudget = d
	}
	return nil
}

// apply overrides the spec's search settings with the flags given, so
// that summary.json's spec records what was run. The flags were checked
// by check and the spec's settings by LoadSpec, so the result is valid.
func (f *runFlags) apply(cmd *cobra.Command, spec *objectives.Spec) {
	fl := cmd.Flags()
	if fl.Changed("evaluations") {
		spec.Search.Evaluations = f.evaluations
	}
	if fl.Changed("seed") {
		spec.Search.Seed = f.seed
	}
	if fl.Changed("workers") {
		spec.Search.Workers = f.workers
	}
	if fl.Changed("time") {
		spec.Search.Time = f.timeBudget
	}
}

// loadSpec reads a spec sheet; any failure is bad input.
func loadSpec(path string) (*objectives.Spec, error) {
	spec, err := objectives.LoadSpec(path)
	if err != nil {
		var ue *units.Error
		if errors.As(err, &ue) {
			return nil, err // names its own file, line and field
		}
		return nil, badInput("%w", err) // "spec: open PATH: …"
	}
	return spec, nil
}

func newRunCmd(stdout, stderr io.Writer) *cobra.Command {
	f := &runFlags{}
	c := &cobra.Command{
		Use:   "run SPEC.yaml -o DIR",
		Short: "Search the families for stages that meet a spec sheet",
		Long: "Read a spec sheet (targets, budgets, the families to try and the search budget),\n" +
			"search topology and sizing with a genetic algorithm and Nelder-Mead refinement,\n" +
			"and write into DIR: summary.json, every reported candidate as a design file and\n" +
			"a testbench deck (candidates/), pareto.csv, pareto.svg, curves.svg and\n" +
			"report.html. stdout gets the families ranked with each one's best candidate;\n" +
			"stderr shows progress. The flags override the spec's search settings.\n\n" +
			"DIR holds one run's results at a time, replaced whole: a directory that holds\n" +
			"another run's results is refused unless --force, and a second run into a\n" +
			"directory being written is refused. Ctrl-C or SIGTERM stops the search and\n" +
			"writes what was found.\n\n" +
			"Exit codes: 0 a candidate meets the spec, 3 none does (everything is still\n" +
			"written, with the nearest candidates and the targets that bind), 4 the run was\n" +
			"interrupted (what was found is written), 2 bad input, 1 anything else.",
		Args: oneFile("spec sheet (SPEC.yaml)"),
		PreRunE: func(cmd *cobra.Command, _ []string) error {
			return f.check(cmd)
		},
	}
	c.RunE = work(func(args []string) error { return runSearch(c, f, args[0], stdout, stderr) })
	fl := c.Flags()
	fl.StringVarP(&f.out, "output", "o", "", "write the results into `DIR` (created if missing)")
	fl.IntVar(&f.evaluations, "evaluations", 0, "evaluation budget `N` (overrides the spec's search.evaluations)")
	fl.StringVar(&f.time, "time", "", "time budget `D` such as 10m or 1h30m; the search stops at whichever budget ends first")
	fl.Int64Var(&f.seed, "seed", 0, "random seed `S` (overrides search.seed); the same seed gives the same result")
	fl.IntVar(&f.workers, "workers", 0, "evaluate on `W` goroutines, 0 for one per core (does not change the result)")
	fl.BoolVar(&f.force, "force", false, "replace the results of an earlier run in DIR (they stay until the new ones are written)")
	return c
}

// runSearch is the work of `run`.
func runSearch(cmd *cobra.Command, f *runFlags, specPath string, stdout, stderr io.Writer) error {
	spec, err := loadSpec(specPath)
	if err != nil {
		return err
	}
	f.apply(cmd, spec)
	// Take the output directory now: one that cannot be written, holds
	// another run's results or is being written by another run is found
	// before the search, not after.
	rd, err := report.OpenRunDir(f.out, f.force)
	if err != nil {
		return err
	}
	defer rd.Close()
	// Ctrl-C, and SIGTERM (what timeout, systemd and batch schedulers
	// send), stop the search; what was found is still written. A second
	// one ends the program at once: the directory then keeps the earlier
	// results, since the new ones replace them whole or not at all.
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	go func() {
		<-ctx.Done()
		stop()
	}()

	workers := spec.Search.WorkerCount()
	var deadline time.Time
	if spec.Search.Time > 0 {
		deadline = time.Now().Add(spec.Search.Time)
	}
	budget := fmt.Sprintf("%d evaluations", spec.Search.Evaluations)
	if spec.Search.Time > 0 {
		budget += " or " + spec.Search.Time.String()
	}
	fmt.Fprintf(stderr, "pairsmith run %s: %q, %d families, budget %s, seed %d, %d workers\n",
		rd.ID, spec.Name, len(spec.Topologies), budget, spec.Search.Seed, workers)
	if rd.Previous != "" {
		fmt.Fprintf(stderr, "pairsmith run: the results of run %s in %s are replaced when this run has written its own\n", rd.Previous, f.out)
	}
	pr := newProgress(stderr, deadline)
	pr.start()
	res, err := sizing.Search(ctx, spec, sizing.Options{Strategy: optimize.Hybrid, Progress: pr.update})
	pr.finish()
	if err != nil {
		return fmt.Errorf("run %s: %w", specPath, err)
	}
	for _, err := range res.Unreported {
		fmt.Fprintf(stderr, "pairsmith run: a candidate is left out of the results: %v\n", err)
	}
	interrupted := ctx.Err() != nil && (res.Evaluations < spec.Search.Evaluations || res.Truncated)
	if interrupted {
		fmt.Fprintf(stderr, "pairsmith run: interrupted after %d evaluations; writing what was found\n", res.Evaluations)
	}
	if err := report.WriteRun(rd.Stage(), res, report.RunOptions{Strategy: optimize.Hybrid, Workers: workers,
		Interrupted: interrupted, RunID: rd.ID}); err != nil {
		return err
	}
	if err := rd.Commit(); err != nil {
		return err
	}
	if err := report.RunTable(stdout, res, f.out); err != nil {
		return err
	}
	switch {
	case interrupted:
		return &interruptedError{evaluations: res.Evaluations, dir: f.out}
	case res.Best == nil:
		return &infeasibleError{binding: res.Binding, at: res.BindingAt, dir: f.out}
	}
	return nil
}
