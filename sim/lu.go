package sim

import "math"

// luFactor factors in place the leading n×n block of the row-major matrix
// a, whose rows are ld apart (ld ≥ n), into L·U with partial (row)
// pivoting: the textbook Doolittle elimination (Golub and Van Loan,
// Matrix Computations, algorithm 3.4.1). piv records the row swapped into
// each position; the diagonal keeps the reciprocals of U's pivots, so that
// luSolve multiplies instead of dividing. It reports false when a pivot is
// exactly zero or not finite, that is, when the block is singular to
// working precision.
//
// The solver's Jacobians are small and dense (a handful of unknowns), where
// gonum's general LU spends more time in set-up than in arithmetic;
// BenchmarkLU in lu_test.go measures the difference and TestLUAgainstGonum
// checks this kernel against gonum's mat.Dense.Solve. The leading
// dimension lets a sweep factor the block of its moving unknowns where it
// lies, without a copy.
func luFactor(a []float64, n, ld int, piv []int) bool {
	if n == 0 {
		return true
	}
	if n == 3 {
		return luFactor3(a, ld, piv)
	}
	return factorLoops(a, n, ld, piv)
}

// factorLoops is luFactor's elimination with loops for any n ≥ 1.
func factorLoops(a []float64, n, ld int, piv []int) bool {
	a = a[:(n-1)*ld+n]
	piv = piv[:n]
	for k := 0; k < n; k++ {
		kk := k*ld + k
		p, big := k, math.Abs(a[kk])
		for i := k + 1; i < n; i++ {
			if v := math.Abs(a[i*ld+k]); v > big {
				big, p = v, i
			}
		}
		piv[k] = p
		if !(big > 0 && big <= math.MaxFloat64) { // zero, NaN or ±Inf
			return false
		}
		if p != k {
			for j := 0; j < n; j++ {
				a[k*ld+j], a[p*ld+j] = a[p*ld+j], a[k*ld+j]
			}
		}
		inv := 1 / a[kk]
		a[kk] = inv
		for i := k + 1; i < n; i++ {
			ik := i*ld + k
			f := a[ik] * inv
			a[ik] = f
			for j := k + 1; j < n; j++ {
				a[i*ld+j] -= f * a[k*ld+j]
			}
		}
	}
	return true
}

// luFactor3 is factorLoops for n = 3 written out, the most common size
// of a sweep's moving block: the same operations in the same order, so
// the same bits (TestLUFactor3 checks), held in registers.
func luFactor3(a []float64, ld int, piv []int) bool {
	a = a[:2*ld+3]
	piv = piv[:3]
	r0, r1, r2 := a[0:3:3], a[ld:ld+3:ld+3], a[2*ld:2*ld+3:2*ld+3]
	a00, a01, a02 := r0[0], r0[1], r0[2]
	a10, a11, a12 := r1[0], r1[1], r1[2]
	a20, a21, a22 := r2[0], r2[1], r2[2]
	ok := func(big float64) bool { return big > 0 && big <= math.MaxFloat64 }
	// Column 0.
	p, big := 0, math.Abs(a00)
	if v := math.Abs(a10); v > big {
		big, p = v, 1
	}
	if v := math.Abs(a20); v > big {
		big, p = v, 2
	}
	piv[0] = p
	if !ok(big) {
		return false
	}
	switch p {
	case 1:
		a00, a01, a02, a10, a11, a12 = a10, a11, a12, a00, a01, a02
	case 2:
		a00, a01, a02, a20, a21, a22 = a20, a21, a22, a00, a01, a02
	}
	inv := 1 / a00
	a00 = inv
	f := a10 * inv
	a10 = f
	a11 -= f * a01
	a12 -= f * a02
	f = a20 * inv
	a20 = f
	a21 -= f * a01
	a22 -= f * a02
	// Column 1.
	p, big = 1, math.Abs(a11)
	if v := math.Abs(a21); v > big {
		big, p = v, 2
	}
	piv[1] = p
	if !ok(big) {
		r0[0], r0[1], r0[2] = a00, a01, a02
		r1[0], r1[1], r1[2] = a10, a11, a12
		r2[0], r2[1], r2[2] = a20, a21, a22
		return false
	}
	if p == 2 {
		a10, a11, a12, a20, a21, a22 = a20, a21, a22, a10, a11, a12
	}
	inv = 1 / a11
	a11 = inv
	f = a21 * inv
	a21 = f
	a22 -= f * a12
	// Column 2.
	piv[2] = 2
	r0[0], r0[1], r0[2] = a00, a01, a02
	r1[0], r1[1], r1[2] = a10, a11, a12
	if !ok(math.Abs(a22)) {
		r2[0], r2[1], r2[2] = a20, a21, a22
		return false
	}
	r2[0], r2[1], r2[2] = a20, a21, 1/a22
	return true
}

// luSolve solves A·x = b in place (b becomes x) with the factors luFactor
// left in a (leading dimension ld).
func luSolve(a []float64, n, ld int, piv []int, b []float64) {
	if n == 0 {
		return
	}
	a = a[:(n-1)*ld+n]
	b = b[:n]
	for k, p := range piv[:n] {
		if p != k {
			b[k], b[p] = b[p], b[k]
		}
	}
	// The three smallest systems of more than one unknown are unrolled
	// (n = 4: a 1:3 mirror stage's moving block, the current switch's
	// whole system); BenchmarkLU's loops/n= cases measure what that
	// saves.
	switch n {
	case 2:
		b1 := b[1] - a[ld]*b[0]
		x1 := b1 * a[ld+1]
		b[0] = (b[0] - a[1]*x1) * a[0]
		b[1] = x1
	case 3:
		r1, r2 := ld, 2*ld
		b1 := b[1] - a[r1]*b[0]
		b2 := b[2] - a[r2]*b[0] - a[r2+1]*b1
		x2 := b2 * a[r2+2]
		x1 := (b1 - a[r1+2]*x2) * a[r1+1]
		b[0] = (b[0] - a[1]*x1 - a[2]*x2) * a[0]
		b[1], b[2] = x1, x2
	case 4:
		// substitute's operations for n = 4, in its order.
		r0, r1, r2, r3 := a[0:4:4], a[ld:ld+4:ld+4], a[2*ld:2*ld+4:2*ld+4], a[3*ld:3*ld+4:3*ld+4]
		b1 := b[1] - r1[0]*b[0]
		b2 := b[2] - r2[0]*b[0] - r2[1]*b1
		b3 := b[3] - r3[0]*b[0] - r3[1]*b1 - r3[2]*b2
		x3 := b3 * r3[3]
		x2 := (b2 - r2[3]*x3) * r2[2]
		x1 := (b1 - r1[2]*x2 - r1[3]*x3) * r1[1]
		b[0] = (b[0] - r0[1]*x1 - r0[2]*x2 - r0[3]*x3) * r0[0]
		b[1], b[2], b[3] = x1, x2, x3
	default:
		substitute(a, n, ld, b)
	}
}

// substitute does the forward and back substitution of luSolve, on a
// permuted b, with loops for any n.
func substitute(a []float64, n, ld int, b []float64) {
	for i := 1; i < n; i++ {
		s := b[i]
		for j := 0; j < i; j++ {
			s -= a[i*ld+j] * b[j]
		}
		b[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		s := b[i]
		for j := i + 1; j < n; j++ {
			s -= a[i*ld+j] * b[j]
		}
		b[i] = s * a[i*ld+i]
	}
}
