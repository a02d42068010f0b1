package objectives_test

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"strings"
	"testing"

	"pairsmith/objectives"
	"pairsmith/units"
)

// badYAML is a case of a table of files that must not read: the text,
// and where and how the *units.Error it gives must point.
type badYAML struct {
	name  string
	text  string
	field string
	line  int
	given string
	is    error    // a cause errors.Is must find, or nil
	msg   []string // texts the message must hold
}

// checkBadYAML reads each case's text as the file bad.yaml with read and
// checks its error: a *units.Error at the case's line and field, with its
// given text and cause, whose message starts "bad.yaml:LINE: FIELD: " and
// holds each of the case's texts.
func checkBadYAML(t *testing.T, tests []badYAML, read func(file string, data []byte, baseDir string) error) {
	t.Helper()
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := read("bad.yaml", []byte(tt.text), t.TempDir())
			if err == nil {
				t.Fatalf("no error for\n%s", tt.text)
			}
			var ue *units.Error
			if !errors.As(err, &ue) {
				t.Fatalf("error %v (%T) is not a *units.Error", err, err)
			}
			if ue.File != "bad.yaml" || ue.Field != tt.field || ue.Line != tt.line {
				t.Errorf("error at %s:%d field %q, want bad.yaml:%d field %q (%v)",
					ue.File, ue.Line, ue.Field, tt.line, tt.field, err)
			}
			if tt.given != "" && ue.Given != tt.given {
				t.Errorf("given %q, want %q (%v)", ue.Given, tt.given, err)
			}
			if tt.is != nil && !errors.Is(err, tt.is) {
				t.Errorf("error %v does not wrap %v", err, tt.is)
			}
			msg := err.Error()
			if want := fmt.Sprintf("bad.yaml:%d: %s: ", tt.line, tt.field); !strings.HasPrefix(msg, want) {
				t.Errorf("message %q does not start with %q", msg, want)
			}
			for _, s := range tt.msg {
				if !strings.Contains(msg, s) {
					t.Errorf("message %q does not mention %q", msg, s)
				}
			}
		})
	}
}

// nearMetrics reports whether every figure of a and b agrees within rel
// of the larger (the ripple as 1 + ripple, so that a flat stage's tiny
// ripple is compared on what it bounds, the ratio gm_max/gm_min), NaN
// with NaN and infinities exactly; it names the first figure that does
// not.
func nearMetrics(a, b objectives.Metrics, rel float64) (string, bool) {
	a.GMRipple, b.GMRipple = 1+a.GMRipple, 1+b.GMRipple
	x, y := reflect.ValueOf(a), reflect.ValueOf(b)
	for i := range x.NumField() {
		if x.Field(i).Kind() != reflect.Float64 {
			continue
		}
		p, q := x.Field(i).Float(), y.Field(i).Float()
		switch {
		case math.IsNaN(p) || math.IsNaN(q):
			if math.IsNaN(p) != math.IsNaN(q) {
				return x.Type().Field(i).Name, false
			}
		case p == q:
		case math.Abs(p-q) > rel*math.Max(math.Abs(p), math.Abs(q)):
			return x.Type().Field(i).Name, false
		}
	}
	return "", true
}
