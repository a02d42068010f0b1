package sim

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// randomSystem returns a random n×n matrix (row-major) and right-hand side.
// Half of the matrices are scaled row by row over many decades, as circuit
// Jacobians are (gmin-only rows next to millisiemens rows).
func randomSystem(rng *rand.Rand, n int, badlyScaled bool) ([]float64, []float64) {
	a := make([]float64, n*n)
	b := make([]float64, n)
	for i := 0; i < n; i++ {
		scale := 1.0
		if badlyScaled {
			scale = math.Pow(10, -12*rng.Float64())
		}
		for j := 0; j < n; j++ {
			a[i*n+j] = scale * rng.NormFloat64()
		}
		b[i] = scale * rng.NormFloat64()
	}
	return a, b
}

// TestLUAgainstGonum checks the small LU kernel against gonum's
// mat.Dense.Solve (reference library) on random systems.
func TestLUAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{1, 2, 3, 4, 6, 8, 12, 20} {
		for trial := 0; trial < 50; trial++ {
			a, b := randomSystem(rng, n, trial%2 == 1)
			want := mat.NewVecDense(n, nil)
			if err := want.SolveVec(mat.NewDense(n, n, append([]float64(nil), a...)), mat.NewVecDense(n, append([]float64(nil), b...))); err != nil {
				continue // singular to gonum too: nothing to compare
			}
			lu := append([]float64(nil), a...)
			x := append([]float64(nil), b...)
			piv := make([]int, n)
			if !luFactor(lu, n, n, piv) {
				t.Fatalf("n=%d trial %d: kernel says singular, gonum solved it", n, trial)
			}
			luSolve(lu, n, n, piv, x)
			// Compare residuals, which both methods make small, and the
			// solutions, scaled by the condition of the system.
			c := mat.Cond(mat.NewDense(n, n, append([]float64(nil), a...)), 1)
			for i := 0; i < n; i++ {
				w := want.AtVec(i)
				tol := 1e-13 * c * math.Max(1, math.Abs(w))
				if d := math.Abs(x[i] - w); d > tol {
					t.Fatalf("n=%d trial %d: x[%d] = %g, gonum %g (cond %.3g)", n, trial, i, x[i], w, c)
				}
			}
		}
	}
}

// TestLULeadingBlock checks the factorisation of a leading block in
// place (rows ld apart) against gonum's solve of the block alone; the
// entries outside the block must not matter or change.
func TestLULeadingBlock(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, n := range []int{1, 2, 3, 4, 5} {
		ld := n + 3
		big := make([]float64, ld*ld)
		for i := range big {
			big[i] = rng.NormFloat64()
		}
		block := make([]float64, n*n)
		for i := 0; i < n; i++ {
			copy(block[i*n:i*n+n], big[i*ld:i*ld+n])
		}
		rhs := make([]float64, n)
		for i := range rhs {
			rhs[i] = rng.NormFloat64()
		}
		want := mat.NewVecDense(n, nil)
		if err := want.SolveVec(mat.NewDense(n, n, block), mat.NewVecDense(n, append([]float64(nil), rhs...))); err != nil {
			t.Fatal(err)
		}
		outside := append([]float64(nil), big...)
		piv := make([]int, n)
		if !luFactor(big, n, ld, piv) {
			t.Fatalf("n=%d: singular", n)
		}
		x := append([]float64(nil), rhs...)
		luSolve(big, n, ld, piv, x)
		for i := 0; i < n; i++ {
			if !near(x[i], want.AtVec(i), 1e-10, 1e-12) {
				t.Errorf("n=%d: x[%d] = %g, gonum %g", n, i, x[i], want.AtVec(i))
			}
		}
		for i := 0; i < ld; i++ {
			for j := 0; j < ld; j++ {
				if (i >= n || j >= n) && big[i*ld+j] != outside[i*ld+j] {
					t.Fatalf("n=%d: entry (%d,%d) outside the block changed", n, i, j)
				}
			}
		}
	}
}

// TestLUSingular checks that an exactly singular matrix is reported.
func TestLUSingular(t *testing.T) {
	a := []float64{1, 2, 3, 2, 4, 6, 1, 0, 1} // row 2 = 2 × row 1
	piv := make([]int, 3)
	if luFactor(a, 3, 3, piv) {
		t.Fatal("singular matrix factored without complaint")
	}
}

