package units

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

const design = `# a design file
topology: current-switch
process: demo18
supply: 1.8V
temperature: 27
sweep: {low: 0V, high: 1.8V, step: 10mV}
params:
  wn: 20um
  ln: 1 um
  itail: 20µA
  ratio: 1
topologies: [zener, current-switch]
one: all
seed: 42
verbose: true
`

func mustRead(t *testing.T, text string) *Map {
	t.Helper()
	m, err := ReadBytes("design.yaml", []byte(text))
	if err != nil {
		t.Fatalf("ReadBytes: %v", err)
	}
	return m
}

func TestMapRead(t *testing.T) {
	m := mustRead(t, design)
	wantKeys := []string{"topology", "process", "supply", "temperature", "sweep", "params", "topologies", "one", "seed", "verbose"}
	if got := m.Keys(); !reflect.DeepEqual(got, wantKeys) {
		t.Errorf("Keys() = %v, want %v", got, wantKeys)
	}
	if err := m.Check(wantKeys...); err != nil {
		t.Errorf("Check: %v", err)
	}
	if err := m.Require("topology", "params"); err != nil {
		t.Errorf("Require: %v", err)
	}
	if s, ok, err := m.String("topology"); s != "current-switch" || !ok || err != nil {
		t.Errorf("String(topology) = %q, %v, %v", s, ok, err)
	}
	if v, ok, err := m.Quantity("supply", Volt); v != 1.8 || !ok || err != nil {
		t.Errorf("Quantity(supply) = %v, %v, %v", v, ok, err)
	}
	// A YAML number for a temperature is °C (SPICE .temp convention, common
	// practice, no source); 0 °C = 273.15 K (SI brochure §2.3.1).
	if v, _, err := m.Quantity("temperature", Temperature); err != nil || v != 27+ZeroCelsius {
		t.Errorf("Quantity(temperature) = %v, %v, want 300.15 K", v, err)
	}
	if _, ok, err := m.Quantity("absent", Volt); ok || err != nil {
		t.Errorf("Quantity(absent): present %v, err %v", ok, err)
	}
	if v, err := m.QuantityOr("absent", Volt, 0.9); v != 0.9 || err != nil {
		t.Errorf("QuantityOr(absent) = %v, %v", v, err)
	}
	if m.Line("params") != 7 || m.Line("absent") != 2 {
		t.Errorf("Line(params) = %d, Line(absent) = %d; want 7, 2", m.Line("params"), m.Line("absent"))
	}
	if got, _, _ := m.Strings("topologies"); !reflect.DeepEqual(got, []string{"zener", "current-switch"}) {
		t.Errorf("Strings(topologies) = %v", got)
	}
	if got, _, _ := m.Strings("one"); !reflect.DeepEqual(got, []string{"all"}) {
		t.Errorf("Strings(one) = %v", got)
	}
	if i, ok, err := m.Int("seed"); i != 42 || !ok || err != nil {
		t.Errorf("Int(seed) = %v, %v, %v", i, ok, err)
	}
	if b, ok, err := m.Bool("verbose"); !b || !ok || err != nil {
		t.Errorf("Bool(verbose) = %v, %v, %v", b, ok, err)
	}

	p, ok, err := m.Map("params")
	if !ok || err != nil {
		t.Fatalf("Map(params): %v %v", ok, err)
	}
	if p.Path() != "params" || p.File() != "design.yaml" {
		t.Errorf("params: path %q file %q", p.Path(), p.File())
	}
	for key, want := range map[string]float64{"wn": 20e-6, "ln": 1e-6, "itail": 20e-6} {
		d := Metre
		if key == "itail" {
			d = Ampere
		}
		if v, _, err := p.Quantity(key, d); v != want || err != nil {
			t.Errorf("params.%s = %v, %v; want %v", key, v, err, want)
		}
	}
	s, _, _ := m.Map("sweep")
	if v, _, err := s.Quantity("step", Volt); v != 10e-3 || err != nil {
		t.Errorf("sweep.step = %v, %v", v, err)
	}
}

