package units

import (
	"errors"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

// bytesAllocated returns the bytes f allocates on the heap.
func bytesAllocated(f func()) uint64 {
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	f()
	runtime.ReadMemStats(&after)
	return after.TotalAlloc - before.TotalAlloc
}

// sparseFile makes a file of size bytes that holds no data on disk.
func sparseFile(t *testing.T, size int64) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "big.yaml")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(size); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	return path
}

// TestReadInputLimit reads files at and over MaxFileSize. A file over it
// is refused with an *Error that names the file and its size, and without
// reading it: a regular file of 1 GiB costs less than 64 KiB of memory
// (reading it would cost 1 GiB), an endless device at most a few times
// the limit.
func TestReadInputLimit(t *testing.T) {
	tests := []struct {
		name     string
		path     func(t *testing.T) string
		ok       bool
		msg      string // the message after "PATH: "
		maxAlloc uint64 // bytes ReadInput may allocate
	}{
		{"at the limit", func(t *testing.T) string {
			path := filepath.Join(t.TempDir(), "full.yaml")
			text := "supply: 1.8V\n" + strings.Repeat("#", MaxFileSize-len("supply: 1.8V\n"))
			if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
			return path
		}, true, "", 8 * MaxFileSize},
		{"one byte over", func(t *testing.T) string { return sparseFile(t, MaxFileSize+1) }, false,
			"want an input file of at most 1 MiB (too large: 1048577 bytes)", 64 << 10},
		{"the 49 MB list's size", func(t *testing.T) string { return sparseFile(t, 49<<20) }, false,
			"want an input file of at most 1 MiB (too large: 51380224 bytes)", 64 << 10},
		{"1 GiB", func(t *testing.T) string { return sparseFile(t, 1<<30) }, false,
			"want an input file of at most 1 MiB (too large: 1073741824 bytes)", 64 << 10},
		{"endless device", func(*testing.T) string { return "/dev/zero" }, false, "want an input file of at most 1 MiB (too large: more than 1048576 bytes)", 8 * MaxFileSize},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			path := tt.path(t)
			var data []byte
			var err error
			alloc := bytesAllocated(func() { data, err = ReadInput(path, "read") })
			if alloc > tt.maxAlloc {
				t.Errorf("ReadInput allocated %d bytes, want at most %d", alloc, tt.maxAlloc)
			}
			if tt.ok {
				if err != nil || len(data) != MaxFileSize {
					t.Fatalf("ReadInput = %d bytes, %v; want %d bytes", len(data), err, MaxFileSize)
				}
				return
			}
			var e *Error
			if !errors.As(err, &e) || !errors.Is(err, ErrTooLarge) || e.File != path {
				t.Fatalf("ReadInput error %v (%T), want an *Error of %s with ErrTooLarge", err, err, path)
			}
			if want := path + ": " + tt.msg; err.Error() != want {
				t.Errorf("message %q, want %q", err, want)
			}
		})
	}
}

// TestReadInputFailures checks that a file that cannot be read is an
// error naming it, prefixed with what the caller reads, and not
// ErrTooLarge.
func TestReadInputFailures(t *testing.T) {
	dir := t.TempDir()
	tests := []struct{ name, path, msg string }{
		{"missing", filepath.Join(dir, "none.yaml"), "no such file or directory"},
		{"directory", dir, "is a directory"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ReadInput(tt.path, "spec")
			if err == nil || errors.Is(err, ErrTooLarge) {
				t.Fatalf("ReadInput(%s) error %v", tt.path, err)
			}
			if msg := err.Error(); !strings.HasPrefix(msg, "spec: ") || !strings.Contains(msg, tt.path) || !strings.Contains(msg, tt.msg) {
				t.Errorf("message %q, want spec: … %s … %s", msg, tt.path, tt.msg)
			}
		})
	}
}

// TestReadBytesLimits checks the limits on text read from memory and the
// list limit: a text over MaxFileSize names the file; a list over
// MaxListItems is refused at the line of its field, and a list inside a
// list at its own line, whatever field or nesting it is in.
func TestReadBytesLimits(t *testing.T) {
	list := func(n int) string { return strings.Repeat("  - zener\n", n) }
	flow := func(n int) string { return "[" + strings.TrimSuffix(strings.Repeat("a, ", n), ", ") + "]" }
	tests := []struct {
		name string
		text string
		msg  string // "" when the text reads
	}{
		{"text at the limit", "supply: 1.8V\n" + strings.Repeat("#", MaxFileSize-13), ""},
		{"text one byte over", "supply: 1.8V\n" + strings.Repeat("#", MaxFileSize-12),
			"x.yaml: want an input file of at most 1 MiB (too large: 1048577 bytes)"},
		{"list at the limit", "topologies:\n" + list(MaxListItems), ""},
		{"block list one over", "name: x\ntopologies:\n" + list(MaxListItems+1),
			"x.yaml:2: topologies: want a list of at most 1000 items (too large: 1001 items)"},
		{"flow list one over", "name: x\n\npareto: " + flow(MaxListItems+1) + "\n",
			"x.yaml:3: pareto: want a list of at most 1000 items (too large: 1001 items)"},
		{"nested field", "search:\n  x: 1\n  seeds: " + flow(5000) + "\n",
			"x.yaml:3: search.seeds: want a list of at most 1000 items (too large: 5000 items)"},
		{"list in a list", "x:\n  - [a]\n  - " + flow(MaxListItems+1) + "\n",
			"x.yaml:3: x[1]: want a list of at most 1000 items (too large: 1001 items)"},
		{"anchored list", "a: &big " + flow(MaxListItems+1) + "\nb: *big\n",
			"x.yaml:1: a: want a list of at most 1000 items (too large: 1001 items)"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ReadBytes("x.yaml", []byte(tt.text))
			if tt.msg == "" {
				if err != nil {
					t.Fatalf("ReadBytes: %v", err)
				}
				return
			}
			var e *Error
			if !errors.As(err, &e) || !errors.Is(err, ErrTooLarge) {
				t.Fatalf("ReadBytes error %v (%T), want an *Error with ErrTooLarge", err, err)
			}
			if err.Error() != tt.msg {
				t.Errorf("message %q, want %q", err, tt.msg)
			}
		})
	}
}

// BenchmarkRefuseLargeFile measures refusing a 49 MB file, the size of
// the list that took 19 s and 1.9 GB to reject before the limits.
func BenchmarkRefuseLargeFile(b *testing.B) {
	path := filepath.Join(b.TempDir(), "big.yaml")
	if err := os.WriteFile(path, nil, 0o644); err != nil {
		b.Fatal(err)
	}
	if err := os.Truncate(path, 49<<20); err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := ReadFile(path); !errors.Is(err, ErrTooLarge) {
			b.Fatal(err)
		}
	}
}

// BenchmarkLongestList measures the worst file under the limits that is
// refused for its list: 1 MiB of one-letter items, which the YAML parser
// must read before the list can be counted.
func BenchmarkLongestList(b *testing.B) {
	var sb strings.Builder
	sb.WriteString("topologies:\n")
	for sb.Len() < MaxFileSize-4 {
		sb.WriteString("- a\n")
	}
	data := []byte(sb.String())
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		if _, err := ReadBytes("x.yaml", data); !errors.Is(err, ErrTooLarge) {
			b.Fatal(err)
		}
	}
}
