package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"errors"
	"fmt"
	"html"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"pairsmith/internal/ngspice"
	"pairsmith/objectives"
	"pairsmith/optimize"
)

// specsDir holds the demo spec sheets.
const specsDir = "../../testdata/specs"

// runOutcome is a `run` in a temporary directory.
type runOutcome struct {
	code           int
	stdout, stderr string
	dir            string
	summary        map[string]any
	raw            []byte // summary.json as written
}

// runSpec runs `pairsmith run SPEC -o DIR args…` in-process and reads
// summary.json back generically, as a script would.
func runSpec(t *testing.T, spec string, args ...string) runOutcome {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "out")
	code, stdout, stderr := runCmd(t, append([]string{"run", spec, "-o", dir}, args...)...)
	o := runOutcome{code: code, stdout: stdout, stderr: stderr, dir: dir}
	if code != exitOK && code != exitInfeasible {
		t.Fatalf("run %s: exit %d\nstderr: %s", spec, code, stderr)
	}
	var err error
	if o.raw, err = os.ReadFile(filepath.Join(dir, "summary.json")); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(o.raw, &o.summary); err != nil {
		t.Fatalf("summary.json does not parse: %v", err)
	}
	return o
}

// obj and list read a generic JSON value as an object or an array.
func obj(t *testing.T, v any, what string) map[string]any {
	t.Helper()
	m, ok := v.(map[string]any)
	if !ok {
		t.Fatalf("%s: %v is not an object", what, v)
	}
	return m
}

func list(t *testing.T, v any, what string) []any {
	t.Helper()
	l, ok := v.([]any)
	if !ok {
		t.Fatalf("%s: %v is not an array", what, v)
	}
	return l
}

// hasKeys checks that m has every key.
func hasKeys(t *testing.T, m map[string]any, what string, keys ...string) {
	t.Helper()
	for _, k := range keys {
		if _, ok := m[k]; !ok {
			t.Errorf("%s lacks %q", what, k)
		}
	}
}

// parseXML checks that data is well-formed XML (encoding/xml) with an
// <svg> root, and returns its character data.
func parseXML(t *testing.T, name string, data []byte) string {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(data))
	root := ""
	var text strings.Builder
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("%s is not well-formed XML: %v", name, err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			if root == "" {
				root = el.Name.Local
			}
		case xml.CharData:
			text.Write(el)
		}
	}
	if root != "svg" {
		t.Errorf("%s: root element %q, want svg", name, root)
	}
	return text.String()
}

