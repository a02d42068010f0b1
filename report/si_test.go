package report

import (
	"math"
	"strings"
	"testing"
	"unicode"
)

// Prefixes and symbols: SI brochure, 9th edition, table 7 (f, p, n, µ, m,
// k, M, G); rounding to significant figures before choosing the prefix,
// and e-notation outside the prefixes as SPICE listings write numbers,
// are common practice, no source.

func TestSI(t *testing.T) {
	inf := math.Inf(1)
	tests := []struct {
		v      float64
		unit   string
		digits int
		want   string
	}{
		{1.9566230946951727e-4, "S", 4, "195.7 µS"},
		{2e-5, "m", 4, "20 µm"},
		{1e-6, "m", 4, "1 µm"},
		{1.8, "V", 4, "1.8 V"},
		{0.01, "V", 4, "10 mV"},
		{0.9832603363556242, "V", 4, "983.3 mV"},
		{8.014244604479885e-5, "W", 4, "80.14 µW"},
		{5.600749530370578e-10, "S", 4, "560.1 pS"},
		{123456, "Ω", 2, "120 kΩ"},
		{4500, "", 3, "4.5 k"},
		{0.5, "", 3, "500 m"},
		{42, "", 4, "42"},
		// Rounding first: 999.95 µ has four 9s and rounds up into milli.
		{999.95e-6, "S", 4, "1 mS"},
		{999.96e-6, "S", 4, "1 mS"},
		{999.94e-6, "S", 4, "999.9 µS"},
		{999.95, "V", 4, "1 kV"},
		// The ends of the prefixes: femto and giga, then e-notation.
		{1e-15, "S", 4, "1 fS"},
		{1.5e-15, "A", 3, "1.5 fA"},
		{9.9996e-16, "S", 4, "1 fS"}, // rounds up onto femto
		{9.9994e-16, "S", 4, "9.999e-16 S"},
		{1e-16, "S", 4, "1e-16 S"},
		{3.2e-18, "S", 4, "3.2e-18 S"},
		{2e-18, "A", 3, "2e-18 A"},
		{1e-40, "S", 4, "1e-40 S"}, // once "0.0000…1 fS" with dozens of zeros
		{1.96612345e-40, "S", 4, "1.966e-40 S"},
		{999.9e9, "W", 4, "999.9 GW"},
		{999.96e9, "W", 4, "1e12 W"}, // rounds up past giga
		{1e12, "W", 4, "1e12 W"},
		{1e20, "W", 4, "1e20 W"}, // once a 21-digit number of GW
		{4.5e12, "Hz", 3, "4.5e12 Hz"},
		{2.5e15, "", 4, "2.5e15"},
		{math.MaxFloat64, "W", 4, "1.798e308 W"},
		{5e-324, "S", 4, "4.941e-324 S"}, // the smallest denormal, 4.94…e-324
		// Negative values mirror positive ones.
		{-1.966e-5, "A", 4, "-19.66 µA"},
		{-999.95e-6, "S", 4, "-1 mS"},
		{-1e-16, "S", 4, "-1e-16 S"},
		{-1e20, "W", 4, "-1e20 W"},
		// More than Digits figures are not written.
		{1.23456789e-4, "S", 9, "123.5 µS"},
		{1.23456789e-4, "S", 0, "100 µS"}, // fewer than 1 counts as 1
		{0, "V", 4, "0 V"},
		{math.Copysign(0, -1), "V", 4, "0 V"},
		{math.NaN(), "V", 4, "NaN"},
		{inf, "", 4, "∞"},
		{inf, "S", 4, "∞ S"},
		{-inf, "V", 4, "-∞ V"},
	}
	for _, tc := range tests {
		if got := SI(tc.v, tc.unit, tc.digits); got != tc.want {
			t.Errorf("SI(%g, %q, %d) = %q, want %q", tc.v, tc.unit, tc.digits, got, tc.want)
		}
	}
}

func TestSIFixed(t *testing.T) {
	// As SI, keeping the trailing zeros of the significant figures.
	tests := []struct {
		v    float64
		want string
	}{
		{9.9e-6, "9.900 µA"},
		{-9.9e-6, "-9.900 µA"},
		{1.72e-4, "172.0 µA"},
		{2e-5, "20.00 µA"},
		{999.96e-6, "1.000 mA"},
		{999.95e-6, "1.000 mA"},
		{1e-15, "1.000 fA"},
		{1e-16, "1.000e-16 A"},
		{3.2e-18, "3.200e-18 A"},
		{1e12, "1.000e12 A"},
		{-1e20, "-1.000e20 A"},
		{0, "0 A"},
		{math.NaN(), "NaN"},
		{math.Inf(-1), "-∞ A"},
	}
	for _, tc := range tests {
		if got := SIFixed(tc.v, "A", 4); got != tc.want {
			t.Errorf("SIFixed(%g) = %q, want %q", tc.v, got, tc.want)
		}
	}
}

