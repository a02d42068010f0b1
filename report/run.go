package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"pairsmith/objectives"
	"pairsmith/optimize"
	"pairsmith/sim/device"
	"pairsmith/sizing"
	"pairsmith/topologies"
)

// The files of a run directory (issue 3, "What pairsmith run delivers").
// Candidate files live under CandidatesDir as <id>.yaml and <id>.cir.
const (
	SummaryFile    = "summary.json"
	ParetoCSVFile  = "pareto.csv"
	ParetoPlotFile = "pareto.svg"
	CurvesPlotFile = "curves.svg"
	// ConditionsPlotFile is the best candidate's gm at every condition.
	ConditionsPlotFile = "conditions.svg"
	// MonteCarloPlotFile is the best candidate's Monte Carlo histograms.
	MonteCarloPlotFile = "montecarlo.svg"
	ReportFile         = "report.html"
	CandidatesDir      = "candidates"
)

// CandidateDesign returns the path of a candidate's design file relative
// to the run directory, with forward slashes: "candidates/c01.yaml".
func CandidateDesign(id string) string { return path.Join(CandidatesDir, id+".yaml") }

// CandidateNetlist returns the path of a candidate's testbench deck
// relative to the run directory: "candidates/c01.cir".
func CandidateNetlist(id string) string { return path.Join(CandidatesDir, id+".cir") }

// Why a search ended before it had spent its evaluation budget, as
// summary.json's "stopped" gives it.
const (
	StoppedTime      = "time"      // the time budget ran out
	StoppedInterrupt = "interrupt" // the user stopped the run
)

// RunOptions say how a run was made, for what WriteRun writes beyond the
// result itself.
type RunOptions struct {
	// Strategy is the search strategy the result came from.
	Strategy optimize.Strategy
	// Workers is the number of workers the search ran on. report.html
	// shows it; summary.json leaves it out, since the result does not
	// depend on it.
	Workers int
	// Interrupted says the user stopped the search before its budget was
	// spent.
	Interrupted bool
	// RunID identifies the run (see RunDir); summary.json, every
	// candidate file and the report carry it. "" leaves it out.
	RunID string
}

// stopped says why the search ended early, "" when it spent its budget.
func (o RunOptions) stopped(res *sizing.Result) string {
	switch {
	case o.Interrupted:
		return StoppedInterrupt
	case res.Search != nil && res.Search.Stopped:
		return StoppedTime
	}
	return ""
}

// WriteRun writes the outcome of a spec's search into dir, which is
// created if missing: summary.json, every reported candidate as a design
// file and a testbench deck under candidates/, pareto.csv, the plots
// pareto.svg and curves.svg, and report.html, a page that shows it all
// offline. Files of those names are overwritten; other files in dir are
// left alone. summary.json is the same, byte for byte, for the same
// result, except for "seconds" and "evaluations_per_second".
func WriteRun(dir string, res *sizing.Result, opt RunOptions) error {
	if res == nil || res.Spec == nil {
		return fmt.Errorf("write run %s: no result", dir)
	}
	if err := os.MkdirAll(filepath.Join(dir, CandidatesDir), 0o755); err != nil {
		return fmt.Errorf("write run: %w", err)
	}
	write := func(rel string, data []byte) error {
		if err := os.WriteFile(filepath.Join(dir, filepath.FromSlash(rel)), data, 0o644); err != nil {
			return &OutputError{Path: dir, Err: err}
		}
		return nil
	}
	procData, procRef, err := processCopy(res.Spec)
	if err != nil {
		return err
	}
	if err := write(ProcessFile, procData); err != nil {
		return err
	}
	for _, c := range res.Candidates {
		if err := write(CandidateDesign(c.ID), CandidateFile(res.Spec, c, procRef, opt.RunID)); err != nil {
			return err
		}
		var deck bytes.Buffer
		st := c.Eval.Stage
		if st == nil {
			var err error
			if st, err = objectives.Build(c.Design); err != nil {
				return fmt.Errorf("write run: candidate %s: %w", c.ID, err)
			}
		}
		if err := Testbench(&deck, c.Design, st, TestbenchOptions{DC: true, Level1Equivalent: true, SummingCurrent: c.Eval.SummingCurrent}); err != nil {
			return fmt.Errorf("write run: candidate %s: %w", c.ID, err)
		}
		if err := write(CandidateNetlist(c.ID), withRunID(deck.Bytes(), c.ID, opt.RunID)); err != nil {
			return err
		}
	}
	summary, err := Summary(res, opt)
	if err != nil {
		return err
	}
	if err := write(SummaryFile, summary); err != nil {
		return err
	}
	csvData, err := ParetoCSV(res)
	if err != nil {
		return err
	}
	if err := write(ParetoCSVFile, csvData); err != nil {
		return err
	}
	plotSVG := func(name string, draw func(*sizing.Result) (*Figure, error)) ([]byte, error) {
		f, err := draw(res)
		if err == nil {
			var svg []byte
			if svg, err = f.Render("svg"); err == nil {
				return svg, write(name, svg)
			}
		}
		return nil, fmt.Errorf("write run: %s: %w", name, err)
	}
	paretoSVG, err := plotSVG(ParetoPlotFile, ParetoFigure)
	if err != nil {
		return err
	}
	curvesSVG, err := plotSVG(CurvesPlotFile, CurvesFigure)
	if err != nil {
		return err
	}
	condSVG, err := plotSVG(ConditionsPlotFile, ConditionsFigure)
	if err != nil {
		return err
	}
	mcSVG, err := plotSVG(MonteCarloPlotFile, MonteCarloFigure)
	if err != nil {
		return err
	}
	page, err := RunPage(res, opt, paretoSVG, curvesSVG, condSVG, mcSVG)
	if err != nil {
		return err
	}
	return write(ReportFile, page)
}

