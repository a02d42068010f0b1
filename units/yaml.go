package units

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"unicode/utf8"

	"gopkg.in/yaml.v3"
)

// Error is a bad value in an input file. Its message is one line:
//
//	design.yaml:7: params.wn: got "20uV", want a length in m, for example 20um
//
// Parse returns an Error without File, Line and Field; a Map fills them in.
type Error struct {
	File  string // file name as given to ReadFile or ReadBytes
	Line  int    // 1-based line, 0 if unknown
	Field string // dotted path of the field, as in "sweep.step"; "" for the whole file
	Given string // the text as written in the file; "" if there was none
	Want  string // what the field takes; "" when Err says it all
	Err   error  // the underlying cause or detail, may be nil
}

// Error returns "file:line: field: got "given", want W (detail)", leaving
// out the parts that are empty.
func (e *Error) Error() string {
	var b strings.Builder
	switch {
	case e.File != "" && e.Line > 0:
		fmt.Fprintf(&b, "%s:%d: ", e.File, e.Line)
	case e.File != "":
		b.WriteString(e.File + ": ")
	case e.Line > 0:
		fmt.Fprintf(&b, "line %d: ", e.Line)
	}
	if e.Field != "" {
		b.WriteString(e.Field + ": ")
	}
	switch {
	case e.Want != "":
		if e.Given != "" {
			fmt.Fprintf(&b, "got %q, ", e.Given)
		}
		b.WriteString("want " + e.Want)
		if e.Err != nil {
			b.WriteString(" (" + e.Err.Error() + ")")
		}
	case e.Err != nil:
		b.WriteString(e.Err.Error())
	default:
		b.WriteString("invalid value")
	}
	return b.String()
}

// Unwrap returns the underlying cause.
func (e *Error) Unwrap() error { return e.Err }

// Sentinel causes carried in Error.Err, for errors.Is.
var (
	ErrMissing      = errors.New("required field missing")
	ErrUnknownField = errors.New("unknown field")
	ErrDuplicate    = errors.New("duplicate field")
)

// syntaxError is a YAML syntax error, its "yaml: line N:" prefix removed
// because Error carries the file and line.
type syntaxError struct {
	msg string
	err error
}

func (e *syntaxError) Error() string { return "YAML syntax error: " + e.msg }
func (e *syntaxError) Unwrap() error { return e.err }

// fromYAMLError turns a yaml.v3 parse error into an *Error with its line.
// yaml.v3 leaves the line out of some errors; see problemLine.
func fromYAMLError(file string, data []byte, err error) *Error {
	msg := strings.TrimPrefix(err.Error(), "yaml: ")
	line := 0
	if rest, ok := strings.CutPrefix(msg, "line "); ok {
		if num, text, ok := strings.Cut(rest, ": "); ok {
			if n, err := strconv.Atoi(num); err == nil {
				line, msg = n, text
			}
		}
	}
	if line == 0 {
		line = problemLine(data, msg)
	}
	return &Error{File: file, Line: line, Err: &syntaxError{msg: msg, err: err}}
}

// problemLine finds the line of a yaml.v3 error that gives none: the
// first use of an unknown anchor or the definition of one that contains
// itself, else the first character YAML does not allow, else line 1
// (yaml.v3 counts lines from 0 and writes none for a problem on its
// line 0).
func problemLine(data []byte, msg string) int {
	lineOf := func(i int) int { return 1 + bytes.Count(data[:i], []byte("\n")) }
	for _, f := range []struct{ prefix, mark string }{{"unknown anchor '", "*"}, {"anchor '", "&"}} {
		if rest, ok := strings.CutPrefix(msg, f.prefix); ok {
			if name, _, ok := strings.Cut(rest, "'"); ok {
				if i := bytes.Index(data, []byte(f.mark+name)); i >= 0 {
					return lineOf(i)
				}
			}
		}
	}
	if i := badChar(data); i >= 0 {
		return lineOf(i)
	}
	return 1
}

