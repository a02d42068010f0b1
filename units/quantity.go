// Package units reads the physical quantities of pairsmith's input files,
// written as bare SI numbers or with an SI prefix and unit symbol ("1.8V",
// "200uA", "1500um2", "2V/us"), and the YAML files that hold them. Every
// value read from a file keeps its file, line and field, so that bad input
// gets one clear error line naming where it is, what was given and what was
// wanted.
//
// Prefixes and unit symbols follow the SI brochure (BIPM, "The
// International System of Units", 9th edition, 2019): f p n u µ m k M G,
// with u accepted for µ as plain-text files commonly do. A prefix binds to
// the unit symbol it stands before, so "um2" is (µm)² = 1e-12 m², as the
// brochure prescribes for a prefixed unit with an exponent.
package units

import (
	"errors"
	"fmt"
	"math"
	"math/big"
	"strconv"
	"strings"
)

// Dim is the physical dimension a field holds. It picks the unit symbols
// Parse accepts and the unit Format writes.
type Dim int

// The dimensions pairsmith's files use. Parse returns every one of them in
// coherent SI units: Percent as a plain fraction and Temperature in kelvin.
const (
	Dimensionless    Dim = iota // a plain number, no unit
	Volt                        // V
	Ampere                      // A
	Siemens                     // S
	Metre                       // m
	SquareMetre                 // m²; "um2", "um^2", "µm²"
	Percent                     // a fraction: "15%" or a bare 0.15
	Temperature                 // K; "27C", "27°C", "300K", a bare number is °C
	VoltPerSecond               // V/s, slew rate; "2V/us"
	Farad                       // F
	Hertz                       // Hz
	Second                      // s
	Watt                        // W
	AmperePerVoltSq             // A/V², the transconductance parameter kp
	VoltPerKelvin               // V/K, a threshold temperature coefficient
	PerVolt                     // 1/V, channel-length modulation; "0.05/V"
	SqrtVolt                    // √V, body-effect coefficient; "0.5V^0.5"
	VoltMetre                   // V·m, Pelgrom's A_VT; "5mV*um"
	PercentMetre                // m, Pelgrom's A_β as a fraction times a length; "1%*um"
	VoltPerRootHertz            // V/√Hz, a noise density; "25nV/rtHz"
	numDims
)

// ZeroCelsius is 0 °C in kelvin (SI brochure, 9th edition, §2.3.1).
const ZeroCelsius = 273.15

// spelling is one way of writing a unit after the number. The value is
// number × 10^(exp + pow·prefix), where prefix is the decimal exponent of
// an SI prefix written before the spelling (pow 0 allows no prefix), or
// number + 273.15 for a celsius spelling.
type spelling struct {
	text    string
	exp     int
	pow     int
	celsius bool
}

// candidate is a unit text Format may write, with its decimal exponent.
type candidate struct {
	text string
	exp  int
}

type dimInfo struct {
	name    string      // what the field holds: "voltage"
	phrase  string      // "a voltage in V"
	unit    string      // SI unit of the value Parse returns
	example string      // a valid input, for error messages
	spell   []spelling  // accepted unit spellings
	format  []candidate // Format's choices, largest exponent first
}

// formatPrefixes are the prefixes Format writes, largest first.
var formatPrefixes = []struct {
	text string
	exp  int
}{{"G", 9}, {"M", 6}, {"k", 3}, {"", 0}, {"m", -3}, {"u", -6}, {"n", -9}, {"p", -12}, {"f", -15}}

// prefixed returns Format's candidates for unit text u whose prefix is
// raised to pow.
func prefixed(u string, pow int) []candidate {
	c := make([]candidate, len(formatPrefixes))
	for i, p := range formatPrefixes {
		c[i] = candidate{p.text + u, pow * p.exp}
	}
	return c
}

// plain is a unit spelling that takes a prefix on its first symbol.
func plain(texts ...string) []spelling {
	s := make([]spelling, len(texts))
	for i, t := range texts {
		s[i] = spelling{text: t, pow: 1}
	}
	return s
}

// fixed is a unit spelling that takes no prefix.
func fixed(exp int, texts ...string) []spelling {
	s := make([]spelling, len(texts))
	for i, t := range texts {
		s[i] = spelling{text: t, exp: exp}
	}
	return s
}

