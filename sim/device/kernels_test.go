package device

import (
	"math"
	"math/rand"
	"testing"
)

// ulpsApart returns how many units in the last place of want got is from
// want.
func ulpsApart(got, want float64) float64 {
	if got == want {
		return 0
	}
	return math.Abs(got-want) / math.Abs(math.Nextafter(want, math.Inf(1))-want)
}

// TestKernels holds expNeg and log1pUnit within 2 ulp of the Go library's
// math.Exp and math.Log1p (reference library) over their ranges — uniform
// over the whole range, dense near 0, and across many decades — and equal
// to the library at the ends and outside the ranges.
func TestKernels(t *testing.T) {
	rng := rand.New(rand.NewSource(1))
	const maxULP = 2
	worstE, worstL := 0.0, 0.0
	for i := 0; i < 400000; i++ {
		var x, y float64
		switch i % 3 {
		case 0:
			x, y = -rng.Float64()*707, rng.Float64()
		case 1:
			x, y = -rng.Float64()*5, rng.Float64()/64
		default:
			x, y = -math.Exp(-rng.Float64()*700), math.Exp(-rng.Float64()*700)
		}
		if u := ulpsApart(expNeg(x), math.Exp(x)); u > worstE {
			worstE = u
			if u > maxULP {
				t.Errorf("expNeg(%v) = %v, math.Exp %v: %.3g ulp apart", x, expNeg(x), math.Exp(x), u)
			}
		}
		if u := ulpsApart(log1pUnit(y), math.Log1p(y)); u > worstL {
			worstL = u
			if u > maxULP {
				t.Errorf("log1pUnit(%v) = %v, math.Log1p %v: %.3g ulp apart", y, log1pUnit(y), math.Log1p(y), u)
			}
		}
	}
	t.Logf("worst: expNeg %.3g ulp, log1pUnit %.3g ulp", worstE, worstL)
	for _, x := range []float64{0, math.Copysign(0, -1), -5e-324, -1e-300, expMin, math.Nextafter(expMin, 0),
		math.Nextafter(expMin, -1000), -745, -746, math.Inf(-1), 1e-300, 1, 710, math.NaN()} {
		got, want := expNeg(x), math.Exp(x)
		if !(got == want || (math.IsNaN(got) && math.IsNaN(want))) && ulpsApart(got, want) > maxULP {
			t.Errorf("expNeg(%v) = %v, math.Exp %v", x, got, want)
		}
	}
	for _, y := range []float64{0, math.Copysign(0, -1), 5e-324, 1e-300, 1.0 / 512, 1 - 1.0/512, 1, math.Nextafter(1, 2),
		2, -0.5, -1, math.Inf(1), math.NaN()} {
		got, want := log1pUnit(y), math.Log1p(y)
		if !(got == want || (math.IsNaN(got) && math.IsNaN(want))) && ulpsApart(got, want) > maxULP {
			t.Errorf("log1pUnit(%v) = %v, math.Log1p %v", y, got, want)
		}
	}
}

// The arguments the kernels' benchmarks cycle through: EKV's ranges.
func kernelArgs() (xs, ys [256]float64) {
	rng := rand.New(rand.NewSource(2))
	for i := range xs {
		xs[i] = -rng.Float64() * 30
		ys[i] = math.Exp(xs[i])
	}
	return xs, ys
}

var kernelSink float64

// BenchmarkKernels compares the kernels with the library on the same
// arguments.
func BenchmarkKernels(b *testing.B) {
	xs, ys := kernelArgs()
	for _, bc := range []struct {
		name string
		f    func(float64) float64
		args *[256]float64
	}{
		{"math.Exp", math.Exp, &xs},
		{"expNeg", expNeg, &xs},
		{"math.Log1p", math.Log1p, &ys},
		{"log1pUnit", log1pUnit, &ys},
	} {
		b.Run(bc.name, func(b *testing.B) {
			s := 0.0
			for i := 0; b.Loop(); i++ {
				s += bc.f(bc.args[i&255])
			}
			kernelSink = s
		})
	}
}
