package ngspice

import (
	"context"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"
)

func TestRunOperatingPoint(t *testing.T) {
	Require(t)
	// Source: Ohm's law and the voltage-divider rule (any circuits text).
	deck := `divider
vdd a 0 3
r1 a b 1k
r2 b 0 2k
.op
.end
`
	tab, err := Run(deck, "v(b)", "i(vdd)")
	if err != nil {
		t.Fatal(err)
	}
	if len(tab.Scale) != 1 {
		t.Fatalf("operating point has %d rows, want 1", len(tab.Scale))
	}
	if got, want := tab.Vectors["v(b)"][0], 2.0; math.Abs(got-want) > 1e-12 {
		t.Errorf("v(b) = %.17g, want %g", got, want)
	}
	// SPICE convention: the current through a source flows in at its +
	// terminal, so a source delivering 1 mA reads -1 mA (common practice, no source).
	if got, want := tab.Vectors["i(vdd)"][0], -1e-3; math.Abs(got-want) > 1e-15 {
		t.Errorf("i(vdd) = %.17g, want %g", got, want)
	}
}

func TestRunDCSweepAndDeviceParameters(t *testing.T) {
	Require(t)
	// Source: Ohm's law; the square law I = KP/2·W/L·(VGS−VTO)² of a SPICE
	// level-1 MOSFET with lambda = gamma = 0 in saturation (any analog
	// design text, e.g. Razavi). No .end line: Run adds it.
	deck := `sweep
vin a 0 0
r1 a 0 2k
vd d 0 2
m1 d a 0 0 mn w=10u l=1u
.model mn nmos (level=1 vto=0.5 kp=100u)
.dc vin 0 1.5 0.25`
	tab, err := Run(deck, "i(vin)", "@m1[id]", "@m1[gm]")
	if err != nil {
		t.Fatal(err)
	}
	if tab.ScaleName != "v-sweep" {
		t.Errorf("scale name %q, want v-sweep", tab.ScaleName)
	}
	if len(tab.Scale) != 7 {
		t.Fatalf("%d rows, want 7", len(tab.Scale))
	}
	for i, v := range tab.Scale {
		if want := 0.25 * float64(i); math.Abs(v-want) > 1e-12 {
			t.Errorf("scale[%d] = %g, want %g", i, v, want)
		}
		if got, want := tab.Vectors["i(vin)"][i], -v/2e3; math.Abs(got-want) > 1e-15 {
			t.Errorf("i(vin) at %g V = %g, want %g", v, got, want)
		}
		ov := math.Max(v-0.5, 0)
		// ngspice's id adds the gmin leakage of the drain junction, 1e-12 S × 2 V.
		if got, want := tab.Vectors["@m1[id]"][i], 0.5*100e-6*10*ov*ov; math.Abs(got-want) > 3e-12 {
			t.Errorf("id at %g V = %g, want %g", v, got, want)
		}
		if got, want := tab.Vectors["@m1[gm]"][i], 100e-6*10*ov; math.Abs(got-want) > 1e-12 {
			t.Errorf("gm at %g V = %g, want %g", v, got, want)
		}
	}
}

func TestRunManyVectors(t *testing.T) {
	Require(t)
	// More vectors than one wrdata command carries. Source: the
	// voltage-divider rule, v(nk) = k/n of the supply.
	const n = 100
	var b strings.Builder
	b.WriteString("ladder\nvdd n100 0 100\n")
	var vecs []string
	for k := 1; k <= n; k++ {
		fmt.Fprintf(&b, "r%d n%d n%d 1k\n", k, k, k-1)
		if k < n {
			vecs = append(vecs, fmt.Sprintf("v(n%d)", k))
		}
	}
	b.WriteString(".op\n.end\n")
	tab, err := Run(strings.Replace(b.String(), "n0 ", "0 ", 1), vecs...)
	if err != nil {
		t.Fatal(err)
	}
	for k := 1; k < n; k++ {
		got := tab.Vectors[fmt.Sprintf("v(n%d)", k)]
		if len(got) != 1 || math.Abs(got[0]-float64(k)) > 1e-9 {
			t.Errorf("v(n%d) = %v, want %d", k, got, k)
		}
	}
}

// TestRunReplacesOwnControl: a deck's own .control block is left out and
// Run's runs the deck's analysis line as written. The deck's block would
// alter the source to 2 V and stop ngspice before Run's wrdata; if it ran,
// there would be no output or v(b) would be 4/3 V. Source: the
// voltage-divider rule, v(b) = 2/3 of 1 V.
func TestRunReplacesOwnControl(t *testing.T) {
	Require(t)
	deck := "divider\nv1 a 0 1\nr1 a b 1k\nr2 b 0 2k\n.op\n.CONTROL\nalter v1 dc = 2\nrun\nquit 1\n.endc\n.end\n"
	tab, err := Run(deck, "v(b)")
	if err != nil {
		t.Fatal(err)
	}
	if got := tab.Vectors["v(b)"]; len(got) != 1 || math.Abs(got[0]-2.0/3) > 1e-12 {
		t.Errorf("v(b) = %v, want [0.6667] from the deck's own 1 V source", got)
	}
}

