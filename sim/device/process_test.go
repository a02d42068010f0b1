package device

import (
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"pairsmith/units"
)

// The built-in processes are the project's invented demo data
// (docs/models.md#built-in-demo-processes); these are the numbers they were specified with. 27 °C =
// 300.15 K (SI brochure, 9th edition, §2.3.1).
func TestBuiltins(t *testing.T) {
	type card struct{ vto, kp, gamma, phi, lambda, tcv, bex float64 }
	demo18N := card{0.45, 280e-6, 0.5, 0.8, 0.05, 1e-3, -1.5}
	demo18P := card{-0.45, 70e-6, 0.45, 0.8, 0.06, 1e-3, -1.2}
	demo33N := card{0.65, 120e-6, 0.7, 0.85, 0.03, 1e-3, -1.5}
	demo33P := card{-0.7, 40e-6, 0.6, 0.85, 0.04, 1e-3, -1.2}
	tests := []struct {
		name string
		kind string
		n, p card
	}{
		{"demo18", "ekv", demo18N, demo18P},
		{"demo18-l1", "level1", demo18N, demo18P},
		{"demo33", "ekv", demo33N, demo33P},
		{"demo33-l1", "level1", demo33N, demo33P},
	}
	names := []string{}
	for _, tt := range tests {
		names = append(names, tt.name)
	}
	if got := BuiltinNames(); !reflect.DeepEqual(got, names) {
		t.Errorf("BuiltinNames() = %v, want %v", got, names)
	}
	for _, tt := range tests {
		p, ok := Builtin(tt.name)
		if !ok {
			t.Errorf("Builtin(%q) not found", tt.name)
			continue
		}
		if p.Name != tt.name || p.Kind != tt.kind || p.TnomK != 300.15 {
			t.Errorf("%s: name %q kind %q tnom %v K", tt.name, p.Name, p.Kind, p.TnomK)
		}
		if !strings.Contains(p.Doc, "invented demo data") || !strings.Contains(p.Doc, "not any foundry's process") {
			t.Errorf("%s: doc %q does not say it is invented demo data", tt.name, p.Doc)
		}
		for _, c := range []struct {
			t    Type
			want card
		}{{NMOS, tt.n}, {PMOS, tt.p}} {
			m := p.Card(c.t)
			if m.Kind() != tt.kind || m.Type() != c.t {
				t.Errorf("%s %v: card kind %q type %v", tt.name, c.t, m.Kind(), m.Type())
			}
			var got card
			switch x := m.(type) {
			case *EKV:
				got = card{x.VTO, x.KP, x.Gamma, x.Phi, x.Lambda, x.TCV, x.BEX}
				if x.TnomK != 300.15 || x.LD != 0 {
					t.Errorf("%s %v: tnom %v ld %v", tt.name, c.t, x.TnomK, x.LD)
				}
			case *Level1:
				if x.LinearTemp {
					t.Errorf("%s %v: want the SPICE temperature law", tt.name, c.t)
				}
				// tcv and bex do not apply under the SPICE law: compare the rest.
				got = card{x.VTO, x.KP, x.Gamma, x.Phi, x.Lambda, c.want.tcv, c.want.bex}
				if x.TnomK != 300.15 || x.LD != 0 {
					t.Errorf("%s %v: tnom %v ld %v", tt.name, c.t, x.TnomK, x.LD)
				}
			default:
				t.Fatalf("%s %v: card of type %T", tt.name, c.t, m)
			}
			if got != c.want {
				t.Errorf("%s %v: card %+v, want %+v", tt.name, c.t, got, c.want)
			}
			// The card must be one the model accepts.
			if _, err := m.Instance(Geometry{W: 10e-6, L: 1e-6}, 300.15); err != nil {
				t.Errorf("%s %v: Instance: %v", tt.name, c.t, err)
			}
		}
		if p.Card(Type(0)) != nil {
			t.Errorf("%s: Card(Type(0)) is not nil", tt.name)
		}
	}
	for _, bad := range []string{"", "demo", "demo18.yaml", "../processes/demo18", "DEMO18"} {
		if _, ok := Builtin(bad); ok {
			t.Errorf("Builtin(%q) found a process", bad)
		}
	}
}

