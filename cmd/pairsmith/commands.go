package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"
	"runtime/pprof"
	"strings"

	"github.com/spf13/cobra"

	"pairsmith/objectives"
	"pairsmith/report"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// run runs the program with args (without the program name), writing to
// stdout and stderr, and returns the exit code.
func run(args []string, stdout, stderr io.Writer) int {
	var prof cpuProfile
	root := newRoot(stdout, stderr)
	root.PersistentFlags().StringVar(&prof.path, "cpu-profile", "",
		"write a CPU profile of the command to `FILE` (go tool pprof; scripts/pgo-profile)")
	root.PersistentPreRunE = func(*cobra.Command, []string) error {
		if err := prof.start(); err != nil {
			return &runError{err}
		}
		return nil
	}
	root.SetArgs(args)
	cmd, err := root.ExecuteC()
	if perr := prof.stop(); err == nil && perr != nil {
		err = &runError{perr}
	}
	if err != nil {
		return reportError(stderr, cmd, err)
	}
	return exitOK
}

// cpuProfile is the --cpu-profile flag's profile: started before a
// command's work, stopped and written when the command ends, whatever its
// outcome.
type cpuProfile struct {
	path string
	f    *os.File
}

// start opens the profile's file and starts profiling; a file that cannot
// be created is bad input.
func (p *cpuProfile) start() error {
	if p.path == "" {
		return nil
	}
	f, err := os.Create(p.path)
	if err != nil {
		return badInput("--cpu-profile: %w", err)
	}
	if err := pprof.StartCPUProfile(f); err != nil {
		f.Close()
		return fmt.Errorf("--cpu-profile: %w", err)
	}
	p.f = f
	return nil
}

// stop ends profiling and closes the file, if start opened one.
func (p *cpuProfile) stop() error {
	if p.f == nil {
		return nil
	}
	pprof.StopCPUProfile()
	err := p.f.Close()
	p.f = nil
	if err != nil {
		return fmt.Errorf("--cpu-profile: %w", err)
	}
	return nil
}

// newRoot builds the command tree. Cobra prints neither errors nor usage
// itself: run does, so that the first line on stderr is always ours.
func newRoot(stdout, stderr io.Writer) *cobra.Command {
	root := &cobra.Command{
		Use:   "pairsmith",
		Short: "Design rail-to-rail op-amp input stages with flat gm",
		Long: "pairsmith evaluates sized rail-to-rail input stages (an NMOS and a PMOS\n" +
			"differential pair and the circuit that keeps their summed gm flat) with a DC\n" +
			"circuit solver and compact MOSFET models, searches topology and sizing for the\n" +
			"stages that meet a spec sheet, and writes SPICE netlists of them.\n\n" +
			objectives.Caution,
		Version:           version(),
		SilenceErrors:     true,
		SilenceUsage:      true,
		CompletionOptions: cobra.CompletionOptions{DisableDefaultCmd: true},
	}
	root.SetOut(stdout)
	root.SetErr(stderr)
	root.SetVersionTemplate("pairsmith {{.Version}}\n")
	root.AddCommand(newRunCmd(stdout, stderr), newTopologiesCmd(stdout), newEvalCmd(stdout, stderr), newNetlistCmd(stdout, stderr))
	return root
}

// work wraps a command's own work so that its errors are told apart from
// cobra's flag and argument errors.
func work(f func(args []string) error) func(*cobra.Command, []string) error {
	return func(_ *cobra.Command, args []string) error {
		if err := f(args); err != nil {
			return &runError{err}
		}
		return nil
	}
}

// oneFile returns a cobra.PositionalArgs that accepts exactly one
// argument, the file what names ("design file (DESIGN.yaml)").
func oneFile(what string) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		if len(args) != 1 {
			return fmt.Errorf("%s: want one %s, got %d arguments", cmd.Name(), what, len(args))
		}
		return nil
	}
}

// loadDesign reads a design file; any failure is bad input.
func loadDesign(path string) (*objectives.Design, error) {
	d, err := objectives.LoadDesign(path)
	if err != nil {
		var ue *units.Error
		if errors.As(err, &ue) {
			return nil, err // names its own file and line
		}
		return nil, badInput("design %s: %w", path, err)
	}
	return d, nil
}

// writeOut writes data to path, or to stdout when path is "".
func writeOut(stdout io.Writer, path string, data []byte) error {
	if path == "" {
		_, err := stdout.Write(data)
		return err
	}
	if err := os.WriteFile(path, data, 0o644); err != nil {
		return &report.OutputError{Path: path, Err: err}
	}
	return nil
}