// oneLine turns free text (a spec's name) into one line that is safe in a
// comment: control characters and line breaks become spaces.
func oneLine(s string) string {
	return strings.Join(strings.FieldsFunc(s, func(r rune) bool {
		return r < 0x20 || r == 0x7f || r == '\u2028' || r == '\u2029' || r == '\u0085'
	}), " ")
}

// withRunID puts a comment naming the run and the candidate on the
// second line of a deck (the first is the deck's title).
func withRunID(deck []byte, id, runID string) []byte {
	if runID == "" {
		return deck
	}
	title, rest, _ := bytes.Cut(deck, []byte("\n"))
	out := append([]byte(nil), title...)
	out = append(out, fmt.Sprintf("\n* candidate %s of `pairsmith run` %s\n", id, runID)...)
	return append(out, rest...)
}

// processCopy returns the text of the run's process copy (ProcessFile)
// and the process reference the candidate files use: a built-in process
// keeps its name (the copy is its text, for the record); a process file is
// copied and referred to relative to the candidate files, so that a
// result directory stays valid when it is moved. The copy must still read
// as the process the run used: a file changed since is an error.
func processCopy(spec *objectives.Spec) ([]byte, string, error) {
	if spec.ProcessPath == "" {
		data, ok := device.BuiltinSource(spec.ProcessRef)
		if !ok {
			return nil, "", fmt.Errorf("write run: no built-in process %q", spec.ProcessRef)
		}
		return data, spec.ProcessRef, nil
	}
	data, err := os.ReadFile(spec.ProcessPath)
	if err != nil {
		return nil, "", fmt.Errorf("write run: copy the process: %w", err)
	}
	p, err := device.ReadProcess(spec.Process.File, data) // as the spec read it, so that only a change tells
	if err != nil || !reflect.DeepEqual(p, spec.Process) {
		return nil, "", fmt.Errorf("write run: the process file %s changed during the run; run again", spec.ProcessPath)
	}
	return data, "../" + ProcessFile, nil
}

// CandidateFile returns a candidate's design file: a comment header
// saying it comes from a pairsmith run (runID, when not "") of the spec,
// whether it meets the spec (and what it misses), and the caution, then
// Design.Format with the process referred to as processRef, which
// `pairsmith eval` reads back into the same design bit for bit.
func CandidateFile(spec *objectives.Spec, c *sizing.Candidate, processRef, runID string) []byte {
	var b bytes.Buffer
	run := "`pairsmith run`"
	if runID != "" {
		run = "`pairsmith run` " + runID
	}
	fmt.Fprintf(&b, "# Candidate %s from %s of the spec sheet %q.\n", c.ID, run, oneLine(spec.Name))
	switch {
	case c.Feasible && c.Pareto:
		fmt.Fprintf(&b, "# %s; meets every target of the spec and lies on the Pareto front.\n", c.Topology)
	case c.Feasible:
		fmt.Fprintf(&b, "# %s; meets every target of the spec.\n", c.Topology)
	default:
		fmt.Fprintf(&b, "# %s; misses %s.\n", c.Topology, strings.Join(CandidateMisses(spec, c), "; "))
	}
	b.WriteString("# Evaluate it with `pairsmith eval` (the process is a built-in name or the run's copy, relative to this file).\n")
	fmt.Fprintf(&b, "# %s\n", objectives.Caution)
	d := *c.Design
	d.ProcessRef = processRef
	b.Write(d.Format())
	return b.Bytes()
}

