package device

import "math"

// The two elementary functions every EKV evaluation needs twice — e^x for
// x ≤ 0 and ln(1 + y) for 0 ≤ y ≤ 1 — written for those ranges only.
// BenchmarkKernels shows math.Exp and math.Log1p at about twice their
// cost on the ranges EKV uses, and they were a third of a search's time;
// TestKernels holds both within 2 ulp of the library over the ranges,
// which moves no solution (the solver's tolerance is 1e-6 relative).
// Outside their ranges, and for NaN, they return the library's result.

// roundMagic, added to a float of magnitude below 2^51, rounds it to an
// integer held in the low bits of the sum (common practice, no source).
const roundMagic = 0x1.8p52

// expTableBits sets the exponential's table: 2^(j/256), j = 0…255.
const (
	expTableBits = 8
	expTableLen  = 1 << expTableBits
	// ln 2 / 256 in two parts: the first has its low bits clear, so that
	// n·expLn2Hi is exact for every n the range allows (Cody and Waite's
	// reduction; the split of fdlibm's e_exp.c, from memory).
	expLn2Hi  = 6.93147180369123816490e-01 / expTableLen
	expLn2Lo  = 1.90821492927058770002e-10 / expTableLen
	expInvLn2 = expTableLen / math.Ln2
	// expMin is the smallest argument whose result stays a normal number
	// through the exponent addition (e^−707 ≈ 9e−308).
	expMin = -707.0
)

// log1pTableLen sets the logarithm's table: ln(1 + j/256) and
// 1/(1 + j/256), j = 0…256.
const log1pTableLen = 256

// kernelTables holds the kernels' tables, computed once from the library
// (each entry within 1 ulp) and never written after.
type kernelTables struct {
	exp2 [expTableLen]float64       // 2^(j/256)
	ln   [log1pTableLen + 1]float64 // ln(1 + j/256)
	inv  [log1pTableLen + 1]float64 // 1/(1 + j/256)
}

var kernel = func() *kernelTables {
	t := new(kernelTables)
	for j := range t.exp2 {
		t.exp2[j] = math.Exp2(float64(j) / expTableLen)
	}
	for j := range t.ln {
		c := float64(j) / log1pTableLen
		t.ln[j] = math.Log1p(c)
		t.inv[j] = 1 / (1 + c)
	}
	return t
}()

// expNeg returns e^x for x ≤ 0 by Tang's table-driven method (P. T. P.
// Tang, "Table-driven implementation of the exponential function in IEEE
// floating-point arithmetic", ACM TOMS 15(2), 144–157, 1989): x = (256·k +
// j)·ln2/256 + r with |r| ≤ ln2/512, e^x = 2^k·2^(j/256)·e^r, e^r − 1 by its
// Taylor polynomial to r⁴ (the next term is below 4e−17 relative).
func expNeg(x float64) float64 {
	if !(x >= expMin && x <= 0) {
		return math.Exp(x)
	}
	t := x*expInvLn2 + roundMagic
	n := int64(math.Float64bits(t)&(1<<52-1)) - 1<<51 // round(x·256/ln2)
	fn := t - roundMagic
	r := (x - fn*expLn2Hi) - fn*expLn2Lo
	r2 := r * r
	p := r + r2*(0.5+r*(1.0/6)+r2*(1.0/24))
	tj := kernel.exp2[n&(expTableLen-1)]
	y := tj + tj*p
	// Multiply by 2^k, k = n >> 8 (a floor), in the exponent field.
	return math.Float64frombits(math.Float64bits(y) + uint64(n>>expTableBits)<<52)
}

// log1pUnit returns ln(1 + y) for 0 ≤ y ≤ 1, table-driven in the manner of
// Tang's logarithm (P. T. P. Tang, "Table-driven implementation of the
// logarithm function in IEEE floating-point arithmetic", ACM TOMS 16(4),
// 378–400, 1990): with c = j/256 the nearest table point, 1 + y =
// (1 + c)·(1 + r), r = (y − c)/(1 + c), |r| ≤ 1/512, and ln(1 + r) by its
// Taylor polynomial to r⁶ (the next term is below 1e−17 relative). y − c
// is exact (Sterbenz), so tiny y keep every bit: ln(1 + y) = y·(1 − y/2 …).
func log1pUnit(y float64) float64 {
	if !(y >= 0 && y <= 1) {
		return math.Log1p(y)
	}
	t := y*log1pTableLen + roundMagic
	j := math.Float64bits(t) & (2*log1pTableLen - 1) // round(256·y), 0…256
	c := (t - roundMagic) * (1.0 / log1pTableLen)
	r := (y - c) * kernel.inv[j]
	r2 := r * r
	// r − r²/2 + r³/3 − r⁴/4 + r⁵/5 − r⁶/6, in two halves.
	q := r - r2*(0.5-r*(1.0/3)) - r2*r2*(0.25-r*(1.0/5)+r2*(1.0/6))
	return kernel.ln[j] + q
}
