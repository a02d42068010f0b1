// Package ngspice runs the ngspice circuit simulator in batch mode and reads
// back the vectors a test asks for. Tests across the project use it to check
// pairsmith's models and netlists against an independent simulator.
//
// Run adds a .control block to a deck: it saves exactly the requested
// vectors, runs the deck's analysis lines and writes the vectors with
// ngspice's wrdata command at 17 significant digits, one file per group of
// vectors, which Run then parses into columns.
package ngspice

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"pairsmith/internal/external"
)

// InstallHint says how to get ngspice on a Debian or Ubuntu machine.
const InstallHint = "apt-get install -y ngspice"

// chunk is the number of vectors written per wrdata command, which keeps
// the control lines short whatever the number of vectors asked for.
const chunk = 40

// Table holds the vectors of one analysis, as ngspice wrote them.
type Table struct {
	// ScaleName is the name of the sweep variable ("v-sweep", "time", or
	// for an operating point the first vector saved).
	ScaleName string
	// Scale holds the sweep values, one per row.
	Scale []float64
	// Vectors maps each name passed to Run to its values, one per row.
	Vectors map[string][]float64
}

// Path returns the path of the ngspice executable found on PATH.
func Path() (string, error) {
	p, err := exec.LookPath("ngspice")
	if err != nil {
		return "", fmt.Errorf("ngspice not found on PATH: %w", err)
	}
	return p, nil
}

// Require returns the path of ngspice for a test. When ngspice is missing it
// fails the test if the environment variable CI is set, and otherwise skips
// the test with a message saying how to install ngspice.
func Require(t testing.TB) string {
	t.Helper()
	return external.Require(t, "ngspice", Path, InstallHint)
}

// Run simulates deck with `ngspice -b` in a temporary directory and returns
// the named vectors of its analysis, for example "v(out)", "i(vdd)" or
// "@m1[id]". The deck must be a complete netlist with a title line and one
// analysis line (.op, .dc or .tran); a missing .end is added. A .control
// block of the deck's own (the gm block of a `netlist --testbench --dc`
// deck) is left out: Run's own block replaces it, and runs the deck's
// analysis line once. Vectors must be real (not from an .ac analysis).
// Errors carry the tail of ngspice's error output.
func Run(deck string, vectors ...string) (Table, error) {
	return RunContext(context.Background(), deck, vectors...)
}

// RunContext is Run with a context that can stop ngspice.
func RunContext(ctx context.Context, deck string, vectors ...string) (Table, error) {
	bin, err := Path()
	if err != nil {
		return Table{}, err
	}
	if len(vectors) == 0 {
		return Table{}, errors.New("ngspice: no vectors asked for")
	}
	for _, v := range vectors {
		if v == "" || strings.ContainsAny(v, " \t\r\n;") {
			return Table{}, fmt.Errorf("ngspice: vector name %q: want a single word such as v(out) or @m1[id]", v)
		}
	}
	full, err := withControl(deck, vectors)
	if err != nil {
		return Table{}, err
	}
	dir, err := os.MkdirTemp("", "pairsmith-ngspice-")
	if err != nil {
		return Table{}, fmt.Errorf("ngspice: %w", err)
	}
	defer os.RemoveAll(dir)
	if err := os.WriteFile(filepath.Join(dir, "deck.cir"), []byte(full), 0o644); err != nil {
		return Table{}, fmt.Errorf("ngspice: writing deck: %w", err)
	}

	cmd := exec.CommandContext(ctx, bin, "-n", "-b", "deck.cir")
	cmd.Dir = dir
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	runErr := cmd.Run()
	tail := func() string {
		s := tailLines(stderr.String(), 15)
		if s == "" {
			s = tailLines(stdout.String(), 15)
		}
		return s
	}
	if runErr != nil {
		return Table{}, fmt.Errorf("ngspice -b: %w\n%s", runErr, tail())
	}
	if msg := firstError(stderr.String()); msg != "" {
		return Table{}, fmt.Errorf("ngspice reported %q\n%s", msg, tail())
	}

	tab := Table{Vectors: make(map[string][]float64, len(vectors))}
	for i := 0; i*chunk < len(vectors); i++ {
		group := vectors[i*chunk : min((i+1)*chunk, len(vectors))]
		name := filepath.Join(dir, outName(i))
		scaleName, cols, err := readWrdata(name, len(group))
		if err != nil {
			return Table{}, fmt.Errorf("ngspice: %w\n%s", err, tail())
		}
		if i == 0 {
			tab.ScaleName, tab.Scale = scaleName, cols[0]
		} else if len(cols[0]) != len(tab.Scale) {
			return Table{}, fmt.Errorf("ngspice: %s has %d rows, want %d", outName(i), len(cols[0]), len(tab.Scale))
		}
		for j, v := range group {
			tab.Vectors[v] = cols[j+1]
		}
	}
	return tab, nil
}