// TestRunDelivers checks a small-budget run of the level-1 demo spec
// against issue 3's list of what `run` delivers: the exit code agrees with
// summary.json's "feasible", every contract key is there, every listed
// file exists, each candidate's design file reproduces its metrics through
// `eval --json` exactly, pareto.csv has a row per Pareto candidate, the
// plots are SVG (encoding/xml), and report.html is self-contained and
// carries the caution.
func TestRunDelivers(t *testing.T) {
	o := runSpec(t, filepath.Join(specsDir, "sensor-l1.yaml"), "--evaluations", "600")
	s := o.summary
	hasKeys(t, s, "summary.json", "spec", "feasible", "best", "evaluations", "seconds", "families", "candidates")
	feasible, ok := s["feasible"].(bool)
	if !ok {
		t.Fatalf("feasible = %v", s["feasible"])
	}
	if want := map[bool]int{true: exitOK, false: exitInfeasible}[feasible]; o.code != want {
		t.Errorf("exit %d with feasible %v, want %d", o.code, feasible, want)
	}
	if s["evaluations"] != 600.0 {
		t.Errorf("evaluations = %v, want the --evaluations 600", s["evaluations"])
	}
	if sec, ok := s["seconds"].(float64); !ok || !(sec > 0) {
		t.Errorf("seconds = %v", s["seconds"])
	}
	spec := obj(t, s["spec"], "spec")
	hasKeys(t, spec, "spec", "name", "process", "supply", "temperature", "input_range", "targets", "pareto", "topologies", "search")
	if ev := obj(t, spec["search"], "spec.search")["evaluations"]; ev != 600.0 {
		t.Errorf("spec.search.evaluations = %v: the flag should be recorded", ev)
	}

	cands := map[string]map[string]any{}
	var order []string
	for i, c := range list(t, s["candidates"], "candidates") {
		cm := obj(t, c, fmt.Sprintf("candidates[%d]", i))
		hasKeys(t, cm, "candidate", "id", "topology", "design", "netlist", "feasible", "pareto", "metrics", "violations")
		id := cm["id"].(string)
		cands[id] = cm
		order = append(order, id)
		for j, v := range list(t, cm["violations"], id+".violations") {
			hasKeys(t, obj(t, v, fmt.Sprintf("%s.violations[%d]", id, j)), "violation", "target", "value", "limit")
		}
		// A candidate meets the spec exactly when it misses nothing.
		if nv := len(cm["violations"].([]any)); (nv == 0) != cm["feasible"].(bool) {
			t.Errorf("%s: feasible %v with %d violations", id, cm["feasible"], nv)
		}
	}
	if len(cands) == 0 {
		t.Fatal("no candidates")
	}
	// best: the id of a feasible candidate, or null when none is.
	switch b := s["best"].(type) {
	case string:
		if c, ok := cands[b]; !ok || c["feasible"] != true || !feasible {
			t.Errorf("best %q is not a feasible candidate (feasible %v)", b, feasible)
		}
	case nil:
		if feasible {
			t.Error("feasible run with best null")
		}
	default:
		t.Errorf("best = %v", b)
	}
	fams := list(t, s["families"], "families")
	if len(fams) != len(list(t, spec["topologies"], "spec.topologies")) {
		t.Errorf("%d families ranked, spec has %d", len(fams), len(spec["topologies"].([]any)))
	}
	for i, f := range fams {
		fm := obj(t, f, fmt.Sprintf("families[%d]", i))
		hasKeys(t, fm, "family", "topology", "rank", "feasible", "best")
		if fm["rank"] != float64(i+1) {
			t.Errorf("families[%d].rank = %v", i, fm["rank"])
		}
		if id, ok := fm["best"].(string); ok {
			c := cands[id]
			if c == nil || c["topology"] != fm["topology"] || c["feasible"] != fm["feasible"] {
				t.Errorf("family %v: best %s is not one of its candidates with the same feasibility", fm["topology"], id)
			}
		} else if fm["best"] != nil {
			t.Errorf("family %v: best %v", fm["topology"], fm["best"])
		}
		if !strings.Contains(o.stdout, fmt.Sprint(fm["topology"])) {
			t.Errorf("stdout does not rank %v", fm["topology"])
		}
	}

	// Every file exists.
	for _, f := range []string{"summary.json", "pareto.csv", "pareto.svg", "curves.svg", "conditions.svg", "montecarlo.svg", "report.html"} {
		if _, err := os.Stat(filepath.Join(o.dir, f)); err != nil {
			t.Error(err)
		}
	}
	for _, id := range order {
		for _, k := range []string{"design", "netlist"} {
			rel := cands[id][k].(string)
			if filepath.IsAbs(rel) {
				t.Errorf("%s.%s = %q, want a path relative to DIR", id, k, rel)
			}
			if _, err := os.Stat(filepath.Join(o.dir, rel)); err != nil {
				t.Errorf("%s.%s: %v", id, k, err)
			}
		}
		deck, err := os.ReadFile(filepath.Join(o.dir, cands[id]["netlist"].(string)))
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.HasPrefix(deck, []byte("* pairsmith testbench")) || !bytes.Contains(deck, []byte("\n.dc VCM ")) {
			t.Errorf("%s: the netlist is not a testbench deck with its sweep", id)
		}
	}

	// docs/files.md#candidate-files: `eval` accepts every design file unchanged and
	// reproduces the candidate's metrics exactly (bit-identical floats,
	// null for null), from another working directory.
	t.Chdir(t.TempDir())
	for _, id := range order {
		path := filepath.Join(o.dir, cands[id]["design"].(string))
		doc := evalJSON(t, path)
		got, want := obj(t, doc["metrics"], id+" eval metrics"), obj(t, cands[id]["metrics"], id+" metrics")
		if len(got) != len(want) {
			t.Errorf("%s: eval gives %d metrics, summary.json %d", id, len(got), len(want))
		}
		for k, w := range want {
			g, ok := got[k]
			if !ok {
				t.Errorf("%s: eval lacks metric %s", id, k)
				continue
			}
			gf, gok := g.(float64)
			wf, wok := w.(float64)
			if gok != wok || (gok && math.Float64bits(gf) != math.Float64bits(wf)) {
				t.Errorf("%s: %s = %v by eval, %v in summary.json", id, k, g, w)
			}
		}
	}

	// pareto.csv (RFC 4180, read with encoding/csv): one row per Pareto
	// candidate, in report order, with SI units in the header and exact
	// values (empty for null).
	f, err := os.Open(filepath.Join(o.dir, "pareto.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("pareto.csv: %v", err)
	}
	head := rows[0]
	for _, col := range []string{"id", "topology", "gm_min_S", "gm_max_S", "gm_ripple", "power_W", "area_m2", "switchover_V", "transition_width_V"} {
		if !slices.Contains(head, col) {
			t.Errorf("pareto.csv header %v lacks %s", head, col)
		}
	}
	var front []string
	for _, id := range order {
		if cands[id]["pareto"] == true {
			front = append(front, id)
		}
	}
	if len(rows)-1 != len(front) {
		t.Fatalf("pareto.csv has %d rows, summary.json %d Pareto candidates", len(rows)-1, len(front))
	}
	metricOf := map[string]string{"gm_min_S": "gm_min", "gm_max_S": "gm_max", "gm_ripple": "gm_ripple",
		"power_W": "power", "area_m2": "area", "switchover_V": "switchover", "transition_width_V": "transition_width"}
	for i, row := range rows[1:] {
		if row[0] != front[i] {
			t.Errorf("pareto.csv row %d is %s, want %s", i+1, row[0], front[i])
			continue
		}
		m := cands[front[i]]["metrics"].(map[string]any)
		for j, col := range head {
			key, ok := metricOf[col]
			if !ok {
				continue
			}
			w, isNum := m[key].(float64)
			if !isNum {
				if row[j] != "" {
					t.Errorf("%s %s: %q, want an empty cell for null", front[i], col, row[j])
				}
				continue
			}
			if g, err := strconv.ParseFloat(row[j], 64); err != nil || g != w {
				t.Errorf("%s %s: %q, want %v", front[i], col, row[j], w)
			}
		}
	}

	// The plots parse as SVG; the Pareto plot names the families on the
	// front, the curves plot every family with a candidate.
	psvg, err := os.ReadFile(filepath.Join(o.dir, "pareto.svg"))
	if err != nil {
		t.Fatal(err)
	}
	ptext := parseXML(t, "pareto.svg", psvg)
	for _, id := range front {
		if top := cands[id]["topology"].(string); !strings.Contains(ptext, top) {
			t.Errorf("pareto.svg does not name %s", top)
		}
	}
	csvg, err := os.ReadFile(filepath.Join(o.dir, "curves.svg"))
	if err != nil {
		t.Fatal(err)
	}
	ctext := parseXML(t, "curves.svg", csvg)
	for _, fam := range fams {
		fm := fam.(map[string]any)
		if id, ok := fm["best"].(string); ok && !strings.Contains(ctext, fmt.Sprintf("%v (%s)", fm["topology"], id)) {
			t.Errorf("curves.svg has no line for %v (%s)", fm["topology"], id)
		}
	}

	// report.html works offline: nothing fetched from the web, no script.
	page, err := os.ReadFile(filepath.Join(o.dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	for _, bad := range []string{"http://", "https://", "<script", "<link", "@import", "src="} {
		if bytes.Contains(page, []byte(bad)) {
			t.Errorf("report.html contains %q", bad)
		}
	}
	if !bytes.Contains(page, []byte(html.EscapeString(objectives.Caution))) {
		t.Error("report.html lacks the caution")
	}
	// sensor-l1 signs off at one condition: no conditions chart on the
	// page (its file is written all the same).
	if n := bytes.Count(page, []byte("<svg")); n != 3 {
		t.Errorf("report.html embeds %d SVGs, want the 3 plots of a sheet of one condition", n)
	}

	// stdout: the ranked table, the best (or the binding targets), where
	// the results are, the rate and the caution; stderr: the progress
	// lines of a non-terminal, the last one at the full budget.
	for _, want := range []string{"rank", "topology", "gm_min", "ripple", "power", "area", "switchover",
		"results in " + o.dir, "evaluations/s", objectives.Caution} {
		if !strings.Contains(o.stdout, want) {
			t.Errorf("stdout lacks %q:\n%s", want, o.stdout)
		}
	}
	if b, ok := s["best"].(string); ok && !strings.Contains(o.stdout, "best: "+b) {
		t.Errorf("stdout does not name the best candidate %s", b)
	}
	if !strings.Contains(o.stderr, "600/600 evaluations") || strings.Contains(o.stderr, "\r") {
		t.Errorf("stderr is not plain progress lines ending at the budget:\n%s", o.stderr)
	}
}

// TestRunTestbenchInNgspice simulates the best candidate's deck as `run`
// wrote it in ngspice (Debian package) at VID = ±0.1 mV and compares gm,
// the central difference of I(VOUT) (docs/files.md#direct-gm-readout), with the curve `eval`
// gives for the candidate's design file: within 1 % of the peak at every
// point, the agreement the families' ngspice checks hold.
func TestRunTestbenchInNgspice(t *testing.T) {
	ngspice.Require(t)
	o := runSpec(t, filepath.Join(specsDir, "sensor-l1.yaml"), "--evaluations", "300")
	id, ok := o.summary["best"].(string)
	if !ok {
		// Every family's best still has a deck; take the first ranked.
		id = o.summary["families"].([]any)[0].(map[string]any)["best"].(string)
	}
	deck, err := os.ReadFile(filepath.Join(o.dir, "candidates", id+".cir"))
	if err != nil {
		t.Fatal(err)
	}
	doc := evalJSON(t, filepath.Join(o.dir, "candidates", id+".yaml"))
	curve := doc["curve"].([]any)
	const h = 1e-4
	run := func(vid float64) ngspice.Table {
		t.Helper()
		text := strings.Replace(string(deck), "VID id 0 DC 0\n", fmt.Sprintf("VID id 0 DC %g\n", vid), 1)
		if text == string(deck) {
			t.Fatal("deck has no VID line")
		}
		tab, err := ngspice.Run(text, "i(vout)")
		if err != nil {
			t.Fatal(err)
		}
		if len(tab.Scale) != len(curve) {
			t.Fatalf("ngspice gave %d points, eval %d", len(tab.Scale), len(curve))
		}
		return tab
	}
	up, dn := run(h), run(-h)
	peak := 0.0
	for _, c := range curve {
		peak = math.Max(peak, math.Abs(c.(map[string]any)["gm"].(float64)))
	}
	for i, c := range curve {
		pt := c.(map[string]any)
		ng := (up.Vectors["i(vout)"][i] - dn.Vectors["i(vout)"][i]) / (2 * h)
		if e := math.Abs(ng-pt["gm"].(float64)) / peak; e > 0.01 {
			t.Errorf("%s at vcm %.3f V: gm %.6g S, ngspice %.6g S", id, pt["vcm"], pt["gm"], ng)
		}
	}
}

// withoutTimes drops the lines of summary.json that depend on the
// machine's speed, and the run's id, which is new every run.
func withoutTimes(raw []byte) string {
	var keep []string
	for _, l := range strings.Split(string(raw), "\n") {
		if t := strings.TrimSpace(l); strings.HasPrefix(t, `"seconds":`) || strings.HasPrefix(t, `"evaluations_per_second":`) ||
			strings.HasPrefix(t, `"run_id":`) {
			continue
		}
		keep = append(keep, l)
	}
	return strings.Join(keep, "\n")
}

// TestRunDeterministic: the same spec, seed and budget give the same
// summary.json on one worker and on two, byte for byte apart from the
// time (issue 3: "whatever the number of workers").
func TestRunDeterministic(t *testing.T) {
	spec := filepath.Join(specsDir, "sensor-l1.yaml")
	a := runSpec(t, spec, "--evaluations", "300", "--seed", "7", "--workers", "1")
	b := runSpec(t, spec, "--evaluations", "300", "--seed", "7", "--workers", "2")
	if a.code != b.code {
		t.Errorf("exit %d on one worker, %d on two", a.code, b.code)
	}
	if wa, wb := withoutTimes(a.raw), withoutTimes(b.raw); wa != wb {
		t.Errorf("summary.json differs between one and two workers:\n%s\n---\n%s", wa, wb)
	}
	if a.summary["spec"].(map[string]any)["search"].(map[string]any)["seed"] != 7.0 {
		t.Error("the --seed is not recorded in the spec")
	}
	c := runSpec(t, spec, "--evaluations", "300", "--seed", "8", "--workers", "2")
	if withoutTimes(c.raw) == withoutTimes(b.raw) {
		t.Error("seeds 7 and 8 give the same summary: the seed is not used")
	}
}

// TestRunImpossible: the impossible demo spec (its comment derives, from
// the EKV weak-inversion bound gm/I_D ≤ 1/(n·U_T), Enz, Krummenacher,
// Vittoz 1995, that 5 µW cannot give 1 mS) exits 3, still writes
// everything, and names the binding targets on stdout and in summary.json.
func TestRunImpossible(t *testing.T) {
	o := runSpec(t, filepath.Join(specsDir, "impossible.yaml"), "--evaluations", "300")
	if o.code != exitInfeasible {
		t.Fatalf("exit %d, want %d", o.code, exitInfeasible)
	}
	if o.summary["feasible"] != false || o.summary["best"] != nil {
		t.Errorf("feasible %v best %v, want false and null", o.summary["feasible"], o.summary["best"])
	}
	binding := list(t, o.summary["binding"], "binding")
	if len(binding) == 0 {
		t.Fatal("summary.json names no binding target")
	}
	set := []string{"gm_min", "gm_ripple_max", "power_max"} // the targets impossible.yaml sets
	for _, b := range binding {
		name, _ := b.(string)
		if !slices.Contains(set, name) {
			t.Errorf("binding target %v is not one the spec sets", b)
		}
		if !strings.Contains(o.stdout, name) {
			t.Errorf("stdout does not name binding target %s", name)
		}
	}
	// gm_min binds whatever the sizing (the spec's derivation).
	if !slices.Contains(binding, any("gm_min")) {
		t.Errorf("binding %v lacks gm_min", binding)
	}
	if !strings.Contains(o.stdout, "no candidate meets the spec; the targets that bind: ") ||
		!strings.Contains(o.stdout, "nearest: ") {
		t.Errorf("stdout does not say that nothing meets the spec:\n%s", o.stdout)
	}
	lines := strings.Split(strings.TrimSpace(o.stderr), "\n")
	if last := lines[len(lines)-1]; !strings.HasPrefix(last, "pairsmith: no candidate meets the spec; the targets that bind: ") {
		t.Errorf("last stderr line %q", last)
	}
	cands := list(t, o.summary["candidates"], "candidates")
	if len(cands) == 0 {
		t.Fatal("no nearest candidates written")
	}
	for _, c := range cands {
		cm := c.(map[string]any)
		if len(cm["violations"].([]any)) == 0 {
			t.Errorf("%v meets an impossible spec", cm["id"])
		}
		if _, err := os.Stat(filepath.Join(o.dir, cm["design"].(string))); err != nil {
			t.Error(err)
		}
	}
	for _, f := range []string{"pareto.csv", "pareto.svg", "curves.svg", "report.html"} {
		if _, err := os.Stat(filepath.Join(o.dir, f)); err != nil {
			t.Error(err)
		}
	}
	page, err := os.ReadFile(filepath.Join(o.dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(page, []byte("No candidate meets the spec")) {
		t.Error("report.html does not say that nothing meets the spec")
	}
}

// goodSpec is a valid spec sheet; the broken sheets change one thing in it.
const goodSpec = `name: test sheet
process: demo18-l1
supply: 1.8V
input_range: {low: 0V, high: 1.8V}
targets:
  gm_min: 250uS
  gm_ripple_max: 30%
topologies: [current-switch, mirror-1to3]
search: {evaluations: 100, seed: 1}
`

// TestRunBadSpecs runs broken spec sheets: each exits 2, writes nothing,
// and the first stderr line names the file, the line and the field
// (issue 3, "bad input"; docs/files.md#bad-input).
func TestRunBadSpecs(t *testing.T) {
	dir := t.TempDir()
	writeFile(t, dir, "mine.yaml", goodProcess)
	tests := []struct {
		name     string
		old, new string
		line     int
		field    string
		contain  string
	}{
		{"wrong unit", "supply: 1.8V", "supply: 1.8A", 3, "supply", `"1.8A"`},
		{"wrong unit of a target", "gm_min: 250uS", "gm_min: 250uA", 6, "targets.gm_min", "conductance"},
		{"unknown key", "supply: 1.8V", "supply: 1.8V\nsuply: 1.8V", 4, "suply", `did you mean "supply"`},
		{"unknown target", "gm_ripple_max: 30%", "gm_ripple: 30%", 7, "targets.gm_ripple", `did you mean "gm_ripple_max"`},
		{"unknown family", "[current-switch, mirror-1to3]", "[current-switch, mirror-1to4]", 8, "topologies[1]", `"mirror-1to4"`},
		{"low above high", "{low: 0V, high: 1.8V}", "{low: 1.5V, high: 0.5V}", 4, "input_range.high", "low below high"},
		{"negative budget", "evaluations: 100", "evaluations: -100", 9, "search.evaluations", `"-100"`},
		{"negative time budget", "evaluations: 100", "time: -10m", 9, "search.time", "negative"},
		{"missing process file", "process: demo18-l1", "process: nothere.yaml", 2, "process", `"nothere.yaml"`},
		{"no process", "process: demo18-l1\n", "", 1, "process", "missing"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			text := strings.Replace(goodSpec, tc.old, tc.new, 1)
			if text == goodSpec {
				t.Fatalf("case does not change the spec (no %q)", tc.old)
			}
			path := writeFile(t, dir, "spec.yaml", text)
			out := filepath.Join(t.TempDir(), "out")
			code, stdout, stderr := runCmd(t, "run", path, "-o", out)
			if code != exitBadInput {
				t.Errorf("exit %d, want %d; stderr %q", code, exitBadInput, stderr)
			}
			first := firstLine(stderr)
			if want := fmt.Sprintf("pairsmith: %s:%d: %s: ", path, tc.line, tc.field); !strings.HasPrefix(first, want) {
				t.Errorf("first line %q, want it to start %q", first, want)
			}
			if !strings.Contains(first, tc.contain) {
				t.Errorf("first line %q does not say %q", first, tc.contain)
			}
			if stdout != "" {
				t.Errorf("stdout %q for bad input", stdout)
			}
			if _, err := os.Stat(out); err == nil {
				t.Error("the output directory was made for a bad spec")
			}
		})
	}
	// The base of the table is good, or it would pass for the wrong
	// reason; with a process file beside the spec it is good too.
	path := writeFile(t, dir, "spec.yaml", goodSpec)
	withFile := writeFile(t, dir, "spec2.yaml", strings.Replace(goodSpec, "process: demo18-l1", "process: mine.yaml", 1))
	for _, p := range []string{path, withFile} {
		if code, _, stderr := runCmd(t, "run", p, "-o", filepath.Join(t.TempDir(), "out")); code != exitOK && code != exitInfeasible {
			t.Errorf("%s: exit %d: %s", p, code, stderr)
		}
	}
}

// TestRunProcessFile: a spec whose process is a file beside it gives a
// result directory with a copy of the process, which the design files
// name relative to themselves, so that `eval` reproduces their metrics
// from any working directory, after the directory has moved, and after
// the original process file is gone.
func TestRunProcessFile(t *testing.T) {
	dir := t.TempDir()
	proc := writeFile(t, dir, "mine.yaml", goodProcess)
	spec := writeFile(t, dir, "spec.yaml", strings.Replace(goodSpec, "process: demo18-l1", "process: mine.yaml", 1))
	o := runSpec(t, spec)
	if copied, err := os.ReadFile(filepath.Join(o.dir, "process.yaml")); err != nil || string(copied) != goodProcess {
		t.Fatalf("process.yaml in the result is not a copy of the process file (%v)", err)
	}
	moved := filepath.Join(t.TempDir(), "elsewhere")
	if err := os.Rename(o.dir, moved); err != nil {
		t.Fatal(err)
	}
	if err := os.Remove(proc); err != nil {
		t.Fatal(err)
	}
	t.Chdir(t.TempDir())
	for _, c := range o.summary["candidates"].([]any) {
		cm := c.(map[string]any)
		path := filepath.Join(moved, cm["design"].(string))
		text, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if want := "\nprocess: ../process.yaml\n"; !strings.Contains(string(text), want) {
			t.Errorf("%s does not name the run's copy of the process relative to itself (%q)", path, want)
		}
		if id := o.summary["run_id"].(string); !strings.Contains(string(text), id) {
			t.Errorf("%s does not carry the run id %s", path, id)
		}
		got := evalJSON(t, path)["metrics"].(map[string]any)
		for k, w := range cm["metrics"].(map[string]any) {
			if got[k] != w {
				t.Errorf("%v: %s = %v by eval, %v in summary.json", cm["id"], k, got[k], w)
			}
		}
	}
}

// TestRunBadFlags: bad flags and arguments exit 2 before any search, with
// the flag named on the first stderr line and the usage after it.
func TestRunBadFlags(t *testing.T) {
	spec := filepath.Join(specsDir, "sensor-l1.yaml")
	dir := t.TempDir()
	file := writeFile(t, dir, "afile", "not a directory\n")
	tests := []struct {
		args  []string
		first string // the start of the first line
		usage bool
	}{
		{[]string{"--evaluations", "0"}, "pairsmith: --evaluations 0: want a whole number from 1", true},
		{[]string{"--evaluations", "-3"}, "pairsmith: --evaluations -3: ", true},
		{[]string{"--evaluations", "100000001"}, "pairsmith: --evaluations 100000001: want a whole number from 1 to 100000000", true},
		{[]string{"--time", "NaN"}, `pairsmith: --time "NaN": time budget "NaN" is not a finite number; want a duration such as 10m, 90s or 1h30m, or a number of seconds`, true},
		{[]string{"--evaluations", "many"}, `pairsmith: invalid argument "many" for "--evaluations" flag`, true},
		{[]string{"--workers", "-1"}, "pairsmith: --workers -1: want 0 (one per core) or a positive number", true},
		{[]string{"--time", "bogus"}, `pairsmith: --time "bogus": `, true},
		{[]string{"--time", "-5m"}, `pairsmith: --time "-5m": `, true},
		{[]string{"--seed", "abc"}, `pairsmith: invalid argument "abc" for "--seed" flag`, true},
		{[]string{"--bogus"}, "pairsmith: unknown flag: --bogus", true},
	}
	for _, tc := range tests {
		out := filepath.Join(t.TempDir(), "out")
		code, stdout, stderr := runCmd(t, append([]string{"run", spec, "-o", out}, tc.args...)...)
		if code != exitBadInput {
			t.Errorf("%v: exit %d, want %d", tc.args, code, exitBadInput)
		}
		if first := firstLine(stderr); !strings.HasPrefix(first, tc.first) {
			t.Errorf("%v: first line %q, want it to start %q", tc.args, first, tc.first)
		}
		if tc.usage && !strings.Contains(stderr, "Usage:") {
			t.Errorf("%v: no usage after a flag error", tc.args)
		}
		if stdout != "" {
			t.Errorf("%v: stdout %q", tc.args, stdout)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%v: the output directory was made", tc.args)
		}
	}
	for _, tc := range []struct {
		args  []string
		first string
	}{
		{[]string{"run", spec}, "pairsmith: run: want an output directory (-o DIR)"},
		{[]string{"run", "-o", dir}, "pairsmith: run: want one spec sheet (SPEC.yaml), got 0 arguments"},
		{[]string{"run", spec, spec, "-o", dir}, "pairsmith: run: want one spec sheet (SPEC.yaml), got 2 arguments"},
		{[]string{"run", filepath.Join(dir, "nothere.yaml"), "-o", dir}, "pairsmith: spec: open " + filepath.Join(dir, "nothere.yaml") + ": "},
		{[]string{"run", spec, "-o", file}, "pairsmith: output " + file + ": "},
	} {
		code, _, stderr := runCmd(t, tc.args...)
		if code != exitBadInput {
			t.Errorf("%v: exit %d, want %d", tc.args, code, exitBadInput)
		}
		if first := firstLine(stderr); !strings.HasPrefix(first, tc.first) {
			t.Errorf("%v: first line %q, want it to start %q", tc.args, first, tc.first)
		}
	}
}

// TestProgressLines checks what the progress display writes, from given
// states of a search and a fixed clock: the rate is evaluations over
// elapsed time, the ETA the rest of the budget at that rate or the time
// budget's remainder if sooner (common practice, no source).
func TestProgressLines(t *testing.T) {
	t0 := time.Date(2025, 1, 1, 0, 0, 0, 0, time.UTC)
	pr := optimize.Progress{Evaluations: 7600, Budget: 20000, Feasible: 96, Best: 0.7341,
		Nearest: 0, Elapsed: 10 * time.Second, Phase: "genetic"}
	// 760/s; (20000 − 7600)/760 = 16.3 s.
	if got, want := logLine(pr, time.Time{}, t0, false), "pairsmith run: 7600/20000 evaluations, 760/s, 96 feasible, best 0.734, ETA 16s (genetic)"; got != want {
		t.Errorf("log line %q, want %q", got, want)
	}
	// A time budget ending in 5 s comes first.
	if got := logLine(pr, t0.Add(5*time.Second), t0, false); !strings.Contains(got, "ETA 5s") {
		t.Errorf("log line %q, want ETA 5s", got)
	}
	if got := logLine(pr, time.Time{}, t0, true); !strings.HasSuffix(got, ", done in 10s") {
		t.Errorf("final line %q", got)
	}
	none := optimize.Progress{Evaluations: 50, Budget: 1000, Best: math.Inf(1), Nearest: 0.4216, Elapsed: time.Second}
	if got := logLine(none, time.Time{}, t0, false); !strings.Contains(got, "0 feasible, least violation 0.422, ETA 19s") {
		t.Errorf("line before any feasible %q", got)
	}
	bar := barLine(pr, time.Time{}, t0)
	// 7600/20000 is 38 %, 6 of 16 cells.
	if want := "[" + strings.Repeat("#", 6) + strings.Repeat(".", 10) + "] 38% 7600/20000 760/s feasible 96 best 0.734 ETA 16s genetic"; bar != want {
		t.Errorf("bar %q, want %q", bar, want)
	}
	// A line that would wrap on an 80-column terminal leaves the phase out.
	pr.Phase = "refine (from the defaults)"
	if bar := barLine(pr, time.Time{}, t0); len([]rune(bar)) > 79 || strings.Contains(bar, "refine") {
		t.Errorf("bar %q (%d runes): want at most 79, without the phase", bar, len([]rune(bar)))
	}
	pr.Phase = "genetic"
	for _, tc := range []struct {
		d    time.Duration
		want string
	}{{42 * time.Second, "42s"}, {185 * time.Second, "3m05s"}, {2*time.Hour + 7*time.Minute + 20*time.Second, "2h07m"}} {
		if got := shortDuration(tc.d); got != tc.want {
			t.Errorf("shortDuration(%v) = %q, want %q", tc.d, got, tc.want)
		}
	}
}

// TestProgressDraw: on a terminal the bar is redrawn in place (\r, no
// newline until the end, shorter lines blanked out); in a log each line
// stands alone, a line is only written when there is news, and the last
// state is always written at the end. Reports arriving out of order do
// not move the display back.
func TestProgressDraw(t *testing.T) {
	t0 := time.Date(2025, 1, 1, 0, 0, 0, 0, time.UTC)
	clock := func() time.Time { return t0 }
	var b bytes.Buffer
	p := &progress{w: &b, terminal: true, now: clock, stop: make(chan struct{})}
	p.update(optimize.Progress{Evaluations: 10, Budget: 100, Best: math.Inf(1), Nearest: 1.5, Elapsed: time.Second})
	p.draw(false)
	p.update(optimize.Progress{Evaluations: 90, Budget: 100, Feasible: 3, Best: 0.5, Elapsed: 2 * time.Second})
	p.update(optimize.Progress{Evaluations: 40, Budget: 100, Elapsed: 3 * time.Second}) // late report
	p.draw(false)
	out := b.String()
	if strings.Count(out, "\r") != 2 || strings.Contains(out, "\n") {
		t.Errorf("terminal output %q: want two redraws and no newline", out)
	}
	if !strings.Contains(out, "90/100") || strings.Contains(out, "40/100") {
		t.Errorf("terminal output %q: want the latest state, not the late report", out)
	}
	p.finish()
	if !strings.HasSuffix(b.String(), "\n") {
		t.Error("the bar's line is not ended at the end")
	}

	b.Reset()
	q := &progress{w: &b, now: clock, stop: make(chan struct{})}
	q.update(optimize.Progress{Evaluations: 10, Budget: 100, Elapsed: time.Second})
	q.draw(false)
	q.draw(false) // no news: nothing written
	q.finish()
	lines := strings.Split(strings.TrimSuffix(b.String(), "\n"), "\n")
	if len(lines) != 2 || strings.Contains(b.String(), "\r") {
		t.Fatalf("log output %q: want two plain lines", b.String())
	}
	if !strings.Contains(lines[1], "done") {
		t.Errorf("last log line %q does not say done", lines[1])
	}
}

// TestIsTerminal: a buffer and a regular file are not terminals; a
// character device is (/dev/null is one on Linux, man 4 null).
func TestIsTerminal(t *testing.T) {
	f, err := os.Create(filepath.Join(t.TempDir(), "log"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if isTerminal(&bytes.Buffer{}) || isTerminal(f) {
		t.Error("a buffer or a regular file taken for a terminal")
	}
	null, err := os.OpenFile(os.DevNull, os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer null.Close()
	if !isTerminal(null) {
		t.Error("a character device not taken for one")
	}
}

// TestInfeasibleExitCode: the outcome of a run with nothing feasible maps
// to exit 3 and says so on stderr's first line, through the same mapping
// as every other error.
func TestInfeasibleExitCode(t *testing.T) {
	var b bytes.Buffer
	err := &runError{&infeasibleError{binding: []string{"gm_min", "power_max"}, dir: "out"}}
	if code := reportError(&b, nil, err); code != exitInfeasible {
		t.Errorf("exit %d, want %d", code, exitInfeasible)
	}
	if want := "pairsmith: no candidate meets the spec; the targets that bind: gm_min, power_max (the nearest candidates are in out)\n"; b.String() != want {
		t.Errorf("stderr %q, want %q", b.String(), want)
	}
}
