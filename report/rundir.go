package report

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"time"
)

// A run directory holds one run's results at a time, whole: a run writes
// everything into a directory of its own under StateDir/runs, and makes
// it the current one with a single rename of the symbolic link
// StateDir/current, so that whoever reads the directory — at any moment,
// even after the run was killed while writing — sees either the earlier
// run's complete results or the new run's, never a mix. The result files
// at the top (summary.json, candidates/, …) are relative symbolic links
// into StateDir/current, made once; they keep working when the directory
// is moved or copied with its links. A lock on StateDir/lock keeps a
// second run out while one writes.
const (
	// StateDir is the directory of a run directory that pairsmith keeps
	// to itself.
	StateDir = ".pairsmith"
	// ProcessFile is a run's copy of its process file (or of the built-in
	// process's text), which the candidate design files refer to.
	ProcessFile = "process.yaml"
)

// resultNames are the entries a run writes at the top of its directory.
var resultNames = []string{SummaryFile, ParetoCSVFile, ParetoPlotFile, CurvesPlotFile, ConditionsPlotFile, MonteCarloPlotFile, ReportFile, CandidatesDir, ProcessFile}

// OutputError is an output path that cannot be written: a directory that
// cannot be made, a file that cannot be created. It is bad input — the
// path is the user's — and names the path.
type OutputError struct {
	Path string
	Err  error
}

func (e *OutputError) Error() string {
	return fmt.Sprintf("output %s: %v", e.Path, e.Err)
}

func (e *OutputError) Unwrap() error { return e.Err }

// OwnedError is a run directory that holds another run's results (or
// another run is writing into): the new run refuses it, unless asked to
// replace them.
type OwnedError struct {
	Dir    string
	Reason string
}

func (e *OwnedError) Error() string { return fmt.Sprintf("output %s: %s", e.Dir, e.Reason) }

// RunDir is a run directory opened by one run, which holds its lock
// until Close.
type RunDir struct {
	// Dir is the run directory as given.
	Dir string
	// ID identifies the run: the UTC time it started and a random
	// suffix, "20261202T071530Z-3f9a0c". summary.json, every candidate
	// file and the report carry it.
	ID string
	// Previous is the ID of the run whose results the directory held,
	// "" when none.
	Previous string

	lock      *os.File
	stage     string // StateDir/runs/ID, where this run writes
	committed bool
}

// runIDPattern matches the IDs NewRunID makes.
var runIDPattern = regexp.MustCompile(`^[0-9]{8}T[0-9]{6}Z-[0-9a-f]{6}$`)

// NewRunID returns a fresh run ID: the UTC time and a random suffix.
func NewRunID(now time.Time) (string, error) {
	var b [3]byte
	if _, err := rand.Read(b[:]); err != nil {
		return "", fmt.Errorf("run id: %w", err)
	}
	return now.UTC().Format("20060102T150405Z") + "-" + hex.EncodeToString(b[:]), nil
}

// OpenRunDir prepares dir (made if missing) for a new run: it takes the
// directory's lock, refuses a directory another run is writing into, and
// refuses one that holds an earlier run's results unless replace is set
// (the earlier results then stay until the new ones replace them whole,
// at Commit). It removes what killed runs left behind and makes the new
// run's own directory, so that a directory that cannot be written is found
// now, before any search.
func OpenRunDir(dir string, replace bool) (*RunDir, error) {
	id, err := NewRunID(time.Now())
	if err != nil {
		return nil, err
	}
	runs := filepath.Join(dir, StateDir, "runs")
	if err := os.MkdirAll(runs, 0o755); err != nil {
		return nil, &OutputError{Path: dir, Err: err}
	}
	d := &RunDir{Dir: dir, ID: id, stage: filepath.Join(runs, id)}
	if err := d.takeLock(); err != nil {
		return nil, err
	}
	fail := func(err error) (*RunDir, error) {
		d.Close()
		return nil, err
	}
	d.Previous = d.current()
	if !replace {
		if d.Previous != "" {
			return fail(&OwnedError{Dir: dir, Reason: fmt.Sprintf(
				"holds the results of run %s; pass --force to replace them (they stay until the new run has written its own), or choose another directory", d.Previous)})
		}
		if legacy := d.legacy(); len(legacy) > 0 {
			return fail(&OwnedError{Dir: dir, Reason: fmt.Sprintf(
				"holds results of an earlier pairsmith run (%s); pass --force to replace them, or choose another directory", strings.Join(legacy, ", "))})
		}
	}
	if err := d.removeStale(); err != nil {
		return fail(err)
	}
	if err := os.Mkdir(d.stage, 0o755); err != nil {
		return fail(&OutputError{Path: dir, Err: err})
	}
	return d, nil
}

// takeLock locks StateDir/lock, or says which run holds it.
func (d *RunDir) takeLock() error {
	path := filepath.Join(d.Dir, StateDir, "lock")
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return &OutputError{Path: d.Dir, Err: err}
	}
	if err := lockFile(f); err != nil {
		holder, _ := os.ReadFile(path)
		f.Close()
		who := strings.TrimSpace(string(holder))
		if who == "" {
			who = "another pairsmith run"
		}
		return &OwnedError{Dir: d.Dir, Reason: fmt.Sprintf("%s is writing into it (lock %s held); wait for it to end, or choose another directory", who, path)}
	}
	if err := f.Truncate(0); err == nil {
		fmt.Fprintf(f, "run %s (pid %d)\n", d.ID, os.Getpid())
	}
	d.lock = f
	return nil
}