// dims describes every Dim; it is read, never written. The unit symbols are
// those of the SI brochure (BIPM, 9th edition, 2019), tables 2 and 4.
var dims = [numDims]dimInfo{
	Dimensionless: {"plain number", "a plain number", "1", "2", nil, []candidate{{"", 0}}},
	Volt:          {"voltage", "a voltage in V", "V", "1.8V", plain("V"), prefixed("V", 1)},
	Ampere:        {"current", "a current in A", "A", "200uA", plain("A"), prefixed("A", 1)},
	Siemens:       {"conductance", "a conductance in S", "S", "150uS", plain("S"), prefixed("S", 1)},
	Metre:         {"length", "a length in m", "m", "20um", plain("m"), prefixed("m", 1)},
	SquareMetre: {"area", "an area in m²", "m²", "1500um2",
		[]spelling{{text: "m2", pow: 2}, {text: "m^2", pow: 2}, {text: "m²", pow: 2}}, prefixed("m2", 2)},
	Percent:     {"fraction", "a fraction or a percentage", "1", "15%", fixed(-2, "%"), []candidate{{"%", -2}}},
	Temperature: {"temperature", "a temperature in °C or K", "K", "27C", temperatureSpellings(), nil},
	VoltPerSecond: {"slew rate", "a slew rate in V/s", "V/s", "2V/us",
		[]spelling{{text: "V/s", pow: 1}, {text: "V/ms", exp: 3, pow: 1}, {text: "V/us", exp: 6, pow: 1},
			{text: "V/µs", exp: 6, pow: 1}, {text: "V/μs", exp: 6, pow: 1}, {text: "V/ns", exp: 9, pow: 1}},
		[]candidate{{"V/ns", 9}, {"V/us", 6}, {"V/ms", 3}, {"V/s", 0}, {"mV/s", -3}, {"uV/s", -6}, {"nV/s", -9}}},
	Farad: {"capacitance", "a capacitance in F", "F", "10pF", plain("F"), prefixed("F", 1)},
	VoltPerRootHertz: {"noise density", "a noise density in V/√Hz", "V/√Hz", "25nV/rtHz",
		plain("V/rtHz", "V/√Hz", "V/sqrtHz"), prefixed("V/rtHz", 1)},
	Hertz:  {"frequency", "a frequency in Hz", "Hz", "10MHz", plain("Hz"), prefixed("Hz", 1)},
	Second: {"time", "a time in s", "s", "10ns", plain("s"), prefixed("s", 1)},
	Watt:   {"power", "a power in W", "W", "100uW", plain("W"), prefixed("W", 1)},
	AmperePerVoltSq: {"transconductance parameter", "a transconductance parameter in A/V²", "A/V²", "280uA/V2",
		plain("A/V2", "A/V^2", "A/V²"), prefixed("A/V2", 1)},
	VoltPerKelvin: {"temperature coefficient", "a temperature coefficient in V/K", "V/K", "1mV/K",
		plain("V/K"), prefixed("V/K", 1)},
	PerVolt: {"coefficient in 1/V", "a coefficient in 1/V", "1/V", "0.05/V",
		fixed(0, "/V", "1/V", "V^-1"), []candidate{{"/V", 0}}},
	SqrtVolt: {"coefficient in √V", "a coefficient in √V", "√V", "0.5V^0.5",
		fixed(0, "V^0.5", "V^(1/2)", "sqrt(V)", "√V"), []candidate{{"V^0.5", 0}}},
	VoltMetre: {"mismatch coefficient in V·m", "a mismatch coefficient in V·m", "V·m", "5mV*um",
		append(fixed(0, "V*m", "V·m"), fixed(-9, "mV*um", "mV·um", "mV*µm", "mV·µm", "mV*μm", "mV·μm")...),
		[]candidate{{"V*m", 0}, {"mV*um", -9}}},
	PercentMetre: {"mismatch coefficient in m", "a mismatch coefficient in %·µm", "m", "1%*um",
		append(fixed(0, "m"), fixed(-8, "%*um", "%·um", "%*µm", "%·µm", "%*μm", "%·μm")...),
		[]candidate{{"m", 0}, {"%*um", -8}}},
}

func temperatureSpellings() []spelling {
	return []spelling{
		{text: "C", celsius: true}, {text: "°C", celsius: true},
		{text: "℃", celsius: true}, {text: "degC", celsius: true},
		{text: "K"},
	}
}

// prefixExp returns the decimal exponent of an SI prefix (SI brochure,
// 9th edition, table 7), with u and both micro signs (U+00B5, U+03BC) for
// micro.
func prefixExp(p string) (int, bool) {
	switch p {
	case "f":
		return -15, true
	case "p":
		return -12, true
	case "n":
		return -9, true
	case "u", "\u00b5", "\u03bc":
		return -6, true
	case "m":
		return -3, true
	case "k":
		return 3, true
	case "M":
		return 6, true
	case "G":
		return 9, true
	}
	return 0, false
}

func (d Dim) info() (dimInfo, bool) {
	if d < 0 || d >= numDims {
		return dimInfo{}, false
	}
	return dims[d], true
}

