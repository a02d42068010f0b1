package report

import (
	"bytes"
	"encoding/xml"
	"errors"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/plot"

	"pairsmith/objectives"
)

func TestPlotFormat(t *testing.T) {
	tests := []struct {
		path, format, ext string // ext: the FormatError's, when an error
	}{
		{"gm.svg", "svg", ""},
		{"dir.v1/GM.PNG", "png", ""},
		{"gm.Svg", "svg", ""},
		{"gm.jpg", "", ".jpg"},
		{"gm.pdf", "", ".pdf"},
		{"gm.svg.bak", "", ".bak"},
		{"gm", "", ""},
	}
	for _, tc := range tests {
		got, err := PlotFormat(tc.path)
		if tc.format != "" {
			if err != nil || got != tc.format {
				t.Errorf("PlotFormat(%q) = %q, %v; want %q", tc.path, got, err, tc.format)
			}
			continue
		}
		var fe *FormatError
		if !errors.As(err, &fe) || fe.Ext != tc.ext || fe.Path != tc.path {
			t.Errorf("PlotFormat(%q): error %#v, want a *FormatError for %q", tc.path, err, tc.ext)
			continue
		}
		if msg := err.Error(); !strings.Contains(msg, tc.path) || !strings.Contains(msg, ".svg or .png") {
			t.Errorf("error %q does not name the file and what is accepted", msg)
		}
	}
}

// svgText parses an SVG as XML (encoding/xml) and returns its root
// element name and all its character data.
func svgText(t *testing.T, data []byte) (root, text string) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(data))
	var b strings.Builder
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			return root, b.String()
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			if root == "" {
				root = el.Name.Local
			}
		case xml.CharData:
			b.Write(el)
		}
	}
}

func TestPlotEval(t *testing.T) {
	dir := t.TempDir()
	m := objectives.Metrics{GMMin: 1.9e-4, GMMax: 2.2e-4, GMRipple: 0.158, Power: 8e-5, Area: 4e-10, Switchover: 0.95, TransitionWidth: 0.2}
	ev := fakeEval(t, "current-switch", m, false)

	svg := filepath.Join(dir, "a.svg")
	if err := PlotEval(svg, ev); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(svg)
	if err != nil {
		t.Fatal(err)
	}
	root, text := svgText(t, data)
	if root != "svg" {
		t.Errorf("root element %q", root)
	}
	for _, want := range []string{"current-switch on demo18, supply 1.8 V, 27 °C", "gm ripple 15.8 %", "power 80 µW",
		"gm (µS)", "pair current (µA)", "vcm (V)", "i_n (NMOS pair)", "i_p (PMOS pair)", "switchover 950 mV", objectives.Caution} {
		if !strings.Contains(text, want) {
			t.Errorf("SVG text lacks %q", want)
		}
	}

	pngPath := filepath.Join(dir, "a.png")
	if err := PlotEval(pngPath, ev); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(pngPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	// The page is 18 cm wide at 144 dots per inch; 1 in = 2.54 cm by
	// definition (international yard and pound agreement, 1959).
	w, h := (&Figure{Panels: make([]*plot.Plot, 2)}).Size()
	wantW, wantH := float64(w)/72*pngDPI, float64(h)/72*pngDPI
	if b := img.Bounds(); math.Abs(float64(b.Dx())-wantW) > 1 || math.Abs(float64(b.Dy())-wantH) > 1 {
		t.Errorf("PNG %d×%d pixels, want %.0f×%.0f", b.Dx(), b.Dy(), wantW, wantH)
	}
	if math.Abs(wantW-18/2.54*pngDPI) > 0.5 {
		t.Errorf("page width %.1f px, want 18 cm at %d dpi", wantW, pngDPI)
	}

	bad := filepath.Join(dir, "a.jpg")
	var fe *FormatError
	if err := PlotEval(bad, ev); !errors.As(err, &fe) {
		t.Errorf("PlotEval(.jpg): %v, want a *FormatError", err)
	}
	if _, err := os.Stat(bad); err == nil {
		t.Error("PlotEval(.jpg) wrote a file")
	}
}

func TestPlotSinglePair(t *testing.T) {
	nan := math.NaN()
	m := objectives.Metrics{GMMin: 0, GMMax: 2e-4, GMRipple: math.Inf(1), Power: 4e-5, Area: 6.5e-11, Switchover: nan, TransitionWidth: nan}
	fig, err := EvalFigure(fakeEval(t, "n-pair", m, true))
	if err != nil {
		t.Fatal(err)
	}
	data, err := fig.Render("svg")
	if err != nil {
		t.Fatal(err)
	}
	_, text := svgText(t, data)
	// docs/families.md#n-pair-and-p-pair: the report should make plain that a single pair
	// loses gm; the absent pair's current is not drawn as if measured.
	if !strings.Contains(text, "gm ripple ∞ (gm falls to zero)") {
		t.Errorf("subtitle lacks the unbounded ripple: %q", text)
	}
	for _, absent := range []string{"i_p (PMOS pair)", "switchover"} {
		if strings.Contains(text, absent) {
			t.Errorf("single-pair plot shows %q", absent)
		}
	}
}

func TestNiceTicks(t *testing.T) {
	// The 1-2-5 rule for axis labels (common practice, no source).
	tests := []struct {
		lo, hi float64
		n      int
		labels []string
	}{
		{0, 1.8, 6, []string{"0.0", "0.2", "0.4", "0.6", "0.8", "1.0", "1.2", "1.4", "1.6", "1.8"}},
		{0, 3.3, 6, []string{"0.0", "0.5", "1.0", "1.5", "2.0", "2.5", "3.0"}},
		{0, 287, 5, []string{"0", "50", "100", "150", "200", "250"}},
		{0, 26, 5, []string{"0", "5", "10", "15", "20", "25"}},
		{-0.3, 0.3, 6, []string{"-0.3", "-0.2", "-0.1", "0.0", "0.1", "0.2", "0.3"}},
	}
	for _, tc := range tests {
		var labels []string
		prev := math.Inf(-1)
		for _, tk := range (NiceTicks{Labels: tc.n}).Ticks(tc.lo, tc.hi) {
			if tk.Value <= prev || tk.Value < tc.lo-1e-12 || tk.Value > tc.hi+1e-12 {
				t.Errorf("[%g, %g]: tick %g out of order or range", tc.lo, tc.hi, tk.Value)
			}
			prev = tk.Value
			if tk.Label != "" {
				labels = append(labels, tk.Label)
				if v, err := strconv.ParseFloat(tk.Label, 64); err != nil || math.Abs(v-tk.Value) > 1e-9 {
					t.Errorf("label %q at %g", tk.Label, tk.Value)
				}
			}
		}
		if strings.Join(labels, " ") != strings.Join(tc.labels, " ") {
			t.Errorf("[%g, %g]: labels %v, want %v", tc.lo, tc.hi, labels, tc.labels)
		}
	}
}