// jnum is a float for JSON: null when NaN or infinite.
func jnum(v float64) *float64 {
	if !finiteVal(v) {
		return nil
	}
	return &v
}

// Misses returns the violations of targets that are not met.
func Misses(vs []objectives.Violation) []objectives.Violation {
	out := []objectives.Violation{}
	for _, v := range vs {
		if !v.Met() {
			out = append(out, v)
		}
	}
	return out
}

type familyJSON struct {
	Topology    string  `json:"topology"`
	Rank        int     `json:"rank"`
	Feasible    bool    `json:"feasible"`
	Best        *string `json:"best"`
	Evaluations int     `json:"evaluations"`
	// Blocked lists, for a family of which no buildable sizing was found,
	// the always-on checks' findings of its least violating candidate
	// (null otherwise).
	Blocked []objectives.Finding `json:"blocked"`
}

type candidateJSON struct {
	ID             string              `json:"id"`
	Topology       string              `json:"topology"`
	Design         string              `json:"design"`
	Netlist        string              `json:"netlist"`
	NetlistModel   string              `json:"netlist_model"` // DeckLevel1 or DeckLevel1Equivalent
	Feasible       bool                `json:"feasible"`
	Pareto         bool                `json:"pareto"`
	Score          *float64            `json:"score"`
	TotalViolation float64             `json:"total_violation"`
	Axes           map[string]*float64 `json:"axes"`
	Params         map[string]float64  `json:"params"`
	// Metrics are the nominal condition's, as `eval --json` writes
	// them; Worst the worst case the candidate is judged on, each
	// figure with its condition.
	Metrics    objectives.Metrics              `json:"metrics"`
	Worst      map[string]objectives.WorstJSON `json:"worst"`
	Violations []objectives.Violation          `json:"violations"`
	// MonteCarlo is a family's best's Monte Carlo at its nominal
	// condition (left out for the others).
	MonteCarlo *monteCarloJSON `json:"monte_carlo,omitempty"`
}

// monteCarloJSON is a candidate's Monte Carlo spread at its nominal
// condition, one-sigma values in V (null for NaN).
type monteCarloJSON struct {
	Samples          int      `json:"samples"`
	OffsetSigma      *float64 `json:"offset_sigma"`
	OffsetDriftSigma *float64 `json:"offset_drift_sigma"`
	SwitchoverSigma  *float64 `json:"switchover_sigma"`
}

type summaryJSON struct {
	RunID                string           `json:"run_id,omitempty"`
	Spec                 *objectives.Spec `json:"spec"`
	Strategy             string           `json:"strategy"`
	Feasible             bool             `json:"feasible"`
	Best                 *string          `json:"best"`
	Binding              []string         `json:"binding"`
	BindingConditions    []string         `json:"binding_conditions"`
	Evaluations          int              `json:"evaluations"`
	FirstFeasible        *int             `json:"first_feasible"`
	Stopped              *string          `json:"stopped"`
	Seconds              float64          `json:"seconds"`
	EvaluationsPerSecond float64          `json:"evaluations_per_second"`
	Caution              string           `json:"caution"`
	Families             []familyJSON     `json:"families"`
	Candidates           []candidateJSON  `json:"candidates"`
}

// Rate returns the evaluations per second of a result, 0 when no time
// was measured.
func Rate(res *sizing.Result) float64 {
	if s := res.Elapsed.Seconds(); s > 0 {
		return float64(res.Evaluations) / s
	}
	return 0
}

