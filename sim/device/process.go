package device

import (
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"pairsmith/units"
)

// Process is a process file read in: one model card per polarity, all of
// one model kind.
type Process struct {
	Name  string  // free text; the file name without extension if the file gives none
	Doc   string  // free text describing the process
	Kind  string  // model kind of both cards: "level1" or "ekv"
	TnomK float64 // temperature at which the card parameters hold, K
	N, P  Model   // the NMOS and PMOS cards: *Level1 or *EKV
}

// Card returns the process's model card for polarity t, nil for a Type
// that is neither NMOS nor PMOS.
func (p *Process) Card(t Type) Model {
	switch t {
	case NMOS:
		return p.N
	case PMOS:
		return p.P
	}
	return nil
}

// Defaults of a process file.
const (
	defaultTnomK = 27 + ZeroC // 27 °C, the SPICE default TNOM (common practice, no source)
	defaultPhi   = 0.7        // V
	// EKV 2.6 defaults of the temperature parameters (from memory); also
	// used by a level-1 card that gives only one of tcv and bex.
	defaultTCV = 1e-3 // V/K
	defaultBEX = -1.5
)

// LoadProcess reads a process file; see ReadProcess for its format.
func LoadProcess(path string) (*Process, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("process file: %w", err)
	}
	return ReadProcess(path, data)
}

// ReadProcess reads a process file's text; file names it in errors.
//
// The file is YAML with units (see package units):
//
//	name: demo-l1          # free text
//	doc: what it is        # optional free text
//	model: level1          # level1 | ekv
//	tnom: 27C              # optional, default 27 °C
//	nmos: {vto: 0.45V, kp: 280uA/V2, gamma: 0.5, phi: 0.8V, lambda: 0.05}
//	pmos: {vto: -0.45V, kp: 70uA/V2, gamma: 0.45, phi: 0.8V, lambda: 0.06}
//
// Each card takes vto (V, SPICE sign: positive for an NMOS, negative for a
// PMOS) and kp (A/V², > 0), both required; gamma (√V, ≥ 0, default 0),
// phi (V, > 0, default 0.7 V), lambda (1/V, ≥ 0, default 0), ld (m, ≥ 0,
// default 0), tcv (V/K, the magnitude, ≥ 0) and bex. An ekv card takes
// tcv = 1 mV/K and bex = −1.5 when they are left out. A level1 card
// follows the SPICE level-1 temperature law unless it gives tcv or bex;
// then it uses the linear law of Level1.LinearTemp, the other of the two
// taking its default.
//
// An error names the file, line and field, what was given and what was
// wanted; it is a *units.Error.
func ReadProcess(file string, data []byte) (*Process, error) {
	m, err := units.ReadBytes(file, data)
	if err != nil {
		return nil, err
	}
	if err := m.Check("name", "doc", "model", "tnom", "nmos", "pmos"); err != nil {
		return nil, err
	}
	if err := m.Require("model", "nmos", "pmos"); err != nil {
		return nil, err
	}
	p := &Process{Name: strings.TrimSuffix(filepath.Base(file), filepath.Ext(file))}
	if name, ok, err := m.String("name"); err != nil {
		return nil, err
	} else if ok {
		p.Name = name
	}
	if p.Doc, _, err = m.String("doc"); err != nil {
		return nil, err
	}
	if p.Kind, _, err = m.String("model"); err != nil {
		return nil, err
	}
	if p.Kind != "level1" && p.Kind != "ekv" {
		return nil, m.Errorf("model", "a model kind: level1 or ekv")
	}
	if p.TnomK, err = m.QuantityOr("tnom", units.Temperature, defaultTnomK); err != nil {
		return nil, err
	}
	if !(p.TnomK > 0) {
		return nil, m.Errorf("tnom", "a temperature above absolute zero, for example 27C")
	}
	if p.N, err = readCard(m, "nmos", NMOS, p.Kind, p.TnomK); err != nil {
		return nil, err
	}
	if p.P, err = readCard(m, "pmos", PMOS, p.Kind, p.TnomK); err != nil {
		return nil, err
	}
	return p, nil
}

// cardValues are the parameters of one card section.
type cardValues struct {
	vto, kp, gamma, phi, lambda, ld, tcv, bex float64
}