// TestRunBatchAndReadPrint runs a deck with its own .control block as a
// user would and reads the table its print command writes. Source: Ohm's
// law, i = v/1k into the source's + terminal as −v/1k (common practice, no
// source, for SPICE's sign).
func TestRunBatchAndReadPrint(t *testing.T) {
	Require(t)
	var b strings.Builder
	b.WriteString("sweep\nv1 a 0 0\nr1 a 0 1k\n.dc v1 0 1 0.01\n.control\nset nobreak\nrun\nlet cur = i(v1)\nprint cur\nquit 0\n.endc\n.end\n")
	out, err := RunBatch(context.Background(), b.String())
	if err != nil {
		t.Fatal(err)
	}
	if out.ExitCode != 0 || FirstError(out.Stderr) != "" {
		t.Fatalf("exit %d, stderr %q", out.ExitCode, out.Stderr)
	}
	scale, cur, err := ReadPrint(out.Stdout, "cur")
	if err != nil {
		t.Fatal(err)
	}
	if len(scale) != 101 {
		t.Fatalf("%d rows, want 101 (more than one page: nobreak keeps one table)", len(scale))
	}
	for i, v := range scale {
		// print writes 7 significant digits.
		if want := -v / 1e3; math.Abs(cur[i]-want) > 1e-6*math.Abs(want)+1e-18 {
			t.Errorf("cur at %g V = %g, want %g", v, cur[i], want)
		}
	}
	if _, _, err := ReadPrint(out.Stdout, "nosuch"); err == nil {
		t.Error("ReadPrint found a table of a vector that was not printed")
	}

	bad, err := RunBatch(context.Background(), "t\nv1 a 0 1\n.op\n.control\nrun\nquit 3\n.endc\n.end\n")
	if err != nil {
		t.Fatal(err)
	}
	if bad.ExitCode != 3 {
		t.Errorf("exit code %d, want the deck's quit 3", bad.ExitCode)
	}
}

func TestRunErrors(t *testing.T) {
	Require(t)
	tests := []struct {
		name, deck string
		vectors    []string
		want       string // part of the error text
	}{
		{"unknown vector", "t\nv1 a 0 1\nr1 a 0 1k\n.op\n.end\n", []string{"v(nosuch)"}, "nosuch"},
		{"bad element", "t\nv1 a 0 1\nr1 a 0 1k foo\n.op\n.end\n", []string{"v(a)"}, "foo"},
		{"no analysis", "t\nv1 a 0 1\nr1 a 0 1k\n.end\n", []string{"v(a)"}, "ngspice"},
		{"open control", "t\nv1 a 0 1\n.op\n.control\nop\n.end\n", []string{"v(a)"}, ".control without .endc"},
		{"empty deck", "  \n", []string{"v(a)"}, "empty deck"},
		{"no vectors", "t\nv1 a 0 1\n.op\n.end\n", nil, "no vectors"},
		{"bad vector name", "t\nv1 a 0 1\n.op\n.end\n", []string{"v(a) v(b)"}, "single word"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Run(tc.deck, tc.vectors...)
			if err == nil {
				t.Fatalf("no error, want one mentioning %q", tc.want)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %q does not mention %q", err, tc.want)
			}
		})
	}
}

// fakeTB records what Require does with a test instead of stopping it.
type fakeTB struct {
	testing.TB
	skipped, failed bool
	msg             string
}

func (f *fakeTB) Helper() {}
func (f *fakeTB) Skipf(format string, args ...any) {
	f.skipped, f.msg = true, fmt.Sprintf(format, args...)
}
func (f *fakeTB) Fatalf(format string, args ...any) {
	f.failed, f.msg = true, fmt.Sprintf(format, args...)
}

func TestRequireWithoutNgspice(t *testing.T) {
	t.Setenv("PATH", t.TempDir()) // a directory without ngspice
	if _, err := Path(); err == nil {
		t.Fatal("Path found ngspice on an empty PATH")
	}

	t.Run("local", func(t *testing.T) {
		unsetCI(t)
		f := &fakeTB{TB: t}
		if p := Require(f); p != "" || !f.skipped || f.failed {
			t.Fatalf("Require = %q, skipped %v, failed %v; want a skip", p, f.skipped, f.failed)
		}
		for _, want := range []string{"not installed", InstallHint} {
			if !strings.Contains(f.msg, want) {
				t.Errorf("skip message %q lacks %q", f.msg, want)
			}
		}
	})
	t.Run("CI", func(t *testing.T) {
		t.Setenv("CI", "true")
		f := &fakeTB{TB: t}
		if p := Require(f); p != "" || !f.failed || f.skipped {
			t.Fatalf("Require = %q, skipped %v, failed %v; want a failure", p, f.skipped, f.failed)
		}
		if !strings.Contains(f.msg, InstallHint) {
			t.Errorf("failure message %q lacks %q", f.msg, InstallHint)
		}
	})
}

// unsetCI removes CI from the environment for the rest of the test and
// restores it afterwards (t.Setenv registers the restore).
func unsetCI(t *testing.T) {
	t.Helper()
	t.Setenv("CI", "")
	if err := os.Unsetenv("CI"); err != nil {
		t.Fatal(err)
	}
}
