package report

import (
	"math"
	"strconv"
	"strings"
)

// Digits is the most significant figures any number written for reading
// carries (text tables, the run table, report.html and the plots' labels).
// Exact values go to summary.json, pareto.csv and design files instead.
const Digits = 4

// SI prefixes from femto (1000^-5) to giga (1000^3) (SI brochure, 9th
// edition, table 7).
const (
	siPrefixLow  = -5
	siPrefixHigh = 3
)

// siPrefix returns the SI prefix of 1000^k, for siPrefixLow ≤ k ≤ siPrefixHigh.
func siPrefix(k int) string {
	return [...]string{"f", "p", "n", "µ", "m", "", "k", "M", "G"}[k-siPrefixLow]
}

// SI writes v for reading with an SI prefix and the unit symbol unit, to
// digits significant figures (at most Digits; fewer than 1 counts as 1),
// trailing zeros dropped: SI(1.9566e-4, "S", 4) is "195.7 µS", SI(2e-5,
// "m", 4) is "20 µm". It is the one formatter of the package: every
// number printed for reading goes through it, SIFixed or Plain.
//
// The value is rounded to its significant figures before the prefix is
// chosen, so 999.96 µ becomes "1 m", never "1000 µ". Prefixes run from
// femto to giga; a value that rounds to below 1 f or to 1000 G or more is
// written in scientific notation with the plain unit, mantissa and
// power of ten joined by "e" as SPICE listings write them: "3.2e-18 S",
// "1.5e20 W" (chosen over 3.2×10⁻¹⁸ because it reads the same in a
// terminal, a page and the plots' fonts). Zero is written without a
// prefix ("0 S"), NaN as "NaN", infinities as "∞" or "-∞" followed by the
// unit. An empty unit gives a number with a bare prefix letter, as in
// "4.5 k". It is for reading, not for reading back in; units.Format
// writes values exactly.
func SI(v float64, unit string, digits int) string { return formatSI(v, unit, digits, true) }

// SIFixed is SI keeping trailing zeros, so that a column of measured
// values shows the same precision throughout: SIFixed(9.9e-6, "A", 4) is
// "9.900 µA", SIFixed(3.2e-18, "S", 4) "3.200e-18 S".
func SIFixed(v float64, unit string, digits int) string { return formatSI(v, unit, digits, false) }

// Plain writes v without a prefix to digits significant figures (at most
// Digits), trailing zeros dropped: in decimals when 0.001 ≤ |v| < 10⁶
// after rounding ("0.734", "4000", "123500"), in scientific notation
// otherwise ("1.2e-5", "3e22"). Zero is "0", NaN "NaN", infinities "∞"
// and "-∞". It is for counts of a unit that keeps no prefix: µm² of
// area, per cent, °C, scores.
func Plain(v float64, digits int) string {
	if s, ok := special(v); ok {
		return s
	}
	neg, mant, exp := sigDigits(v, digits)
	if exp < -3 || exp >= 6 {
		return scientific(neg, mant, exp, true)
	}
	return decimal(neg, mant, exp+1, true)
}

// special writes NaN, the infinities and zero.
func special(v float64) (string, bool) {
	switch {
	case math.IsNaN(v):
		return "NaN", true
	case math.IsInf(v, 1):
		return "∞", true
	case math.IsInf(v, -1):
		return "-∞", true
	case v == 0:
		return "0", true
	}
	return "", false
}

// sigDigits rounds a finite, non-zero v to digits significant figures
// (clamped to 1 … Digits) and returns its sign, its digits as a string
// ("1235") and its decimal exponent: v ≈ 1.235·10^exp. Rounding is
// strconv's, correctly rounded from the binary value.
func sigDigits(v float64, digits int) (neg bool, mant string, exp int) {
	digits = min(max(digits, 1), Digits)
	s := strconv.FormatFloat(v, 'e', digits-1, 64) // "-1.235e-05"
	if s[0] == '-' {
		neg, s = true, s[1:]
	}
	m, e, _ := strings.Cut(s, "e")
	exp, err := strconv.Atoi(e)
	if err != nil { // cannot happen: strconv writes the exponent
		exp = 0
	}
	return neg, strings.Replace(m, ".", "", 1), exp
}

// decimal writes the digits mant with the decimal point after the first
// point of them (point ≤ 0 puts zeros after the point, point > len(mant)
// pads with zeros), trailing fractional zeros dropped when trim.
func decimal(neg bool, mant string, point int, trim bool) string {
	var ip, fp string
	switch {
	case point <= 0:
		ip, fp = "0", strings.Repeat("0", -point)+mant
	case point >= len(mant):
		ip = mant + strings.Repeat("0", point-len(mant))
	default:
		ip, fp = mant[:point], mant[point:]
	}
	if trim {
		fp = strings.TrimRight(fp, "0")
	}
	s := ip
	if fp != "" {
		s += "." + fp
	}
	if neg {
		s = "-" + s
	}
	return s
}

// scientific writes mant·10^exp as "1.235e-5" (no plus sign, no leading
// zeros in the exponent).
func scientific(neg bool, mant string, exp int, trim bool) string {
	return decimal(neg, mant, 1, trim) + "e" + strconv.Itoa(exp)
}

// floorDiv3 is ⌊e/3⌋.
func floorDiv3(e int) int {
	k := e / 3
	if e < 0 && e%3 != 0 {
		k--
	}
	return k
}

func formatSI(v float64, unit string, digits int, trim bool) string {
	sp := ""
	if unit != "" {
		sp = " " + unit
	}
	if s, ok := special(v); ok {
		if math.IsNaN(v) {
			return s
		}
		return s + sp
	}
	neg, mant, exp := sigDigits(v, digits)
	k := floorDiv3(exp)
	if k < siPrefixLow || k > siPrefixHigh {
		return scientific(neg, mant, exp, trim) + sp
	}
	s := decimal(neg, mant, exp-3*k+1, trim)
	p := siPrefix(k)
	if unit == "" {
		if p == "" {
			return s
		}
		return s + " " + p
	}
	return s + " " + p + unit
}

// Percent writes a fraction as a percentage: with one decimal below
// 1000 % ("42.5 %", "100.0 %"), beyond that as Plain does ("3000 %",
// "1.5e22 %"); +Inf is "∞".
func Percent(f float64) string {
	p := 100 * f
	switch {
	case math.IsNaN(p) || math.IsInf(p, 0):
		s, _ := special(p)
		return s
	case math.Abs(p) < 999.95:
		s := strconv.FormatFloat(p, 'f', 1, 64)
		if s == "-0.0" {
			s = "0.0"
		}
		return s + " %"
	}
	return Plain(p, Digits) + " %"
}