// Summary returns summary.json of a result:
//
//	{"spec", "strategy", "feasible", "best", "binding", "evaluations",
//	 "first_feasible", "stopped", "seconds", "evaluations_per_second",
//	 "caution",
//	 "families": [{"topology", "rank", "feasible", "best", "evaluations"}],
//	 "candidates": [{"id", "topology", "design", "netlist", "netlist_model",
//	   "feasible", "pareto", "score", "total_violation", "axes", "params", "metrics",
//	   "violations": [{"target", "value", "limit", "amount"}]}]}
//
// "best" is the best feasible candidate's id, null when none is;
// "binding" names the targets the least-violating candidate misses when
// none is feasible, worst first ([] otherwise); a family's "best" is the
// id of its best feasible or least-violating candidate, null when every
// evaluation of it failed. "design" and "netlist" are paths relative to
// the run directory; "netlist_model" says what the deck's model cards
// are: "level1", the process's own, or "level1-equivalent", an EKV
// process's nearest level-1 cards (Level1Equivalent), whose numbers differ
// from pairsmith's. "metrics" are as `eval --json` writes them and
// "violations" lists the targets a candidate misses ([] when it meets
// them all). "stopped" is null when the search spent its budget, else
// "time" or "interrupt". Every value is in SI units; NaN and infinities
// are null. "seconds" and "evaluations_per_second" are the only values
// that depend on the machine's speed.
func Summary(res *sizing.Result, opt RunOptions) ([]byte, error) {
	spec := res.Spec
	s := summaryJSON{
		RunID: opt.RunID, Spec: spec, Strategy: opt.Strategy.String(), Feasible: res.Best != nil,
		Binding: append([]string{}, res.Binding...), BindingConditions: append([]string{}, res.BindingAt...),
		Evaluations: res.Evaluations,
		Seconds:     res.Elapsed.Seconds(), EvaluationsPerSecond: Rate(res),
		Caution: objectives.Caution, Families: []familyJSON{}, Candidates: []candidateJSON{},
	}
	if res.Best != nil {
		s.Best = &res.Best.ID
		s.Binding, s.BindingConditions = []string{}, []string{}
	}
	if res.Search != nil && res.Search.FirstFeasible > 0 {
		n := res.Search.FirstFeasible
		s.FirstFeasible = &n
	}
	if st := opt.stopped(res); st != "" {
		s.Stopped = &st
	}
	for _, f := range res.Families {
		fj := familyJSON{Topology: f.Topology, Rank: f.Rank, Feasible: f.Feasible, Evaluations: f.Evaluations}
		if f.Best != nil {
			id := f.Best.ID
			fj.Best = &id
		}
		if f.Blocked != nil && f.Blocked.Eval != nil {
			fj.Blocked = append([]objectives.Finding{}, f.Blocked.Eval.Findings...)
		}
		s.Families = append(s.Families, fj)
	}
	for _, c := range res.Candidates {
		cj := candidateJSON{
			ID: c.ID, Topology: c.Topology, Design: CandidateDesign(c.ID), Netlist: CandidateNetlist(c.ID),
			NetlistModel: DeckModel(c.Design.Process), Feasible: c.Feasible, Pareto: c.Pareto, Score: jnum(c.Score),
			TotalViolation: objectives.TotalViolation(c.Violations),
			Axes:           map[string]*float64{}, Params: map[string]float64{},
			Metrics: c.Metrics, Violations: Misses(c.Violations),
		}
		if c.Eval != nil {
			cj.Metrics, cj.Worst = c.Eval.Metrics, c.Worst.JSON(c.Eval.Conditions)
		}
		if mc := c.MonteCarlo; mc != nil {
			cj.MonteCarlo = &monteCarloJSON{Samples: mc.Samples, OffsetSigma: jnum(mc.OffsetSigma),
				OffsetDriftSigma: jnum(mc.DriftSigma), SwitchoverSigma: jnum(mc.SwitchoverSigma)}
		}
		for i, v := range spec.Axes(c.Metrics) {
			cj.Axes[spec.Pareto[i]] = jnum(v)
		}
		for k, v := range c.Design.Params {
			cj.Params[k] = v
		}
		s.Candidates = append(s.Candidates, cj)
	}
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetIndent("", "  ")
	if err := enc.Encode(s); err != nil {
		return nil, fmt.Errorf("write %s: %w", SummaryFile, err)
	}
	return b.Bytes(), nil
}

// MetricColumns are the metric columns of pareto.csv, with their SI units
// in the names: every figure's Entry.Column, in the catalog's order.
func MetricColumns() []string {
	var out []string
	for _, e := range objectives.Figures() {
		out = append(out, e.Column)
	}
	return out
}

// axisColumn names the column of a trade-off axis's value in pareto.csv:
// "axis_" and the figure's column, "axis_power_W". A figure that is
// larger the better is minimised negated (see Spec.Axes), so gm_min's
// column is "axis_neg_gm_min_S".
func axisColumn(axis string) string {
	e, ok := objectives.Lookup(axis)
	if !ok || e.Key != axis || !e.IsAxis() {
		return "axis_" + axis
	}
	if e.Sense == objectives.AtLeast {
		return "axis_neg_" + e.Column
	}
	return "axis_" + e.Column
}

