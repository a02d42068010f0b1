package docscheck

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The fixtures below build citations and the old notes' name from pieces,
// so that this file's own text cites nothing: TestRepository reads it too.
const (
	docs   = DocsDir + "/"
	oldMD  = "design" + ".md"
	anchor = "#"
)

// TestRepository is the check itself: every citation of docs/ in the
// repository's Go source and top-level Markdown resolves to a page and a
// heading, the links between the pages resolve, no page repeats an
// anchor, and nothing cites the old design notes. It also asserts that
// the check saw what it is meant to see, so that a walk that reads
// nothing cannot pass.
func TestRepository(t *testing.T) {
	root := filepath.Join("..", "..")
	if _, err := os.Stat(filepath.Join(root, "go.mod")); err != nil {
		t.Fatalf("the repository root is not at %s: %v", root, err)
	}
	res, err := Check(root)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range res.Problems {
		t.Error(p)
	}
	// At the time of writing: 56 citations in Go source and DEVELOPERS.md,
	// 30 links between the pages, over 200 Go files. The floors are far
	// below that and far above zero.
	if res.Citations < 40 {
		t.Errorf("%d citations of %s found, want at least 40 (the comments that cite the pages)", res.Citations, DocsDir)
	}
	if res.Links < 10 {
		t.Errorf("%d links between the pages found, want at least 10", res.Links)
	}
	if res.GoFiles < 100 {
		t.Errorf("%d Go files read, want at least 100", res.GoFiles)
	}
	// Every page is listed in the index.
	index, err := os.ReadFile(filepath.Join(root, DocsDir, "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	entries, err := os.ReadDir(filepath.Join(root, DocsDir))
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if n := e.Name(); n != "README.md" && strings.HasSuffix(n, ".md") && !strings.Contains(string(index), "]("+n+")") {
			t.Errorf("%s/README.md does not list %s", DocsDir, n)
		}
	}
}

// TestAnchor checks Anchor against the anchors GitHub gives headings
// (GitHub's rendering of Markdown headings; from memory): lower case,
// punctuation other than "-" and "_" dropped, spaces made hyphens.
func TestAnchor(t *testing.T) {
	tests := []struct{ heading, want string }{
		{"gm ripple", "gm-ripple"},
		{"gm_ripple", "gm_ripple"},
		{"gm_min and gm_max", "gm_min-and-gm_max"},
		{"Nelder-Mead refinement", "nelder-mead-refinement"},
		{"Level-1 equivalent of an EKV card", "level-1-equivalent-of-an-ekv-card"},
		{"`summary.json` keys", "summaryjson-keys"},
		{"What's missing?", "whats-missing"},
		{"Nelder–Mead (gonum)", "neldermead-gonum"}, // an en dash is punctuation
		{"µ and Ω", "µ-and-ω"},
		{"  Trimmed  ", "trimmed"},
		{"two  spaces", "two--spaces"},
	}
	for _, tc := range tests {
		if got := Anchor(tc.heading); got != tc.want {
			t.Errorf("Anchor(%q) = %q, want %q", tc.heading, got, tc.want)
		}
	}
}

// TestHeadings checks that ATX headings are found with their lines,
// closing hashes dropped, and that fenced code is not read as headings.
func TestHeadings(t *testing.T) {
	md := "# Title\n\ntext\n## Second ##\n```sh\n# a shell comment\n```\n~~~\n## not either\n~~~\n   ### Indented\n#NoSpace\n    # code by indentation\n"
	got := Headings([]byte(md))
	want := []Heading{{"Title", 1}, {"Second", 4}, {"Indented", 11}}
	if len(got) != len(want) {
		t.Fatalf("Headings = %v, want %v", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("heading %d = %v, want %v", i, got[i], want[i])
		}
	}
}

// TestCheckFindsProblems runs Check on small repositories: each broken
// citation must be reported at its file and line, and good ones not.
func TestCheckFindsProblems(t *testing.T) {
	page := "# Metrics\n\n## gm ripple\n\nSee [power](#power) and [files](files.md#run-id).\n\n## power\n"
	files := "# Files\n\n## Run id\n"
	good := map[string]string{
		docs + "metrics.md": page,
		docs + "files.md":   files,
		"go.mod":            "module x\n",
	}
	tests := []struct {
		name  string
		add   map[string]string
		want  []string // substrings of the problems, in order; none for a clean tree
		lines []int
	}{
		{"good citations", map[string]string{
			"a/a.go":    "package a\n\n// See " + docs + "metrics.md" + anchor + "gm-ripple and " + docs + "files.md.\nfunc A() {}\n",
			"README.md": "Read [the metrics](" + docs + "metrics.md" + anchor + "power).\n",
		}, nil, nil},
		{"old notes by name", map[string]string{
			"a/a.go": "package a\n\n// The ripple (" + oldMD + " §4).\nfunc A() {}\n",
		}, []string{"cites the design notes"}, []int{3}},
		{"old notes by title across a line break", map[string]string{
			"a/a_test.go": "package a\n\n// The demo data (design\n// notes §3).\n",
		}, []string{"cites the design notes"}, []int{3}},
		{"old notes in a string", map[string]string{
			"a/a.go": "package a\n\nvar s = \"want the keys of " + oldMD + "\"\n",
		}, []string{"cites the design notes"}, []int{3}},
		{"missing page", map[string]string{
			"a/a.go": "package a\n\n// See " + docs + "nowhere.md" + anchor + "gm-ripple.\n",
		}, []string{"no page " + docs + "nowhere.md"}, []int{3}},
		{"missing heading", map[string]string{
			"a/a.go": "package a\n\n\n// See " + docs + "metrics.md" + anchor + "gm_ripple.\n",
		}, []string{"has no heading with the anchor #gm_ripple"}, []int{4}},
		{"good quoted headings", map[string]string{
			"a/a.go": "package a\n\n// See (" + docs + "metrics.md, \"gm ripple\") and (" + docs + "metrics.md, \"gm\n// ripple\").\n",
		}, nil, nil},
		{"missing quoted heading", map[string]string{
			"a/a.go": "package a\n\n// The power (" + docs + "metrics.md, \"Power budget\").\n",
		}, []string{"has no heading with the anchor #power-budget"}, []int{3}},
		{"missing quoted heading across a line break", map[string]string{
			"a/a.go": "package a\n\n// The stage (" + docs + "files.md, \"Run\n//  ids\").\n",
		}, []string{`files.md, "Run ids"`}, []int{3}},
		{"missing heading in top-level Markdown", map[string]string{
			"DEVELOPERS.md": "line\n| `objectives/` | metrics (" + docs + "metrics.md" + anchor + "area) |\n",
		}, []string{"has no heading with the anchor #area"}, []int{2}},
		{"broken link between pages", map[string]string{
			docs + "search.md": "# Search\n\nUses [the ripple](metrics.md" + anchor + "ripple) and [axes](" + anchor + "axes).\n",
		}, []string{"#ripple", "#axes"}, []int{3, 3}},
		{"repeated anchor", map[string]string{
			docs + "models.md": "# Models\n\n## Level 1\n\ntext\n\n## Level 1\n",
		}, []string{"a second heading with the anchor #level-1"}, []int{7}},
		{"old notes in a page", map[string]string{
			docs + "models.md": "# Models\n\nAs " + oldMD + " said.\n",
		}, []string{"cites the design notes"}, []int{3}},
		{"hidden and testdata directories are not read", map[string]string{
			".git/x.go":          "// " + docs + "nowhere.md\n",
			"a/testdata/fuzz.go": "// " + oldMD + "\n",
		}, nil, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			root := t.TempDir()
			for _, set := range []map[string]string{good, tc.add} {
				for path, text := range set {
					full := filepath.Join(root, filepath.FromSlash(path))
					if err := os.MkdirAll(filepath.Dir(full), 0o755); err != nil {
						t.Fatal(err)
					}
					if err := os.WriteFile(full, []byte(text), 0o644); err != nil {
						t.Fatal(err)
					}
				}
			}
			res, err := Check(root)
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Problems) != len(tc.want) {
				t.Fatalf("problems %v, want %d matching %q", res.Problems, len(tc.want), tc.want)
			}
			for i, p := range res.Problems {
				if !strings.Contains(p.String(), tc.want[i]) || p.Line != tc.lines[i] {
					t.Errorf("problem %d = %v, want %q at line %d", i, p, tc.want[i], tc.lines[i])
				}
			}
		})
	}
}