// badChar returns the offset of the first byte of data that is not valid
// UTF-8 or starts a character YAML does not allow in a file (YAML 1.2,
// §5.1: tab, line feed, carriage return, NEL and the printable
// characters only), or −1 if there is none.
func badChar(data []byte) int {
	for i := 0; i < len(data); {
		r, size := utf8.DecodeRune(data[i:])
		ok := r == '\t' || r == '\n' || r == '\r' || r == 0x85 || (r >= 0x20 && r <= 0x7e) ||
			(r >= 0xa0 && r <= 0xd7ff) || (r >= 0xe000 && r <= 0xfffd) || r >= 0x10000
		if !ok || (r == utf8.RuneError && size == 1) {
			return i
		}
		i += size
	}
	return -1
}

// Map is one YAML mapping of an input file, read with the line of every
// field so that errors can say where a value is. Get one with ReadFile or
// ReadBytes, and nested ones with Map.Map.
//
// A reader typically calls Check with the fields it knows, Require with
// those it needs, then reads each field with Quantity, String, Strings or
// Map, and reports semantic problems with Errorf.
type Map struct {
	file string
	path string // dotted path of this map, "" for the file's root
	line int    // line that introduces the map
	keys []string
	key  map[string]*yaml.Node
	val  map[string]*yaml.Node
}

// Limits of an input file. pairsmith's spec sheets, design files and
// process files are a few kB and their lists a handful of names (seven
// families, five trade-off axes), so a file or a list far beyond them is
// a mistake (a wrong file, a generated list gone astray), refused before
// it costs time and memory. A 1 MiB YAML file parses in about half a
// second; the 49 MB list that prompted the limits took 19 s and 1.9 GB
// before it was rejected.
const (
	MaxFileSize  = 1 << 20 // bytes of one input file: 1 MiB
	MaxListItems = 1000    // items of one YAML list
)

// ErrTooLarge is the cause of an Error for a file over MaxFileSize or a
// list over MaxListItems.
var ErrTooLarge = errors.New("too large")

// tooLarge is the error for a file of size bytes (or more, when atLeast)
// over MaxFileSize.
func tooLarge(file string, size int64, atLeast bool) *Error {
	more := ""
	if atLeast {
		more = "more than "
	}
	return &Error{File: file, Want: "an input file of at most 1 MiB",
		Err: fmt.Errorf("%w: %s%d bytes", ErrTooLarge, more, size)}
}

// ReadInput reads a whole input file of at most MaxFileSize bytes. A
// larger file is refused with an *Error naming it (cause ErrTooLarge),
// after a stat when the file is a regular one and after reading at most
// MaxFileSize+1 bytes otherwise (a device or a pipe). Other failures are
// returned as "what: cause".
func ReadInput(path, what string) ([]byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", what, err)
	}
	defer f.Close()
	if st, err := f.Stat(); err == nil && st.Mode().IsRegular() && st.Size() > MaxFileSize {
		return nil, tooLarge(path, st.Size(), false)
	}
	data, err := io.ReadAll(io.LimitReader(f, MaxFileSize+1))
	if err != nil {
		return nil, fmt.Errorf("%s: %w", what, err)
	}
	if len(data) > MaxFileSize {
		return nil, tooLarge(path, MaxFileSize, true)
	}
	return data, nil
}

// ReadFile reads a YAML file whose root is a mapping, of at most
// MaxFileSize bytes (see ReadInput).
func ReadFile(path string) (*Map, error) {
	data, err := ReadInput(path, "read YAML")
	if err != nil {
		return nil, err
	}
	return ReadBytes(path, data)
}

