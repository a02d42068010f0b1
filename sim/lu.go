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
	// The two smallest systems of more than one unknown are unrolled;
	// BenchmarkLU's loops/n= cases measure what that saves.
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