func newTopologiesCmd(stdout io.Writer) *cobra.Command {
	var asJSON bool
	c := &cobra.Command{
		Use:   "topologies",
		Short: "List the input-stage families and their parameters",
		Long: "List every input-stage family with a one-line description and its parameters:\n" +
			"name, unit, bounds, search scale, default and meaning. With --json the numbers\n" +
			"are in SI units.",
		Args: cobra.NoArgs,
		RunE: work(func([]string) error {
			if asJSON {
				return writeJSON(stdout, familiesDoc())
			}
			return report.FamiliesTable(stdout, topologies.All())
		}),
	}
	c.Flags().BoolVar(&asJSON, "json", false, "write JSON (numbers in SI units)")
	return c
}

// familiesJSON is the document `topologies --json` writes.
type familiesJSON struct {
	Families []familyJSON `json:"families"`
}

type familyJSON struct {
	Name    string      `json:"name"`
	Summary string      `json:"summary"`
	Params  []paramJSON `json:"params"`
}

type paramJSON struct {
	Name    string  `json:"name"`
	Unit    string  `json:"unit"` // SI unit; "" for a plain number or fraction
	Min     float64 `json:"min"`
	Max     float64 `json:"max"`
	Scale   string  `json:"scale"` // "lin", "log" or "choice"
	Default float64 `json:"default"`
	Doc     string  `json:"doc"`
	// Choices are a choice's words; its values are their indices.
	Choices []string `json:"choices,omitempty"`
}

func familiesDoc() familiesJSON {
	doc := familiesJSON{Families: []familyJSON{}}
	for _, f := range topologies.All() {
		fj := familyJSON{Name: f.Name(), Summary: f.Summary(), Params: []paramJSON{}}
		for _, p := range f.Params() {
			fj.Params = append(fj.Params, paramJSON{
				Name: p.Name, Unit: report.UnitSymbol(p.Unit), Min: p.Min, Max: p.Max,
				Scale: p.Scale.String(), Default: p.Default, Doc: p.Doc, Choices: p.Choices,
			})
		}
		doc.Families = append(doc.Families, fj)
	}
	return doc
}

func writeJSON(w io.Writer, v any) error {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		return fmt.Errorf("write JSON: %w", err)
	}
	_, err := w.Write(b.Bytes())
	return err
}

func newEvalCmd(stdout, stderr io.Writer) *cobra.Command {
	var (
		asJSON, devices, plotSet bool
		plotPath                 string
		cond                     conditionFlags
		samples                  int
		seed                     int64
	)
	c := &cobra.Command{
		Use:   "eval DESIGN.yaml",
		Short: "Evaluate one sized design over its common-mode sweep",
		Long: "Evaluate a design file: sweep the common mode, solve the circuit at every point\n" +
			"and print gm_min, gm_max, gm_ripple, power, area, switchover and transition\n" +
			"width. --json writes the full document (curve, metrics, devices at mid-sweep);\n" +
			"--plot draws gm and the two pair currents against vcm.",
		Args: oneFile("design file (DESIGN.yaml)"),
		RunE: work(func(args []string) error {
			if plotSet {
				if _, err := report.PlotFormat(plotPath); err != nil {
					return err
				}
			}
			d, err := loadDesign(args[0])
			if err != nil {
				return err
			}
			if d, err = cond.apply(d); err != nil {
				return err
			}
			// One evaluation keeps nearly all it allocates (the sweep's
			// columns): collecting at every doubling of a heap that only
			// grows is wasted work, 5 % of a long sweep's wall time
			// (scripts/bench-vs-ngspice). The heap's peak stays near what
			// the evaluation keeps.
			debug.SetGCPercent(evalGCPercent)
			if samples < 0 || samples == 1 || samples > objectives.MaxSamples {
				return badInput("--monte-carlo %d: want 2 to %d samples (0 for the sensitivity estimate)", samples, objectives.MaxSamples)
			}
			if samples > 0 && !d.Process.Mismatch.Given {
				return badInput("--monte-carlo: process %s gives no mismatch coefficients (a mismatch section in its file)", d.Process.Name)
			}
			ev, err := objectives.EvaluateWith(d, objectives.EvalOptions{MonteCarlo: samples, Seed: seed})
			if err != nil {
				return fmt.Errorf("eval %s: %w", args[0], err)
			}
			if asJSON {
				if err := writeJSON(stdout, ev.Doc()); err != nil {
					return err
				}
			} else {
				if err := report.MetricsTable(stdout, ev); err != nil {
					return err
				}
				if err := report.FindingsTable(stdout, ev); err != nil {
					return err
				}
				if devices {
					if _, err := fmt.Fprintln(stdout); err != nil {
						return err
					}
					if err := report.DevicesTable(stdout, ev); err != nil {
						return err
					}
				}
			}
			if plotSet {
				if err := report.PlotEval(plotPath, ev); err != nil {
					return err
				}
				fmt.Fprintf(stderr, "plot written to %s\n", plotPath)
			}
			return nil
		}),
	}
	c.Flags().BoolVar(&asJSON, "json", false, "write the JSON document instead of the table")
	c.Flags().StringVar(&plotPath, "plot", "", "also draw gm and the pair currents to `FILE` (.svg or .png)")
	c.PreRun = func(cmd *cobra.Command, _ []string) { plotSet = cmd.Flags().Changed("plot") }
	c.Flags().BoolVar(&devices, "devices", false, "also list the transistors at the middle of the sweep")
	c.Flags().IntVar(&samples, "monte-carlo", 0, "estimate mismatch from `N` Monte Carlo samples instead of sensitivities")
	c.Flags().Int64Var(&seed, "seed", 1, "random seed of the Monte Carlo samples")
	cond.add(c)
	return c
}

