package report

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// stage writes a fake result set into d's stage: every result name, each
// holding the run's id, so that a reader can tell which run it sees.
func stage(t *testing.T, d *RunDir) {
	t.Helper()
	for _, n := range resultNames {
		p := filepath.Join(d.Stage(), n)
		if n == CandidatesDir {
			if err := os.Mkdir(p, 0o755); err != nil {
				t.Fatal(err)
			}
			p = filepath.Join(p, "c01.yaml")
		}
		if err := os.WriteFile(p, []byte(d.ID), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// seen returns the run id every result name shows through the top-level
// links, failing unless they all show the same one.
func seen(t *testing.T, dir string) string {
	t.Helper()
	id := ""
	for _, n := range resultNames {
		p := filepath.Join(dir, n)
		if n == CandidatesDir {
			p = filepath.Join(p, "c01.yaml")
		}
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatalf("%s: %v", n, err)
		}
		if id == "" {
			id = string(b)
		} else if string(b) != id {
			t.Fatalf("%s shows run %s, others run %s: a mix", n, b, id)
		}
	}
	return id
}

// TestRunDirReplacesWhole: a run directory shows one run's results at a
// time; a run that stops before Commit (killed, or failed) leaves the
// earlier results whole, and the next run clears what it left.
func TestRunDirReplacesWhole(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	first, err := OpenRunDir(dir, false)
	if err != nil {
		t.Fatal(err)
	}
	stage(t, first)
	if err := first.Commit(); err != nil {
		t.Fatal(err)
	}
	first.Close()
	if got := seen(t, dir); got != first.ID {
		t.Fatalf("after the first run the directory shows %s, want %s", got, first.ID)
	}

	// Without replace, the directory is refused: it holds results.
	if _, err := OpenRunDir(dir, false); !errors.As(err, new(*OwnedError)) || !strings.Contains(err.Error(), first.ID) {
		t.Fatalf("second run without replace: %v, want an OwnedError naming run %s", err, first.ID)
	}

	// A run that writes but never commits (as if killed).
	dead, err := OpenRunDir(dir, true)
	if err != nil {
		t.Fatal(err)
	}
	stage(t, dead)
	if got := seen(t, dir); got != first.ID {
		t.Fatalf("while a run writes the directory shows %s, want the earlier %s", got, first.ID)
	}
	dead.lock.Close() // the lock goes with the process; the staged files stay
	dead.lock = nil

	third, err := OpenRunDir(dir, true)
	if err != nil {
		t.Fatal(err)
	}
	if third.Previous != first.ID {
		t.Errorf("previous run %q, want %s", third.Previous, first.ID)
	}
	if _, err := os.Stat(dead.Stage()); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the killed run's staged files are still there (%v)", err)
	}
	stage(t, third)
	if err := third.Commit(); err != nil {
		t.Fatal(err)
	}
	third.Close()
	if got := seen(t, dir); got != third.ID {
		t.Fatalf("after the third run the directory shows %s, want %s", got, third.ID)
	}
	if _, err := os.Stat(filepath.Join(dir, StateDir, "runs", first.ID)); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the replaced run's directory is still there (%v)", err)
	}
}

// TestRunDirLock: a second run into a directory being written is
// refused, naming the run that holds it; once that one ends, it may go.
func TestRunDirLock(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	a, err := OpenRunDir(dir, false)
	if err != nil {
		t.Fatal(err)
	}
	_, err = OpenRunDir(dir, true)
	if !errors.As(err, new(*OwnedError)) || !strings.Contains(err.Error(), a.ID) {
		t.Fatalf("second run while one writes: %v, want an OwnedError naming run %s", err, a.ID)
	}
	a.Close()
	b, err := OpenRunDir(dir, false)
	if err != nil {
		t.Fatalf("after the first run ended: %v", err)
	}
	b.Close()
}

// TestRunDirLegacy: result files an earlier layout wrote straight into
// the directory are refused without replace; with it, pairsmith's own
// files go and the user's stay.
func TestRunDirLegacy(t *testing.T) {
	dir := t.TempDir()
	for _, f := range []string{"summary.json", "report.html", "candidates/c01.yaml", "candidates/c001.cir", "notes.txt"} {
		p := filepath.Join(dir, f)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte("old"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := OpenRunDir(dir, false); !errors.As(err, new(*OwnedError)) || !strings.Contains(err.Error(), "summary.json") {
		t.Fatalf("legacy results without replace: %v, want an OwnedError naming summary.json", err)
	}
	d, err := OpenRunDir(dir, true)
	if err != nil {
		t.Fatal(err)
	}
	stage(t, d)
	if err := d.Commit(); err != nil {
		t.Fatal(err)
	}
	d.Close()
	if got := seen(t, dir); got != d.ID {
		t.Fatalf("the directory shows %s, want %s", got, d.ID)
	}
	if _, err := os.Stat(filepath.Join(dir, "candidates", "c001.cir")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("an old candidate is still visible (%v)", err)
	}
	if b, err := os.ReadFile(filepath.Join(dir, "notes.txt")); err != nil || string(b) != "old" {
		t.Errorf("the user's own file was touched (%q, %v)", b, err)
	}
}

// TestRunDirUnwritable: a directory that cannot be made is an
// OutputError naming it, before anything is written.
func TestRunDirUnwritable(t *testing.T) {
	file := filepath.Join(t.TempDir(), "afile")
	if err := os.WriteFile(file, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := OpenRunDir(file, false)
	var oe *OutputError
	if !errors.As(err, &oe) || oe.Path != file {
		t.Fatalf("run dir under a file: %v, want an OutputError on %s", err, file)
	}
}
