package device

// Physical constants, exact in the SI since 2019 (CODATA 2018).
const (
	Boltzmann = 1.380649e-23    // J/K
	Charge    = 1.602176634e-19 // C
	ZeroC     = 273.15          // 0 °C in kelvin
)

// ThermalVoltage returns U_T = kT/q in volts at tempK kelvin.
func ThermalVoltage(tempK float64) float64 { return Boltzmann * tempK / Charge }
