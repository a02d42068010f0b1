package objectives

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"time"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// Defaults and limits of a spec sheet's search settings.
const (
	DefaultEvaluations = 20000 // the budget of a spec that sets none (issue 3)
	DefaultSeed        = 1
	MaxEvaluations     = 100_000_000 // more is a typo, not a budget
	// MaxRippleTarget is the largest gm_ripple_max a spec may set: 1000 %.
	// A bare 20 meant as 20 % would be 2000 % and is caught by it.
	MaxRippleTarget = 10.0
)

// Range is the common-mode input range a stage must cover, in V, at
// the nominal supply. Follows says its high end is the positive rail at
// every supply (input_range.high not written, or written as supply).
type Range struct {
	Low, High float64
	Follows   bool
}

// Search holds the settings of the search.
type Search struct {
	Evaluations int           // the evaluation budget, ≥ 1
	Seed        int64         // the random seed; the same seed gives the same result
	Workers     int           // goroutines evaluating in parallel; 0 is one per core
	Time        time.Duration // wall-clock budget; 0 is none
}

// DefaultSearch returns the search settings of a spec whose search
// section sets nothing: 20 000 evaluations, seed 1, one worker per core,
// no time limit.
func DefaultSearch() Search {
	return Search{Evaluations: DefaultEvaluations, Seed: DefaultSeed}
}

// WorkerCount returns the number of workers to run: Workers, or the
// number of usable cores when Workers is 0.
func (s Search) WorkerCount() int {
	if s.Workers > 0 {
		return s.Workers
	}
	return max(1, runtime.GOMAXPROCS(0))
}

// TimeBudgetWant says what ParseTimeBudget takes, for error messages.
const TimeBudgetWant = "a duration such as 10m, 90s or 1h30m, or a number of seconds"

// timeWant says what a spec's search.time takes.
const timeWant = TimeBudgetWant + "; 0 for none"

// ParseTimeBudget reads a time budget as the spec's search.time and the
// --time flag take it: a Go duration ("10m", "90s", "1h30m", see
// time.ParseDuration) or a bare number of seconds ("90", "1.5"). Negative,
// NaN, infinite and overlong values are errors.
func ParseTimeBudget(text string) (time.Duration, error) {
	s := strings.TrimSpace(text)
	if s == "" {
		return 0, errors.New("empty time budget")
	}
	if secs, err := strconv.ParseFloat(s, 64); err == nil {
		switch {
		case math.IsNaN(secs) || math.IsInf(secs, 0):
			return 0, fmt.Errorf("time budget %q is not a finite number", text)
		case secs < 0:
			return 0, fmt.Errorf("time budget %q is negative", text)
		case secs*float64(time.Second) >= math.MaxInt64:
			return 0, fmt.Errorf("time budget %q is longer than %s", text, time.Duration(math.MaxInt64))
		}
		return time.Duration(math.Round(secs * float64(time.Second))), nil
	}
	d, err := time.ParseDuration(s)
	if err != nil {
		return 0, fmt.Errorf("time budget: %w", err)
	}
	if d < 0 {
		return 0, fmt.Errorf("time budget %q is negative", text)
	}
	return d, nil
}

// Spec is a spec sheet read in: what a stage must do and how to search
// for one (issue 3, "the spec sheet"). All values are SI.
type Spec struct {
	File string // the spec's path as given, for error messages
	Name string // free text; the file name without extension if the spec gives none

	ProcessRef string // as written: a built-in name or a path relative to the spec
	// ProcessPath is the absolute path of the process file, "" for a
	// built-in process.
	ProcessPath string
	// Conditions are the nominal condition: the process at its nominal
	// corner, the nominal supply and temperature (default 27 °C).
	topologies.Conditions
	// Signoff is every condition a stage must work at (docs/conditions.md).
	Signoff Signoff
	// corners holds the process at each corner of Signoff.
	corners map[string]*device.Process
	// SaturationMargin is the sheet's saturation_margin, V, overriding the
	// process's (Process already carries it); 0 when the sheet gives none.
	SaturationMargin float64
	// Range is the common-mode range that must be covered (input_range
	// low and high); default rail to rail, 0 … Supply.
	Range Range
	// Step is the sweep step of a fine evaluation (input_range.step, an
	// extension of pairsmith's to the spec sheet); default 10 mV.
	Step float64

	Targets Targets
	// Pareto lists the trade-off axes (see AxisNames), each once; default
	// DefaultPareto().
	Pareto []string
	// Topologies lists the families to search, each once, in the order of
	// topologies.All() whatever the order written; "all" (the default)
	// lists every family.
	Topologies []string
	Search     Search
}