// BenchmarkLU compares the in-place kernel with gonum's LU on the system
// sizes the stages produce. The kernel exists because of this benchmark.
func BenchmarkLU(b *testing.B) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{1, 2, 3, 4, 6, 8} {
		a, rhs := randomSystem(rng, n, false)
		b.Run(fmt.Sprintf("kernel/n=%d", n), func(b *testing.B) {
			lu := make([]float64, n*n)
			x := make([]float64, n)
			piv := make([]int, n)
			b.ReportAllocs()
			for b.Loop() {
				copy(lu, a)
				copy(x, rhs)
				luFactor(lu, n, n, piv)
				luSolve(lu, n, n, piv, x)
			}
		})
		if n <= 4 {
			// The loops alone, without the written-out small cases
			// (n = 2, 3 and 4; n = 1 already takes the loops).
			b.Run(fmt.Sprintf("loops/n=%d", n), func(b *testing.B) {
				lu := make([]float64, n*n)
				x := make([]float64, n)
				piv := make([]int, n)
				b.ReportAllocs()
				for b.Loop() {
					copy(lu, a)
					copy(x, rhs)
					factorLoops(lu, n, n, piv)
					for k, p := range piv {
						if p != k {
							x[k], x[p] = x[p], x[k]
						}
					}
					substitute(lu, n, n, x)
				}
			})
		}
		b.Run(fmt.Sprintf("gonum/n=%d", n), func(b *testing.B) {
			src := mat.NewDense(n, n, a)
			m := mat.NewDense(n, n, nil)
			var f mat.LU
			bv := mat.NewVecDense(n, append([]float64(nil), rhs...))
			x := mat.NewVecDense(n, nil)
			b.ReportAllocs()
			for b.Loop() {
				m.Copy(src)
				f.Factorize(m)
				_ = f.SolveVecTo(x, false, bv)
			}
		})
	}
}

// TestLUWrittenOut checks that luFactor gives the loops' factors and
// pivots bit for bit (the 3×3 case is written out in registers), and the
// same verdict on singular blocks, and that luSolve's written-out
// substitutions (n = 3 and 4) give substitute's solution bit for bit — for
// random blocks inside larger arrays (with every pivot order) and blocks
// with zero or non-finite pivots. (The loops themselves are checked
// against gonum by TestLUAgainstGonum.)
func TestLUWrittenOut(t *testing.T) {
	for _, n := range []int{3, 4} {
		ld := n + 2
		rng := rand.New(rand.NewPCG(9, uint64(n)))
		var cases [][]float64
		for trial := 0; trial < 300; trial++ {
			a, _ := randomSystem(rng, ld, trial%2 == 1)
			cases = append(cases, a)
		}
		for col := range n {
			for _, v := range []float64{0, math.NaN(), math.Inf(1)} {
				a, _ := randomSystem(rng, ld, false)
				// Make column col of every row in the block v, or two rows
				// equal, so that each elimination step can fail.
				for i := range n {
					a[i*ld+col] = v
				}
				cases = append(cases, a)
				dep, _ := randomSystem(rng, ld, false)
				copy(dep[ld:ld+n], dep[0:n]) // rows 0 and 1 equal: singular at step 1
				cases = append(cases, dep)
			}
		}
		for k, a := range cases {
			x, y := append([]float64(nil), a...), append([]float64(nil), a...)
			px, py := make([]int, n), make([]int, n)
			okx, oky := luFactor(x, n, ld, px), factorLoops(y, n, ld, py)
			if okx != oky {
				t.Fatalf("n=%d case %d: written out %v, loops %v", n, k, okx, oky)
			}
			if !okx {
				continue
			}
			for i := range x {
				if math.Float64bits(x[i]) != math.Float64bits(y[i]) {
					t.Fatalf("n=%d case %d: entry %d: written out %v, loops %v", n, k, i, x[i], y[i])
				}
			}
			for i := range px {
				if px[i] != py[i] {
					t.Fatalf("n=%d case %d: pivots %v, loops %v", n, k, px, py)
				}
			}
			_, rhs := randomSystem(rng, n, false)
			bx, by := append([]float64(nil), rhs...), append([]float64(nil), rhs...)
			luSolve(x, n, ld, px, bx)
			for i, p := range py {
				if p != i {
					by[i], by[p] = by[p], by[i]
				}
			}
			substitute(y, n, ld, by)
			for i := range bx {
				if math.Float64bits(bx[i]) != math.Float64bits(by[i]) {
					t.Fatalf("n=%d case %d: solution %v, loops %v", n, k, bx, by)
				}
			}
		}
	}
}