// level1EquivalentFlag is the flag that asks `netlist --testbench` for the
// level-1 equivalent of an EKV process.
const level1EquivalentFlag = "level1-equivalent"

func newNetlistCmd(stdout, stderr io.Writer) *cobra.Command {
	var (
		testbench, dc, equivalent bool
		out                       string
		cond                      conditionFlags
		sample                    int
		sampled                   bool // --mismatch-sample given
		seed                      int64
	)
	c := &cobra.Command{
		Use:   "netlist DESIGN.yaml",
		Short: "Write a design as a SPICE .subckt or a self-contained testbench",
		Long: "Write the stage of a design file as a SPICE .subckt (no model cards: include\n" +
			"your own). With --testbench, write a deck that ngspice -b runs as it is: model\n" +
			"cards, the supply VDD, the inputs from VCM and VID, and VOUT, whose current is\n" +
			"the differential output current (gm = d I(VOUT) / d VID). --dc adds the design's\n" +
			"sweep and a .control block that runs it at VID = +0.1 mV and -0.1 mV and prints gm\n" +
			"against VCM.\n\n" +
			"ngspice cannot simulate EKV processes (demo18, demo33): for them --testbench\n" +
			"refuses (exit 2) unless --" + level1EquivalentFlag + " asks for a deck with the nearest\n" +
			"level-1 cards, whose numbers differ from pairsmith's EKV results (its first lines\n" +
			"say how).",
		Args: oneFile("design file (DESIGN.yaml)"),
		RunE: work(func(args []string) error {
			d, err := loadDesign(args[0])
			if err != nil {
				return err
			}
			if d, err = cond.apply(d); err != nil {
				return err
			}
			st, err := objectives.Build(d)
			if err != nil {
				return fmt.Errorf("netlist %s: %w", args[0], err)
			}
			if sampled {
				if !d.Process.Mismatch.Given {
					return badInput("--mismatch-sample: process %s gives no mismatch coefficients (a mismatch section in its file)", d.Process.Name)
				}
				one := *st
				one.Circuit = objectives.WithShifts(st.Circuit, objectives.MismatchShifts(st, d.Process, seed, sample))
				st = &one
			}
			var b bytes.Buffer
			what := "netlist"
			model := report.DeckModel(d.Process)
			if testbench {
				what = "testbench"
				err = report.Testbench(&b, d, st, report.TestbenchOptions{DC: dc, Level1Equivalent: equivalent})
			} else {
				err = report.Subckt(&b, d, st)
			}
			kind := report.KindName(d.Process.Kind)
			var nm *report.NoSpiceModelError
			if errors.As(err, &nm) {
				alt := "a level-1 process"
				if _, ok := device.Builtin(d.Process.Name + "-l1"); ok {
					alt = "a level-1 process (" + d.Process.Name + "-l1 has " + d.Process.Name + "'s numbers on level-1 cards)"
				}
				return badInput("netlist %s: %v; no deck written. Add --%s for a deck with the nearest "+
					"level-1 cards (its numbers differ from pairsmith's %s results), or use %s",
					args[0], err, level1EquivalentFlag, kind, alt)
			}
			if err != nil {
				return fmt.Errorf("netlist %s: %w", args[0], err)
			}
			if err := writeOut(stdout, out, b.Bytes()); err != nil {
				return err
			}
			switch {
			case model == report.DeckLevel1Equivalent && testbench:
				fmt.Fprintf(stderr, "pairsmith: note: process %s uses the %s model, which ngspice cannot simulate; "+
					"the deck carries its nearest level-1 equivalent (its first lines say how the cards were mapped), "+
					"and its numbers differ from pairsmith's %s results, most in weak and moderate inversion\n",
					d.Process.Name, kind, kind)
			case model == report.DeckLevel1Equivalent:
				fmt.Fprintf(stderr, "pairsmith: note: the .subckt carries no model cards; process %s uses the %s model, "+
					"which ngspice cannot simulate: include your foundry's models, or use --testbench --%s\n",
					d.Process.Name, kind, level1EquivalentFlag)
			case equivalent:
				fmt.Fprintf(stderr, "pairsmith: note: process %s is level 1 already; the deck carries its own cards\n", d.Process.Name)
			}
			if out != "" {
				fmt.Fprintf(stderr, "%s written to %s\n", what, out)
			}
			return nil
		}),
	}
	c.Flags().BoolVar(&testbench, "testbench", false, "write a self-contained deck for ngspice -b")
	c.Flags().BoolVar(&dc, "dc", false, "with --testbench, add the design's common-mode sweep and print gm against VCM")
	c.Flags().BoolVar(&equivalent, level1EquivalentFlag, false,
		"with --testbench, write an EKV process's nearest level-1 equivalent instead of refusing")
	c.Flags().StringVarP(&out, "output", "o", "", "write to `FILE` instead of stdout")
	c.Flags().IntVar(&sample, "mismatch-sample", 0, "with --testbench, give each transistor its own card: Monte Carlo sample `K` (0, 1, ...) of eval --monte-carlo")
	c.Flags().Int64Var(&seed, "seed", 1, "random seed of --mismatch-sample, as eval --monte-carlo's")
	cond.add(c)
	c.PreRunE = func(cmd *cobra.Command, _ []string) error {
		sampled = cmd.Flags().Changed("mismatch-sample")
		if sampled && !testbench {
			return errors.New("--mismatch-sample needs --testbench")
		}
		if sample < 0 {
			return fmt.Errorf("--mismatch-sample %d: want a sample number from 0", sample)
		}
		if dc && !testbench {
			return errors.New("--dc needs --testbench")
		}
		if equivalent && !testbench {
			return errors.New("--" + level1EquivalentFlag + " needs --testbench")
		}
		if equivalent && sampled {
			return errors.New("--mismatch-sample gives each transistor a card of its own, which a --" + level1EquivalentFlag +
				" deck cannot carry: use a level-1 process")
		}
		return nil
	}
	return c
}

