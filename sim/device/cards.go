package device

// Level1 is a SPICE level-1 (Shichman–Hodges) model card. Its parameters
// have their SPICE names and meanings, so that a deck using the same card
// in any SPICE simulator gives the same currents.
//
// Temperature: unless LinearTemp is set, VTO, KP and PHI follow the SPICE
// level-1 temperature law (KP ∝ (T/Tnom)^-1.5; PHI and VTO through the
// silicon band gap), the law ngspice applies to a `.temp` line. With
// LinearTemp, VTO(T) = VTO − type·TCV·(T − Tnom) and KP(T) = KP·(T/Tnom)^BEX
// instead, PHI fixed; exported decks then carry the adjusted values.
//
// A process file's values must lie in the physical ranges beside each
// field (CardRanges and TnomRange hold them, ranges.go gives the reasons);
// a card built in Go is checked only for what the equations need.
type Level1 struct {
	Polarity Type
	VTO      float64 // zero-bias threshold, V (negative for PMOS); |VTO| 50 mV … 3 V: enhancement thresholds are 0.2 … 1.5 V
	KP       float64 // transconductance parameter µ·Cox, A/V²; 1 µA/V² … 5 mA/V²: µ of 50 … 700 cm²/Vs times Cox of 100 … 1 nm of oxide
	Gamma    float64 // body-effect coefficient, √V; 0 … 4 √V: √(2q·εSi·N)/Cox for any doping and oxide
	Phi      float64 // surface potential 2φF, V; 0.4 … 1.2 V: 2φF is 0.6 … 0.95 V for doping 1e15 … 1e18 cm⁻³
	Lambda   float64 // channel-length modulation, 1/V; 0 … 2 /V: Early voltages of at least about 1 V
	LD       float64 // lateral diffusion, m (Leff = L − 2·LD); 0 … 1 µm: nanometres to a few tenths of a µm
	TnomK    float64 // temperature at which the parameters hold, K; 200 … 500 K, a design's temperature span

	LinearTemp bool    // use TCV and BEX instead of the SPICE law
	TCV        float64 // threshold temperature coefficient, V/K (magnitude); 0 … 5 mV/K: thresholds fall 0.5 … 3 mV/K
	BEX        float64 // mobility temperature exponent; −3 … +1.5: −1.5 lattice, up to +1.5 impurity scattering
}

// EKV is a card of the EKV all-region MOSFET model (C. C. Enz,
// F. Krummenacher, E. A. Vittoz, "An analytical MOS transistor model valid
// in all regions of operation and dedicated to low-voltage and low-current
// applications", Analog Integrated Circuits and Signal Processing 8,
// 83–114, 1995).
//
// Temperature: VTO(T) = VTO − type·TCV·(T − Tnom), KP(T) = KP·(T/Tnom)^BEX,
// U_T = kT/q; PHI and GAMMA are taken as temperature independent.
//
// A process file's values must lie in the same physical ranges as a
// Level1 card's (CardRanges, TnomRange; the reasons are in ranges.go).
type EKV struct {
	Polarity Type
	VTO      float64 // long-channel threshold, V (negative for PMOS); |VTO| 50 mV … 3 V
	KP       float64 // transconductance parameter, A/V²; 1 µA/V² … 5 mA/V²
	Gamma    float64 // body-effect coefficient, √V; 0 … 4 √V
	Phi      float64 // bulk Fermi potential (×2), V; 0.4 … 1.2 V
	Lambda   float64 // channel-length modulation, 1/V; 0 … 2 /V
	LD       float64 // lateral diffusion, m (Leff = L − 2·LD); 0 … 1 µm
	TCV      float64 // threshold temperature coefficient, V/K (magnitude); 0 … 5 mV/K
	BEX      float64 // mobility temperature exponent; −3 … +1.5
	TnomK    float64 // nominal temperature, K; 200 … 500 K
}
