// Package docscheck checks the citations of the project's documentation
// pages in docs/: a citation of a page, or of a section of it by its
// anchor ("docs/metrics.md#gm_ripple") or by its heading in quotes after
// a comma (docs/metrics.md, "gm_ripple"), in Go source or in the
// top-level Markdown files must name a page that exists and a heading
// that page has; links between the pages must resolve; a page must not
// have two headings with the same anchor; and nothing may cite the design
// notes that docs/ replaced, which are not part of the repository.
//
// Anchors are those GitHub gives Markdown headings (see Anchor), so that
// a citation is also a working link on the project's web pages.
package docscheck

import (
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"unicode"
)

// DocsDir is the directory of the documentation pages, relative to the
// repository's root.
const DocsDir = "docs"

// Problem is one citation that does not resolve, or one page defect.
type Problem struct {
	File string // relative to the root, with forward slashes
	Line int    // 1-based
	Cite string // the citation or heading as written
	Why  string
}

func (p Problem) String() string {
	return fmt.Sprintf("%s:%d: %s: %s", p.File, p.Line, p.Cite, p.Why)
}

// Result is what Check found.
type Result struct {
	// Citations counts the citations of pages found in Go source and
	// top-level Markdown, resolved or not.
	Citations int
	// Links counts the links between pages found in docs/.
	Links int
	// GoFiles counts the Go files read.
	GoFiles  int
	Problems []Problem
}

var (
	// citePattern matches a citation of a page, with its anchor if any:
	// "docs/" not preceded by a path character, a page name, and
	// optionally "#" and the anchor.
	citePattern = regexp.MustCompile(`(?:^|[^\w./-])(` + DocsDir + `/([\w.-]+\.md)(?:#([\p{L}\p{N}_-]+))?)`)
	// quotedPattern matches a section named by its heading right after a
	// citation of its page: `, "Heading"`, the heading possibly broken
	// across comment lines.
	quotedPattern = regexp.MustCompile(`^,\s*"((?:[^"\n]|\n[ \t]*//[ \t]*)+)"`)
	// lineBreak is a comment's line break inside a quoted heading.
	lineBreak = regexp.MustCompile(`\s*\n[ \t]*//[ \t]*`)
	// linkPattern matches the target of a relative Markdown link between
	// pages: "](metrics.md#gm_ripple)", "](#targets)".
	linkPattern = regexp.MustCompile(`\]\(((?:[\w.-]+\.md)?(?:#[\p{L}\p{N}_-]*)?)\)`)
	// legacyPattern matches a citation of the design notes that docs/
	// replaced, by their file name or by their title with a section mark,
	// also across a comment's line break.
	legacyPattern = regexp.MustCompile(`\bdesign\.md\b|\b[Dd]esign\s+(?://\s*)?notes\s+(?://\s*)?§`)
	// headingPattern matches an ATX heading.
	headingPattern = regexp.MustCompile(`^ {0,3}(#{1,6})[ \t]+(.*?)(?:[ \t]+#+)?[ \t]*$`)
	fencePattern   = regexp.MustCompile("^ {0,3}(```|~~~)")
)

// Anchor returns the anchor GitHub gives a heading: the text in lower
// case, every character other than a letter, a digit, a connector such
// as "_", "-" or a space dropped, and each space made a "-".
// "gm ripple" is "gm-ripple", "`summary.json` keys" is "summaryjson-keys".
func Anchor(heading string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(strings.TrimSpace(heading)) {
		switch {
		case r == ' ':
			b.WriteByte('-')
		case r == '-', unicode.IsLetter(r), unicode.IsDigit(r), unicode.IsMark(r), unicode.Is(unicode.Pc, r):
			b.WriteRune(r)
		}
	}
	return b.String()
}

// Heading is one ATX heading of a page.
type Heading struct {
	Text string
	Line int // 1-based
}

// Headings returns the ATX headings ("## text") of a Markdown text,
// leaving out lines inside fenced code blocks.
func Headings(md []byte) []Heading {
	var out []Heading
	fence := ""
	for i, line := range strings.Split(string(md), "\n") {
		line = strings.TrimRight(line, "\r")
		if m := fencePattern.FindStringSubmatch(line); m != nil {
			switch fence {
			case "":
				fence = m[1]
			case m[1]:
				fence = ""
			}
			continue
		}
		if fence != "" {
			continue
		}
		if m := headingPattern.FindStringSubmatch(line); m != nil {
			out = append(out, Heading{Text: m[2], Line: i + 1})
		}
	}
	return out
}

// page is one documentation page read in.
type page struct {
	text    []byte
	anchors map[string]bool
}