// LoadSpec reads a spec sheet of at most units.MaxFileSize bytes; see
// ReadSpec.
func LoadSpec(path string) (*Spec, error) {
	data, err := units.ReadInput(path, "spec")
	if err != nil {
		return nil, err
	}
	return ReadSpec(path, data, filepath.Dir(path))
}

// ReadSpec reads a spec sheet's text; file names it in errors and baseDir
// is where a relative process path starts (an empty baseDir is the working
// directory). The sheet is YAML with units (docs/files.md#spec-sheet):
//
//	name: strain-gauge buffer           # free text
//	process: demo18                     # built-in name, or a path relative to the spec
//	supply: 1.8V
//	temperature: 27C                    # default 27C
//	input_range: {low: 0V, high: 1.8V}  # default rail to rail; optional step, default 10mV
//	targets:                            # every target optional
//	  gm_min: 150uS
//	  gm_ripple_max: 20%
//	  power_max: 200uW
//	  area_max: 3000um2
//	  switchover: {at: 0.9V, tolerance: 0.1V}
//	  transition_width_max: 200mV
//	pareto: [gm_ripple, power, area]    # the default; also gm_min, transition_width
//	topologies: all                     # or a list of family names
//	search: {evaluations: 20000, seed: 1, workers: 0, time: 10m}
//
// process and supply are required. Every problem is a *units.Error naming
// the file, line and field, what was given and what was wanted.
func ReadSpec(file string, data []byte, baseDir string) (*Spec, error) {
	m, err := units.ReadBytes(file, data)
	if err != nil {
		return nil, err
	}
	return readSpec(m, baseDir)
}

// The fields of each section of a spec sheet.
func specKeys() []string {
	return append([]string{"name", "process", "saturation_margin", "input_range", "targets", "pareto", "topologies", "search"}, signoffKeys()...)
}
func rangeKeys() []string  { return []string{"low", "high", "step"} }
func targetKeys() []string { return targetOrder() }
func searchKeys() []string { return []string{"evaluations", "seed", "workers", "time"} }

func readSpec(m *units.Map, baseDir string) (*Spec, error) {
	if err := checkTop(m); err != nil {
		return nil, err
	}
	if err := m.Require("process", "supply"); err != nil {
		return nil, err
	}
	s := &Spec{File: m.File(), Name: strings.TrimSuffix(filepath.Base(m.File()), filepath.Ext(m.File()))}
	if m.File() == "" {
		s.Name = ""
	}
	if name, ok, err := m.String("name"); err != nil {
		return nil, err
	} else if ok {
		s.Name = name
	}
	cond, err := readConditions(m, baseDir)
	if err != nil {
		return nil, err
	}
	s.ProcessRef, s.ProcessPath, s.Conditions = cond.ProcessRef, cond.ProcessPath, cond.Conditions
	s.SaturationMargin = cond.Margin
	s.Signoff, s.corners = cond.Signoff, cond.corners
	s.Range, s.Step = Range{Low: 0, High: s.Supply, Follows: true}, DefaultStep
	if rm, ok, err := m.Map("input_range"); err != nil {
		return nil, err
	} else if ok {
		if s.Range.Low, s.Range.High, s.Step, s.Range.Follows, err = readRange(rm, s.Supply); err != nil {
			return nil, err
		}
		if err := checkFollowing(rm, s.Range.Low, s.Range.High, s.Step, s.Range.Follows, s.Signoff); err != nil {
			return nil, err
		}
	}
	s.Targets = NoTargets()
	if tm, ok, err := m.Map("targets"); err != nil {
		return nil, err
	} else if ok {
		if s.Targets, err = readTargets(tm, s.Range); err != nil {
			return nil, err
		}
	}
	if s.Pareto, err = readPareto(m); err != nil {
		return nil, err
	}
	if err := checkMismatchAsked(m, s); err != nil {
		return nil, err
	}
	if err := checkLoadAsked(m, s); err != nil {
		return nil, err
	}
	if s.Topologies, err = readTopologies(m); err != nil {
		return nil, err
	}
	if err := checkSpecLengths(s); err != nil {
		return nil, err
	}
	s.Search = DefaultSearch()
	if sm, ok, err := m.Map("search"); err != nil {
		return nil, err
	} else if ok {
		if err := readSearch(sm, &s.Search); err != nil {
			return nil, err
		}
	}
	return s, nil
}