// ReadBytes reads YAML text whose root is a mapping; file names it in
// errors. A syntax error, a root that is not a mapping, more than one YAML
// document, a field written twice in any mapping, text over MaxFileSize
// bytes and a list of more than MaxListItems items are errors.
func ReadBytes(file string, data []byte) (*Map, error) {
	if len(data) > MaxFileSize {
		return nil, tooLarge(file, int64(len(data)), false)
	}
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if errors.Is(err, io.EOF) {
			return nil, &Error{File: file, Line: 1, Want: "a YAML mapping of fields", Err: errors.New("the file is empty")}
		}
		return nil, fromYAMLError(file, data, err)
	}
	var next yaml.Node
	switch err := dec.Decode(&next); {
	case errors.Is(err, io.EOF):
	case err != nil:
		return nil, fromYAMLError(file, data, err)
	default:
		return nil, &Error{File: file, Line: next.Line, Err: errors.New("a second YAML document; want one per file")}
	}
	root := &doc
	if doc.Kind == yaml.DocumentNode && len(doc.Content) == 1 {
		root = doc.Content[0]
	}
	root = resolve(root)
	if root.Kind != yaml.MappingNode {
		return nil, &Error{File: file, Line: root.Line, Given: scalarText(root),
			Want: "a YAML mapping of fields (field: value lines)", Err: kindError(root)}
	}
	if err := checkDuplicates(file, "", root); err != nil {
		return nil, err
	}
	return newMap(file, "", root.Line, root), nil
}

// resolve follows an alias to its anchored node.
func resolve(n *yaml.Node) *yaml.Node {
	for n.Kind == yaml.AliasNode && n.Alias != nil {
		n = n.Alias
	}
	return n
}

func join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

// checkDuplicates walks the tree (not following aliases) and rejects a
// field written twice in one mapping and a list of more than MaxListItems
// items, at the line of its field (of the list itself in a list).
func checkDuplicates(file, path string, n *yaml.Node) error {
	return checkNode(file, path, n.Line, n)
}

func checkNode(file, path string, line int, n *yaml.Node) error {
	switch n.Kind {
	case yaml.MappingNode:
		first := map[string]int{}
		for i := 0; i+1 < len(n.Content); i += 2 {
			k := n.Content[i]
			if at, dup := first[k.Value]; dup {
				return &Error{File: file, Line: k.Line, Field: join(path, k.Value),
					Err: fmt.Errorf("%w (first at line %d)", ErrDuplicate, at)}
			}
			first[k.Value] = k.Line
			if err := checkNode(file, join(path, k.Value), k.Line, n.Content[i+1]); err != nil {
				return err
			}
		}
	case yaml.SequenceNode:
		if len(n.Content) > MaxListItems {
			return &Error{File: file, Line: line, Field: path, Want: fmt.Sprintf("a list of at most %d items", MaxListItems),
				Err: fmt.Errorf("%w: %d items", ErrTooLarge, len(n.Content))}
		}
		for i, c := range n.Content {
			if err := checkNode(file, fmt.Sprintf("%s[%d]", path, i), c.Line, c); err != nil {
				return err
			}
		}
	}
	return nil
}

func newMap(file, path string, line int, n *yaml.Node) *Map {
	m := &Map{file: file, path: path, line: line, key: map[string]*yaml.Node{}, val: map[string]*yaml.Node{}}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k := n.Content[i]
		m.keys = append(m.keys, k.Value)
		m.key[k.Value] = k
		m.val[k.Value] = resolve(n.Content[i+1])
	}
	return m
}

// File returns the file name the map was read from.
func (m *Map) File() string { return m.file }

// Path returns the dotted path of the map in its file, "" for the root.
func (m *Map) Path() string { return m.path }

// Keys returns the fields in file order.
func (m *Map) Keys() []string { return append([]string(nil), m.keys...) }

// Has reports whether the field is written.
func (m *Map) Has(key string) bool { _, ok := m.val[key]; return ok }

// Line returns the line where the field is written, or the map's own line
// if it is not.
func (m *Map) Line(key string) int {
	if k, ok := m.key[key]; ok {
		return k.Line
	}
	return m.line
}

