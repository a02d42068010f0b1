package report

import (
	"context"
	"encoding/json"
	"html"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"pairsmith/internal/browser"
)

// layoutProbe is a test-only script injected into a copy of report.html:
// it opens every <details>, then measures, with the standard DOM layout
// properties (scrollWidth, clientWidth, getBoundingClientRect; common
// practice, no source), whether the page is wider than the window,
// whether any table is wider than the box that holds it, and whether any
// element reaches past the window's right edge; it writes the verdict as
// JSON into a <pre id="layout-verdict">.
const layoutProbe = `<script>
(function () {
  document.querySelectorAll("details").forEach(function (d) { d.open = true; });
  var de = document.documentElement, vw = de.clientWidth, out = [];
  var name = function (el) {
    var s = el.tagName.toLowerCase();
    if (el.id) { s += "#" + el.id; }
    if (el.className && typeof el.className === "string") { s += "." + el.className.split(" ").join("."); }
    return s;
  };
  if (de.scrollWidth > vw) { out.push("page: scrollWidth " + de.scrollWidth + " > " + vw); }
  var tables = document.querySelectorAll("table");
  tables.forEach(function (t, i) {
    var box = t.parentElement;
    if (t.scrollWidth > box.clientWidth) {
      out.push("table " + i + ": scrollWidth " + t.scrollWidth + " > its container's " + box.clientWidth + " (" + name(box) + ")");
    }
  });
  var all = document.body.querySelectorAll("*"), past = 0;
  all.forEach(function (el) {
    var r = el.getBoundingClientRect();
    if (r.width > 0 && r.right > vw + 0.5) {
      past++;
      if (past <= 5) { out.push(name(el) + ": right edge " + Math.round(r.right) + " > " + vw); }
    }
  });
  if (past > 5) { out.push((past - 5) + " more elements past the right edge"); }
  var pre = document.createElement("pre");
  pre.id = "layout-verdict";
  pre.textContent = JSON.stringify({width: window.innerWidth, tables: tables.length, details: document.querySelectorAll("details").length, overflows: out});
  document.body.appendChild(pre);
})();
</script>
`

// layoutVerdict is what layoutProbe writes.
type layoutVerdict struct {
	Width     int      `json:"width"`
	Tables    int      `json:"tables"`
	Details   int      `json:"details"`
	Overflows []string `json:"overflows"`
}

// probeLayout loads page (HTML text) with layoutProbe in chromium at a
// 1280 px wide window and returns the verdict.
func probeLayout(t *testing.T, exe, dir, name, page string) layoutVerdict {
	t.Helper()
	i := strings.LastIndex(page, "</body>")
	if i < 0 {
		t.Fatal("the page has no </body>")
	}
	path := filepath.Join(dir, name+".html")
	if err := os.WriteFile(path, []byte(page[:i]+layoutProbe+page[i:]), 0o644); err != nil {
		t.Fatal(err)
	}
	dom, err := browser.DumpDOM(context.Background(), exe, path, reportWindow)
	if err != nil {
		t.Fatal(err)
	}
	_, rest, ok := strings.Cut(dom, `<pre id="layout-verdict">`)
	body, _, ok2 := strings.Cut(rest, "</pre>")
	if !ok || !ok2 {
		t.Fatalf("%s: the probe wrote no verdict (did the script run?)", name)
	}
	var v layoutVerdict
	if err := json.Unmarshal([]byte(html.UnescapeString(body)), &v); err != nil {
		t.Fatalf("%s: verdict %q: %v", name, body, err)
	}
	return v
}

// reportWindow is the window the report must fit: 1280 px wide, the
// narrowest common laptop screen (common practice, no source).
var reportWindow = browser.Window{Width: 1280, Height: 900}

// TestReportFitsWindow writes the report of a small real search and
// loads it in headless chromium at a 1280 px wide window: nothing may
// overflow horizontally, every <details> opened. The same probe must
// find a deliberately too-wide table, in the page's flow and inside a
// scrolling box, so that a pass means something. A screenshot of the
// window is taken too; set PAIRSMITH_SCREENSHOT to a .png path to keep it
// for a look by eye.
func TestReportFitsWindow(t *testing.T) {
	exe := browser.Require(t)
	res := searchSpec(t, "sensor-l1.yaml", 400)
	dir := t.TempDir()
	if err := WriteRun(dir, res, RunOptions{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(filepath.Join(dir, ReportFile))
	if err != nil {
		t.Fatal(err)
	}
	page := string(raw)
	wide := `<table><tr><td style="white-space: nowrap">` + strings.Repeat("too wide ", 300) + `</td></tr></table>`
	insert := func(s string) func(string) string {
		return func(p string) string { return strings.Replace(p, "<h2>Glossary</h2>", s+"<h2>Glossary</h2>", 1) }
	}
	tests := []struct {
		name string
		edit func(string) string
		fits bool
	}{
		{"report", nil, true},
		{"wide-table", insert(wide), false},
		{"wide-table-in-scroll-box", insert(`<div class="scroll">` + wide + `</div>`), false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := page
			if tc.edit != nil {
				if p = tc.edit(page); p == page {
					t.Fatal("the edit changed nothing")
				}
			}
			v := probeLayout(t, exe, dir, tc.name, p)
			if v.Width != reportWindow.Width {
				t.Fatalf("the page saw a window %d px wide, want %d", v.Width, reportWindow.Width)
			}
			if v.Tables < 5 || v.Details != len(res.Candidates) {
				t.Errorf("the probe saw %d tables and %d details, want at least 5 and one per candidate (%d)",
					v.Tables, v.Details, len(res.Candidates))
			}
			t.Logf("%d tables, %d details; overflows: %q", v.Tables, v.Details, v.Overflows)
			if fits := len(v.Overflows) == 0; fits != tc.fits {
				t.Errorf("fits %v, want %v; overflows: %q", fits, tc.fits, v.Overflows)
			}
		})
	}
	shot := filepath.Join(dir, "report.png")
	if keep := os.Getenv("PAIRSMITH_SCREENSHOT"); keep != "" {
		shot = keep
	}
	if err := browser.Screenshot(context.Background(), exe, filepath.Join(dir, ReportFile), shot, reportWindow); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	cfg, err := png.DecodeConfig(f)
	if err != nil {
		t.Fatal(err)
	}
	if cfg.Width != reportWindow.Width {
		t.Errorf("screenshot %d px wide, want %d", cfg.Width, reportWindow.Width)
	}
}
