package main

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"pairsmith/internal/ngspice"
)

// TestNetlistEKV: `netlist` never writes a deck that fails silently. On
// an EKV process (which ngspice cannot simulate) --testbench exits 2 and
// says why, naming the design file, the process and the flag that asks
// for the level-1 equivalent; with the flag the deck announces itself in
// its first lines and stderr says so too. Level-1 processes get their own
// cards and no notice.
func TestNetlistEKV(t *testing.T) {
	ekv := filepath.Join(designsDir, "current-switch.yaml")   // demo18, EKV
	l1 := filepath.Join(designsDir, "current-switch-l1.yaml") // demo18-l1, level 1
	const (
		equivTitle = "* pairsmith testbench, LEVEL-1 EQUIVALENT of an EKV process: current-switch on demo18,"
		ownTitle   = "* pairsmith testbench: current-switch on demo18-l1,"
		subTitle   = "* pairsmith stage: current-switch on demo18,"
	)
	tests := []struct {
		name   string
		args   []string
		code   int
		first  string   // stdout's first line starts so ("" for no stdout)
		stderr []string // stderr says all of these
		quiet  bool     // stderr must be empty
	}{
		{"EKV testbench refused", []string{"netlist", "--testbench", ekv}, exitBadInput, "",
			[]string{"pairsmith: netlist " + ekv + ": process demo18 uses the EKV model, which ngspice cannot simulate",
				"no deck written", "--level1-equivalent", "demo18-l1"}, false},
		{"EKV --dc refused", []string{"netlist", "--testbench", "--dc", ekv}, exitBadInput, "",
			[]string{"pairsmith: netlist " + ekv + ": process demo18", "--level1-equivalent"}, false},
		{"EKV equivalent", []string{"netlist", "--testbench", "--level1-equivalent", ekv}, exitOK, equivTitle,
			[]string{"pairsmith: note: process demo18 uses the EKV model", "nearest level-1 equivalent",
				"differ from pairsmith's EKV results"}, false},
		{"EKV equivalent with --dc", []string{"netlist", "--testbench", "--dc", "--level1-equivalent", ekv}, exitOK, equivTitle,
			[]string{"pairsmith: note: process demo18 uses the EKV model"}, false},
		{"EKV subckt", []string{"netlist", ekv}, exitOK, subTitle,
			[]string{"pairsmith: note: the .subckt carries no model cards; process demo18 uses the EKV model"}, false},
		{"level-1 testbench", []string{"netlist", "--testbench", "--dc", l1}, exitOK, ownTitle, nil, true},
		{"level-1 with the flag", []string{"netlist", "--testbench", "--level1-equivalent", l1}, exitOK, ownTitle,
			[]string{"pairsmith: note: process demo18-l1 is level 1 already"}, false},
		{"flag without --testbench", []string{"netlist", "--level1-equivalent", ekv}, exitBadInput, "",
			[]string{"pairsmith: --level1-equivalent needs --testbench"}, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			code, stdout, stderr := runCmd(t, tc.args...)
			if code != tc.code {
				t.Errorf("exit %d, want %d; stderr %q", code, tc.code, stderr)
			}
			if tc.first == "" && stdout != "" {
				t.Errorf("stdout has %d bytes, want none", len(stdout))
			}
			if tc.first != "" && !strings.HasPrefix(stdout, tc.first) {
				t.Errorf("stdout starts %q, want %q", firstLine(stdout), tc.first)
			}
			if tc.code == exitBadInput && !strings.HasPrefix(stderr, "pairsmith: ") {
				t.Errorf("stderr %q does not start with the program's name", stderr)
			}
			for _, w := range tc.stderr {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr %q does not say %q", stderr, w)
				}
			}
			if tc.quiet && stderr != "" {
				t.Errorf("stderr %q, want nothing", stderr)
			}
		})
	}

	// A refused deck leaves no file behind.
	out := filepath.Join(t.TempDir(), "tb.cir")
	if code, _, _ := runCmd(t, "netlist", "--testbench", "-o", out, ekv); code != exitBadInput {
		t.Errorf("-o: exit %d, want %d", code, exitBadInput)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a refused deck was written to %s (%v)", out, err)
	}
}

// TestRunDecksOfEKVProcess: `run` on an EKV spec writes every candidate's
// deck as the level-1 equivalent, says so in summary.json
// ("netlist_model"), and the deck runs in ngspice -b as written (source:
// ngspice, Debian package: exit 0, no error line, a gm table). A level-1
// spec's decks carry "level1".
func TestRunDecksOfEKVProcess(t *testing.T) {
	ngspice.Require(t)
	for _, tc := range []struct {
		spec, model, title string
	}{
		{"strain-gauge.yaml", "level1-equivalent", "* pairsmith testbench, LEVEL-1 EQUIVALENT of an EKV process: "},
		{"sensor-l1.yaml", "level1", "* pairsmith testbench: "},
	} {
		t.Run(tc.spec, func(t *testing.T) {
			o := runSpec(t, filepath.Join(specsDir, tc.spec), "--evaluations", "200")
			cands := o.summary["candidates"].([]any)
			if len(cands) == 0 {
				t.Fatal("no candidates")
			}
			for k, c := range cands {
				cm := c.(map[string]any)
				if cm["netlist_model"] != tc.model {
					t.Errorf("%s: netlist_model %v, want %q", cm["id"], cm["netlist_model"], tc.model)
				}
				deck, err := os.ReadFile(filepath.Join(o.dir, cm["netlist"].(string)))
				if err != nil {
					t.Fatal(err)
				}
				if !strings.HasPrefix(string(deck), tc.title) {
					t.Errorf("%s: deck starts %q, want %q", cm["id"], firstLine(string(deck)), tc.title)
				}
				if k > 0 {
					continue // ngspice runs the first deck; the others are the same text with other numbers
				}
				b, err := ngspice.RunBatch(context.Background(), string(deck))
				if err != nil {
					t.Fatal(err)
				}
				if b.ExitCode != 0 || ngspice.FirstError(b.Stderr+b.Stdout) != "" {
					t.Fatalf("%s: ngspice -b exits %d: %s", cm["id"], b.ExitCode, b.Stderr)
				}
				if _, gm, err := ngspice.ReadPrint(b.Stdout, "gm"); err != nil || len(gm) == 0 {
					t.Errorf("%s: no gm table from the deck: %v", cm["id"], err)
				}
			}
		})
	}
}