func TestPlain(t *testing.T) {
	tests := []struct {
		v    float64
		want string
	}{
		{0.734, "0.734"},
		{0.25416, "0.2542"},
		{4000, "4000"},
		{420.00000001, "420"},
		{123456, "123500"},
		{999999, "1e6"}, // rounds up out of the decimal range
		{1e6, "1e6"},
		{3e22, "3e22"},
		{0.001, "0.001"},
		{0.00099996, "0.001"},
		{0.00099994, "9.999e-4"},
		{1.2e-5, "1.2e-5"},
		{-27.15, "-27.15"},
		{-1e-8, "-1e-8"},
		{0, "0"},
		{math.NaN(), "NaN"},
		{math.Inf(1), "∞"},
		{math.Inf(-1), "-∞"},
	}
	for _, tc := range tests {
		if got := Plain(tc.v, 4); got != tc.want {
			t.Errorf("Plain(%g) = %q, want %q", tc.v, got, tc.want)
		}
	}
}

func TestPercentAndRipple(t *testing.T) {
	tests := []struct {
		f      float64
		pct    string
		ripple string
	}{
		{0.42, "42.0 %", "42.0 %"},
		{0.1300085825648707, "13.0 %", "13.0 %"},
		{1, "100.0 %", "100.0 %"},
		{9.9994, "999.9 %", "999.9 %"},
		{9.99951, "1000 %", "1000 %"}, // 999.951 % rounds to 1000.0: four figures
		{30, "3000 %", "3000 %"},
		{1e20, "1e22 %", "1e22 %"}, // once 23 digits
		{-0.0000001, "0.0 %", "0.0 %"},
		{0, "0.0 %", "0.0 %"},
		{math.NaN(), "NaN", "NaN"},
		// docs/metrics.md#missing-and-unbounded-values: an unbounded ripple is ∞ in text.
		{math.Inf(1), "∞", "∞ (gm falls to zero)"},
	}
	for _, tc := range tests {
		if got := Percent(tc.f); got != tc.pct {
			t.Errorf("Percent(%g) = %q, want %q", tc.f, got, tc.pct)
		}
		if got := RippleText(tc.f); got != tc.ripple {
			t.Errorf("RippleText(%g) = %q, want %q", tc.f, got, tc.ripple)
		}
	}
}

func TestScaleSI(t *testing.T) {
	tests := []struct {
		max    float64
		factor float64
		prefix string
	}{
		{2.2e-4, 1e6, "µ"},
		{2e-5, 1e6, "µ"},
		{1e-6, 1e6, "µ"},
		{9.99e-4, 1e6, "µ"},
		{1e-3, 1e3, "m"},
		{5e-9, 1e9, "n"},
		{999.96e-6, 1e3, "m"}, // rounds to 1 m, as SI writes it
		{1.8, 1, ""},
		{1e-15, 1e15, "f"},
		{3.2e-18, 1e18, "1e-18 "},
		{1e-40, 1e42, "1e-42 "},
		{2.5e9, 1e-9, "G"},
		{1e20, 1e-18, "1e18 "},
		{0, 1, ""},
		{math.Inf(1), 1, ""},
		{math.NaN(), 1, ""},
	}
	for _, tc := range tests {
		f, p := ScaleSI(tc.max)
		if math.Abs(f-tc.factor) > 1e-12*tc.factor || p != tc.prefix {
			t.Errorf("ScaleSI(%g) = %g, %q, want %g, %q", tc.max, f, p, tc.factor, tc.prefix)
		}
		// Scaled, the largest value reads in 1 … 1000 (after rounding).
		if s := tc.max * f; tc.max > 0 && !math.IsInf(tc.max, 0) && (s < 0.9995 || s >= 1000) {
			t.Errorf("ScaleSI(%g): scaled to %g", tc.max, s)
		}
	}
}

// TestDigitsEverywhere: over values from 1e-45 to 1e45, no formatter
// writes more than Digits significant figures or more than a dozen
// characters of number: the "hundreds of digits" of extreme values cannot
// come back.
func TestDigitsEverywhere(t *testing.T) {
	for e := -45.0; e <= 45; e += 0.37 {
		for _, sign := range []float64{1, -1} {
			v := sign * 1.23456789 * math.Pow(10, e)
			for name, s := range map[string]string{
				"SI": SI(v, "S", 4), "SIFixed": SIFixed(v, "S", 4), "Plain": Plain(v, 4),
				"Percent": Percent(v), "areaText": areaText(v), "Celsius": Celsius(v), "volts": volts(v),
			} {
				num, _, _ := strings.Cut(s, " ")
				mant, _, _ := strings.Cut(num, "e")
				sig := strings.TrimLeft(strings.Map(func(r rune) rune {
					if unicode.IsDigit(r) {
						return r
					}
					return -1
				}, mant), "0")
				if len(strings.TrimRight(sig, "0")) > Digits {
					t.Errorf("%s(%g) = %q: more than %d significant figures", name, v, s, Digits)
				}
				if len(num) > 13 {
					t.Errorf("%s(%g) = %q: a number of %d characters", name, v, s, len(num))
				}
			}
		}
	}
}
