package objectives

import (
	"errors"
	"fmt"
	"maps"
	"math"

	"pairsmith/sim/device"
	"pairsmith/topologies"
	"pairsmith/units"
)

// Bounds of a supply, shared by design files and spec sheets.
const (
	// MaxSupply is the highest supply a design or spec may set, V: bulk
	// CMOS analog processes go up to 12–18 V (from memory); above that
	// the devices are high-voltage ones (LDMOS, drift regions) that the
	// level-1 and EKV cards here do not describe.
	MaxSupply = 20.0
)

// MinSupply returns the lowest supply a stage on process p can work at,
// V: the smaller threshold magnitude min(VTO_n, |VTO_p|) of its cards.
//
// The rule: every family's input pair has its gate at most at one rail
// and its tail at the other, so no transistor of the stage sees a
// gate–source voltage above the supply; below the smaller threshold even
// the best-placed transistor is below threshold before its tail (which
// needs a saturation voltage of its own, 4 U_T ≈ 0.1 V at least) takes
// its share. Weak-inversion stages do run near the threshold, so the rule
// is lenient on purpose: it refuses supplies at which nothing can work
// (1 nV, 100 mV on a 0.45 V process), not marginal ones, which the sweep
// then shows (common practice, no source).
func MinSupply(p *device.Process) float64 {
	return math.Min(p.Threshold(device.NMOS), p.Threshold(device.PMOS))
}

// supplyWant says what a supply field takes on process p.
func supplyWant(p *device.Process) string {
	return fmt.Sprintf("a supply voltage from %s (the process's smaller threshold |VTO|: below it no transistor "+
		"turns on even with its gate at one rail and its source at the other) to %s",
		units.Format(MinSupply(p), units.Volt), units.Format(MaxSupply, units.Volt))
}

// lengthUse is one transistor of a built stage and the length parameters
// that set its channel length.
type lengthUse struct {
	name   string // the transistor's name, "M1"
	role   string // its role, "nmos input"
	typ    device.Type
	l      float64  // its drawn length, m
	params []string // the family's length parameters that set it, in the family's order
}

// lengthUses builds the stage of fam at v and cond and says, for every
// transistor, which parameters set its length: those whose change (by a
// quarter) changes it. Families declare lengths as parameters of unit m
// like widths; building tells them apart without a list kept by hand.
func lengthUses(fam topologies.Family, v topologies.Values, cond topologies.Conditions) ([]lengthUse, error) {
	base, err := fam.Build(v, cond)
	if err != nil {
		return nil, fmt.Errorf("build %s: %w", fam.Name(), err)
	}
	uses := make([]lengthUse, len(base.Circuit.Mosfets))
	for i, m := range base.Circuit.Mosfets {
		uses[i] = lengthUse{name: m.Name, role: base.Roles[m.Name], typ: m.Model.Type(), l: m.Geom.L}
	}
	for _, p := range fam.Params() {
		if p.Unit != units.Metre {
			continue
		}
		moved := maps.Clone(v)
		moved[p.Name] = 1.25 * v[p.Name]
		st, err := fam.Build(moved, cond)
		if err != nil {
			return nil, fmt.Errorf("build %s: %w", fam.Name(), err)
		}
		for i, m := range st.Circuit.Mosfets {
			if i < len(uses) && m.Geom.L != uses[i].l {
				uses[i].params = append(uses[i].params, p.Name)
			}
		}
	}
	return uses, nil
}

// checkDesignLengths refuses a design in which a transistor's channel is
// no longer than twice its card's lateral diffusion (ld ≥ L/2 leaves no
// effective length L − 2·ld). The error is at the length parameter that
// sets it when the design file writes one (pm, the params map, may be
// nil), else at the process file's ld line.
func checkDesignLengths(d *Design, fam topologies.Family, pm *units.Map) error {
	uses, err := lengthUses(fam, d.Params, d.Conditions)
	if err != nil {
		return err
	}
	for _, u := range uses {
		ld := d.Process.LateralDiffusion(u.typ)
		if u.l-2*ld > 0 {
			continue
		}
		ldField := u.typ.String() + ".ld"
		ldText := units.Format(ld, units.Metre)
		for _, p := range u.params {
			if pm != nil && pm.Has(p) {
				want := fmt.Sprintf("a length above twice the %s lateral diffusion, 2 × %s = %s (%s, %s)",
					u.typ, ldText, units.Format(2*ld, units.Metre), u.name, u.role)
				cause := d.Process.ErrorAt(ldField, "", nil)
				return pm.ErrorAt(p, pm.Text(p), want, fmt.Errorf("%s:%d: %s is %s", cause.File, cause.Line, ldField, ldText))
			}
		}
		what := u.name + " (" + u.role + ")"
		if len(u.params) > 0 {
			what = fmt.Sprintf("%s = %s of %s", u.params[0], units.Format(u.l, units.Metre), what)
		}
		return d.Process.ErrorAt(ldField, fmt.Sprintf("a lateral diffusion below half the channel length %s, so below %s",
			what, units.Format(u.l/2, units.Metre)), nil)
	}
	return nil
}

// checkSpecLengths refuses a spec whose process has a lateral diffusion
// at least half the shortest channel length the searched families'
// bounds allow for that polarity on that process (topologies.ParamsFor:
// the larger of the family's bound and the process's lmin): the search would build transistors
// with no effective length. The error is at the process file's ld line.
func checkSpecLengths(s *Spec) error {
	for _, t := range []device.Type{device.NMOS, device.PMOS} {
		ld := s.Process.LateralDiffusion(t)
		if ld == 0 {
			continue
		}
		shortest, which := math.Inf(1), ""
		for _, name := range s.Topologies {
			fam, err := topologies.Lookup(name)
			if err != nil {
				return err
			}
			uses, err := lengthUses(fam, topologies.Defaults(fam), s.Conditions)
			if err != nil {
				return err
			}
			// The bounds the search uses: the process's lmin raises them.
			ps, err := topologies.ParamsFor(fam, s.Process, s.Process.Rules.SaturationMargin)
			if err != nil {
				return err
			}
			for _, u := range uses {
				if u.typ != t {
					continue
				}
				for _, pn := range u.params {
					for _, p := range ps {
						if p.Name == pn && p.Min < shortest {
							shortest, which = p.Min, pn+" of "+fam.Name()
						}
					}
				}
			}
		}
		if 2*ld >= shortest {
			return s.Process.ErrorAt(t.String()+".ld", fmt.Sprintf(
				"a lateral diffusion below half the shortest %s channel the searched families allow (%s: %s), so below %s",
				t, which, units.Format(shortest, units.Metre), units.Format(shortest/2, units.Metre)),
				errors.New("a transistor at that bound would have no effective channel L − 2·ld"))
		}
	}
	return nil
}