// String names what a field of this dimension holds, as in "voltage".
func (d Dim) String() string {
	if in, ok := d.info(); ok {
		return in.name
	}
	return fmt.Sprintf("Dim(%d)", int(d))
}

// Unit returns the SI unit of the values Parse returns for d: "V", "m²",
// "K" for Temperature, "1" for Dimensionless and Percent.
func (d Dim) Unit() string {
	if in, ok := d.info(); ok {
		return in.unit
	}
	return "?"
}

// Example returns an input that Parse accepts for d, such as "1.8V".
func (d Dim) Example() string {
	if in, ok := d.info(); ok {
		return in.example
	}
	return "?"
}

// Want describes what a field of dimension d takes, for error messages:
// "a voltage in V, for example 1.8V".
func (d Dim) Want() string {
	in, ok := d.info()
	if !ok {
		return fmt.Sprintf("a value of unknown dimension %d", int(d))
	}
	return in.phrase + ", for example " + in.example
}

// decimal is a number as written: mantissa text (sign, digits and point,
// no exponent) times 10^exp.
type decimal struct {
	mant string
	exp  int
}

// value returns the nearest float64 to the decimal times 10^shift. It
// rounds once, so "20um" gives exactly the float64 that 2e-5 does.
func (n decimal) value(shift int) (float64, error) {
	v, err := strconv.ParseFloat(n.text(shift), 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, errOutOfRange
	}
	return v, nil
}

func (n decimal) text(shift int) string {
	return n.mant + "e" + strconv.Itoa(n.exp+shift)
}

// celsius returns the nearest float64 to the decimal (in °C) plus
// 273.15, added exactly before the one rounding, so that "-40C" gives the
// float64 of 233.15.
func (n decimal) celsius() (float64, error) {
	f, err := n.value(0)
	switch {
	case err != nil || math.Abs(f) > 1e300:
		return 0, errOutOfRange
	case math.Abs(f) < 1e-300:
		return ZeroCelsius, nil // keeps big.Rat off absurd exponents
	}
	r, ok := new(big.Rat).SetString(n.text(0))
	if !ok {
		return 0, errOutOfRange
	}
	v, _ := r.Add(r, big.NewRat(27315, 100)).Float64()
	if math.IsInf(v, 0) {
		return 0, errOutOfRange
	}
	return v, nil
}

var (
	errEmpty      = errors.New("the value is empty")
	errOutOfRange = errors.New("out of the range of a float64")
	errBelowZeroK = errors.New("below absolute zero")
)

// scanNumber reads a decimal number at the start of s: an optional sign,
// digits with an optional point, an optional exponent. It returns the rest
// of s after the number.
func scanNumber(s string) (decimal, string, bool) {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return decimal{}, s, false
	}
	n := decimal{mant: s[:i]}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && s[k] >= '0' && s[k] <= '9' {
			k++
		}
		if k > j { // an exponent needs digits; "2e" leaves "e" as the unit
			if k-j > 6 {
				return decimal{}, s, false
			}
			e, err := strconv.Atoi(s[i+1 : k])
			if err != nil {
				return decimal{}, s, false
			}
			n.exp = e
			i = k
		}
	}
	return n, s[i:], true
}

// match finds unit text u among the spellings, with an optional SI prefix
// before a spelling that takes one. It returns the decimal shift, and
// whether the unit is °C.
func match(u string, spell []spelling) (shift int, celsius, ok bool) {
	for _, sp := range spell {
		if u == sp.text {
			return sp.exp, sp.celsius, true
		}
	}
	for _, sp := range spell {
		if sp.pow == 0 || !strings.HasSuffix(u, sp.text) {
			continue
		}
		if p, ok := prefixExp(u[:len(u)-len(sp.text)]); ok {
			return sp.exp + sp.pow*p, sp.celsius, true
		}
	}
	return 0, false, false
}

