package units

import (
	"errors"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// The prefixes and unit symbols checked here are those of the SI brochure
// (BIPM, "The International System of Units", 9th edition, 2019: table 7
// for the prefixes, tables 2 and 4 for the units, §2.3.1 for 0 °C =
// 273.15 K, §5.4.3 for a prefix binding to its unit before an exponent).
// Bare temperatures in °C follow the SPICE .temp convention (common
// practice, no source).
func TestParseGood(t *testing.T) {
	tests := []struct {
		in   string
		d    Dim
		want float64
	}{
		{"1.8V", Volt, 1.8},
		{"1.8 V", Volt, 1.8},
		{"  1.8   V ", Volt, 1.8},
		{"+.5V", Volt, 0.5},
		{"5.V", Volt, 5},
		{"-450mV", Volt, -0.45},
		{"1.8", Volt, 1.8},
		{"1E3V", Volt, 1000},
		{"2e-3mV", Volt, 2e-6},
		{"200uA", Ampere, 200e-6},
		{"200\u00b5A", Ampere, 200e-6}, // micro sign
		{"200\u03bcA", Ampere, 200e-6}, // Greek small mu
		{"200 uA", Ampere, 200e-6},
		{"1.5kA", Ampere, 1500},
		{"150uS", Siemens, 150e-6},
		{"2um", Metre, 2e-6},
		// Pelgrom's coefficients as data sheets quote them: A_VT in mV·µm,
		// A_β in %·µm (Pelgrom, Duinmaijer, Welbers, IEEE JSSC 1989).
		{"5mV*um", VoltMetre, 5e-9},
		{"3.5 mV·µm", VoltMetre, 3.5e-9},
		{"4e-9V*m", VoltMetre, 4e-9},
		{"1%*um", PercentMetre, 1e-8},
		{"0.8%·µm", PercentMetre, 0.8e-8},
		{"1e-8m", PercentMetre, 1e-8},
		{"2m", Metre, 2},     // the metre itself, not a prefix
		{"2mm", Metre, 2e-3}, // milli metre
		{"180nm", Metre, 180e-9},
		{"1e-6", Metre, 1e-6},
		{"1500um2", SquareMetre, 1.5e-9}, // (µm)², SI brochure §5.4.3
		{"1500um^2", SquareMetre, 1.5e-9},
		{"1500µm²", SquareMetre, 1.5e-9},
		{"1500 μm2", SquareMetre, 1.5e-9},
		{"1mm2", SquareMetre, 1e-6},
		{"2m2", SquareMetre, 2},
		{"1.6e-10", SquareMetre, 1.6e-10},
		{"15%", Percent, 0.15},
		{"15 %", Percent, 0.15},
		{"0.2", Percent, 0.2},
		{"2V/us", VoltPerSecond, 2e6},
		{"25nV/rtHz", VoltPerRootHertz, 25e-9},
		{"3 µV/√Hz", VoltPerRootHertz, 3e-6},
		{"2 V/µs", VoltPerSecond, 2e6},
		{"2V/μs", VoltPerSecond, 2e6},
		{"5V/ns", VoltPerSecond, 5e9},
		{"3V/ms", VoltPerSecond, 3e3},
		{"500mV/us", VoltPerSecond, 5e5},
		{"1kV/s", VoltPerSecond, 1e3},
		{"10pF", Farad, 10e-12},
		{"1fF", Farad, 1e-15},
		{"10MHz", Hertz, 10e6},
		{"1GHz", Hertz, 1e9},
		{"5 kHz", Hertz, 5e3},
		{"10ns", Second, 10e-9},
		{"1ms", Second, 1e-3},
		{"100uW", Watt, 100e-6},
		{"280uA/V2", AmperePerVoltSq, 280e-6},
		{"280uA/V^2", AmperePerVoltSq, 280e-6},
		{"280µA/V²", AmperePerVoltSq, 280e-6},
		{"2.8e-4", AmperePerVoltSq, 2.8e-4},
		{"1mV/K", VoltPerKelvin, 1e-3},
		{"0.001V/K", VoltPerKelvin, 1e-3},
		{"0.05/V", PerVolt, 0.05},
		{"0.05 1/V", PerVolt, 0.05},
		{"0.05V^-1", PerVolt, 0.05},
		{"0.5V^0.5", SqrtVolt, 0.5},
		{"0.5 sqrt(V)", SqrtVolt, 0.5},
		{"0.5√V", SqrtVolt, 0.5},
		{"0.5", SqrtVolt, 0.5},
		{"3", Dimensionless, 3},
		{"-1.5e2", Dimensionless, -150},
	}
	for _, tt := range tests {
		got, err := Parse(tt.in, tt.d)
		if err != nil {
			t.Errorf("Parse(%q, %v): %v", tt.in, tt.d, err)
			continue
		}
		// Parse rounds the written decimal once, so the result is the
		// float64 of the Go literal: compare exactly.
		if got != tt.want {
			t.Errorf("Parse(%q, %v) = %v, want %v", tt.in, tt.d, got, tt.want)
		}
	}
}

func TestParseTemperature(t *testing.T) {
	// 0 °C = 273.15 K (SI brochure §2.3.1); a bare number is °C as on a
	// SPICE .temp line (common practice, no source).
	tests := []struct {
		in   string
		want float64 // kelvin
	}{
		{"27C", 300.15},
		{"27 C", 300.15},
		{"27°C", 300.15},
		{"27℃", 300.15},
		{"27degC", 300.15},
		{"27", 300.15},
		{"-40C", 233.15},
		{"-40", 233.15},
		{"125C", 398.15},
		{"300K", 300},
		{"300 K", 300},
		{"0K", 0},
		{"-273.15C", 0},
		{"1e-320C", 273.15},
		{"26.85", 300},
	}
	for _, tt := range tests {
		got, err := Parse(tt.in, Temperature)
		if err != nil {
			t.Errorf("Parse(%q, Temperature): %v", tt.in, err)
			continue
		}
		// Parse adds 273.15 exactly before rounding: compare exactly.
		if got != tt.want {
			t.Errorf("Parse(%q, Temperature) = %v K, want %v K", tt.in, got, tt.want)
		}
	}
}

func TestParseBad(t *testing.T) {
	tests := []struct {
		in   string
		d    Dim
		want string // must appear in the message besides the given text
	}{
		{"2m", Volt, "prefix"},
		{"2m", Volt, "a voltage in V"},
		{"20uV", Metre, "want a length in m, for example 20um"},
		{"1.8v", Volt, "a voltage in V"}, // unit symbols are case sensitive (SI brochure §5.2)
		{"1.8VV", Volt, "a voltage in V"},
		{"1.8.2V", Volt, "a voltage in V"},
		{"abc", Volt, "a voltage in V"},
		{"", Volt, "empty"},
		{"  ", Volt, "a voltage in V"},
		{"V", Volt, "a voltage in V"},
		{"- 1V", Volt, "a voltage in V"},
		{"NaN", Volt, "a voltage in V"},
		{"Inf", Volt, "a voltage in V"},
		{"+Inf", Ampere, "a current in A"},
		{"1e999V", Volt, "out of the range"},
		{"1e999999C", Temperature, "out of the range"},
		{"1e400", Temperature, "out of the range"},
		{"1e", Volt, "a voltage in V"},
		{"1e1234567V", Volt, "a voltage in V"},
		{"0x10", Volt, "a voltage in V"},
		{"2mu", Ampere, "a current in A"},
		{"2u A", Ampere, "a current in A"}, // no space after a prefix (SI brochure §5.2)
		{"100u A/V2", AmperePerVoltSq, "a transconductance parameter in A/V²"},
		{"2uA", Volt, "a voltage in V"},
		{"2um3", SquareMetre, "an area in m²"},
		{"2um", SquareMetre, "an area in m²"},
		{"15%", Volt, "a voltage in V"},
		{"15", Percent + 100, "unknown dimension"},
		{"2k", Dimensionless, "a plain number"},
		{"2V", Dimensionless, "a plain number"},
		{"2m%", Percent, "a fraction or a percentage"},
		{"-300C", Temperature, "absolute zero"},
		{"-5K", Temperature, "absolute zero"},
		{"-300", Temperature, "absolute zero"},
		{"2mK", Temperature, "a temperature in °C or K"},
		{"27F", Temperature, "a temperature in °C or K"},
		{"2V/s/s", VoltPerSecond, "a slew rate in V/s"},
		{"2V/us", Volt, "a voltage in V"},
		{"280uA/V", AmperePerVoltSq, "a transconductance parameter in A/V²"},
		{"1mV", VoltPerKelvin, "a temperature coefficient in V/K"},
		{"0.05V", PerVolt, "a coefficient in 1/V"},
		{"0.05/mV", PerVolt, "a coefficient in 1/V"},
		{"0.5V", SqrtVolt, "a coefficient in √V"},
		{"10pf", Farad, "a capacitance in F"},
		{"10mhz", Hertz, "a frequency in Hz"},
		{"10n", Second, "prefix"},
		{"1uF", Watt, "a power in W"},
		{"1uA", Siemens, "a conductance in S"},
	}
	for _, tt := range tests {
		v, err := Parse(tt.in, tt.d)
		if err == nil {
			t.Errorf("Parse(%q, %v) = %v, want an error", tt.in, tt.d, v)
			continue
		}
		msg := err.Error()
		if !strings.Contains(msg, tt.want) || (strings.TrimSpace(tt.in) != "" && !strings.Contains(msg, strconv.Quote(tt.in))) {
			t.Errorf("Parse(%q, %v) error %q: want it to quote the input and mention %q", tt.in, tt.d, msg, tt.want)
		}
		var e *Error
		if !errors.As(err, &e) || e.Given != strings.TrimSpace(tt.in) || e.Want == "" {
			t.Errorf("Parse(%q, %v) error %#v: want an *Error with Given and Want", tt.in, tt.d, err)
		}
	}
}

func TestParseMessage(t *testing.T) {
	_, err := Parse("20uV", Metre)
	const want = `got "20uV", want a length in m, for example 20um`
	if err == nil || err.Error() != want {
		t.Errorf("Parse error = %v, want %q", err, want)
	}
}

func TestDimDescriptions(t *testing.T) {
	for d := Dim(0); d < numDims; d++ {
		// Every example reads back under its own Dim.
		if _, err := Parse(d.Example(), d); err != nil {
			t.Errorf("%v: example %q does not parse: %v", d, d.Example(), err)
		}
		if !strings.Contains(d.Want(), d.Example()) || d.String() == "" || d.Unit() == "" {
			t.Errorf("%v: incomplete description: want %q unit %q", d, d.Want(), d.Unit())
		}
	}
	if got := Dim(-1).String(); got != "Dim(-1)" {
		t.Errorf("Dim(-1).String() = %q", got)
	}
}

func TestFormat(t *testing.T) {
	tests := []struct {
		v    float64
		d    Dim
		want string
	}{
		{2e-5, Metre, "20um"},
		{1.8, Volt, "1.8V"},
		{-0.45, Volt, "-450mV"},
		{0, Volt, "0V"},
		{0.7, Volt, "700mV"},
		{1e-6, Metre, "1um"},
		{2, Metre, "2m"},
		{1.5e-9, SquareMetre, "1500um2"},
		{1.6e-10, SquareMetre, "160um2"},
		{0.15, Percent, "15%"},
		{0.001, Percent, "0.1%"},
		{0, Percent, "0%"},
		{300.15, Temperature, "27C"},
		{300, Temperature, "26.85C"},
		{2e6, VoltPerSecond, "2V/us"},
		{0.5, VoltPerSecond, "500mV/s"},
		{280e-6, AmperePerVoltSq, "280uA/V2"},
		{5e-9, VoltMetre, "5mV*um"},
		{1e-8, PercentMetre, "1%*um"},
		{1e-3, VoltPerKelvin, "1mV/K"},
		{0.05, PerVolt, "0.05/V"},
		{0.5, SqrtVolt, "0.5V^0.5"},
		{10e6, Hertz, "10MHz"},
		{10e-12, Farad, "10pF"},
		{7.2e-5, Watt, "72uW"},
		{3, Dimensionless, "3"},
		{-1.5, Dimensionless, "-1.5"},
		{12345678, Dimensionless, "1.2345678e7"},
		{1e-19, Volt, "0.0001fV"},
		{1e-20, Volt, "1e-5fV"},
		{1.0000000000000002, Volt, "1.0000000000000002V"},
	}
	for _, tt := range tests {
		if got := Format(tt.v, tt.d); got != tt.want {
			t.Errorf("Format(%v, %v) = %q, want %q", tt.v, tt.d, got, tt.want)
		}
	}
	for _, s := range []string{"-40C", "27C", "125C", "0C"} {
		v, err := Parse(s, Temperature)
		if err != nil {
			t.Fatal(err)
		}
		if got := Format(v, Temperature); got != s {
			t.Errorf("Format(Parse(%q)) = %q", s, got)
		}
	}
}

// TestFormatRoundTrip checks that Parse reads every Format output back to
// the same float64, for random values of every dimension.
func TestFormatRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for d := Dim(0); d < numDims; d++ {
		for i := 0; i < 3000; i++ {
			var v float64
			switch {
			case d == Temperature:
				v = r.Float64() * 1000 // kelvin, 0 … 1000 K
				if i%3 == 0 {
					v = math.Round(v*100) / 100 // short decimals, as in files
				}
			case i%4 == 0:
				// any finite float64, subnormals included
				for {
					v = math.Float64frombits(r.Uint64())
					if !math.IsNaN(v) && !math.IsInf(v, 0) {
						break
					}
				}
			case i%4 == 1:
				// short decimals such as a file holds: 1 to 4 digits
				v = float64(r.IntN(9999)+1) * math.Pow10(r.IntN(40)-25)
			default:
				v = (1 + 9*r.Float64()) * math.Pow10(r.IntN(40)-20)
				if r.IntN(2) == 0 {
					v = -v
				}
			}
			s := Format(v, d)
			back, err := Parse(s, d)
			if err != nil {
				t.Fatalf("Parse(Format(%v, %v) = %q): %v", v, d, s, err)
			}
			if back != v {
				t.Fatalf("Parse(Format(%v, %v) = %q) = %v", v, d, s, back)
			}
		}
	}
}

// TestFormatShortest checks that Format writes the same significant digits
// as the shortest decimal that identifies the float64 (strconv's 'e', -1).
func TestFormatShortest(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	// sig returns the significant digits of the number at the start of s.
	sig := func(s string) string {
		n, _, ok := scanNumber(s)
		if !ok {
			t.Fatalf("no number in %q", s)
		}
		m := strings.NewReplacer("-", "", "+", "", ".", "").Replace(n.mant)
		return strings.Trim(m, "0")
	}
	for d := Dim(0); d < numDims; d++ {
		if d == Temperature {
			continue // written in °C, a shifted value
		}
		for i := 0; i < 2000; i++ {
			v := float64(r.IntN(99999)+1) * math.Pow10(r.IntN(30)-20)
			want := sig(strconv.FormatFloat(v, 'e', -1, 64))
			if got := Format(v, d); sig(got) != want {
				t.Fatalf("Format(%v, %v) = %q, want the digits %s", v, d, got, want)
			}
		}
	}
}