// csvNum writes a value exactly (shortest form that reads back the same),
// NaN and infinities as an empty cell.
func csvNum(v float64) string {
	if !finiteVal(v) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// ParetoCSV returns pareto.csv: a header, then one row per candidate on
// the Pareto front in report order: id, topology, every metric in SI units
// (MetricColumns), the values on the spec's trade-off axes as the search
// minimises them, and the score. Values are exact; NaN and infinities are
// empty cells.
func ParetoCSV(res *sizing.Result) ([]byte, error) {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	head := append([]string{"id", "topology"}, MetricColumns()...)
	for _, a := range res.Spec.Pareto {
		head = append(head, axisColumn(a))
	}
	head = append(head, "score")
	if err := w.Write(head); err != nil {
		return nil, fmt.Errorf("write %s: %w", ParetoCSVFile, err)
	}
	for _, c := range res.Candidates {
		if !c.Pareto {
			continue
		}
		m := c.Metrics
		row := []string{c.ID, c.Topology}
		for _, e := range objectives.Figures() {
			row = append(row, csvNum(e.Value(m)))
		}
		for _, v := range res.Spec.Axes(m) {
			row = append(row, csvNum(v))
		}
		row = append(row, csvNum(c.Score))
		if err := w.Write(row); err != nil {
			return nil, fmt.Errorf("write %s: %w", ParetoCSVFile, err)
		}
	}
	w.Flush()
	if err := w.Error(); err != nil {
		return nil, fmt.Errorf("write %s: %w", ParetoCSVFile, err)
	}
	return b.Bytes(), nil
}

// MissTexts says, one short phrase per missed target, what a candidate
// misses: "gm_min 95.2 µS < 150 µS", "gm_ripple_max ∞ (gm falls to zero)
// > 20 %", "switchover 1.05 V outside 900 mV ± 100 mV".
func MissTexts(spec *objectives.Spec, vs []objectives.Violation) []string {
	var out []string
	for _, v := range Misses(vs) {
		out = append(out, missText(spec, v))
	}
	return out
}

// CandidateMisses is MissTexts for a reported candidate: a failed
// always-on check also names the device its value is taken from (the
// worst of the check's findings, as objectives.CheckViolations picks it),
// with its role, the common mode of its worst point where the check is
// swept, and how many findings the check has when there are more: "…,
// want ≥ 50 mV (worst of 3: M11, zener bias, at vcm 1.8 V)". Without an
// evaluation it is MissTexts.
func CandidateMisses(spec *objectives.Spec, c *sizing.Candidate) []string {
	return candidateMisses(spec, c, func(objectives.Violation) bool { return true })
}

// candidateMisses is CandidateMisses for the violations keep accepts.
func candidateMisses(spec *objectives.Spec, c *sizing.Candidate, keep func(objectives.Violation) bool) []string {
	var out []string
	for _, v := range Misses(c.Violations) {
		if !keep(v) {
			continue
		}
		s := missText(spec, v)
		if c.Eval != nil {
			s += findingWhere(v, c.Eval.Findings)
		}
		out = append(out, s)
	}
	return out
}

// BlockedText says why a family has no reported candidate although it
// evaluated: "no buildable sizing in 2871 evaluations; the nearest fails
// saturation: |V_DS| − |V_DSAT| 18 mV, want ≥ 50 mV (M6, nmos tail, at
// vcm 860 mV)", the always-on checks its least violating candidate fails
// in CandidateMisses' words.
func BlockedText(spec *objectives.Spec, f sizing.FamilyRank) string {
	checks := candidateMisses(spec, f.Blocked, func(v objectives.Violation) bool {
		e, ok := objectives.Lookup(v.Target)
		return ok && e.Kind == objectives.Constraint
	})
	evals := "evaluations"
	if f.Evaluations == 1 {
		evals = "evaluation"
	}
	return fmt.Sprintf("no buildable sizing in %d %s; the nearest fails %s", f.Evaluations, evals, strings.Join(checks, "; "))
}

// findingWhere says which finding a check's violation v comes from, " (M6,
// pmos tail, at vcm 1.8 V)", or "" when v is not an always-on check's or
// no finding gives its value.
func findingWhere(v objectives.Violation, fs []objectives.Finding) string {
	var worst *objectives.Finding
	n := 0
	for i := range fs {
		f := &fs[i]
		if f.Check != v.Target || f.Amount <= 0 {
			continue
		}
		n++
		if worst == nil || f.Amount > worst.Amount {
			worst = f
		}
	}
	if worst == nil || worst.Value != v.Value {
		return ""
	}
	s := worst.Device
	if worst.Role != "" {
		s += ", " + worst.Role
	}
	if !math.IsNaN(worst.VCM) {
		s += ", at vcm " + SI(worst.VCM, "V", tableDigits)
	}
	if n > 1 {
		s = fmt.Sprintf("worst of %d: %s", n, s)
	}
	return " (" + s + ")"
}

// missText is one phrase of MissTexts, in the words of the target's or
// constraint's catalog entry (violationText); a window's tolerance is the
// spec's.
func missText(spec *objectives.Spec, v objectives.Violation) string {
	e, ok := objectives.Lookup(v.Target)
	if !ok || (e.Kind == objectives.Figure && e.Target.Key != v.Target) {
		return fmt.Sprintf("%s %s (limit %s)", v.Target, SI(v.Value, "", tableDigits), SI(v.Limit, "", tableDigits))
	}
	_, tol := spec.Targets.Bound(v.Target)
	return violationText(e, v, tol)
}

// TargetTexts writes the spec's set targets for reading, one phrase each:
// "gm_min ≥ 150 µS", "gm_ripple ≤ 20 %", "switchover 900 mV ± 100 mV".
// Each is the figure's key and its bound (boundText).
func TargetTexts(t objectives.Targets) []string {
	var out []string
	for _, n := range t.Names() {
		e, _ := objectives.Lookup(n)
		limit, tol := t.Bound(n)
		out = append(out, e.Key+" "+boundText(e, limit, tol))
	}
	return out
}

// processText names a spec's process for reading: "demo18 (ekv)".
func processText(spec *objectives.Spec) string { return processName(spec.ProcessRef, spec.Process) }

// processName names a process for reading, "demo18 (ekv)": its name and
// kind, or ref, the process as written, when it was not read.
func processName(ref string, p *device.Process) string {
	if p == nil {
		return ref
	}
	if p.Kind != "" {
		return p.Name + " (" + p.Kind + ")"
	}
	return p.Name
}

// specConditions describes a spec's conditions in one line: "on demo18
// (ekv), supply 1.8 V, 27 °C, common mode 0 V … 1.8 V", with the
// sign-off when it has more than one condition: "…, at 45 conditions
// (corners tt ff ss fs sf, supply 1.62 V … 1.98 V, -40 °C … 125 °C)".
func specConditions(spec *objectives.Spec) string {
	out := fmt.Sprintf("on %s, supply %s, %s, common mode %s … %s", processText(spec),
		SI(spec.Supply, "V", tableDigits), Celsius(spec.TempK),
		SI(spec.Range.Low, "V", tableDigits), SI(spec.Range.High, "V", tableDigits))
	if so := spec.Signoff; len(so.Conditions()) > 1 {
		out += fmt.Sprintf(", at %s (%s)", conditionCount(len(so.Conditions())), signoffText(so))
	}
	return out
}

// signoffText writes a sign-off's corners, supplies and temperatures:
// "corners tt ff ss, supply 1.62 V … 1.98 V, -40 °C … 125 °C".
func signoffText(so objectives.Signoff) string {
	span := func(s objectives.Span, one func(float64) string) string {
		if s.IsSingle() {
			return one(s.Nominal)
		}
		return one(s.Min) + " … " + one(s.Max) + " (nominal " + one(s.Nominal) + ")"
	}
	volts := func(v float64) string { return SI(v, "V", tableDigits) }
	corners := "corners "
	if len(so.Corners) == 1 {
		corners = "corner "
	}
	return fmt.Sprintf("%s%s, supply %s, %s", corners, strings.Join(so.Corners, " "), span(so.Supply, volts), span(so.Temperature, Celsius))
}

// conditionCount writes a number of conditions: "1 condition", "45
// conditions".
func conditionCount(n int) string {
	if n == 1 {
		return "1 condition"
	}
	return fmt.Sprintf("%d conditions", n)
}

// familyIndex is a family's place in topologies.All(), which fixes its
// colour and marker in every plot; -1 for an unknown name.
func familyIndex(name string) int { return slices.Index(topologies.Names(), name) }
