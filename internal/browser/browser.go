// Package browser runs Debian's chromium headless for the tests: it loads a
// local page at a given window size and returns the DOM after its scripts
// ran (--dump-dom), or writes a screenshot (--screenshot). Tests of the
// report page use it to check the layout in a real browser engine.
package browser

import (
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
	"time"

	"pairsmith/internal/external"
)

// InstallHint says how to get chromium on a Debian or Ubuntu machine.
const InstallHint = "apt-get install -y chromium"

// names are the executables tried, in order: Debian's package installs
// chromium, Ubuntu's older ones chromium-browser.
var names = []string{"chromium", "chromium-browser"}

// Path returns the path of the chromium executable found on PATH.
func Path() (string, error) {
	var errs []error
	for _, n := range names {
		p, err := exec.LookPath(n)
		if err == nil {
			return p, nil
		}
		errs = append(errs, err)
	}
	return "", fmt.Errorf("chromium not found on PATH: %w", errors.Join(errs...))
}

// Require returns the path of chromium for a test. When chromium is
// missing it fails the test if the environment variable CI is set, and
// otherwise skips the test with a message saying how to install it.
func Require(t testing.TB) string {
	t.Helper()
	return external.Require(t, "chromium", Path, InstallHint)
}

// Window is the size of the browser window in CSS pixels. Pages are laid
// out as wide as the window; headless chromium keeps room for a window
// frame in the height, so the viewport is less tall than Height.
type Window struct{ Width, Height int }

// Timeout bounds one chromium run.
const Timeout = 60 * time.Second

// flags are the switches of every run: headless, no sandbox (the tests
// may run as root), no GPU, and nothing that reaches the network or
// writes outside the throw-away profile. VirtualTimeBudget lets the page's
// scripts run to completion before the DOM is dumped.
func flags(profile string, w Window) []string {
	return []string{
		"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + profile,
		"--window-size=" + strconv.Itoa(w.Width) + "," + strconv.Itoa(w.Height),
		"--virtual-time-budget=5000",
	}
}

// run runs chromium on the page at path (a local file) with extra flags
// and returns its standard output.
func run(ctx context.Context, exe, path string, w Window, extra ...string) ([]byte, error) {
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, fmt.Errorf("chromium: %w", err)
	}
	profile, err := os.MkdirTemp("", "pairsmith-chromium-")
	if err != nil {
		return nil, fmt.Errorf("chromium: %w", err)
	}
	defer os.RemoveAll(profile)
	ctx, cancel := context.WithTimeout(ctx, Timeout)
	defer cancel()
	args := append(flags(profile, w), extra...)
	args = append(args, "file://"+filepath.ToSlash(abs))
	cmd := exec.CommandContext(ctx, exe, args...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	// chromium writes its profile and crash reports under HOME too.
	cmd.Env = append(os.Environ(), "HOME="+profile)
	if err := cmd.Run(); err != nil {
		return nil, fmt.Errorf("chromium %s: %w: %s", path, err, tail(stderr.String(), 2000))
	}
	return stdout.Bytes(), nil
}

// DumpDOM loads the page at path in a window of size w, lets its scripts
// run, and returns the serialised DOM.
func DumpDOM(ctx context.Context, exe, path string, w Window) (string, error) {
	out, err := run(ctx, exe, path, w, "--dump-dom")
	if err != nil {
		return "", err
	}
	return string(out), nil
}

// Screenshot loads the page at path in a window of size w and writes what
// the window shows to png (a PNG file).
func Screenshot(ctx context.Context, exe, path, png string, w Window) error {
	abs, err := filepath.Abs(png)
	if err != nil {
		return fmt.Errorf("chromium: %w", err)
	}
	if _, err := run(ctx, exe, path, w, "--screenshot="+abs); err != nil {
		return err
	}
	if _, err := os.Stat(abs); err != nil {
		return fmt.Errorf("chromium wrote no screenshot: %w", err)
	}
	return nil
}

// tail returns the last n bytes of s, from a line start where it can.
func tail(s string, n int) string {
	s = strings.TrimSpace(s)
	if len(s) <= n {
		return s
	}
	s = s[len(s)-n:]
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		s = s[i+1:]
	}
	return "…" + s
}
