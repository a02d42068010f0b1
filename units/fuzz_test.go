package units

import (
	"errors"
	"math"
	"regexp"
	"strings"
	"testing"
)

// FuzzParse reads any text as a quantity of any dimension. It must not
// panic; a value it accepts is finite (and at or above 0 K for a
// temperature) and reads back from Format bit for bit (Format's contract);
// a value it refuses gives an *Error that says what was written and what
// the dimension takes. The seeds are in testdata/fuzz/FuzzParse.
func FuzzParse(f *testing.F) {
	f.Fuzz(func(t *testing.T, s string, dim uint8) {
		d := Dim(int(dim) % int(numDims))
		v, err := Parse(s, d)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("Parse(%q, %v): error %v (%T) is not an *Error", s, d, err, err)
			}
			if e.Given != strings.TrimSpace(s) || e.Want != d.Want() {
				t.Fatalf("Parse(%q, %v): error given %q want %q; want given %q want %q",
					s, d, e.Given, e.Want, strings.TrimSpace(s), d.Want())
			}
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) || (d == Temperature && v < 0) {
			t.Fatalf("Parse(%q, %v) = %v, want a finite value (≥ 0 K for a temperature)", s, d, v)
		}
		text := Format(v, d)
		back, err := Parse(text, d)
		if err != nil || back != v {
			t.Fatalf("Parse(%q, %v) = %v; Format gives %q, which reads back as %v, %v", s, d, v, text, back, err)
		}
	})
}

// located is the start of a message of an error about a file's content:
// "fuzz.yaml:LINE: ".
var located = regexp.MustCompile(`^fuzz\.yaml:[1-9][0-9]*: `)

// FuzzReadBytes reads any text as a YAML input file and reads every field
// as each kind of value. Nothing may panic, and every error must be an
// *Error whose message starts "fuzz.yaml:LINE: ", except a file over
// MaxFileSize, which names the file alone. The seeds are in
// testdata/fuzz/FuzzReadBytes.
func FuzzReadBytes(f *testing.F) {
	f.Fuzz(func(t *testing.T, data []byte) {
		check := func(what string, err error) {
			t.Helper()
			if err == nil {
				return
			}
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("%s: error %v (%T) is not an *Error", what, err, err)
			}
			if errors.Is(err, ErrTooLarge) && e.Field == "" && strings.HasPrefix(err.Error(), "fuzz.yaml: ") {
				return
			}
			if !located.MatchString(err.Error()) {
				t.Fatalf("%s: error %q does not start with fuzz.yaml:LINE:", what, err)
			}
		}
		m, err := ReadBytes("fuzz.yaml", data)
		check("ReadBytes", err)
		if err != nil {
			return
		}
		var walk func(m *Map, depth int)
		walk = func(m *Map, depth int) {
			if err := m.Check("topology", "process"); err != nil {
				check("Check", err)
			}
			check("Require", m.Require("supply"))
			for _, k := range m.Keys() {
				_ = m.Text(k)
				for d := Dim(0); d < numDims; d++ {
					_, _, err := m.Quantity(k, d)
					check("Quantity "+k, err)
				}
				_, _, err := m.String(k)
				check("String "+k, err)
				names, _, err := m.Strings(k)
				check("Strings "+k, err)
				for i := range names {
					check("ItemErrorAt "+k, m.ItemErrorAt(k, i, names[i], "a name", nil))
				}
				_, _, err = m.Int(k)
				check("Int "+k, err)
				_, _, err = m.Bool(k)
				check("Bool "+k, err)
				check("Errorf "+k, m.Errorf(k, "something else"))
				sub, ok, err := m.Map(k)
				check("Map "+k, err)
				if ok && err == nil && depth < 8 {
					walk(sub, depth+1)
				}
			}
		}
		walk(m, 0)
	})
}
