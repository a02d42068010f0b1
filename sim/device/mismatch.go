package device

import (
	"errors"
	"math"

	"pairsmith/units"
)

// Pelgrom is one device type's mismatch coefficients: σ(ΔV_T) =
// AVT/√(W·L) and σ(Δβ/β) = ABeta/√(W·L) for the difference between two
// like devices side by side (M. J. M. Pelgrom, A. C. J. Duinmaijer,
// A. P. G. Welbers, "Matching properties of MOS transistors", IEEE JSSC
// 24(5), 1989), with W·L the whole device's drawn gate area (times M).
type Pelgrom struct {
	AVT   float64 // V·m
	ABeta float64 // m (a fraction times a length)
}

// Mismatch holds a process's mismatch coefficients per device type;
// Given reports whether the process file has a mismatch section (without
// one, mismatch is not estimated).
type Mismatch struct {
	N, P  Pelgrom
	Given bool
}

// For returns the coefficients of device type t.
func (m Mismatch) For(t Type) Pelgrom {
	if t == PMOS {
		return m.P
	}
	return m.N
}

// SigmaVT returns σ(ΔV_T) of a pair of like devices of geometry g, V.
func (p Pelgrom) SigmaVT(g Geometry) float64 { return p.AVT / math.Sqrt(g.area()) }

// SigmaBeta returns σ(Δβ/β) of a pair of like devices of geometry g.
func (p Pelgrom) SigmaBeta(g Geometry) float64 { return p.ABeta / math.Sqrt(g.area()) }

// area is the whole device's drawn gate area W·L·M, m².
func (g Geometry) area() float64 { return g.W * g.L * g.Mult() }

// MismatchRanges are the physical ranges of the coefficients: A_VT from
// 0.1 to 50 mV·µm and A_β from 0.01 to 10 %·µm (published processes lie
// at about 1–20 mV·µm and 0.5–3 %·µm, from memory).
func MismatchRanges() []Range {
	return []Range{
		{Field: "avt", Dim: units.VoltMetre, Min: 0.1e-9, Max: 50e-9, What: "a threshold mismatch coefficient A_VT",
			Why: "bulk CMOS processes have A_VT of about 1 to 20 mV·µm (from memory)"},
		{Field: "abeta", Dim: units.PercentMetre, Min: 0.01e-8, Max: 10e-8, What: "a current-factor mismatch coefficient A_β",
			Why: "bulk CMOS processes have A_β of about 0.5 to 3 %·µm (from memory)"},
	}
}

// readMismatch reads a process file's mismatch section:
//
//	mismatch: {nmos: {avt: 5mV*um, abeta: 1%*um}, pmos: {avt: 5.5mV*um, abeta: 1%*um}}
//
// Both device types and both coefficients are required in it.
func readMismatch(root *units.Map) (Mismatch, error) {
	var out Mismatch
	given, err := readPerType(root, "mismatch", MismatchRanges(), func(t Type, field string, v float64) {
		dst := &out.N
		if t == PMOS {
			dst = &out.P
		}
		*map[string]*float64{"avt": &dst.AVT, "abeta": &dst.ABeta}[field] = v
	})
	out.Given = given
	return out, err
}

// readPerType reads a process file's section of one map per device type,
// {nmos: {...}, pmos: {...}}, both required, each holding every field of
// ranges (and no other), each value within its range, checked at its
// line; set receives each value. It reports whether the section is there.
func readPerType(root *units.Map, section string, ranges []Range, set func(t Type, field string, v float64)) (bool, error) {
	if !root.Has(section) {
		return false, nil
	}
	sm, _, err := root.Map(section)
	if err != nil {
		return false, err
	}
	if err := sm.Check("nmos", "pmos"); err != nil {
		return false, err
	}
	if err := sm.Require("nmos", "pmos"); err != nil {
		return false, err
	}
	fields := make([]string, len(ranges))
	for i, r := range ranges {
		fields[i] = r.Field
	}
	for _, side := range []struct {
		key string
		t   Type
	}{{"nmos", NMOS}, {"pmos", PMOS}} {
		m, _, err := sm.Map(side.key)
		if err != nil {
			return false, err
		}
		if err := m.Check(fields...); err != nil {
			return false, err
		}
		if err := m.Require(fields...); err != nil {
			return false, err
		}
		for _, r := range ranges {
			v, _, err := m.Quantity(r.Field, r.Dim)
			if err != nil {
				return false, err
			}
			if !r.Contains(v) {
				return false, m.ErrorAt(r.Field, m.Text(r.Field), r.Want(), errors.New(r.Why))
			}
			set(side.t, r.Field, v)
		}
	}
	return true, nil
}
