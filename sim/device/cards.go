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
type Level1 struct {
	Polarity Type
	VTO      float64 // zero-bias threshold, V (negative for PMOS)
	KP       float64 // transconductance parameter µ·Cox, A/V²
	Gamma    float64 // body-effect coefficient, √V
	Phi      float64 // surface potential 2φF, V
	Lambda   float64 // channel-length modulation, 1/V
	LD       float64 // lateral diffusion, m (Leff = L − 2·LD)
	TnomK    float64 // temperature at which the parameters hold, K

	LinearTemp bool    // use TCV and BEX instead of the SPICE law
	TCV        float64 // threshold temperature coefficient, V/K (magnitude)
	BEX        float64 // mobility temperature exponent
}

// EKV is a card of the EKV all-region MOSFET model (C. C. Enz,
// F. Krummenacher, E. A. Vittoz, "An analytical MOS transistor model valid
// in all regions of operation and dedicated to low-voltage and low-current
// applications", Analog Integrated Circuits and Signal Processing 8,
// 83–114, 1995).
//
// Temperature: VTO(T) = VTO − type·TCV·(T − Tnom), KP(T) = KP·(T/Tnom)^BEX,
// U_T = kT/q; PHI and GAMMA are taken as temperature independent.
type EKV struct {
	Polarity Type
	VTO      float64 // long-channel threshold, V (negative for PMOS)
	KP       float64 // transconductance parameter, A/V²
	Gamma    float64 // body-effect coefficient, √V
	Phi      float64 // bulk Fermi potential (×2), V
	Lambda   float64 // channel-length modulation, 1/V
	LD       float64 // lateral diffusion, m (Leff = L − 2·LD)
	TCV      float64 // threshold temperature coefficient, V/K (magnitude)
	BEX      float64 // mobility temperature exponent
	TnomK    float64 // nominal temperature, K
}