// checkTop rejects an unknown top-level field, saying where a field of a
// section belongs when it is written at the top.
func checkTop(m *units.Map) error {
	sections := []struct {
		name string
		keys []string
	}{{"targets", targetKeys()}, {"search", searchKeys()}, {"input_range", rangeKeys()}}
	for _, k := range m.Keys() {
		if slices.Contains(specKeys(), k) {
			continue
		}
		for _, sec := range sections {
			if slices.Contains(sec.keys, k) {
				return m.ErrorAt(k, "", "", fmt.Errorf("%w; %s belongs under %s", units.ErrUnknownField, k, sec.name))
			}
		}
	}
	return m.Check(specKeys()...)
}

// checkTargetKeysOf rejects an unknown target, suggesting the _max form
// of a metric's name ("power" → "power_max") before falling back to
// Check.
func checkTargetKeysOf(entries []Entry, tm *units.Map) error {
	known := targetKeysOf(entries)
	for _, k := range tm.Keys() {
		if !slices.Contains(known, k) && slices.Contains(known, k+"_max") {
			return tm.ErrorAt(k, "", "", fmt.Errorf("%w; did you mean %q?", units.ErrUnknownField, k+"_max"))
		}
	}
	return tm.Check(known...)
}

// readTargets reads a spec's targets section: every target of the
// catalog, a limit in its entry's unit (above 0, and at most its Max), or
// for a window {at, tolerance}. The limits are read first, the windows
// after them, each in the catalog's order.
func readTargets(tm *units.Map, rng Range) (Targets, error) { return readTargetsOf(catalog, tm, rng) }

func readTargetsOf(entries []Entry, tm *units.Map, rng Range) (Targets, error) {
	t := noTargetsOf(entries)
	if err := checkTargetKeysOf(entries, tm); err != nil {
		return t, err
	}
	for _, e := range entries {
		if !e.HasTarget() || e.Target.Window != nil {
			continue
		}
		key := e.Target.Key
		if e.Target.Frequency {
			ok, err := readAtFrequency(e, tm, &t)
			if err != nil {
				return t, err
			}
			if ok {
				continue
			}
		}
		x, ok, err := tm.Quantity(key, e.Dim)
		if err != nil {
			return t, err
		}
		if !ok {
			continue
		}
		if !(x > 0) || (e.Target.Max > 0 && x > e.Target.Max) {
			return t, tm.Errorf(key, "%s", e.Target.Want)
		}
		*e.Target.Limit(&t) = x
	}
	for _, e := range entries {
		if !e.HasTarget() || e.Target.Window == nil {
			continue
		}
		w, ok, err := readWindow(e, tm, rng)
		if err != nil {
			return t, err
		}
		if ok {
			*e.Target.Window(&t) = w
		}
	}
	return t, nil
}

// MaxNoiseFrequency is the highest frequency a noise target may be taken
// at, Hz: beyond 1 GHz a DC model says nothing.
const MaxNoiseFrequency = 1e9

// readAtFrequency reads a target written {density, at} (noise_max) into
// t: the limit into e's Limit, the frequency into t.NoiseAt; false when
// the target is not written as a mapping (Quantity then refuses it).
func readAtFrequency(e Entry, tm *units.Map, t *Targets) (bool, error) {
	if !tm.IsMap(e.Target.Key) {
		if tm.Has(e.Target.Key) {
			return false, tm.Errorf(e.Target.Key, "{density: 25nV/rtHz, at: 10kHz}: a density and the frequency it holds at")
		}
		return false, nil
	}
	sm, _, err := tm.Map(e.Target.Key)
	if err != nil {
		return false, err
	}
	if err := sm.Check("density", "at"); err != nil {
		return false, err
	}
	if err := sm.Require("density", "at"); err != nil {
		return false, err
	}
	x, _, err := sm.Quantity("density", e.Dim)
	if err != nil {
		return false, err
	}
	if !(x > 0) || math.IsInf(x, 0) {
		return false, sm.Errorf("density", "%s", e.Target.Want)
	}
	f, _, err := sm.Quantity("at", units.Hertz)
	if err != nil {
		return false, err
	}
	if !(f > 0 && f <= MaxNoiseFrequency) {
		return false, sm.Errorf("at", "a frequency above 0 Hz and at most 1GHz, for example 10kHz")
	}
	*e.Target.Limit(t), t.NoiseAt = x, f
	return true, nil
}