// Batch is what `ngspice -b` did with a deck run as it is.
type Batch struct {
	Stdout, Stderr string
	ExitCode       int
}

// RunBatch runs deck exactly as a user would, `ngspice -b deck.cir` in a
// temporary directory (with ngspice's start-up file, as a user gets it),
// and returns what ngspice printed and its exit code. Only a failure to
// start ngspice is an error; an exit code other than 0 is not.
func RunBatch(ctx context.Context, deck string) (Batch, error) {
	bin, err := Path()
	if err != nil {
		return Batch{}, err
	}
	dir, err := os.MkdirTemp("", "pairsmith-ngspice-")
	if err != nil {
		return Batch{}, fmt.Errorf("ngspice: %w", err)
	}
	defer os.RemoveAll(dir)
	if err := os.WriteFile(filepath.Join(dir, "deck.cir"), []byte(deck), 0o644); err != nil {
		return Batch{}, fmt.Errorf("ngspice: writing deck: %w", err)
	}
	cmd := exec.CommandContext(ctx, bin, "-b", "deck.cir")
	cmd.Dir = dir
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	err = cmd.Run()
	b := Batch{Stdout: stdout.String(), Stderr: stderr.String()}
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		b.ExitCode = ee.ExitCode()
	} else if err != nil {
		return b, fmt.Errorf("ngspice -b: %w", err)
	}
	return b, nil
}

// FirstError returns the first line of ngspice's output s that reports an
// error, or "".
func FirstError(s string) string { return firstError(s) }

// ReadPrint reads the table that ngspice's `print VECTOR` command writes
// for a swept analysis with `set nobreak`: a header line
// "Index   v-sweep   VECTOR", a rule, then one line "index scale value"
// a point. It returns the scale and the vector's values.
func ReadPrint(out, vector string) (scale, values []float64, err error) {
	lines := strings.Split(out, "\n")
	start := -1
	for i, l := range lines {
		f := strings.Fields(l)
		if len(f) == 3 && f[0] == "Index" && f[2] == vector {
			if start >= 0 {
				return nil, nil, fmt.Errorf("ngspice print: two tables of %s (a page break? set nobreak)", vector)
			}
			start = i + 1
		}
	}
	if start < 0 {
		return nil, nil, fmt.Errorf("ngspice print: no table of %s in the output", vector)
	}
	for _, l := range lines[start:] {
		f := strings.Fields(l)
		if len(f) == 0 || strings.HasPrefix(f[0], "---") {
			continue
		}
		if len(f) != 3 {
			break
		}
		if _, err := strconv.Atoi(f[0]); err != nil {
			break
		}
		x, err1 := strconv.ParseFloat(f[1], 64)
		y, err2 := strconv.ParseFloat(f[2], 64)
		if err := errors.Join(err1, err2); err != nil {
			return nil, nil, fmt.Errorf("ngspice print: line %q: %w", l, err)
		}
		scale, values = append(scale, x), append(values, y)
	}
	if len(scale) == 0 {
		return nil, nil, fmt.Errorf("ngspice print: the table of %s has no rows", vector)
	}
	return scale, values, nil
}

func outName(i int) string { return "out" + strconv.Itoa(i) + ".txt" }

