// Package resultcheck checks that a run directory holds one run's
// complete results and nothing of another's: the checks behind the kill
// tests (scripts/kill-test) and the command's tests.
package resultcheck

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"pairsmith/objectives"
)

// summary is what Verify reads of summary.json.
type summary struct {
	RunID      string `json:"run_id"`
	Candidates []struct {
		ID         string          `json:"id"`
		Design     string          `json:"design"`
		Netlist    string          `json:"netlist"`
		Pareto     bool            `json:"pareto"`
		Feasible   bool            `json:"feasible"`
		Metrics    json.RawMessage `json:"metrics"`
		Violations []struct {
			Target string  `json:"target"`
			Amount float64 `json:"amount"`
		} `json:"violations"`
	} `json:"candidates"`
}

// Verify checks that dir holds the complete results of one run and
// returns its id: summary.json reads and lists candidates (an
// interrupted run too reports what it found); every candidate it lists has its
// design file and deck, both carrying the run's id; the candidates
// directory holds nothing else; pareto.csv lists exactly the Pareto
// candidates; report.html carries the run's id; and every design file,
// evaluated as `pairsmith eval` evaluates it, gives the metrics
// summary.json lists, bit for bit, and the always-on checks' findings
// that summary.json's violations imply: none for a feasible candidate,
// none exactly when its check violations are all zero
// (docs/buildable.md).
func Verify(dir string) (string, error) {
	raw, err := os.ReadFile(filepath.Join(dir, "summary.json"))
	if err != nil {
		return "", err
	}
	var s summary
	if err := json.Unmarshal(raw, &s); err != nil {
		return "", fmt.Errorf("summary.json: %w", err)
	}
	if s.RunID == "" {
		return "", fmt.Errorf("summary.json has no run_id")
	}
	if len(s.Candidates) == 0 {
		return s.RunID, fmt.Errorf("summary.json of run %s lists no candidate", s.RunID)
	}
	var listed, pareto []string
	for _, c := range s.Candidates {
		for _, f := range []string{c.Design, c.Netlist} {
			text, err := os.ReadFile(filepath.Join(dir, filepath.FromSlash(f)))
			if err != nil {
				return s.RunID, fmt.Errorf("candidate %s: %w", c.ID, err)
			}
			if !bytes.Contains(text, []byte(s.RunID)) {
				return s.RunID, fmt.Errorf("%s does not carry run %s: a file of another run", f, s.RunID)
			}
			listed = append(listed, filepath.Base(f))
		}
		if c.Pareto {
			pareto = append(pareto, c.ID)
		}
		d, err := objectives.LoadDesign(filepath.Join(dir, filepath.FromSlash(c.Design)))
		if err != nil {
			return s.RunID, fmt.Errorf("candidate %s: %w", c.ID, err)
		}
		ev, err := objectives.Evaluate(d)
		if err != nil {
			return s.RunID, fmt.Errorf("candidate %s: %w", c.ID, err)
		}
		got, err := json.Marshal(ev.Metrics)
		if err != nil {
			return s.RunID, err
		}
		if want, err := compact(c.Metrics); err != nil || !bytes.Equal(got, want) {
			return s.RunID, fmt.Errorf("candidate %s: eval gives %s, summary.json %s", c.ID, got, c.Metrics)
		}
		checks := 0.0
		for _, v := range c.Violations {
			if slices.Contains(objectives.CheckNames(), v.Target) {
				checks += v.Amount
			}
		}
		if (c.Feasible || checks == 0) != (len(ev.Findings) == 0) {
			return s.RunID, fmt.Errorf("candidate %s (feasible %v, check violations %g): eval finds %d failed check(s):\n%s",
				c.ID, c.Feasible, checks, len(ev.Findings), objectives.FindingsText(ev.Findings))
		}
	}
	entries, err := os.ReadDir(filepath.Join(dir, "candidates"))
	if err != nil {
		return s.RunID, err
	}
	var present []string
	for _, e := range entries {
		present = append(present, e.Name())
	}
	slices.Sort(listed)
	slices.Sort(present)
	if !slices.Equal(listed, present) {
		return s.RunID, fmt.Errorf("candidates/ holds %v, summary.json lists %v", present, listed)
	}
	if err := checkCSV(filepath.Join(dir, "pareto.csv"), pareto); err != nil {
		return s.RunID, err
	}
	page, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		return s.RunID, err
	}
	if !bytes.Contains(page, []byte(s.RunID)) {
		return s.RunID, fmt.Errorf("report.html does not carry run %s", s.RunID)
	}
	return s.RunID, nil
}

// compact returns JSON without insignificant space, as json.Marshal
// writes it.
func compact(raw []byte) ([]byte, error) {
	var b bytes.Buffer
	err := json.Compact(&b, raw)
	return b.Bytes(), err
}

// checkCSV checks that pareto.csv lists exactly the ids given, in order.
func checkCSV(path string, ids []string) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		return fmt.Errorf("pareto.csv: %w", err)
	}
	var got []string
	for _, r := range rows[min(1, len(rows)):] {
		got = append(got, r[0])
	}
	if !slices.Equal(got, ids) {
		return fmt.Errorf("pareto.csv lists %s, summary.json's Pareto candidates are %s",
			strings.Join(got, " "), strings.Join(ids, " "))
	}
	return nil
}
