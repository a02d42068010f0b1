package objectives_test

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"pairsmith/objectives"
	"pairsmith/units"
)

// TestSpecListLimits checks that a spec's lists over units.MaxListItems
// are refused at their field's line, before any item is looked at.
func TestSpecListLimits(t *testing.T) {
	head := "process: demo18\nsupply: 1.8V\n"
	block := func(key string, n int) string { return key + ":\n" + strings.Repeat("  - zener\n", n) }
	flow := func(key string, n int) string {
		return key + ": [" + strings.TrimSuffix(strings.Repeat("area, ", n), ", ") + "]\n"
	}
	tests := []badYAML{
		{name: "topologies one over", text: head + block("topologies", units.MaxListItems+1),
			field: "topologies", line: 3, is: units.ErrTooLarge, msg: []string{"at most 1000 items", "1001 items"}},
		{name: "pareto one over", text: head + "name: x\n" + flow("pareto", units.MaxListItems+1),
			field: "pareto", line: 4, is: units.ErrTooLarge, msg: []string{"at most 1000 items", "1001 items"}},
		// The shortest items ("a,"): 200 000 of them fit in 1 MiB.
		{name: "the 49 MB list's length in 1 MiB", text: head + "topologies: [" + strings.Repeat("a,", 200_000-1) + "a]\n",
			field: "topologies", line: 3, is: units.ErrTooLarge, msg: []string{"200000 items"}},
		{name: "at the limit, then judged item by item", text: head + block("topologies", units.MaxListItems),
			field: "topologies[1]", line: 5, msg: []string{"each family once"}},
	}
	checkBadYAML(t, tests, func(file string, data []byte, baseDir string) error {
		_, err := objectives.ReadSpec(file, data, baseDir)
		return err
	})
}

// TestLoadSizeLimit checks that every file pairsmith reads is refused
// over units.MaxFileSize with an error naming it: a spec sheet, a design
// file, and a process file that either names (an endless device
// included).
func TestLoadSizeLimit(t *testing.T) {
	dir := t.TempDir()
	big := filepath.Join(dir, "big.yaml")
	if err := os.WriteFile(big, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Truncate(big, 49<<20); err != nil {
		t.Fatal(err)
	}
	write := func(name, text string) string {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	design := "topology: n-pair\nprocess: %s\nsupply: 1.8V\n"
	spec := "process: %s\nsupply: 1.8V\n"
	tests := []struct {
		name  string
		load  func() error
		named string // the file the error must start with
	}{
		{"spec", func() error { _, err := objectives.LoadSpec(big); return err }, big},
		{"design", func() error { _, err := objectives.LoadDesign(big); return err }, big},
		{"design's process", func() error {
			_, err := objectives.LoadDesign(write("d.yaml", strings.Replace(design, "%s", "big.yaml", 1)))
			return err
		}, big},
		{"spec's process", func() error {
			_, err := objectives.LoadSpec(write("s.yaml", strings.Replace(spec, "%s", "big.yaml", 1)))
			return err
		}, big},
		{"design's endless process", func() error {
			_, err := objectives.LoadDesign(write("z.yaml", strings.Replace(design, "%s", "/dev/zero", 1)))
			return err
		}, "/dev/zero"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := tt.load()
			var ue *units.Error
			if !errors.As(err, &ue) || !errors.Is(err, units.ErrTooLarge) {
				t.Fatalf("error %v (%T), want a *units.Error with ErrTooLarge", err, err)
			}
			if msg := err.Error(); !strings.HasPrefix(msg, tt.named+": want an input file of at most 1 MiB (too large: ") {
				t.Errorf("message %q does not start with %s and the limit", msg, tt.named)
			}
		})
	}
}