// TestMapErrors checks each error's file, line, field and message.
func TestMapErrors(t *testing.T) {
	tests := []struct {
		name string
		text string
		read func(m *Map) error
		line int
		want string // exact message
	}{
		{"wrong unit", design,
			func(m *Map) error {
				p, _, _ := m.Map("params")
				_, _, err := p.Quantity("wn", Ampere)
				return err
			},
			8, `design.yaml:8: params.wn: got "20um", want a current in A, for example 200uA`},
		{"brief example", "params:\n\n  ln: 1um\n\n\n\n  wn: 20uV\n",
			func(m *Map) error {
				p, _, _ := m.Map("params")
				_, _, err := p.Quantity("wn", Metre)
				return err
			},
			7, `design.yaml:7: params.wn: got "20uV", want a length in m, for example 20um`},
		{"flow map", design,
			func(m *Map) error {
				s, _, _ := m.Map("sweep")
				_, _, err := s.Quantity("step", Second)
				return err
			},
			6, `design.yaml:6: sweep.step: got "10mV", want a time in s, for example 10ns`},
		{"yaml number", "supply: .inf\n",
			func(m *Map) error { _, _, err := m.Quantity("supply", Volt); return err },
			1, `design.yaml:1: supply: got ".inf", want a voltage in V, for example 1.8V (not a finite number)`},
		{"empty value", "a: 1\nsupply:\n",
			func(m *Map) error { _, _, err := m.Quantity("supply", Volt); return err },
			2, `design.yaml:2: supply: want a voltage in V, for example 1.8V (the value is empty)`},
		{"mapping for a quantity", "a: 1\nsupply: {x: 1}\n",
			func(m *Map) error { _, _, err := m.Quantity("supply", Volt); return err },
			2, `design.yaml:2: supply: want a voltage in V, for example 1.8V (got a mapping)`},
		{"scalar for a map", "sweep: 10mV\n",
			func(m *Map) error { _, _, err := m.Map("sweep"); return err },
			1, `design.yaml:1: sweep: got "10mV", want a mapping of fields, as in {field: value}`},
		{"list for a string", "x: 1\ntopology: [a, b]\n",
			func(m *Map) error { _, _, err := m.String("topology"); return err },
			2, `design.yaml:2: topology: want a text (got a list)`},
		{"list element", "topologies:\n  - zener\n  - {a: 1}\n",
			func(m *Map) error { _, _, err := m.Strings("topologies"); return err },
			3, `design.yaml:3: topologies[1]: want a name (got a mapping)`},
		{"not an int", "x: 1\nseed: 4.5\n",
			func(m *Map) error { _, _, err := m.Int("seed"); return err },
			2, `design.yaml:2: seed: got "4.5", want a whole number, for example 42`},
		{"not a bool", "verbose: maybe\n",
			func(m *Map) error { _, _, err := m.Bool("verbose"); return err },
			1, `design.yaml:1: verbose: got "maybe", want true or false`},
		{"missing", "x: 1\nsweep:\n  low: 0V\n  high: 1.8V\n",
			func(m *Map) error { s, _, _ := m.Map("sweep"); return s.Require("low", "high", "step") },
			2, `design.yaml:2: sweep.step: required field missing`},
		{"missing at root", "\n\nsupply: 1.8V\n",
			func(m *Map) error { return m.Require("topology") },
			3, `design.yaml:3: topology: required field missing`},
		{"unknown with suggestion", "x: 1\nsweep:\n  low: 0V\n  stpe: 1mV\n",
			func(m *Map) error { s, _, _ := m.Map("sweep"); return s.Check("low", "high", "step") },
			4, `design.yaml:4: sweep.stpe: unknown field; did you mean "step"?`},
		{"unknown far off", "x: 1\ncolour: red\n",
			func(m *Map) error { return m.Check("x", "supply", "sweep") },
			2, `design.yaml:2: colour: unknown field; known fields are x, supply, sweep`},
		{"semantic", "sweep: {low: 1.9V,\n  high: 1.8V}\n",
			func(m *Map) error {
				s, _, _ := m.Map("sweep")
				return s.Errorf("low", "a value below high (%s)", "1.8V")
			},
			1, `design.yaml:1: sweep.low: got "1.9V", want a value below high (1.8V)`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := tt.read(mustRead(t, tt.text))
			if err == nil {
				t.Fatal("no error")
			}
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %v is not an *Error", err)
			}
			if e.File != "design.yaml" || e.Line != tt.line {
				t.Errorf("at %s:%d, want design.yaml:%d", e.File, e.Line, tt.line)
			}
			if err.Error() != tt.want {
				t.Errorf("message\n  %s\nwant\n  %s", err, tt.want)
			}
		})
	}
}

func TestReadErrors(t *testing.T) {
	tests := []struct {
		name  string
		text  string
		line  int
		field string
		want  string // must appear in the message
		is    error
	}{
		{"syntax", "a: 1\nb: 2\nc 2\nd: 3\n", 3, "", "YAML syntax error", nil},
		{"syntax in flow", "a: 1\nb: {x: 1,\n", 2, "", "YAML syntax error", nil},
		{"tab", "a: 1\n\tb: 2\n", 2, "", "YAML syntax error", nil},
		{"duplicate", "a: 1\nb: 2\na: 3\n", 3, "a", "first at line 1", ErrDuplicate},
		{"nested duplicate", "a: 1\nsweep:\n  low: 0V\n  low: 1V\n", 4, "sweep.low", "first at line 3", ErrDuplicate},
		{"duplicate in a list", "corners:\n  - {name: tt, name: ff}\n", 2, "corners[0].name", "duplicate", ErrDuplicate},
		{"list root", "- a\n- b\n", 1, "", "want a YAML mapping", nil},
		{"scalar root", "hello\n", 1, "", `got "hello"`, nil},
		{"empty", "", 1, "", "empty", nil},
		{"comments only", "# nothing\n", 1, "", "mapping", nil},
		{"two documents", "a: 1\n---\nb: 2\n", 2, "", "second YAML document", nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ReadBytes("f.yaml", []byte(tt.text))
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %v is not an *Error", err)
			}
			if e.File != "f.yaml" || e.Line != tt.line || e.Field != tt.field {
				t.Errorf("at %s:%d field %q, want f.yaml:%d field %q (%v)", e.File, e.Line, e.Field, tt.line, tt.field, err)
			}
			if !strings.Contains(err.Error(), tt.want) || !strings.HasPrefix(err.Error(), "f.yaml:") {
				t.Errorf("message %q, want f.yaml:… and %q", err, tt.want)
			}
			if tt.is != nil && !errors.Is(err, tt.is) {
				t.Errorf("error %v is not %v", err, tt.is)
			}
		})
	}
}

func TestReadFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "p.yaml")
	if err := os.WriteFile(path, []byte("vto: 0.45V\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if v, _, err := m.Quantity("vto", Volt); v != 0.45 || err != nil {
		t.Errorf("vto = %v, %v", v, err)
	}
	_, _, err = m.Quantity("vto", Ampere)
	if err == nil || !strings.HasPrefix(err.Error(), path+":1: vto: ") {
		t.Errorf("error %v does not name %s:1", err, path)
	}
	if _, err := ReadFile(filepath.Join(dir, "none.yaml")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing file: %v, want os.ErrNotExist", err)
	}
}

func TestAlias(t *testing.T) {
	m := mustRead(t, "base: &v 1.8V\nsupply: *v\n")
	if v, _, err := m.Quantity("supply", Volt); v != 1.8 || err != nil {
		t.Errorf("supply via alias = %v, %v", v, err)
	}
}

// TestItemErrorAt checks where ErrorAt and ItemErrorAt put an error: a
// list item by its index at its own line, a single name at the field's
// line (common practice, no source: the lines are counted in the text).
func TestItemErrorAt(t *testing.T) {
	m := mustRead(t, "one: all\nlist:\n  - a\n  - b\nsub: {x: 1}\n")
	for _, tc := range []struct {
		err  *Error
		want string
	}{
		{m.ItemErrorAt("list", 1, "b", "a letter", nil), `design.yaml:4: list[1]: got "b", want a letter`},
		{m.ItemErrorAt("one", 0, "all", "a name", nil), `design.yaml:1: one: got "all", want a name`},
		{m.ErrorAt("list", "", "", ErrUnknownField), "design.yaml:2: list: unknown field"},
	} {
		if got := tc.err.Error(); got != tc.want {
			t.Errorf("error %q, want %q", got, tc.want)
		}
	}
	sub, _, err := m.Map("sub")
	if err != nil {
		t.Fatal(err)
	}
	if got, want := sub.ErrorAt("x", "1", "two", nil).Error(), `design.yaml:5: sub.x: got "1", want two`; got != want {
		t.Errorf("error %q, want %q", got, want)
	}
}

func TestNearest(t *testing.T) {
	known := []string{"width", "length", "vto", "kp", "gamma", "lambda", "itail"}
	tests := []struct {
		word, want string
		ok         bool
	}{
		{"wdith", "width", true}, // a swap is one edit (Damerau 1964)
		{"widht", "width", true},
		{"lenght", "length", true},
		{"VTO", "vto", true}, // case is ignored
		{"vt", "vto", true},
		{"gama", "gamma", true},
		{"lamda", "lambda", true},
		{"i_tail", "itail", true},
		{"kpp", "kp", true},
		{"zz", "", false},
		{"colour", "", false},
		{"x", "", false},
	}
	for _, tt := range tests {
		got, ok := Nearest(tt.word, known)
		if ok != tt.ok || (ok && got != tt.want) {
			t.Errorf("Nearest(%q) = %q, %v; want %q, %v", tt.word, got, ok, tt.want, tt.ok)
		}
	}
}

func TestEditDistance(t *testing.T) {
	// Textbook values of the optimal string alignment distance (from
	// memory): "ca"→"abc" is 3 under it, 2 under the unrestricted
	// Damerau–Levenshtein distance; "kitten"→"sitting" is 3 (Levenshtein).
	tests := []struct {
		a, b string
		want int
	}{
		{"", "", 0},
		{"", "abc", 3},
		{"kitten", "sitting", 3},
		{"ca", "abc", 3},
		{"ab", "ba", 1},
		{"flaw", "lawn", 2},
		{"µm", "um", 1},
	}
	for _, tt := range tests {
		if got := editDistance([]rune(tt.a), []rune(tt.b)); got != tt.want {
			t.Errorf("editDistance(%q, %q) = %d, want %d", tt.a, tt.b, got, tt.want)
		}
	}
}