// readWindow reads a window target {at, tolerance}, both required.
func readWindow(e Entry, tm *units.Map, rng Range) (SwitchoverTarget, bool, error) {
	var w SwitchoverTarget
	sm, ok, err := tm.Map(e.Target.Key)
	if err != nil || !ok {
		return w, false, err
	}
	if err := sm.Check("at", "tolerance"); err != nil {
		return w, false, err
	}
	if err := sm.Require("at", "tolerance"); err != nil {
		return w, false, err
	}
	at, _, err := sm.Quantity("at", e.Dim)
	if err != nil {
		return w, false, err
	}
	if e.Target.AtInRange && (at < rng.Low || at > rng.High) {
		return w, false, sm.Errorf("at", "%s (%s … %s)", e.Target.AtWant,
			units.Format(rng.Low, e.Dim), units.Format(rng.High, e.Dim))
	}
	tol, _, err := sm.Quantity("tolerance", e.Dim)
	if err != nil {
		return w, false, err
	}
	if !(tol > 0) {
		return w, false, sm.Errorf("tolerance", "%s", e.Target.Want)
	}
	return SwitchoverTarget{At: at, Tolerance: tol}, true, nil
}

// nameList reads a top-level field holding a name or a list of names,
// with a function that makes an error located at one of them.
func nameList(m *units.Map, key string) ([]string, bool, func(i int, want string) error, error) {
	names, ok, err := m.Strings(key)
	if err != nil || !ok {
		return nil, ok, nil, err
	}
	at := func(i int, want string) error { return m.ItemErrorAt(key, i, names[i], want, nil) }
	return names, true, at, nil
}

func readPareto(m *units.Map) ([]string, error) {
	names, ok, at, err := nameList(m, "pareto")
	if err != nil {
		return nil, err
	}
	if !ok {
		return DefaultPareto(), nil
	}
	if len(names) == 0 {
		return nil, m.Errorf("pareto", "at least one trade-off axis (%s)", strings.Join(AxisNames(), ", "))
	}
	axes := AxisNames()
	for i, n := range names {
		if !slices.Contains(axes, n) {
			near, isNear := units.Nearest(n, axes)
			if trimmed := strings.TrimSuffix(n, "_max"); trimmed != n && slices.Contains(axes, trimmed) {
				near, isNear = trimmed, true
			}
			if isNear {
				return nil, at(i, fmt.Sprintf("a trade-off axis (did you mean %q?)", near))
			}
			return nil, at(i, "a trade-off axis: one of "+strings.Join(axes, ", "))
		}
		if j := slices.Index(names, n); j < i {
			return nil, at(i, fmt.Sprintf("each axis once (%s is also pareto[%d])", n, j))
		}
	}
	return names, nil
}

func readTopologies(m *units.Map) ([]string, error) {
	names, ok, at, err := nameList(m, "topologies")
	if err != nil {
		return nil, err
	}
	known := topologies.Names()
	if !ok || (len(names) == 1 && names[0] == "all") {
		return known, nil
	}
	if len(names) == 0 {
		return nil, m.Errorf("topologies", "at least one family name, or all")
	}
	for i, n := range names {
		if n == "all" {
			return nil, at(i, "either all on its own or a list of family names, not both")
		}
		if !slices.Contains(known, n) {
			if near, ok := units.Nearest(n, known); ok {
				return nil, at(i, fmt.Sprintf("a known family (did you mean %q?)", near))
			}
			return nil, at(i, "a family: all, or some of "+strings.Join(known, ", "))
		}
		if j := slices.Index(names, n); j < i {
			return nil, at(i, fmt.Sprintf("each family once (%s is also topologies[%d])", n, j))
		}
	}
	return inOrderOf(known, names), nil
}

func readSearch(sm *units.Map, se *Search) error {
	if err := sm.Check(searchKeys()...); err != nil {
		return err
	}
	if n, ok, err := sm.Int("evaluations"); err != nil {
		return err
	} else if ok {
		if n < 1 || n > MaxEvaluations {
			return sm.Errorf("evaluations", "a number of evaluations from 1 to %d", MaxEvaluations)
		}
		se.Evaluations = n
	}
	if n, ok, err := sm.Int("seed"); err != nil {
		return err
	} else if ok {
		se.Seed = int64(n)
	}
	if n, ok, err := sm.Int("workers"); err != nil {
		return err
	} else if ok {
		if n < 0 {
			return sm.Errorf("workers", "0 (one per core) or a positive number of workers")
		}
		se.Workers = n
	}
	if text, ok, err := sm.String("time"); err != nil {
		return err
	} else if ok {
		d, err := ParseTimeBudget(text)
		if err != nil {
			return sm.ErrorAt("time", text, timeWant, err)
		}
		se.Time = d
	}
	return nil
}

