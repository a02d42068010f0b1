package sim

import "math"

// luFactor factors the row-major n×n matrix a in place into L·U with
// partial (row) pivoting, the textbook Doolittle elimination (Golub and
// Van Loan, Matrix Computations, algorithm 3.4.1). piv records the row
// swapped into each position. It reports false when a pivot is exactly
// zero or not finite, that is, when the matrix is singular to working
// precision.
//
// The solver's Jacobians are small and dense (a handful of unknowns), where
// gonum's general LU spends more time in set-up than in arithmetic;
// BenchmarkLU in lu_test.go measures the difference and TestLUAgainstGonum
// checks this kernel against gonum's mat.Dense.Solve.
func luFactor(a []float64, n int, piv []int) bool {
	for k := 0; k < n; k++ {
		p := k
		big := math.Abs(a[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := math.Abs(a[i*n+k]); v > big {
				big, p = v, i
			}
		}
		piv[k] = p
		if big == 0 || math.IsNaN(big) || math.IsInf(big, 0) {
			return false
		}
		if p != k {
			rk, rp := a[k*n:k*n+n], a[p*n:p*n+n]
			for j := range rk {
				rk[j], rp[j] = rp[j], rk[j]
			}
		}
		inv := 1 / a[k*n+k]
		rowk := a[k*n+k+1 : k*n+n]
		for i := k + 1; i < n; i++ {
			f := a[i*n+k] * inv
			a[i*n+k] = f
			if f == 0 {
				continue
			}
			rowi := a[i*n+k+1 : i*n+n]
			for j, v := range rowk {
				rowi[j] -= f * v
			}
		}
	}
	return true
}

// luSolve solves A·x = b in place (b becomes x) with the factors from
// luFactor.
func luSolve(a []float64, n int, piv []int, b []float64) {
	for k := 0; k < n; k++ {
		if p := piv[k]; p != k {
			b[k], b[p] = b[p], b[k]
		}
	}
	for i := 1; i < n; i++ {
		s := b[i]
		row := a[i*n : i*n+i]
		for j, v := range row {
			s -= v * b[j]
		}
		b[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		s := b[i]
		for j := i + 1; j < n; j++ {
			s -= a[i*n+j] * b[j]
		}
		b[i] = s / a[i*n+i]
	}
}
