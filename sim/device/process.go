package device

import (
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"math"
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
	// Rules are the geometry rules and the saturation margin.
	Rules Rules
	// Corners are the process corners the file defines, the typical one
	// (tt, the cards as written) first; a file without any has tt only.
	Corners []Corner
	// Corner names the corner whose cards N and P are (AtCorner): tt
	// for the cards as written, which typical keeps, so that a corner is
	// always taken from them.
	Corner  string
	typical [2]Model
	// Mismatch holds the Pelgrom coefficients, if the file gives them.
	Mismatch Mismatch
	// Noise holds the flicker-noise coefficients, if the file gives them.
	Noise Noise

	// File is the file the process was read from, as given to
	// ReadProcess; pos holds the line and text of every card value
	// ("nmos.ld"), so that a check made later, against a design, can
	// point at the line to change (see ErrorAt).
	File string
	pos  map[string]fieldPos
}

// fieldPos is where a card value is written: its line (the card's own
// line when the value is left out) and its text ("" when left out).
type fieldPos struct {
	line int
	text string
}

// ErrorAt returns an error located at a card value of the process file,
// field as in "nmos.ld" (or "tnom"), for a problem a later check finds with it (a
// lateral diffusion longer than half a design's channel): it names the
// file, the value's line (the card's when the value is left out) and
// text, and what is wanted.
func (p *Process) ErrorAt(field, want string, err error) *units.Error {
	fp := p.pos[field]
	return &units.Error{File: p.File, Line: fp.line, Field: field, Given: fp.text, Want: want, Err: err}
}

// Threshold returns the magnitude of the zero-bias threshold VTO of the
// card of polarity t at the card's tnom, V; 0 for a card of another model.
func (p *Process) Threshold(t Type) float64 {
	switch c := p.Card(t).(type) {
	case *Level1:
		return math.Abs(c.VTO)
	case *EKV:
		return math.Abs(c.VTO)
	}
	return 0
}

// LateralDiffusion returns the LD of the card of polarity t, m; 0 for a
// card of another model.
func (p *Process) LateralDiffusion(t Type) float64 {
	switch c := p.Card(t).(type) {
	case *Level1:
		return c.LD
	case *EKV:
		return c.LD
	}
	return 0
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

// LoadProcess reads a process file of at most units.MaxFileSize bytes;
// see ReadProcess for its format.
func LoadProcess(path string) (*Process, error) {
	data, err := units.ReadInput(path, "process file")
	if err != nil {
		return nil, err
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
//	rules: {wmin: 0.22um, lmin: 0.18um, grid: 5nm}   # optional; see Rules
//	corners:                                          # optional; see readCorners
//	  ff: {nmos: {dvt: -40mV, dkp: 8%}, pmos: {dvt: -50mV, dkp: 8%}}
//	mismatch: {nmos: {avt: 5mV*um, abeta: 1%*um}, pmos: {avt: 5.5mV*um, abeta: 1%*um}}   # optional; see readMismatch
//	noise: {nmos: {kf: 1e-25, af: 1, tox: 4nm}, pmos: {kf: 4e-26, af: 1, tox: 4nm}}       # optional; see readNoise
//
// Each card takes vto (V, SPICE sign: positive for an NMOS, negative for a
// PMOS) and kp (A/V²), both required; gamma (√V, default 0), phi (V,
// default 0.7 V), lambda (1/V, default 0), ld (m, default 0), tcv (V/K,
// the magnitude) and bex. An ekv card takes tcv = 1 mV/K and bex = −1.5
// when they are left out. A level1 card follows the SPICE level-1
// temperature law unless it gives tcv or bex; then it uses the linear law
// of Level1.LinearTemp, the other of the two taking its default.
//
// Every value written must lie in its physical range (CardRanges,
// TnomRange): |vto| 50 mV … 3 V, kp 1 µA/V² … 5 mA/V², gamma 0 … 4 √V,
// phi 0.4 … 1.2 V, lambda 0 … 2 /V, ld 0 … 1 µm, tcv 0 … 5 mV/K,
// bex −3 … 1.5, tnom 200 … 500 K.
//
// The rules section (readRules) gives the smallest drawn width and
// length and the grid, optionally the largest width and length and the
// saturation margin; a file without one has no geometry limits.
//
// An error names the file, line and field, what was given and what was
// wanted; it is a *units.Error.
func ReadProcess(file string, data []byte) (*Process, error) {
	m, err := units.ReadBytes(file, data)
	if err != nil {
		return nil, err
	}
	if err := m.Check("name", "doc", "model", "tnom", "nmos", "pmos", "rules", "corners", "mismatch", "noise"); err != nil {
		return nil, err
	}
	if err := m.Require("model", "nmos", "pmos"); err != nil {
		return nil, err
	}
	p := &Process{Name: strings.TrimSuffix(filepath.Base(file), filepath.Ext(file)), File: file, pos: map[string]fieldPos{}}
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
	if r := TnomRange(); m.Has("tnom") && !r.Contains(p.TnomK) {
		return nil, m.ErrorAt("tnom", m.Text("tnom"), r.Want(), errors.New(r.Why))
	}
	p.pos["tnom"] = fieldPos{line: m.Line("tnom"), text: m.Text("tnom")}
	if p.N, err = readCard(m, "nmos", NMOS, p.Kind, p.TnomK, p.pos); err != nil {
		return nil, err
	}
	if p.P, err = readCard(m, "pmos", PMOS, p.Kind, p.TnomK, p.pos); err != nil {
		return nil, err
	}
	if p.Rules, err = readRules(m, p.pos); err != nil {
		return nil, err
	}
	if p.Corners, err = readCorners(m, p.N, p.P); err != nil {
		return nil, err
	}
	p.Corner, p.typical = Typical, [2]Model{p.N, p.P}
	if p.Mismatch, err = readMismatch(m); err != nil {
		return nil, err
	}
	if p.Noise, err = readNoise(m); err != nil {
		return nil, err
	}
	return p, nil
}

// cardValues are the parameters of one card section.
type cardValues struct {
	vto, kp, gamma, phi, lambda, ld, tcv, bex float64
}

// readCard reads the section key of a process file as a card of kind.
func readCard(root *units.Map, key string, t Type, kind string, tnomK float64, pos map[string]fieldPos) (Model, error) {
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
	defaults := map[string]float64{"phi": defaultPhi, "tcv": defaultTCV, "bex": defaultBEX}
	var c cardValues
	dst := map[string]*float64{"vto": &c.vto, "kp": &c.kp, "gamma": &c.gamma, "phi": &c.phi,
		"lambda": &c.lambda, "ld": &c.ld, "tcv": &c.tcv, "bex": &c.bex}
	for _, r := range CardRanges(t) {
		v, err := m.QuantityOr(r.Field, r.Dim, defaults[r.Field])
		if err != nil {
			return nil, err
		}
		if m.Has(r.Field) && !r.Contains(v) {
			return nil, m.ErrorAt(r.Field, m.Text(r.Field), r.Want(), errors.New(r.Why))
		}
		*dst[r.Field] = v
		pos[key+"."+r.Field] = fieldPos{line: m.Line(r.Field), text: m.Text(r.Field)}
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
