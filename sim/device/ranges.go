package device

import (
	"fmt"

	"pairsmith/units"
)

// Range is the physical range of one value of a process file, in SI
// units, bounds included. A process file whose value lies outside is
// refused: the bounds are wide enough for any real bulk CMOS process, from
// old 5 V ones with 100 nm of gate oxide to modern thin-oxide ones, and
// narrow enough to catch a unit slip or a typo (kp: 1e30, tcv: 1V/K for
// 1mV/K, vto: 100V).
type Range struct {
	Field    string    // the field's name in a card or the file: "kp", "tnom"
	Dim      units.Dim // its dimension
	Min, Max float64   // SI; Min ≤ value ≤ Max
	What     string    // what the value is, for messages: "a transconductance parameter µ·Cox"
	Why      string    // where the bounds come from, with the source
}

// Contains reports whether x lies in the range (NaN never does).
func (r Range) Contains(x float64) bool { return x >= r.Min && x <= r.Max }

// Want says what the range takes, for error messages: "a transconductance
// parameter µ·Cox from 1uA/V2 to 5mA/V2".
func (r Range) Want() string {
	return fmt.Sprintf("%s from %s to %s", r.What, units.Format(r.Min, r.Dim), units.Format(r.Max, r.Dim))
}

// The bounds of the card values. The oxide capacitance Cox = εox/tox is
// 3.45e-4 F/m² for tox = 100 nm and 3.45e-2 F/m² for 1 nm (εox = 3.9·ε0,
// εSi = 11.7·ε0; textbook values, e.g. Sze, Physics of Semiconductor
// Devices, from memory).
const (
	// |VTO|: long-channel enhancement thresholds run from about 0.2 V (low
	// threshold thin-oxide devices) to about 1.5 V (old metal-gate and
	// thick-oxide 5 V devices) (from memory). 50 mV and 3 V leave margin
	// and still refuse "450uV" for 450 mV and "100V". Native (≈ 0 V) and
	// depletion devices are not what the families' circuits are built
	// with: their gates must turn them off.
	vtoMin = 0.05 // V
	vtoMax = 3.0  // V
	// KP = µ·Cox: the inversion-layer mobility, about 50 cm²/Vs (holes at
	// high field) to 700 cm²/Vs (electrons at low field), times Cox of
	// 100 nm to 1 nm of oxide gives 1.7e-6 to 2.4e-3 A/V² (textbook
	// ranges, from memory).
	kpMin = 1e-6 // A/V²
	kpMax = 5e-3 // A/V²
	// GAMMA = √(2q·εSi·N)/Cox: 0 without body effect; 0.4 √V for N =
	// 1e16 cm⁻³ under 25 nm of oxide, 3.3 √V for 1e18 cm⁻³ under 20 nm,
	// beyond what any process pairs.
	gammaMax = 4.0 // √V
	// PHI = 2φF = 2·(kT/q)·ln(N/ni), ni = 1e10 cm⁻³ at 300 K (from memory):
	// 0.60 V for N = 1e15 cm⁻³, 0.95 V for 1e18 cm⁻³. 0.4 V (N ≈ 2e13
	// cm⁻³) and 1.2 V (N ≈ 1e20 cm⁻³, degenerate doping) are beyond any
	// channel doping.
	phiMin = 0.4 // V
	phiMax = 1.2 // V
	// LAMBDA = 1/V_A: the Early voltage runs from hundreds of volts (long
	// devices) to about 1 V (minimum-length thin-oxide devices); at 2/V the
	// current already doubles within half a volt of V_DS (common practice,
	// no source).
	lambdaMax = 2.0 // 1/V
	// LD: the overlap of the source and drain diffusions under the gate,
	// nanometres in modern processes, a few tenths of a µm in old 5 V ones
	// (from memory); 1 µm is beyond any.
	ldMax = 1e-6 // m
	// TCV: thresholds fall by 0.5 to 3 mV/K in bulk CMOS (from memory);
	// 5 mV/K is beyond any and refuses 1V/K written for 1mV/K.
	tcvMax = 5e-3 // V/K
	// BEX: KP ∝ T^BEX. Lattice (phonon) scattering gives −1.5, inversion
	// layers measure about −1 to −2.5; where ionised-impurity scattering
	// dominates, theory gives up to +1.5 (Sze, from memory). −3 … +1.5
	// holds all of them.
	bexMin = -3.0
	bexMax = 1.5
	// TNOM: the temperature a card was extracted at, usually 25 °C or
	// 27 °C; the bounds are those of a design's temperature, 200 K to
	// 500 K, so that no temperature law is extrapolated further than
	// across that span.
	tnomMinK = 200.0 // K
	tnomMaxK = 500.0 // K
)

// CardRanges returns the ranges of the values of a card of polarity t, in
// the order a card lists them: vto (positive for an NMOS, negative for a
// PMOS, the SPICE sign convention), kp, gamma, phi, lambda, ld, tcv, bex.
// The EKV cards take the same values, tcv and bex included, so the ranges
// do not depend on the model kind.
func CardRanges(t Type) []Range {
	vto := Range{Field: "vto", Dim: units.Volt, Min: vtoMin, Max: vtoMax,
		What: "a positive NMOS threshold (SPICE sign convention)",
		Why:  "enhancement thresholds run from about 0.2 V to 1.5 V"}
	if t == PMOS {
		vto.Min, vto.Max = -vtoMax, -vtoMin
		vto.What = "a negative PMOS threshold (SPICE sign convention)"
	}
	return []Range{
		vto,
		{Field: "kp", Dim: units.AmperePerVoltSq, Min: kpMin, Max: kpMax,
			What: "a transconductance parameter µ·Cox",
			Why:  "a mobility of 50 to 700 cm²/Vs times the Cox of 100 nm to 1 nm of oxide"},
		{Field: "gamma", Dim: units.SqrtVolt, Min: 0, Max: gammaMax,
			What: "a body-effect coefficient",
			Why:  "√(2q·εSi·N)/Cox for any channel doping and oxide"},
		{Field: "phi", Dim: units.Volt, Min: phiMin, Max: phiMax,
			What: "a surface potential 2φF",
			Why:  "2·(kT/q)·ln(N/ni) is 0.6 V to 0.95 V for doping of 1e15 to 1e18 cm⁻³"},
		{Field: "lambda", Dim: units.PerVolt, Min: 0, Max: lambdaMax,
			What: "a channel-length modulation",
			Why:  "1/λ is an Early voltage of at least about 1 V"},
		{Field: "ld", Dim: units.Metre, Min: 0, Max: ldMax,
			What: "a lateral diffusion",
			Why:  "source and drain overlap the gate by nanometres to a few tenths of a µm"},
		{Field: "tcv", Dim: units.VoltPerKelvin, Min: 0, Max: tcvMax,
			What: "the magnitude of the threshold's temperature coefficient",
			Why:  "thresholds fall by 0.5 to 3 mV/K"},
		{Field: "bex", Dim: units.Dimensionless, Min: bexMin, Max: bexMax,
			What: "a mobility temperature exponent",
			Why:  "mobility goes as T^-1.5 for lattice scattering, at most T^+1.5 for impurity scattering"},
	}
}

// TnomRange returns the range of a process file's tnom, in kelvin.
func TnomRange() Range {
	return Range{Field: "tnom", Dim: units.Temperature, Min: tnomMinK, Max: tnomMaxK,
		What: "a nominal temperature",
		Why:  "the span a design's temperature may take"}
}
