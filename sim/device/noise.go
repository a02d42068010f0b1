package device

import (
	"math"

	"pairsmith/units"
)

// NoiseCoef is one device type's noise coefficients, with their SPICE
// level-1 meaning: the flicker coefficient KF and exponent AF, and the
// oxide thickness TOX, whose C_ox = 3.9·ε₀/TOX the flicker density is
// divided by.
type NoiseCoef struct {
	KF, AF float64
	TOX    float64 // m
}

// Noise holds a process's noise coefficients per device type; Given
// reports whether the process file has a noise section (without one the
// devices have thermal noise only and decks write no kf, af or tox).
type Noise struct {
	N, P  NoiseCoef
	Given bool
}

// For returns the coefficients of device type t.
func (n Noise) For(t Type) NoiseCoef {
	if t == PMOS {
		return n.P
	}
	return n.N
}

// epsOx is the permittivity of silicon dioxide, 3.9·ε₀, F/m (ε₀ from the
// SI brochure, 9th edition; 3.9 the usual relative permittivity of SiO₂,
// from memory).
const epsOx = 3.9 * 8.8541878128e-12

// Cox returns the oxide capacitance per area, F/m².
func (c NoiseCoef) Cox() float64 { return epsOx / c.TOX }

// Flicker returns the flicker current density at 1 Hz of a device of
// drawn geometry g carrying drain current id, A²/Hz (divide by the
// frequency for another): KF·|I_D|^AF / (C_ox²·W·L_eff), the form ngspice's
// level-1 model uses (measured against it: TestNoiseAgainstNgspice),
// with L_eff = L − 2·ld and the multiplier m counted in W.
func (c NoiseCoef) Flicker(g Geometry, ld, id float64) float64 {
	if c.KF == 0 || id == 0 {
		return 0
	}
	leff := g.L - 2*ld
	cox := c.Cox()
	return c.KF * math.Pow(math.Abs(id), c.AF) / (cox * cox * g.W * g.Mult() * leff)
}

// NoiseRanges are the physical ranges of the coefficients: KF from 0 to
// 1e-20 (published level-1 cards give 1e-28 to 1e-24, from memory), AF
// from 0.5 to 2.5 and TOX from 1 nm to 200 nm (SPICE's default is 100 nm).
func NoiseRanges() []Range {
	return []Range{
		{Field: "kf", Dim: units.Dimensionless, Min: 0, Max: 1e-20, What: "a flicker-noise coefficient KF",
			Why: "level-1 cards give KF of about 1e-28 to 1e-24 (from memory)"},
		{Field: "af", Dim: units.Dimensionless, Min: 0.5, Max: 2.5, What: "a flicker-noise exponent AF",
			Why: "the drain current's exponent lies near 1 (from memory)"},
		{Field: "tox", Dim: units.Metre, Min: 1e-9, Max: 200e-9, What: "an oxide thickness TOX",
			Why: "gate oxides run from about 1 nm to 100 nm"},
	}
}

// readNoise reads a process file's noise section:
//
//	noise: {nmos: {kf: 1e-25, af: 1, tox: 4nm}, pmos: {kf: 4e-26, af: 1, tox: 4nm}}
//
// Both device types and all three coefficients are required in it.
func readNoise(root *units.Map) (Noise, error) {
	var out Noise
	given, err := readPerType(root, "noise", NoiseRanges(), func(t Type, field string, v float64) {
		dst := &out.N
		if t == PMOS {
			dst = &out.P
		}
		*map[string]*float64{"kf": &dst.KF, "af": &dst.AF, "tox": &dst.TOX}[field] = v
	})
	out.Given = given
	return out, err
}