// readCard reads the section key of a process file as a card of kind.
func readCard(root *units.Map, key string, t Type, kind string, tnomK float64) (Model, error) {
	m, _, err := root.Map(key)
	if err != nil {
		return nil, err
	}
	if err := m.Check("vto", "kp", "gamma", "phi", "lambda", "ld", "tcv", "bex"); err != nil {
		return nil, err
	}
	if err := m.Require("vto", "kp"); err != nil {
		return nil, err
	}
	vtoWant := "a positive threshold for an NMOS (SPICE sign convention), for example 0.45V"
	vtoOK := func(v float64) bool { return v > 0 }
	if t == PMOS {
		vtoWant = "a negative threshold for a PMOS (SPICE sign convention), for example -0.45V"
		vtoOK = func(v float64) bool { return v < 0 }
	}
	nonNeg := func(v float64) bool { return v >= 0 }
	positive := func(v float64) bool { return v > 0 }
	var c cardValues
	fields := []struct {
		key   string
		d     units.Dim
		def   float64
		dst   *float64
		valid func(float64) bool
		want  string
	}{
		{"vto", units.Volt, 0, &c.vto, vtoOK, vtoWant},
		{"kp", units.AmperePerVoltSq, 0, &c.kp, positive, "a positive transconductance parameter in A/V², for example 280uA/V2"},
		{"gamma", units.SqrtVolt, 0, &c.gamma, nonNeg, "a body-effect coefficient ≥ 0 in √V, for example 0.5V^0.5"},
		{"phi", units.Volt, defaultPhi, &c.phi, positive, "a positive surface potential in V, for example 0.8V"},
		{"lambda", units.PerVolt, 0, &c.lambda, nonNeg, "a channel-length modulation ≥ 0 in 1/V, for example 0.05/V"},
		{"ld", units.Metre, 0, &c.ld, nonNeg, "a lateral diffusion ≥ 0 in m, for example 20nm"},
		{"tcv", units.VoltPerKelvin, defaultTCV, &c.tcv, nonNeg, "the magnitude (≥ 0) of the threshold's temperature coefficient in V/K, for example 1mV/K"},
		{"bex", units.Dimensionless, defaultBEX, &c.bex, nil, ""},
	}
	for _, f := range fields {
		v, err := m.QuantityOr(f.key, f.d, f.def)
		if err != nil {
			return nil, err
		}
		if f.valid != nil && m.Has(f.key) && !f.valid(v) {
			return nil, m.Errorf(f.key, "%s", f.want)
		}
		*f.dst = v
	}
	if kind == "ekv" {
		return &EKV{Polarity: t, VTO: c.vto, KP: c.kp, Gamma: c.gamma, Phi: c.phi, Lambda: c.lambda,
			LD: c.ld, TCV: c.tcv, BEX: c.bex, TnomK: tnomK}, nil
	}
	return &Level1{Polarity: t, VTO: c.vto, KP: c.kp, Gamma: c.gamma, Phi: c.phi, Lambda: c.lambda,
		LD: c.ld, TnomK: tnomK, LinearTemp: m.Has("tcv") || m.Has("bex"), TCV: c.tcv, BEX: c.bex}, nil
}

// builtinFS holds the built-in demo processes, one YAML file each.
//
//go:embed processes/*.yaml
var builtinFS embed.FS

// Builtin returns the built-in demo process of that name (see
// BuiltinNames), freshly read from its embedded process file. The
// built-in processes are invented demo data, not any foundry's process.
// It panics only if an embedded file is broken, which the package's tests
// rule out.
func Builtin(name string) (*Process, bool) {
	file := "processes/" + name + ".yaml"
	if !fs.ValidPath(file) {
		return nil, false
	}
	data, err := builtinFS.ReadFile(file)
	if err != nil {
		return nil, false
	}
	p, err := ReadProcess(file, data)
	if err != nil {
		panic(fmt.Sprintf("device: built-in process %s: %v", name, err))
	}
	return p, true
}

// BuiltinNames returns the names of the built-in demo processes, sorted.
func BuiltinNames() []string {
	entries, err := fs.ReadDir(builtinFS, "processes")
	if err != nil {
		panic(fmt.Sprintf("device: built-in processes: %v", err))
	}
	var names []string
	for _, e := range entries {
		if n, ok := strings.CutSuffix(e.Name(), ".yaml"); ok {
			names = append(names, n)
		}
	}
	slices.Sort(names)
	return names
}

// ResolveProcess finds the process a design or spec file refers to: a
// built-in name (BuiltinNames), else a process file at ref, relative to
// baseDir unless absolute (an empty baseDir is the working directory).
// A built-in name wins over a file of the same name. A ref that is
// neither is an error listing the built-in names; it wraps
// fs.ErrNotExist. A file that is found but malformed gives LoadProcess's
// error, naming that file and line.
func ResolveProcess(ref, baseDir string) (*Process, error) {
	names := strings.Join(BuiltinNames(), ", ")
	if ref == "" {
		return nil, fmt.Errorf("no process given; want a built-in process (%s) or a process file", names)
	}
	if p, ok := Builtin(ref); ok {
		return p, nil
	}
	path := ref
	if !filepath.IsAbs(path) {
		path = filepath.Join(baseDir, path)
	}
	if _, err := os.Stat(path); err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			hint := ""
			if s, ok := units.Nearest(ref, BuiltinNames()); ok {
				hint = fmt.Sprintf("did you mean %q? ", s)
			}
			return nil, fmt.Errorf("process %q is neither a built-in process nor a file (%sbuilt-in: %s): %w", ref, hint, names, err)
		}
		return nil, fmt.Errorf("process %q: %w", ref, err)
	}
	return LoadProcess(path)
}