// Text returns the field's value as written, for a scalar value; "" for
// a missing field, a mapping or a list.
func (m *Map) Text(key string) string {
	if n, ok := m.val[key]; ok {
		return scalarText(n)
	}
	return ""
}

func scalarText(n *yaml.Node) string {
	if n.Kind == yaml.ScalarNode {
		return n.Value
	}
	return ""
}

// ErrorAt returns an *Error located at the field: the map's file, the
// field's line (see Line) and dotted path, with the given text, what is
// wanted and the cause, any of which may be empty or nil.
func (m *Map) ErrorAt(key, given, want string, err error) *Error {
	return &Error{File: m.file, Line: m.Line(key), Field: join(m.path, key), Given: given, Want: want, Err: err}
}

// ItemErrorAt returns an *Error located at item i of a field read with
// Strings: when the field is written as a list, the error names the item
// ("topologies[2]") at the item's line; otherwise it is ErrorAt's.
func (m *Map) ItemErrorAt(key string, i int, given, want string, err error) *Error {
	e := m.ErrorAt(key, given, want, err)
	if n, ok := m.val[key]; ok && n.Kind == yaml.SequenceNode {
		e.Field = fmt.Sprintf("%s[%d]", e.Field, i)
		if i >= 0 && i < len(n.Content) && n.Content[i].Line > 0 {
			e.Line = n.Content[i].Line
		}
	}
	return e
}

// Errorf returns an *Error for a problem the caller found with a field's
// value, such as a low limit above the high one: it names the file, the
// field's line and path and the value as written, and wants what format
// and args describe ("a value below high (1.8V)").
func (m *Map) Errorf(key, format string, args ...any) error {
	return m.ErrorAt(key, m.Text(key), fmt.Sprintf(format, args...), nil)
}

// kindError says what a node is when it is not the scalar wanted.
func kindError(n *yaml.Node) error {
	switch n.Kind {
	case yaml.MappingNode:
		return errors.New("got a mapping")
	case yaml.SequenceNode:
		return errors.New("got a list")
	case yaml.ScalarNode:
		if n.ShortTag() == "!!null" {
			return errors.New("the value is empty")
		}
		return nil
	}
	return errors.New("got no value")
}

// scalar returns the field's scalar node, or an error if it is not one.
func (m *Map) scalar(key, want string) (*yaml.Node, bool, error) {
	n, ok := m.val[key]
	if !ok {
		return nil, false, nil
	}
	if n.Kind != yaml.ScalarNode || n.ShortTag() == "!!null" {
		return nil, true, m.ErrorAt(key, "", want, kindError(n))
	}
	return n, true, nil
}

// Quantity reads a field of dimension d (see Parse) and returns it in SI
// units. present is false, with no error, when the field is not written.
// A YAML number is taken as a bare number: SI units, or °C for a
// Temperature.
func (m *Map) Quantity(key string, d Dim) (v float64, present bool, err error) {
	n, ok, err := m.scalar(key, d.Want())
	if !ok || err != nil {
		return 0, ok, err
	}
	v, err = Parse(n.Value, d)
	if err != nil {
		if tag := n.ShortTag(); tag == "!!int" || tag == "!!float" {
			// YAML number forms Parse does not read: 0x1F, .inf, 1_000.
			var f float64
			if n.Decode(&f) == nil {
				v, err = fromNumber(f, d, n.Value)
			}
		}
	}
	if err != nil {
		var e *Error
		if errors.As(err, &e) {
			return 0, true, m.ErrorAt(key, e.Given, e.Want, e.Err)
		}
		return 0, true, m.ErrorAt(key, n.Value, d.Want(), err)
	}
	return v, true, nil
}

// QuantityOr reads a field like Quantity and returns def when the field is
// not written.
func (m *Map) QuantityOr(key string, d Dim, def float64) (float64, error) {
	v, ok, err := m.Quantity(key, d)
	if !ok {
		return def, nil
	}
	return v, err
}

