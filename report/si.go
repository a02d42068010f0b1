package report

import (
	"math"
	"strconv"
	"strings"
)

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

// SI writes v with an SI prefix and the unit symbol unit, to digits
// significant figures, trailing zeros dropped: SI(1.9566e-4, "S", 4) is
// "195.7 µS", SI(2e-5, "m", 4) is "20 µm". It is for reading, not for
// reading back in; units.Format writes values exactly. Zero is written
// without a prefix, NaN as "NaN" and infinities as "∞" or "-∞" followed by
// the unit. An empty unit gives a plain number with a prefix letter, as in
// "4.5 k". Values beyond giga or below femto keep the outermost prefix.
func SI(v float64, unit string, digits int) string { return formatSI(v, unit, digits, true) }

// SIFixed is SI keeping trailing zeros, so that a column of measured
// values shows the same precision throughout: SIFixed(9.9e-6, "A", 4) is
// "9.900 µA".
func SIFixed(v float64, unit string, digits int) string { return formatSI(v, unit, digits, false) }

func formatSI(v float64, unit string, digits int, trim bool) string {
	digits = max(digits, 1)
	sp := ""
	if unit != "" {
		sp = " " + unit
	}
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "∞" + sp
	case math.IsInf(v, -1):
		return "-∞" + sp
	case v == 0:
		return "0" + sp
	}
	// Round to the significant figures first, so that 999.96 µ becomes
	// 1 m and not 1000 µ.
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'e', digits-1, 64), 64)
	if err != nil {
		r = v
	}
	exp := int(math.Floor(math.Log10(math.Abs(r))))
	k := exp / 3
	if exp < 0 && exp%3 != 0 {
		k-- // floor division
	}
	k = min(max(k, siPrefixLow), siPrefixHigh)
	scaled := r / math.Pow(1000, float64(k))
	// Decimals to keep the significant figures after scaling.
	intDigits := int(math.Floor(math.Log10(math.Abs(scaled)))) + 1
	dec := max(digits-intDigits, 0)
	s := strconv.FormatFloat(scaled, 'f', dec, 64)
	if trim && strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if s == "-0" {
		s = "0"
	}
	p := siPrefix(k)
	if unit == "" {
		if p == "" {
			return s
		}
		return s + " " + p
	}
	return s + " " + p + unit
}

// Percent writes a fraction as a percentage with one decimal: 0.4251 is
// "42.5 %"; +Inf is "∞".
func Percent(f float64) string {
	switch {
	case math.IsNaN(f):
		return "NaN"
	case math.IsInf(f, 1):
		return "∞"
	case math.IsInf(f, -1):
		return "-∞"
	}
	return strconv.FormatFloat(100*f, 'f', 1, 64) + " %"
}