func TestReadProcessDefaults(t *testing.T) {
	const text = `model: level1
nmos: {vto: 0.5, kp: 100 uA/V2}
pmos:
  vto: -0.5V
  kp: 40uA/V2
  ld: 50nm
`
	p, err := ReadProcess("dir/my-proc.yaml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if p.Name != "my-proc" || p.Doc != "" || p.TnomK != 300.15 {
		t.Errorf("name %q doc %q tnom %v; want the file's base name, no doc, 300.15 K", p.Name, p.Doc, p.TnomK)
	}
	n := p.N.(*Level1)
	want := Level1{Polarity: NMOS, VTO: 0.5, KP: 100e-6, Phi: 0.7, TnomK: 300.15, TCV: 1e-3, BEX: -1.5}
	if *n != want {
		t.Errorf("nmos card %+v, want %+v", *n, want)
	}
	pm := p.P.(*Level1)
	if pm.Polarity != PMOS || pm.VTO != -0.5 || pm.LD != 50e-9 || pm.Gamma != 0 || pm.Lambda != 0 || pm.LinearTemp {
		t.Errorf("pmos card %+v", *pm)
	}
}

func TestReadProcessTemperatureLaw(t *testing.T) {
	tests := []struct {
		name       string
		kind       string
		extra      string
		linear     bool
		tcv, bex   float64
		wantTnom   float64
		tnomInFile string
	}{
		{"level1 none", "level1", "", false, 1e-3, -1.5, 300.15, ""},
		{"level1 tcv", "level1", ", tcv: 2mV/K", true, 2e-3, -1.5, 300.15, ""},
		{"level1 bex", "level1", ", bex: -1.8", true, 1e-3, -1.8, 300.15, ""},
		{"level1 both", "level1", ", tcv: 0.5mV/K, bex: -1", true, 0.5e-3, -1, 300.15, ""},
		{"ekv none", "ekv", "", false, 1e-3, -1.5, 300.15, ""},
		{"ekv both", "ekv", ", tcv: 2mV/K, bex: -1.2", false, 2e-3, -1.2, 300.15, ""},
		{"tnom bare °C", "ekv", "", false, 1e-3, -1.5, 298.15, "tnom: 25\n"},
		{"tnom kelvin", "level1", "", false, 1e-3, -1.5, 300, "tnom: 300K\n"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			text := "model: " + tt.kind + "\n" + tt.tnomInFile +
				"nmos: {vto: 0.45V, kp: 280uA/V2" + tt.extra + "}\n" +
				"pmos: {vto: -0.45V, kp: 70uA/V2" + tt.extra + "}\n"
			p, err := ReadProcess("p.yaml", []byte(text))
			if err != nil {
				t.Fatal(err)
			}
			if p.TnomK != tt.wantTnom {
				t.Errorf("tnom %v K, want %v K", p.TnomK, tt.wantTnom)
			}
			for _, m := range []Model{p.N, p.P} {
				switch c := m.(type) {
				case *Level1:
					if c.LinearTemp != tt.linear || c.TCV != tt.tcv || c.BEX != tt.bex || c.TnomK != tt.wantTnom {
						t.Errorf("%v card: linear %v tcv %v bex %v tnom %v", c.Polarity, c.LinearTemp, c.TCV, c.BEX, c.TnomK)
					}
				case *EKV:
					if c.TCV != tt.tcv || c.BEX != tt.bex || c.TnomK != tt.wantTnom {
						t.Errorf("%v card: tcv %v bex %v tnom %v", c.Polarity, c.TCV, c.BEX, c.TnomK)
					}
				}
			}
		})
	}
}