// String reads a field holding a text (any scalar, as written).
func (m *Map) String(key string) (string, bool, error) {
	n, ok, err := m.scalar(key, "a text")
	if !ok || err != nil {
		return "", ok, err
	}
	return n.Value, true, nil
}

// Strings reads a field holding either one text or a list of texts, as in
// "topologies: all" or "topologies: [zener, current-switch]".
func (m *Map) Strings(key string) ([]string, bool, error) {
	n, ok := m.val[key]
	if !ok {
		return nil, false, nil
	}
	const want = "a name or a list of names"
	switch n.Kind {
	case yaml.ScalarNode:
		if n.ShortTag() == "!!null" {
			return nil, true, m.ErrorAt(key, "", want, kindError(n))
		}
		return []string{n.Value}, true, nil
	case yaml.SequenceNode:
		out := make([]string, 0, len(n.Content))
		for i, c := range n.Content {
			c = resolve(c)
			if c.Kind != yaml.ScalarNode || c.ShortTag() == "!!null" {
				return nil, true, &Error{File: m.file, Line: c.Line, Field: fmt.Sprintf("%s[%d]", join(m.path, key), i),
					Want: "a name", Err: kindError(c)}
			}
			out = append(out, c.Value)
		}
		return out, true, nil
	}
	return nil, true, m.ErrorAt(key, "", want, kindError(n))
}

// Int reads a field holding a whole number.
func (m *Map) Int(key string) (int, bool, error) {
	const want = "a whole number, for example 42"
	n, ok, err := m.scalar(key, want)
	if !ok || err != nil {
		return 0, ok, err
	}
	var i int
	if n.ShortTag() != "!!int" || n.Decode(&i) != nil {
		return 0, true, m.ErrorAt(key, n.Value, want, nil)
	}
	return i, true, nil
}

// Bool reads a field holding true or false.
func (m *Map) Bool(key string) (bool, bool, error) {
	const want = "true or false"
	n, ok, err := m.scalar(key, want)
	if !ok || err != nil {
		return false, ok, err
	}
	var b bool
	if n.ShortTag() != "!!bool" || n.Decode(&b) != nil {
		return false, true, m.ErrorAt(key, n.Value, want, nil)
	}
	return b, true, nil
}

// IsMap reports whether the field is written as a mapping ({min: …,
// max: …}) rather than a single value.
func (m *Map) IsMap(key string) bool {
	n, ok := m.val[key]
	return ok && n.Kind == yaml.MappingNode
}

// Map reads a field holding a mapping, in block or flow style. The nested
// map's errors name the field path from the root, as in "sweep.step".
func (m *Map) Map(key string) (*Map, bool, error) {
	n, ok := m.val[key]
	if !ok {
		return nil, false, nil
	}
	if n.Kind != yaml.MappingNode {
		return nil, true, m.ErrorAt(key, scalarText(n), "a mapping of fields, as in {field: value}", kindError(n))
	}
	return newMap(m.file, join(m.path, key), m.Line(key), n), true, nil
}

// Require returns an error for the first of keys that is not written,
// located at the map's line, with ErrMissing as its cause.
func (m *Map) Require(keys ...string) error {
	for _, k := range keys {
		if !m.Has(k) {
			return &Error{File: m.file, Line: m.line, Field: join(m.path, k), Err: ErrMissing}
		}
	}
	return nil
}

// Check returns an error for the first field, in file order, that is not
// among known. The error suggests the nearest known field when one is close
// (see Nearest), or lists them all; its cause is ErrUnknownField.
func (m *Map) Check(known ...string) error {
	for _, k := range m.keys {
		if contains(known, k) {
			continue
		}
		var err error
		if s, ok := Nearest(k, known); ok {
			err = fmt.Errorf("%w; did you mean %q?", ErrUnknownField, s)
		} else {
			err = fmt.Errorf("%w; known fields are %s", ErrUnknownField, strings.Join(known, ", "))
		}
		return m.ErrorAt(k, "", "", err)
	}
	return nil
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}
