package objectives

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestDiameter: the pruned diameter is every pair's largest squared
// distance, bit for bit, on clouds of several shapes (a smooth curve
// like an offset along the range, a random cloud, repeated points),
// against the plain comparison of every pair.
func TestDiameter(t *testing.T) {
	brute := func(pts [][]float64) float64 {
		w := 0.0
		for a := range pts {
			for b := a + 1; b < len(pts); b++ {
				d := 0.0
				for j, x := range pts[a] {
					u := x - pts[b][j]
					d += u * u
				}
				w = math.Max(w, d)
			}
		}
		return w
	}
	rng := rand.New(rand.NewPCG(1, 2))
	curve := func(n, k int) [][]float64 {
		pts := make([][]float64, n)
		for i := range pts {
			v := float64(i) / float64(n)
			pts[i] = make([]float64, k)
			for j := range pts[i] {
				pts[i][j] = 1e-4 * math.Tanh(8*(v-0.5)+float64(j)) * float64(j%3+1)
			}
		}
		return pts
	}
	cloud := func(n, k int) [][]float64 {
		pts := make([][]float64, n)
		for i := range pts {
			pts[i] = make([]float64, k)
			for j := range pts[i] {
				pts[i][j] = rng.NormFloat64()
			}
		}
		return pts
	}
	same := func(n, k int) [][]float64 {
		pts := cloud(1, k)
		for len(pts) < n {
			pts = append(pts, pts[0])
		}
		return pts
	}
	for _, tc := range []struct {
		name string
		pts  [][]float64
	}{
		{"none", nil},
		{"one point", cloud(1, 4)},
		{"two points", cloud(2, 4)},
		{"curve of 181 points in 28 dimensions", curve(181, 28)},
		{"curve of 37 points in 28 dimensions", curve(37, 28)},
		{"cloud of 200 points in 10 dimensions", cloud(200, 10)},
		{"one point repeated", same(50, 6)},
	} {
		if got, want := diameter(tc.pts), brute(tc.pts); math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("%s: diameter %v, every pair %v", tc.name, got, want)
		}
	}
}

// TestSwitchoverGradient: shareCentre's gradient of the switchover along
// random changes of the pair currents agrees with central differences of
// Handover itself (steps of 1e-6 of each current, error of order h², our
// bound 1e-6 relative), on pair currents that hand over as a tanh of the
// common mode (a current switch's shape, our choice), with and without
// points where neither pair conducts, and on a share that rises and
// falls back almost to its start (Handover's second centroid, of the
// steps' sizes); a share that does not move has no switchover and no
// gradient.
func TestSwitchoverGradient(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	tanh := func(v float64) float64 { return 0.5 * (1 + math.Tanh((v-1.1)/0.08)) }
	bump := func(v float64) float64 { return 0.1 + 0.8*math.Exp(-(v-0.9)*(v-0.9)/0.02) + 0.01*v }
	for _, tc := range []struct {
		name  string
		share func(v float64) float64
		dead  int // points at the low end where neither pair conducts
	}{
		{"both pairs conduct everywhere", tanh, 0},
		{"dead at the low end", tanh, 5},
		{"a share that moves both ways", bump, 0},
	} {
		np := 61
		vcm, in, ip := make([]float64, np), make([]float64, np), make([]float64, np)
		for i := range vcm {
			vcm[i] = 1.8 * float64(i) / float64(np-1)
			share := tc.share(vcm[i])
			in[i], ip[i] = 20e-6*share+1e-9, 20e-6*(1-share)+2e-9
			if i < tc.dead {
				in[i], ip[i] = 0, 0
			}
		}
		gIn, gIp := make([]float64, np), make([]float64, np)
		base := shareCentre(vcm, in, ip, gIn, gIp)
		if want, _ := Handover(vcm, in, ip); math.Float64bits(base) != math.Float64bits(want) || math.IsNaN(base) {
			t.Fatalf("%s: shareCentre %v, Handover %v", tc.name, base, want)
		}
		for trial := range 5 {
			dIn, dIp := make([]float64, np), make([]float64, np)
			want := 0.0
			for i := range dIn {
				if i >= tc.dead {
					dIn[i], dIp[i] = rng.NormFloat64()*in[i], rng.NormFloat64()*ip[i]
				}
				want += gIn[i]*dIn[i] + gIp[i]*dIp[i]
			}
			const h = 1e-6 // of the changes, each as large as its current
			at := func(t float64) float64 {
				n1, p1 := make([]float64, np), make([]float64, np)
				for i := range n1 {
					n1[i], p1[i] = in[i]+t*dIn[i], ip[i]+t*dIp[i]
				}
				s, _ := Handover(vcm, n1, p1)
				return s
			}
			fd := (at(h) - at(-h)) / (2 * h)
			if math.Abs(fd-want) > 1e-6*math.Abs(fd) {
				t.Errorf("%s, change %d: gradient gives %g V per unit, differences %g", tc.name, trial, want, fd)
			}
		}
	}
	flat := []float64{1e-6, 1e-6, 1e-6}
	g := []float64{1, 1, 1}
	if sw := shareCentre([]float64{0, 1, 2}, flat, flat, g, slices.Clone(g)); !math.IsNaN(sw) || g[0] != 0 {
		t.Errorf("a share that does not move: switchover %v, gradient %v", sw, g)
	}
}