// Check reads the repository at root: every Go file (outside hidden
// directories and testdata), the Markdown files at the top and the pages
// in docs/, and returns what does not resolve. An error is a file that
// cannot be read.
func Check(root string) (Result, error) {
	var res Result
	pages, err := readPages(root, &res)
	if err != nil {
		return res, err
	}
	// Links between pages.
	for _, name := range sortedKeys(pages) {
		file := DocsDir + "/" + name
		text := pages[name].text
		for _, m := range linkPattern.FindAllSubmatchIndex(text, -1) {
			target := string(text[m[2]:m[3]])
			res.Links++
			pageName, anchor, _ := strings.Cut(target, "#")
			if pageName == "" {
				pageName = name
			}
			if why := resolve(pages, pageName, anchor); why != "" {
				res.Problems = append(res.Problems, Problem{File: file, Line: lineAt(text, m[2]), Cite: target, Why: why})
			}
		}
	}
	// Citations in Go source and top-level Markdown; the old notes
	// anywhere, the pages included.
	var sources []string
	err = filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		name := d.Name()
		if d.IsDir() {
			if path != root && (strings.HasPrefix(name, ".") || name == "testdata" || name == "vendor") {
				return filepath.SkipDir
			}
			return nil
		}
		if strings.HasSuffix(name, ".go") {
			res.GoFiles++
			sources = append(sources, path)
		}
		return nil
	})
	if err != nil {
		return res, fmt.Errorf("docscheck: %w", err)
	}
	tops, err := filepath.Glob(filepath.Join(root, "*.md"))
	if err != nil {
		return res, fmt.Errorf("docscheck: %w", err)
	}
	sources = append(sources, tops...)
	for _, path := range sources {
		text, err := os.ReadFile(path)
		if err != nil {
			return res, fmt.Errorf("docscheck: %w", err)
		}
		file := relative(root, path)
		for _, m := range citePattern.FindAllSubmatchIndex(text, -1) {
			res.Citations++
			cite := string(text[m[2]:m[3]])
			anchor := ""
			if m[6] >= 0 {
				anchor = string(text[m[6]:m[7]])
			} else if q := quotedPattern.FindSubmatch(text[m[3]:]); q != nil {
				heading := lineBreak.ReplaceAllString(string(q[1]), " ")
				cite += `, "` + heading + `"`
				anchor = Anchor(heading)
			}
			if why := resolve(pages, string(text[m[4]:m[5]]), anchor); why != "" {
				res.Problems = append(res.Problems, Problem{File: file, Line: lineAt(text, m[2]), Cite: cite, Why: why})
			}
		}
		res.Problems = append(res.Problems, legacy(file, text)...)
	}
	for _, name := range sortedKeys(pages) {
		res.Problems = append(res.Problems, legacy(DocsDir+"/"+name, pages[name].text)...)
	}
	return res, nil
}

// readPages reads every page of docs/ with its anchors, and reports
// headings whose anchors repeat within a page.
func readPages(root string, res *Result) (map[string]*page, error) {
	pages := map[string]*page{}
	entries, err := os.ReadDir(filepath.Join(root, DocsDir))
	if err != nil && !os.IsNotExist(err) {
		return nil, fmt.Errorf("docscheck: %w", err)
	}
	for _, e := range entries {
		if e.IsDir() || !strings.HasSuffix(e.Name(), ".md") {
			continue
		}
		text, err := os.ReadFile(filepath.Join(root, DocsDir, e.Name()))
		if err != nil {
			return nil, fmt.Errorf("docscheck: %w", err)
		}
		p := &page{text: text, anchors: map[string]bool{}}
		for _, h := range Headings(text) {
			a := Anchor(h.Text)
			if p.anchors[a] {
				res.Problems = append(res.Problems, Problem{File: DocsDir + "/" + e.Name(), Line: h.Line, Cite: h.Text,
					Why: fmt.Sprintf("a second heading with the anchor #%s: citations of it would be ambiguous", a)})
			}
			p.anchors[a] = true
		}
		pages[e.Name()] = p
	}
	return pages, nil
}

// resolve says why a citation of page name and anchor (possibly "") does
// not resolve, "" when it does.
func resolve(pages map[string]*page, name, anchor string) string {
	p, ok := pages[name]
	if !ok {
		return fmt.Sprintf("no page %s/%s (pages: %s)", DocsDir, name, strings.Join(sortedKeys(pages), ", "))
	}
	if anchor != "" && !p.anchors[anchor] {
		return fmt.Sprintf("%s/%s has no heading with the anchor #%s (anchors: %s)", DocsDir, name, anchor,
			strings.Join(sortedKeys(p.anchors), ", "))
	}
	return ""
}

// legacy reports every citation of the old design notes in text.
func legacy(file string, text []byte) []Problem {
	var out []Problem
	for _, m := range legacyPattern.FindAllIndex(text, -1) {
		out = append(out, Problem{File: file, Line: lineAt(text, m[0]), Cite: strings.Join(strings.Fields(string(text[m[0]:m[1]])), " "),
			Why: "cites the design notes, which are not in the repository: cite the page of " + DocsDir + "/ that holds it"})
	}
	return out
}

func lineAt(text []byte, off int) int { return 1 + strings.Count(string(text[:off]), "\n") }

func relative(root, path string) string {
	if r, err := filepath.Rel(root, path); err == nil {
		return filepath.ToSlash(r)
	}
	return filepath.ToSlash(path)
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