// Sweep returns the fine sweep of the input range at the spec's step.
func (s *Spec) Sweep() sim.SweepSpec {
	return sim.SweepSpec{Low: s.Range.Low, High: s.Range.High, Step: s.Step}
}

// Families returns the families of s.Topologies.
func (s *Spec) Families() ([]topologies.Family, error) {
	out := make([]topologies.Family, 0, len(s.Topologies))
	for _, n := range s.Topologies {
		f, err := topologies.Lookup(n)
		if err != nil {
			return nil, fmt.Errorf("spec %s: %w", s.File, err)
		}
		out = append(out, f)
	}
	return out, nil
}

// Design returns a candidate of the family topology with the given
// parameter values (copied) at the spec's conditions and fine sweep. Its
// ProcessRef is the built-in name, or the absolute ProcessPath of a
// process file, so that the design reads back from any directory; a
// writer that wants a relative path rewrites it.
func (s *Spec) Design(topology string, params topologies.Values) *Design {
	ref := s.ProcessRef
	if s.ProcessPath != "" {
		ref = s.ProcessPath
	}
	v := make(topologies.Values, len(params))
	for k, x := range params {
		v[k] = x
	}
	return &Design{Topology: topology, ProcessRef: ref, Conditions: s.Conditions, SaturationMargin: s.SaturationMargin,
		Sweep: s.Sweep(), Params: v, Signoff: s.Signoff, FollowSupply: s.Range.Follows, corners: s.corners,
		NoiseFrequency: noiseAt(s.Targets)}
}

// MarshalJSON writes the spec as summary.json's "spec": the spec sheet's
// keys with SI values (temperature in K, search.time in seconds, left out
// when there is none) and only the targets that are set. It leaves out
// search.workers, because the result does not depend on it, and the
// file's path, so that the same spec gives the same JSON wherever it is.
func (s Spec) MarshalJSON() ([]byte, error) {
	type rng struct {
		Low  float64 `json:"low"`
		High float64 `json:"high"`
		Step float64 `json:"step"`
	}
	type search struct {
		Evaluations int     `json:"evaluations"`
		Seed        int64   `json:"seed"`
		Time        float64 `json:"time,omitempty"`
	}
	span := func(sp Span) any {
		if sp.IsSingle() {
			return sp.Nominal
		}
		return struct {
			Min     float64 `json:"min"`
			Nominal float64 `json:"nominal"`
			Max     float64 `json:"max"`
		}{sp.Min, sp.Nominal, sp.Max}
	}
	so := effectiveSignoff(s.Signoff, s.Conditions)
	var load *float64
	if so.Load > 0 {
		load = &so.Load
	}
	type mismatch struct {
		Sigma float64 `json:"sigma"`
	}
	return json.Marshal(struct {
		Name        string   `json:"name"`
		Process     string   `json:"process"`
		Supply      any      `json:"supply"`
		Temperature any      `json:"temperature"`
		Corners     []string `json:"corners,omitempty"`
		Mismatch    mismatch `json:"mismatch"`
		Load        *float64 `json:"load,omitempty"`
		InputRange  rng      `json:"input_range"`
		Targets     Targets  `json:"targets"`
		Pareto      []string `json:"pareto"`
		Topologies  []string `json:"topologies"`
		Search      search   `json:"search"`
	}{
		Name: s.Name, Process: s.ProcessRef, Supply: span(so.Supply), Temperature: span(so.Temperature),
		Corners: so.Corners, Mismatch: mismatch{so.Sigma}, Load: load,
		InputRange: rng{s.Range.Low, s.Range.High, s.Step},
		Targets:    s.Targets, Pareto: s.Pareto, Topologies: s.Topologies,
		Search: search{s.Search.Evaluations, s.Search.Seed, s.Search.Time.Seconds()},
	})
}

// noiseAt is where a spec's noise_max holds, Hz; 0 (the default) when
// it sets none.
func noiseAt(t Targets) float64 {
	if t.NoiseAt > 0 {
		return t.NoiseAt
	}
	return 0
}

// inOrderOf returns the names of known that names holds, in known's
// order: a list the file may write in any order, read in a fixed one.
func inOrderOf(known, names []string) []string {
	var out []string
	for _, k := range known {
		if slices.Contains(names, k) {
			out = append(out, k)
		}
	}
	return out
}
