package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/spf13/cobra"

	"pairsmith/objectives"
	"pairsmith/report"
	"pairsmith/topologies"
	"pairsmith/units"
)

// run runs the program with args (without the program name), writing to
// stdout and stderr, and returns the exit code.
func run(args []string, stdout, stderr io.Writer) int {
	root := newRoot(stdout, stderr)
	root.SetArgs(args)
	cmd, err := root.ExecuteC()
	if err != nil {
		return reportError(stderr, cmd, err)
	}
	return exitOK
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
		SilenceErrors:     true,
		SilenceUsage:      true,
		CompletionOptions: cobra.CompletionOptions{DisableDefaultCmd: true},
	}
	root.SetOut(stdout)
	root.SetErr(stderr)
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
		return fmt.Errorf("write output: %w", err)
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
	Scale   string  `json:"scale"` // "lin" or "log"
	Default float64 `json:"default"`
	Doc     string  `json:"doc"`
}

func familiesDoc() familiesJSON {
	doc := familiesJSON{Families: []familyJSON{}}
	for _, f := range topologies.All() {
		fj := familyJSON{Name: f.Name(), Summary: f.Summary(), Params: []paramJSON{}}
		for _, p := range f.Params() {
			fj.Params = append(fj.Params, paramJSON{
				Name: p.Name, Unit: report.UnitSymbol(p.Unit), Min: p.Min, Max: p.Max,
				Scale: p.Scale.String(), Default: p.Default, Doc: p.Doc,
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
		asJSON, devices bool
		plotPath        string
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
			if plotPath != "" {
				if _, err := report.PlotFormat(plotPath); err != nil {
					return err
				}
			}
			d, err := loadDesign(args[0])
			if err != nil {
				return err
			}
			ev, err := objectives.Evaluate(d)
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
				if devices {
					if _, err := fmt.Fprintln(stdout); err != nil {
						return err
					}
					if err := report.DevicesTable(stdout, ev); err != nil {
						return err
					}
				}
			}
			if plotPath != "" {
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
	c.Flags().BoolVar(&devices, "devices", false, "also list the transistors at the middle of the sweep")
	return c
}

func newNetlistCmd(stdout, stderr io.Writer) *cobra.Command {
	var (
		testbench, dc bool
		out           string
	)
	c := &cobra.Command{
		Use:   "netlist DESIGN.yaml",
		Short: "Write a design as a SPICE .subckt or a self-contained testbench",
		Long: "Write the stage of a design file as a SPICE .subckt. With --testbench, write a\n" +
			"deck that ngspice -b runs as it is: model cards (level-1 processes), the supply\n" +
			"VDD, the inputs from VCM and VID, and VOUT, whose current is the differential\n" +
			"output current (gm = d I(VOUT) / d VID). --dc adds the design's sweep as .dc.",
		Args: oneFile("design file (DESIGN.yaml)"),
		RunE: work(func(args []string) error {
			d, err := loadDesign(args[0])
			if err != nil {
				return err
			}
			st, err := objectives.Build(d)
			if err != nil {
				return fmt.Errorf("netlist %s: %w", args[0], err)
			}
			var b bytes.Buffer
			what := "netlist"
			if testbench {
				what = "testbench"
				err = report.Testbench(&b, d, st, report.TestbenchOptions{DC: dc})
			} else {
				err = report.Subckt(&b, d, st)
			}
			if err != nil {
				return fmt.Errorf("netlist %s: %w", args[0], err)
			}
			if err := writeOut(stdout, out, b.Bytes()); err != nil {
				return err
			}
			if out != "" {
				fmt.Fprintf(stderr, "%s written to %s\n", what, out)
			}
			return nil
		}),
	}
	c.Flags().BoolVar(&testbench, "testbench", false, "write a self-contained deck for ngspice -b")
	c.Flags().BoolVar(&dc, "dc", false, "with --testbench, add the design's common-mode sweep as .dc")
	c.Flags().StringVarP(&out, "output", "o", "", "write to `FILE` instead of stdout")
	c.PreRunE = func(*cobra.Command, []string) error {
		if dc && !testbench {
			return errors.New("--dc needs --testbench")
		}
		return nil
	}
	return c
}