// Parse reads a quantity of dimension d and returns it in coherent SI
// units (Percent as a fraction, Temperature in kelvin).
//
// A bare number is in SI units, except for Temperature, where it is in °C
// as on a SPICE .temp line. Otherwise the number is followed, with or
// without spaces, by a unit symbol with an optional SI prefix: "1.8V",
// "200 µA", "1500um2", "15%", "-40C", "2V/us", "280uA/V2", "0.05/V",
// "0.5V^0.5". A prefix without a unit ("2m" for a voltage) is an error; for
// a length "2m" is two metres. NaN, infinities, malformed numbers and
// units of another dimension are errors; the error is an *Error whose
// Given and Want say what was written and what the field takes.
func Parse(s string, d Dim) (float64, error) {
	in, ok := d.info()
	if !ok {
		return 0, &Error{Given: s, Want: d.Want()}
	}
	s = strings.TrimSpace(s)
	fail := func(err error) (float64, error) {
		return 0, &Error{Given: s, Want: d.Want(), Err: err}
	}
	if s == "" {
		return fail(errEmpty)
	}
	num, rest, ok := scanNumber(s)
	if !ok {
		return fail(nil)
	}
	u := strings.TrimSpace(rest)
	if u == "" && d != Temperature {
		v, err := num.value(0)
		if err != nil {
			return fail(err)
		}
		return v, nil
	}
	if u == "" {
		u = "C" // a bare temperature is in °C
	}
	shift, celsius, ok := match(u, in.spell)
	if !ok {
		if _, isPrefix := prefixExp(u); isPrefix && len(in.spell) > 0 && in.spell[0].pow > 0 {
			return fail(fmt.Errorf("%q is an SI prefix without its unit, as in %s%s%s",
				u, num.mant, u, in.spell[0].text))
		}
		return fail(nil)
	}
	var v float64
	var err error
	if celsius {
		v, err = num.celsius()
	} else {
		v, err = num.value(shift)
	}
	if err != nil {
		return fail(err)
	}
	if d == Temperature {
		return checkKelvin(v, fail)
	}
	return v, nil
}

func checkKelvin(k float64, fail func(error) (float64, error)) (float64, error) {
	if k < 0 {
		return fail(errBelowZeroK)
	}
	return k, nil
}

// fromNumber converts a number that a YAML file gives without a unit.
func fromNumber(v float64, d Dim, text string) (float64, error) {
	fail := func(err error) (float64, error) {
		return 0, &Error{Given: text, Want: d.Want(), Err: err}
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fail(errors.New("not a finite number"))
	}
	if _, ok := d.info(); !ok {
		return fail(nil)
	}
	if d == Temperature {
		return checkKelvin(v+ZeroCelsius, fail)
	}
	return v, nil
}

// Format writes v (in the SI units Parse returns) as an engineering string
// with an SI prefix, the shortest one that Parse reads back to exactly the
// same float64: 2e-5 m is "20um", 1.8 V is "1.8V", 1.5e-9 m² is "1500um2",
// 0.15 is "15%", 300.15 K is "27C". Temperatures are written in °C when
// that reads back exactly, else in K. NaN, infinities and temperatures
// below 0 K are written as well as can be but do not read back.
func Format(v float64, d Dim) string {
	in, ok := d.info()
	if !ok || math.IsNaN(v) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	if d == Temperature {
		return formatTemperature(v)
	}
	if v == 0 {
		for _, c := range in.format {
			if c.exp <= 0 {
				return "0" + c.text
			}
		}
	}
	sign := ""
	if v < 0 {
		sign, v = "-", -v
	}
	digits, x := shortest(v)
	c := in.format[len(in.format)-1]
	for _, f := range in.format {
		if x >= f.exp {
			c = f
			break
		}
	}
	return sign + render(digits, x-c.exp) + c.text
}

// shortest returns the shortest decimal digits that read back to v > 0,
// and the decimal exponent of the first digit: v ≈ d.ddd × 10^x.
func shortest(v float64) (string, int) {
	s := strconv.FormatFloat(v, 'e', -1, 64) // "1.2345e-05"
	mant, exp, _ := strings.Cut(s, "e")
	x, _ := strconv.Atoi(exp)
	return strings.Replace(mant, ".", "", 1), x
}

// render writes digits d as d[0].d[1:] × 10^k, in plain decimal where that
// is short.
func render(d string, k int) string {
	switch {
	case k >= 0 && k <= 6:
		if len(d) <= k+1 {
			return d + strings.Repeat("0", k+1-len(d))
		}
		return d[:k+1] + "." + d[k+1:]
	case k < 0 && k >= -4:
		return "0." + strings.Repeat("0", -k-1) + d
	}
	m := d[:1]
	if len(d) > 1 {
		m += "." + d[1:]
	}
	return m + "e" + strconv.Itoa(k)
}

// formatTemperature writes kelvin k in °C with the fewest digits that read
// back exactly, else in kelvin, which always does.
func formatTemperature(k float64) string {
	c := k - ZeroCelsius
	for prec := 1; prec <= 17; prec++ {
		r, err := strconv.ParseFloat(strconv.FormatFloat(c, 'g', prec, 64), 64)
		if err != nil {
			break
		}
		s := strconv.FormatFloat(r, 'f', -1, 64) + "C"
		if back, err := Parse(s, Temperature); err == nil && back == k {
			return s
		}
	}
	if k == 0 {
		return "0K"
	}
	digits, x := shortest(math.Abs(k))
	sign := ""
	if k < 0 {
		sign = "-"
	}
	return sign + render(digits, x) + "K"
}