// Stage returns the directory this run writes its results into before
// Commit makes them current.
func (d *RunDir) Stage() string { return d.stage }

// current returns the ID of the run whose results are current, "" when
// none.
func (d *RunDir) current() string {
	target, err := os.Readlink(filepath.Join(d.Dir, StateDir, "current"))
	if err != nil || !runIDPattern.MatchString(filepath.Base(target)) {
		return ""
	}
	return filepath.Base(target)
}

// legacy lists the result files at the top of the directory that are not
// this layout's links: results written by a pairsmith without run
// directories.
func (d *RunDir) legacy() []string {
	var out []string
	for _, n := range resultNames {
		fi, err := os.Lstat(filepath.Join(d.Dir, n))
		if err == nil && fi.Mode()&fs.ModeSymlink == 0 {
			out = append(out, n)
		}
	}
	return out
}

// removeStale removes the run directories that are not current: what
// runs killed before their Commit left (the lock is held, so none is
// being written).
func (d *RunDir) removeStale() error {
	runs := filepath.Join(d.Dir, StateDir, "runs")
	entries, err := os.ReadDir(runs)
	if err != nil {
		return &OutputError{Path: d.Dir, Err: err}
	}
	for _, e := range entries {
		if e.Name() == d.Previous {
			continue
		}
		if err := os.RemoveAll(filepath.Join(runs, e.Name())); err != nil {
			return &OutputError{Path: d.Dir, Err: err}
		}
	}
	return nil
}

// Commit makes the staged results the directory's results, at once: the
// top-level links are made where missing (an earlier layout's result
// files of the same names are removed first: only pairsmith's own), then
// one rename points StateDir/current at the new run. The earlier run's
// directory is removed afterwards.
func (d *RunDir) Commit() error {
	if d.committed {
		return errors.New("run directory: committed twice")
	}
	for _, n := range resultNames {
		if err := d.link(n); err != nil {
			return err
		}
	}
	state := filepath.Join(d.Dir, StateDir)
	tmp := filepath.Join(state, "current."+d.ID)
	if err := os.Symlink(filepath.Join("runs", d.ID), tmp); err != nil {
		return &OutputError{Path: d.Dir, Err: err}
	}
	if err := os.Rename(tmp, filepath.Join(state, "current")); err != nil {
		os.Remove(tmp)
		return &OutputError{Path: d.Dir, Err: err}
	}
	d.committed = true
	if d.Previous != "" && d.Previous != d.ID {
		_ = os.RemoveAll(filepath.Join(state, "runs", d.Previous)) // no longer current: any leftover goes next run
	}
	return nil
}

// link makes the top-level entry name a link into the current run.
func (d *RunDir) link(name string) error {
	path := filepath.Join(d.Dir, name)
	target := filepath.Join(StateDir, "current", name)
	fi, err := os.Lstat(path)
	switch {
	case err == nil && fi.Mode()&fs.ModeSymlink != 0:
		if t, _ := os.Readlink(path); t == target {
			return nil
		}
		if err := os.Remove(path); err != nil {
			return &OutputError{Path: path, Err: err}
		}
	case err == nil:
		if err := removeLegacy(path, fi); err != nil {
			return err
		}
	case !errors.Is(err, fs.ErrNotExist):
		return &OutputError{Path: path, Err: err}
	}
	if err := os.Symlink(target, path); err != nil {
		return &OutputError{Path: path, Err: err}
	}
	return nil
}

// legacyCandidate matches the candidate files an earlier layout wrote.
var legacyCandidate = regexp.MustCompile(`^c[0-9]+\.(yaml|cir)$`)

// removeLegacy removes an earlier layout's result file or candidates
// directory: only the files pairsmith writes; a candidates directory
// that holds anything else is left, and the run says why it cannot link.
func removeLegacy(path string, fi fs.FileInfo) error {
	if !fi.IsDir() {
		if err := os.Remove(path); err != nil {
			return &OutputError{Path: path, Err: err}
		}
		return nil
	}
	entries, err := os.ReadDir(path)
	if err != nil {
		return &OutputError{Path: path, Err: err}
	}
	for _, e := range entries {
		if e.Type().IsRegular() && legacyCandidate.MatchString(e.Name()) {
			if err := os.Remove(filepath.Join(path, e.Name())); err != nil {
				return &OutputError{Path: path, Err: err}
			}
		}
	}
	if err := os.Remove(path); err != nil {
		return &OutputError{Path: path, Err: fmt.Errorf("holds files pairsmith did not write; move them away: %w", err)}
	}
	return nil
}

// Close releases the lock and, when the run did not commit, removes its
// staged results: the directory keeps the earlier results.
func (d *RunDir) Close() {
	if !d.committed && d.stage != "" {
		_ = os.RemoveAll(d.stage)
	}
	if d.lock != nil {
		_ = d.lock.Close() // closing releases the lock
		d.lock = nil
	}
}