// TestReadProcessErrors checks that every malformed file gives an error
// naming the file, the line and the field, and what was wanted.
func TestReadProcessErrors(t *testing.T) {
	const good = "model: level1\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n"
	tests := []struct {
		name  string
		text  string
		line  int
		field string
		want  string
	}{
		{"unknown model", "model: bsim4\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			1, "model", `got "bsim4", want a model kind: level1 or ekv`},
		{"missing model", "nmos: {vto: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			1, "model", "required field missing"},
		{"missing pmos", "model: ekv\nnmos: {vto: 0.45V, kp: 280uA/V2}\n",
			1, "pmos", "required field missing"},
		{"missing kp", "model: ekv\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos:\n  vto: -0.45V\n  gamma: 0.4\n",
			3, "pmos.kp", "required field missing"},
		{"missing vto", "model: ekv\nnmos: {kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos.vto", "required field missing"},
		{"negative kp", "model: level1\nnmos:\n  vto: 0.45V\n  kp: -280uA/V2\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			4, "nmos.kp", `got "-280uA/V2", want a transconductance parameter µ·Cox from 1uA/V2 to 5mA/V2`},
		{"zero kp", "model: ekv\nnmos: {vto: 0.45V, kp: 0}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos.kp", "want a transconductance parameter µ·Cox from 1uA/V2 to 5mA/V2"},
		{"zero phi", "model: level1\nnmos: {vto: 0.45V, kp: 280uA/V2, phi: 0V}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos.phi", "want a surface potential 2φF from 400mV to 1.2V"},
		{"negative gamma", good[:len(good)-2] + ", gamma: -0.1}\n",
			3, "pmos.gamma", `got "-0.1", want a body-effect coefficient from 0V^0.5 to 4V^0.5`},
		{"negative lambda", good[:len(good)-2] + ", lambda: -0.01/V}\n",
			3, "pmos.lambda", "want a channel-length modulation from 0/V to 2/V"},
		{"negative ld", good[:len(good)-2] + ", ld: -10nm}\n",
			3, "pmos.ld", "want a lateral diffusion from 0m to 1um"},
		{"negative tcv", good[:len(good)-2] + ", tcv: -1mV/K}\n",
			3, "pmos.tcv", "magnitude"},
		{"NMOS with negative vto", "model: level1\nnmos: {vto: -0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos.vto", "want a positive NMOS threshold (SPICE sign convention) from 50mV to 3V"},
		{"NMOS with zero vto", "model: level1\nnmos: {vto: 0, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos.vto", "want a positive NMOS threshold"},
		{"PMOS with positive vto", "model: ekv\nnmos: {vto: 0.45V, kp: 280uA/V2}\n\npmos: {vto: 0.45V, kp: 70uA/V2}\n",
			4, "pmos.vto", `got "0.45V", want a negative PMOS threshold (SPICE sign convention) from -3V to -50mV`},
		{"wrong unit", "model: ekv\nnmos: {vto: 0.45A, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos.vto", `got "0.45A", want a voltage in V, for example 1.8V`},
		{"kp without /V2", "model: ekv\nnmos: {vto: 0.45V, kp: 280uA}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos.kp", "want a transconductance parameter in A/V²"},
		{"tnom wrong unit", "model: ekv\ntnom: 27V\n" + good[len("model: level1\n"):],
			2, "tnom", "want a temperature in °C or K"},
		{"tnom absolute zero", "model: ekv\ntnom: 0K\n" + good[len("model: level1\n"):],
			2, "tnom", "want a nominal temperature from -73.15C to 226.85C"},
		{"unknown card field", "model: ekv\nnmos: {vt0: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos.vt0", `unknown field; did you mean "vto"?`},
		{"unknown root field", "model: ekv\ntnorm: 27C\n" + good[len("model: level1\n"):],
			2, "tnorm", `unknown field; did you mean "tnom"?`},
		{"card not a mapping", "model: ekv\nnmos: 0.45V\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos", "want a mapping"},
		{"duplicate field", "model: ekv\nnmos:\n  vto: 0.45V\n  kp: 280uA/V2\n  vto: 0.5V\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			5, "nmos.vto", "duplicate field (first at line 3)"},
		// yaml.v3 gives a parser error the line before its context (the
		// unclosed "{" is on line 2): go-yaml/yaml issue #205.
		{"syntax error", "model: ekv\nnmos: {vto: 0.45V, kp: 280uA/V2\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			1, "", "YAML syntax error"},
		{"bad indentation", "model: ekv\nnmos:\n  vto: 0.45V\n   kp: 280uA/V2\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			4, "", "YAML syntax error"},
		{"NaN", "model: ekv\nnmos: {vto: .nan, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n",
			2, "nmos.vto", "not a finite number"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ReadProcess("bad.yaml", []byte(tt.text))
			if err == nil {
				t.Fatal("no error")
			}
			var e *units.Error
			if !errors.As(err, &e) {
				t.Fatalf("error %v is not a *units.Error", err)
			}
			if e.File != "bad.yaml" || e.Line != tt.line || e.Field != tt.field {
				t.Errorf("at %s:%d field %q, want bad.yaml:%d field %q", e.File, e.Line, e.Field, tt.line, tt.field)
			}
			prefix := "bad.yaml:"
			if tt.field != "" {
				prefix = "bad.yaml:" + strconv.Itoa(tt.line) + ": " + tt.field + ": "
			}
			if msg := err.Error(); !strings.HasPrefix(msg, prefix) || !strings.Contains(msg, tt.want) {
				t.Errorf("message %q, want it to start %q and contain %q", msg, prefix, tt.want)
			}
		})
	}
	// The good text itself loads: the table's errors come from the changes.
	if _, err := ReadProcess("good.yaml", []byte(good)); err != nil {
		t.Errorf("good text: %v", err)
	}
}

func TestResolveProcess(t *testing.T) {
	dir := t.TempDir()
	sub := filepath.Join(dir, "procs")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	const text = "name: mine\nmodel: ekv\nnmos: {vto: 0.5V, kp: 200uA/V2}\npmos: {vto: -0.5V, kp: 60uA/V2}\n"
	path := filepath.Join(sub, "mine.yaml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	// A file named like a built-in: the built-in wins.
	if err := os.WriteFile(filepath.Join(dir, "demo18"), []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		ref, base, name string
	}{
		{"demo18", dir, "demo18"},
		{"demo33-l1", "", "demo33-l1"},
		{"procs/mine.yaml", dir, "mine"},
		{"mine.yaml", sub, "mine"},
		{path, "/nonexistent", "mine"},
	}
	for _, tt := range tests {
		p, err := ResolveProcess(tt.ref, tt.base)
		if err != nil {
			t.Errorf("ResolveProcess(%q, %q): %v", tt.ref, tt.base, err)
			continue
		}
		if p.Name != tt.name {
			t.Errorf("ResolveProcess(%q, %q) = %q, want %q", tt.ref, tt.base, p.Name, tt.name)
		}
	}

	_, err := ResolveProcess("demo81", dir)
	if err == nil || !errors.Is(err, fs.ErrNotExist) {
		t.Fatalf("unknown name: error %v, want one wrapping fs.ErrNotExist", err)
	}
	for _, want := range []string{`"demo81"`, "demo18, demo18-l1, demo33, demo33-l1", `did you mean "demo18"?`} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("unknown name: error %q does not contain %q", err, want)
		}
	}
	if _, err := ResolveProcess("", dir); err == nil || !strings.Contains(err.Error(), "demo33") {
		t.Errorf("empty ref: error %v, want one listing the built-ins", err)
	}
	// A bad file found by path reports its own file and line.
	if err := os.WriteFile(filepath.Join(sub, "bad.yaml"), []byte("model: ekv\nnmos: {vto: 0.5V}\npmos: {vto: -0.5V, kp: 60uA/V2}\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = ResolveProcess("procs/bad.yaml", dir)
	if want := filepath.Join(sub, "bad.yaml") + ":2: nmos.kp: required field missing"; err == nil || err.Error() != want {
		t.Errorf("bad file: error %v, want %q", err, want)
	}
}

func TestLoadProcessMissing(t *testing.T) {
	_, err := LoadProcess(filepath.Join(t.TempDir(), "none.yaml"))
	if !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), "none.yaml") {
		t.Errorf("error %v, want one naming the file and wrapping fs.ErrNotExist", err)
	}
}

// TestCardRanges reads a card with each value at, just inside and just
// outside each bound of its range (CardRanges, TnomRange): at and inside
// are accepted and read back exactly, outside is refused at the value's
// line and field with the range in the message. One millionth of the
// range's span is "just": far above float64 rounding, far below any
// physical difference.
func TestCardRanges(t *testing.T) {
	// card writes a process file whose card of polarity ty has field:
	// text on its own line, first (line 3 for the nmos card, 4 for the
	// pmos one), the other card being demo numbers in flow style.
	card := func(ty Type, field, text string) string {
		def := map[Type][]string{NMOS: {"vto: 0.45V", "kp: 280uA/V2"}, PMOS: {"vto: -0.45V", "kp: 70uA/V2"}}
		lines := []string{field + ": " + text}
		for _, l := range def[ty] {
			if !strings.HasPrefix(l, field+":") {
				lines = append(lines, l)
			}
		}
		block := ty.String() + ":\n  " + strings.Join(lines, "\n  ") + "\n"
		if ty == NMOS {
			return "model: ekv\n" + block + "pmos: {" + strings.Join(def[PMOS], ", ") + "}\n"
		}
		return "model: ekv\nnmos: {" + strings.Join(def[NMOS], ", ") + "}\n" + block
	}
	type probe struct {
		x  float64
		ok bool
	}
	probes := func(r Range) []probe {
		d := 1e-6 * (r.Max - r.Min)
		return []probe{{r.Min, true}, {r.Min + d, true}, {r.Max - d, true}, {r.Max, true},
			{r.Min - d, false}, {r.Max + d, false}}
	}
	for _, ty := range []Type{NMOS, PMOS} {
		line := 3
		if ty == PMOS {
			line = 4
		}
		for _, r := range CardRanges(ty) {
			for _, pr := range probes(r) {
				text := units.Format(pr.x, r.Dim)
				t.Run(ty.String()+"."+r.Field+"="+text, func(t *testing.T) {
					p, err := ReadProcess("r.yaml", []byte(card(ty, r.Field, text)))
					if !pr.ok {
						var e *units.Error
						if !errors.As(err, &e) {
							t.Fatalf("error %v, want a *units.Error for %s outside %s", err, text, r.Want())
						}
						field := ty.String() + "." + r.Field
						if e.Line != line || e.Field != field || e.Given != text || !strings.Contains(err.Error(), r.Want()) {
							t.Errorf("error %q, want r.yaml:%d: %s: got %q, want %s", err, line, field, text, r.Want())
						}
						return
					}
					if err != nil {
						t.Fatalf("%s inside %s refused: %v", text, r.Want(), err)
					}
					got := cardValue(t, p.Card(ty), r.Field)
					if got != pr.x {
						t.Errorf("read %g, wrote %g", got, pr.x)
					}
				})
			}
		}
	}
	r := TnomRange()
	for _, pr := range probes(r) {
		text := units.Format(pr.x, r.Dim)
		t.Run("tnom="+text, func(t *testing.T) {
			p, err := ReadProcess("r.yaml", []byte("model: level1\ntnom: "+text+"\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n"))
			if !pr.ok {
				var e *units.Error
				if !errors.As(err, &e) || e.Line != 2 || e.Field != "tnom" || !strings.Contains(err.Error(), r.Want()) {
					t.Errorf("error %v, want r.yaml:2: tnom: … want %s", err, r.Want())
				}
				return
			}
			if err != nil {
				t.Fatalf("%s refused: %v", text, err)
			}
			if p.TnomK != pr.x || p.N.(*Level1).TnomK != pr.x {
				t.Errorf("tnom %g K, wrote %g K", p.TnomK, pr.x)
			}
		})
	}
}

// cardValue returns the value called field of a card.
func cardValue(t *testing.T, m Model, field string) float64 {
	t.Helper()
	c, ok := m.(*EKV)
	if !ok {
		t.Fatalf("card %T, want *EKV", m)
	}
	switch field {
	case "vto":
		return c.VTO
	case "kp":
		return c.KP
	case "gamma":
		return c.Gamma
	case "phi":
		return c.Phi
	case "lambda":
		return c.Lambda
	case "ld":
		return c.LD
	case "tcv":
		return c.TCV
	case "bex":
		return c.BEX
	}
	t.Fatalf("no card field %q", field)
	return 0
}

// TestCardRangesRefuseTypos: the slips of the issue that asked for the
// ranges, each of which used to give numbers (or a solver failure)
// instead of an error at its line.
func TestCardRangesRefuseTypos(t *testing.T) {
	tests := []struct{ field, text string }{
		{"kp", "1e30"}, {"bex", "1000"}, {"tcv", "1V/K"}, {"lambda", "1e6"}, {"gamma", "1e6"},
		{"vto", "100V"}, {"vto", "450uV"}, {"phi", "1e-9"}, {"phi", "8V"}, {"kp", "280A/V2"}, {"ld", "20um"},
	}
	for _, tt := range tests {
		pmos := map[string]string{"vto": "-0.45V", "kp": "70uA/V2", tt.field: tt.text}
		text := "model: level1\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos:\n  vto: " + pmos["vto"] + "\n  kp: " + pmos["kp"] + "\n"
		line := 4
		switch tt.field {
		case "kp":
			line = 5
		case "vto":
		default:
			text += "  " + tt.field + ": " + tt.text + "\n"
			line = 6
		}
		_, err := ReadProcess("t.yaml", []byte(text))
		var e *units.Error
		if !errors.As(err, &e) || e.Field != "pmos."+tt.field || e.Given != tt.text || e.Line != line {
			t.Errorf("%s: %s: error %v, want one at t.yaml:%d: pmos.%s", tt.field, tt.text, err, line, tt.field)
		}
	}
	// A tnom of a million degrees.
	if _, err := ReadProcess("t.yaml", []byte("model: ekv\ntnom: 1e6\nnmos: {vto: 0.45V, kp: 280uA/V2}\npmos: {vto: -0.45V, kp: 70uA/V2}\n")); err == nil ||
		!strings.HasPrefix(err.Error(), "t.yaml:2: tnom: ") {
		t.Errorf("tnom 1e6: error %v", err)
	}
}

// TestCardRangesHoldPhysics checks the ranges against the textbook
// formulas their comments cite (Sze, Physics of Semiconductor Devices;
// constants CODATA 2018; εox = 3.9·ε0, εSi = 11.7·ε0, ni = 1e10 cm⁻³ at
// 300 K, from memory): the values of real processes lie inside.
func TestCardRangesHoldPhysics(t *testing.T) {
	const (
		eps0  = 8.8541878128e-12 // F/m, CODATA 2018
		epsOx = 3.9 * eps0
		epsSi = 11.7 * eps0
		ni    = 1e16 // m⁻³ (1e10 cm⁻³)
	)
	ut := ThermalVoltage(300)
	cox := func(tox float64) float64 { return epsOx / tox }
	in := func(ty Type, field string, x float64) bool {
		for _, r := range CardRanges(ty) {
			if r.Field == field {
				return r.Contains(x)
			}
		}
		t.Fatalf("no range for %s", field)
		return false
	}
	tests := []struct {
		what  string
		field string
		x     float64
	}{
		// 2φF = 2·U_T·ln(N/ni) for channel doping 1e15 and 1e18 cm⁻³.
		{"phi, N = 1e15 cm⁻³", "phi", 2 * ut * math.Log(1e21/ni)},
		{"phi, N = 1e18 cm⁻³", "phi", 2 * ut * math.Log(1e24/ni)},
		// µ·Cox: holes at 50 cm²/Vs under 100 nm, electrons at 700 cm²/Vs under 1 nm.
		{"kp, holes, 100 nm", "kp", 50e-4 * cox(100e-9)},
		{"kp, electrons, 1 nm", "kp", 700e-4 * cox(1e-9)},
		// γ = √(2q·εSi·N)/Cox: an old 5 V process and a heavily doped 20 nm one.
		{"gamma, 1e16 cm⁻³, 25 nm", "gamma", math.Sqrt(2*Charge*epsSi*1e22) / cox(25e-9)},
		{"gamma, 1e18 cm⁻³, 20 nm", "gamma", math.Sqrt(2*Charge*epsSi*1e24) / cox(20e-9)},
		{"gamma, 5e18 cm⁻³, 1.5 nm", "gamma", math.Sqrt(2*Charge*epsSi*5e24) / cox(1.5e-9)},
	}
	for _, tt := range tests {
		if !in(NMOS, tt.field, tt.x) {
			t.Errorf("%s: %g outside the range", tt.what, tt.x)
		}
	}
	// The phi range's stated span: 0.6 V to 0.95 V for 1e15 to 1e18 cm⁻³.
	if lo, hi := 2*ut*math.Log(1e21/ni), 2*ut*math.Log(1e24/ni); math.Abs(lo-0.595) > 0.005 || math.Abs(hi-0.952) > 0.005 {
		t.Errorf("2φF = %.3f V and %.3f V, the comment says 0.60 V and 0.95 V", lo, hi)
	}
	// Every built-in demo card lies inside (Builtin would panic otherwise;
	// this says which value when it does not).
	for _, name := range BuiltinNames() {
		data, err := builtinFS.ReadFile("processes/" + name + ".yaml")
		if err != nil {
			t.Fatal(err)
		}
		if _, err := ReadProcess(name, data); err != nil {
			t.Errorf("built-in %s: %v", name, err)
		}
	}
}

// TestProcessErrorAt: a check made after reading points at the line of
// the card value it is about, or at the card when the value is left out.
func TestProcessErrorAt(t *testing.T) {
	text := "model: level1\nnmos:\n  vto: 0.45V\n  kp: 280uA/V2\n  ld: 40nm\npmos: {vto: -0.5V, kp: 70uA/V2}\n"
	p, err := ReadProcess("dir/p.yaml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if got := p.ErrorAt("nmos.ld", "less", nil).Error(); got != `dir/p.yaml:5: nmos.ld: got "40nm", want less` {
		t.Errorf("ErrorAt(nmos.ld) = %q", got)
	}
	if got := p.ErrorAt("pmos.ld", "less", nil).Error(); got != `dir/p.yaml:6: pmos.ld: want less` {
		t.Errorf("ErrorAt(pmos.ld) = %q", got)
	}
	if p.Threshold(NMOS) != 0.45 || p.Threshold(PMOS) != 0.5 || p.LateralDiffusion(NMOS) != 40e-9 || p.LateralDiffusion(PMOS) != 0 {
		t.Errorf("thresholds %g, %g V, lateral diffusions %g, %g m", p.Threshold(NMOS), p.Threshold(PMOS),
			p.LateralDiffusion(NMOS), p.LateralDiffusion(PMOS))
	}
}