// withControl drops the deck's own control block and inserts Run's before
// the deck's .end line.
func withControl(deck string, vectors []string) (string, error) {
	all := strings.Split(strings.ReplaceAll(deck, "\r\n", "\n"), "\n")
	var lines []string
	end, control := -1, 0 // control: line number of an open .control, 0 if none
	for i, l := range all {
		f := strings.ToLower(strings.TrimSpace(l))
		switch {
		case i == 0: // the title line is free text
		case control > 0:
			if f == ".endc" || strings.HasPrefix(f, ".endc ") {
				control = 0
			}
			continue
		case f == ".control" || strings.HasPrefix(f, ".control "):
			control = i + 1
			continue
		case f == ".end" || strings.HasPrefix(f, ".end "):
			end = len(lines)
		}
		lines = append(lines, l)
	}
	if control > 0 {
		return "", fmt.Errorf("ngspice: deck line %d: .control without .endc", control)
	}
	if strings.TrimSpace(deck) == "" {
		return "", errors.New("ngspice: empty deck")
	}
	if end < 0 {
		end = len(lines)
		lines = append(lines, ".end")
	}
	var b strings.Builder
	for _, l := range lines[:end] {
		b.WriteString(l)
		b.WriteByte('\n')
	}
	b.WriteString(".control\nset wr_singlescale\nset wr_vecnames\noption numdgt=17\n")
	for i := 0; i < len(vectors); i += chunk {
		b.WriteString("save " + strings.Join(vectors[i:min(i+chunk, len(vectors))], " ") + "\n")
	}
	b.WriteString("run\n")
	for i := 0; i*chunk < len(vectors); i++ {
		group := vectors[i*chunk : min((i+1)*chunk, len(vectors))]
		b.WriteString("wrdata " + outName(i) + " " + strings.Join(group, " ") + "\n")
	}
	b.WriteString("quit 0\n.endc\n")
	for _, l := range lines[end:] {
		b.WriteString(l)
		b.WriteByte('\n')
	}
	return b.String(), nil
}

// readWrdata parses one wrdata file with a single scale column and n vector
// columns. It returns the scale name and the n+1 columns.
func readWrdata(path string, n int) (string, [][]float64, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return "", nil, fmt.Errorf("no output from wrdata (did the analysis run?): %w", err)
	}
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(make([]byte, 0, 64*1024), 16*1024*1024)
	if !sc.Scan() {
		return "", nil, fmt.Errorf("%s: empty", filepath.Base(path))
	}
	header := strings.Fields(sc.Text())
	if len(header) != n+1 {
		return "", nil, fmt.Errorf("%s: header has %d columns, want %d (a complex or missing vector?)", filepath.Base(path), len(header), n+1)
	}
	cols := make([][]float64, n+1)
	for row := 2; sc.Scan(); row++ {
		f := strings.Fields(sc.Text())
		if len(f) == 0 {
			continue
		}
		if len(f) != n+1 {
			return "", nil, fmt.Errorf("%s:%d: %d columns, want %d", filepath.Base(path), row, len(f), n+1)
		}
		for j, s := range f {
			x, err := strconv.ParseFloat(s, 64)
			if err != nil {
				return "", nil, fmt.Errorf("%s:%d: column %d: %w", filepath.Base(path), row, j+1, err)
			}
			cols[j] = append(cols[j], x)
		}
	}
	if err := sc.Err(); err != nil {
		return "", nil, fmt.Errorf("%s: %w", filepath.Base(path), err)
	}
	if len(cols[0]) == 0 {
		return "", nil, fmt.Errorf("%s: no data rows", filepath.Base(path))
	}
	return header[0], cols, nil
}

// firstError returns the first line of ngspice's error output that reports
// an error, or "".
func firstError(s string) string {
	for _, l := range strings.Split(s, "\n") {
		t := strings.TrimSpace(l)
		if strings.HasPrefix(t, "Error") || strings.HasPrefix(t, "error") {
			return t
		}
	}
	return ""
}

// tailLines returns the last n non-empty lines of s.
func tailLines(s string, n int) string {
	var keep []string
	for _, l := range strings.Split(s, "\n") {
		if strings.TrimSpace(l) != "" {
			keep = append(keep, l)
		}
	}
	if len(keep) > n {
		keep = keep[len(keep)-n:]
	}
	return strings.Join(keep, "\n")
}
