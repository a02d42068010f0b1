package browser

import (
	"context"
	"image/png"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestDumpDOMRunsScripts: the DOM chromium dumps is the one after the
// page's scripts ran, and the page is laid out as wide as the window
// asked for (the standard DOM property window.innerWidth, common
// practice, no source); headless chromium keeps room for its window
// frame in the height, so the viewport is less tall than the window.
func TestDumpDOMRunsScripts(t *testing.T) {
	exe := Require(t)
	dir := t.TempDir()
	page := filepath.Join(dir, "p.html")
	html := `<!DOCTYPE html><html><body><p id="out">before</p>
<script>document.getElementById("out").textContent = "size " + window.innerWidth + "x" + window.innerHeight;</script>
</body></html>`
	if err := os.WriteFile(page, []byte(html), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, w := range []Window{{1280, 900}, {640, 480}} {
		dom, err := DumpDOM(context.Background(), exe, page, w)
		if err != nil {
			t.Fatal(err)
		}
		_, rest, ok := strings.Cut(dom, `<p id="out">size `)
		size, _, _ := strings.Cut(rest, "<")
		ws, hs, _ := strings.Cut(size, "x")
		width, errW := strconv.Atoi(ws)
		height, errH := strconv.Atoi(hs)
		if !ok || errW != nil || errH != nil || width != w.Width || height <= 0 || height > w.Height {
			t.Errorf("window %v: the script saw %q, want width %d and a height up to %d:\n%s", w, size, w.Width, w.Height, dom)
		}
	}
	shot := filepath.Join(dir, "p.png")
	if err := Screenshot(context.Background(), exe, page, shot, Window{800, 600}); err != nil {
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
	if cfg.Width != 800 || cfg.Height != 600 {
		t.Errorf("screenshot %d×%d, want the 800×600 window", cfg.Width, cfg.Height)
	}
}

func TestTail(t *testing.T) {
	tests := []struct {
		s    string
		n    int
		want string
	}{
		{"short", 10, "short"},
		{"  padded\n", 10, "padded"},
		{"line one\nline two\nline three", 14, "…line three"},
	}
	for _, tc := range tests {
		if got := tail(tc.s, tc.n); got != tc.want {
			t.Errorf("tail(%q, %d) = %q, want %q", tc.s, tc.n, got, tc.want)
		}
	}
}