// evalGCPercent is the garbage collector's target `eval` runs with
// (runtime/debug.SetGCPercent; Go's default is 100).
const evalGCPercent = 400

// conditionFlags put a design under another condition than its file's:
// a process corner, a supply, a temperature (objectives.Design.At).
type conditionFlags struct {
	corner, supply, temperature string
}

// add declares the flags on c.
func (f *conditionFlags) add(c *cobra.Command) {
	c.Flags().StringVar(&f.corner, "corner", "", "at the process corner `NAME` (tt, ff, ss, ... as the process defines)")
	c.Flags().StringVar(&f.supply, "supply", "", "at the supply `V` instead of the design's, for example 1.98V")
	c.Flags().StringVar(&f.temperature, "temperature", "", "at the temperature `T` instead of the design's, for example 125C")
}

// apply returns d under the flags' condition (d itself when none is
// given); a bad value is bad input naming its flag.
func (f *conditionFlags) apply(d *objectives.Design) (*objectives.Design, error) {
	if f.corner == "" && f.supply == "" && f.temperature == "" {
		return d, nil
	}
	supply, tempK := d.Supply, d.TempK
	var err error
	if f.supply != "" {
		if supply, err = units.Parse(f.supply, units.Volt); err != nil {
			return nil, badInput("--supply: %w", err)
		}
	}
	if f.temperature != "" {
		if tempK, err = units.Parse(f.temperature, units.Temperature); err != nil {
			return nil, badInput("--temperature: %w", err)
		}
	}
	out, err := d.At(f.corner, supply, tempK)
	if err != nil {
		var given []string
		for _, g := range []struct{ flag, v string }{{"--corner", f.corner}, {"--supply", f.supply}, {"--temperature", f.temperature}} {
			if g.v != "" {
				given = append(given, g.flag+" "+g.v)
			}
		}
		return nil, badInput("%s: %w", strings.Join(given, ", "), err)
	}
	return out, nil
}
