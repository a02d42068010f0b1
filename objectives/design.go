package objectives

import (
	"bytes"
	"fmt"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"pairsmith/sim"
	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// DefaultStep is the sweep step when a design file gives none.
const DefaultStep = 10e-3

// Design is one sized candidate: a family, its parameter values, the
// process and the conditions it is evaluated at (docs/files.md#design-file).
type Design struct {
	Topology   string
	ProcessRef string // as written: a built-in name or a path relative to the file
	// Conditions are the process, the supply and the temperature.
	topologies.Conditions
	Sweep sim.SweepSpec
	// SaturationMargin is the file's saturation_margin, V, overriding the
	// process's (Process already carries it); 0 when the file gives none.
	SaturationMargin float64
	// Params holds every parameter of the family, defaults filled in.
	Params topologies.Values
	// Signoff is what the design must hold over (docs/conditions.md);
	// Conditions are its nominal condition. The zero Signoff (a design
	// made in code) is the one condition of Conditions.
	Signoff Signoff
	// FollowSupply says the sweep's high end is the positive rail at
	// every supply (written as high: supply, or not written).
	FollowSupply bool
	// NoiseFrequency is where the noise figure is taken, Hz (the file's
	// noise_frequency, a spec's noise_max.at); 0 is DefaultNoiseFrequency.
	NoiseFrequency float64
	// corners holds the process at each corner of Signoff (read-only,
	// shared by copies).
	corners map[string]*device.Process
}

// Family returns the design's family.
func (d *Design) Family() (topologies.Family, error) { return topologies.Lookup(d.Topology) }

// LoadDesign reads a design file.
func LoadDesign(path string) (*Design, error) {
	m, err := units.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return readDesign(m, filepath.Dir(path))
}

// ReadDesign reads a design file's text; file names it in errors and
// baseDir is where relative process paths start.
func ReadDesign(file string, data []byte, baseDir string) (*Design, error) {
	m, err := units.ReadBytes(file, data)
	if err != nil {
		return nil, err
	}
	return readDesign(m, baseDir)
}

func readDesign(m *units.Map, baseDir string) (*Design, error) {
	if err := m.Check(append([]string{"topology", "process", "saturation_margin", "sweep", "params", "noise_frequency"}, signoffKeys()...)...); err != nil {
		return nil, err
	}
	if err := m.Require("topology", "process", "supply"); err != nil {
		return nil, err
	}
	d := &Design{}
	var err error
	d.Topology, _, err = m.String("topology")
	if err != nil {
		return nil, err
	}
	fam, ferr := topologies.Lookup(d.Topology)
	if ferr != nil {
		want := "one of " + strings.Join(topologies.Names(), ", ")
		if near, ok := units.Nearest(d.Topology, topologies.Names()); ok {
			want = fmt.Sprintf("a known topology (did you mean %q?)", near)
		}
		return nil, m.Errorf("topology", "%s", want)
	}
	cond, err := readConditions(m, baseDir)
	if err != nil {
		return nil, err
	}
	d.ProcessRef, d.Conditions = cond.ProcessRef, cond.Conditions
	d.SaturationMargin = cond.Margin
	d.Signoff, d.corners = cond.Signoff, cond.corners
	if m.Has("noise_frequency") {
		if d.NoiseFrequency, _, err = m.Quantity("noise_frequency", units.Hertz); err != nil {
			return nil, err
		}
		if !(d.NoiseFrequency > 0 && d.NoiseFrequency <= MaxNoiseFrequency) {
			return nil, m.Errorf("noise_frequency", "a frequency above 0 Hz and at most 1GHz, for example 10kHz")
		}
	}
	d.Sweep = sim.SweepSpec{Low: 0, High: d.Supply, Step: DefaultStep}
	d.FollowSupply = true
	if sw, ok, err := m.Map("sweep"); err != nil {
		return nil, err
	} else if ok {
		if d.Sweep.Low, d.Sweep.High, d.Sweep.Step, d.FollowSupply, err = readRange(sw, d.Supply); err != nil {
			return nil, err
		}
		if err := checkFollowing(sw, d.Sweep.Low, d.Sweep.High, d.Sweep.Step, d.FollowSupply, d.Signoff); err != nil {
			return nil, err
		}
	}
	given := topologies.Values{}
	pm, ok, err := m.Map("params")
	if err != nil {
		return nil, err
	}
	if ok {
		var known []string
		for _, p := range fam.Params() {
			known = append(known, p.Name)
		}
		for _, k := range pm.Keys() {
			if _, ok := topologies.ParamOf(fam, k); ok {
				continue
			}
			if others := familiesWith(k); len(others) > 0 {
				return nil, pm.ErrorAt(k, "", fmt.Sprintf("a parameter of %s (%s)", fam.Name(), strings.Join(known, ", ")),
					fmt.Errorf("%w: %s is a parameter of %s", units.ErrUnknownField, k, strings.Join(others, ", ")))
			}
		}
		if err := pm.Check(known...); err != nil {
			return nil, err
		}
		for _, p := range fam.Params() {
			if p.Scale == topologies.Choice {
				word, ok, err := pm.String(p.Name)
				if err != nil {
					return nil, err
				}
				if !ok {
					continue
				}
				x, known := p.Choose(word)
				if !known {
					return nil, pm.Errorf(p.Name, "one of %s", strings.Join(p.Choices, ", "))
				}
				given[p.Name] = x
				continue
			}
			x, ok, err := pm.Quantity(p.Name, p.Unit)
			if err != nil {
				return nil, err
			}
			if !ok {
				continue
			}
			if x < p.Min || x > p.Max {
				return nil, pm.Errorf(p.Name, "a value from %s to %s",
					units.Format(p.Min, p.Unit), units.Format(p.Max, p.Unit))
			}
			given[p.Name] = x
		}
	}
	if d.Params, err = topologies.Complete(fam, given); err != nil {
		return nil, err
	}
	if err := checkDesignLengths(d, fam, pm); err != nil {
		return nil, err
	}
	return d, nil
}

// familiesWith returns the families that have a parameter called name.
func familiesWith(name string) []string {
	var out []string
	for _, f := range topologies.All() {
		if _, ok := topologies.ParamOf(f, name); ok {
			out = append(out, f.Name())
		}
	}
	return out
}

// yamlScalar writes s as a YAML scalar that reads back as s.
func yamlScalar(s string) string {
	out, err := yaml.Marshal(s)
	if err != nil {
		return strconv.Quote(s)
	}
	return strings.TrimSuffix(string(out), "\n")
}

// Format writes the design as a design file that ReadDesign turns back
// into the same values, bit for bit.
func (d *Design) Format() []byte {
	var b bytes.Buffer
	fmt.Fprintf(&b, "topology: %s\n", d.Topology)
	fmt.Fprintf(&b, "process: %s\n", yamlScalar(d.ProcessRef))
	d.formatSignoff(&b)
	if d.SaturationMargin > 0 {
		fmt.Fprintf(&b, "saturation_margin: %s\n", units.Format(d.SaturationMargin, units.Volt))
	}
	high := units.Format(d.Sweep.High, units.Volt)
	if d.FollowSupply {
		high = HighSupply
	}
	fmt.Fprintf(&b, "sweep: {low: %s, high: %s, step: %s}\n", units.Format(d.Sweep.Low, units.Volt),
		high, units.Format(d.Sweep.Step, units.Volt))
	b.WriteString("params:\n")
	fam, err := d.Family()
	if err != nil {
		names := make([]string, 0, len(d.Params))
		for k := range d.Params {
			names = append(names, k)
		}
		sort.Strings(names)
		for _, k := range names {
			fmt.Fprintf(&b, "  %s: %v\n", k, d.Params[k])
		}
		return b.Bytes()
	}
	for _, p := range fam.Params() {
		if v, ok := d.Params[p.Name]; ok {
			fmt.Fprintf(&b, "  %s: %s\n", p.Name, p.Text(v))
		}
	}
	return b.Bytes()
}

// formatSignoff writes the design's supply, temperature, corners,
// mismatch and load as a design file takes them: a single supply or
// temperature as one value, a range as {min, nominal, max}; the corners
// when the process defines more than one; mismatch and load only when
// they differ from the defaults.
func (d *Design) formatSignoff(b *bytes.Buffer) {
	so := d.signoff()
	span := func(key string, s Span, dim units.Dim) {
		if s.IsSingle() {
			fmt.Fprintf(b, "%s: %s\n", key, units.Format(s.Nominal, dim))
			return
		}
		fmt.Fprintf(b, "%s: {min: %s, nominal: %s, max: %s}\n", key, units.Format(s.Min, dim),
			units.Format(s.Nominal, dim), units.Format(s.Max, dim))
	}
	span("supply", so.Supply, units.Volt)
	span("temperature", so.Temperature, units.Temperature)
	if d.Process != nil && len(d.Process.Corners) > 1 && len(so.Corners) > 0 {
		fmt.Fprintf(b, "corners: [%s]\n", strings.Join(so.Corners, ", "))
	}
	if so.Sigma != DefaultSigma && so.Sigma > 0 {
		fmt.Fprintf(b, "mismatch: {sigma: %s}\n", units.Format(so.Sigma, units.Dimensionless))
	}
	if so.Load > 0 {
		fmt.Fprintf(b, "load: %s\n", units.Format(so.Load, units.Farad))
	}
	if d.NoiseFrequency > 0 {
		fmt.Fprintf(b, "noise_frequency: %s\n", units.Format(d.NoiseFrequency, units.Hertz))
	}
}
