package objectives_test

import (
	"encoding/json"
	"math"
	"slices"
	"testing"

	"pairsmith/objectives"
)

// TestRipple checks gm_ripple = gm_max/gm_min − 1 and its unbounded cases
// against the definition of docs/metrics.md#gm_ripple (0.42 means 42 %, a doubling is
// 1.0; gm falling to zero, below DeadGM·gm_max, gives an unbounded ripple).
func TestRipple(t *testing.T) {
	inf := math.Inf(1)
	dead := objectives.DeadGM // a variable, so dead·gm_max rounds as in Ripple
	tests := []struct {
		name         string
		gmMin, gmMax float64
		want         float64
	}{
		{"flat", 1e-4, 1e-4, 0},
		{"doubling is 1.0", 2e-4, 4e-4, 1},                         // docs/metrics.md#gm_ripple
		{"42 percent", 1.9e-4, 1.9e-4 * 1.42, 0.42},                // docs/metrics.md#gm_ripple example figure
		{"root two bump", 1e-4, math.Sqrt2 * 1e-4, math.Sqrt2 - 1}, // current-switch peak, docs/families.md#square-law-expectations
		{"just above dead", 1.001e-3, 1, 1/1.001e-3 - 1},
		{"at dead fraction", dead * 3e-4, 3e-4, inf},
		{"below dead fraction", 1e-9, 3e-4, inf},
		{"gm zero", 0, 3e-4, inf},
		{"gm negative", -1e-6, 3e-4, inf},
		{"gm max zero", 0, 0, inf},
		{"gm max negative", -2e-4, -1e-4, inf},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := objectives.Ripple(tt.gmMin, tt.gmMax)
			if math.IsInf(tt.want, 1) {
				if !math.IsInf(got, 1) {
					t.Fatalf("Ripple(%g, %g) = %g, want +Inf", tt.gmMin, tt.gmMax, got)
				}
				return
			}
			if math.Abs(got-tt.want) > 1e-12*math.Max(1, math.Abs(tt.want)) {
				t.Fatalf("Ripple(%g, %g) = %.17g, want %.17g", tt.gmMin, tt.gmMax, got, tt.want)
			}
		})
	}
}

// grid returns n common-mode points lo, lo+h, … computed from their index.
func grid(lo, h float64, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = lo + float64(i)*h
	}
	return v
}

// pairCurrents splits a tail current i0 so that the NMOS share is s at
// every point: i_n = s·i0, i_p = (1 − s)·i0.
func pairCurrents(share []float64, i0 float64) (in, ip []float64) {
	in, ip = make([]float64, len(share)), make([]float64, len(share))
	for i, s := range share {
		in[i], ip[i] = s*i0, (1-s)*i0
	}
	return in, ip
}

// rampShare is a share rising linearly from s0 at a to s1 at b, flat
// outside.
func rampShare(v []float64, a, b, s0, s1 float64) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		switch {
		case x <= a:
			out[i] = s0
		case x >= b:
			out[i] = s1
		default:
			out[i] = s0 + (s1-s0)*(x-a)/(b-a)
		}
	}
	return out
}

// near reports whether got is within tol of want, NaN matching NaN.
func near(got, want, tol float64) bool {
	if math.IsNaN(want) {
		return math.IsNaN(got)
	}
	return math.Abs(got-want) <= tol
}

// TestHandoverRamp checks Handover on a share rising linearly from 0 at a
// to 1 at b, flat outside, with a and b on the sample grid.
//
// Switchover (derived here): between two samples the share is linear in
// vcm, so on a segment ∫ v·ds = s'·∫ v dv = (s₁ − s₀)·(x₀ + x₁)/2, which is
// the term Handover sums: the sum is the exact integral of the piecewise
// linear share through the samples. With a and b on the grid that
// interpolant is the ramp itself, so the result is exact:
// ∫ v ds / ∫ ds = ∫ₐᵇ v dv/(b − a) / 1 = (a + b)/2.
//
// Width: the ramp reaches 10 % at a + 0.1·(b − a) and 90 % at
// a + 0.9·(b − a); linear interpolation between samples is exact on a
// ramp, so the width is 0.8·(b − a).
func TestHandoverRamp(t *testing.T) {
	tests := []struct {
		name   string
		lo, h  float64
		n      int
		ka, kb int // a and b are samples ka and kb
	}{
		{"10mV rail to rail", 0, 0.01, 181, 60, 100},
		{"sharp two-step ramp", 0, 0.01, 181, 90, 92},
		{"5mV offset grid", 0.2, 0.005, 281, 17, 203},
		{"ramp from first sample", 0, 0.01, 101, 0, 40},
		{"ramp to last sample", 0, 0.01, 101, 30, 100},
		{"coarse", -0.5, 0.1, 30, 3, 21},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			v := grid(tt.lo, tt.h, tt.n)
			a, b := v[tt.ka], v[tt.kb]
			in, ip := pairCurrents(rampShare(v, a, b, 0, 1), 20e-6)
			sw, width := objectives.Handover(v, in, ip)
			if want := (a + b) / 2; !near(sw, want, 1e-12) {
				t.Errorf("switchover = %.15g V, want (a+b)/2 = %.15g V", sw, want)
			}
			if want := 0.8 * (b - a); !near(width, want, 1e-12) {
				t.Errorf("width = %.15g V, want 0.8·(b−a) = %.15g V", width, want)
			}
		})
	}
}

// TestHandoverLogistic checks Handover on a logistic share
// s(v) = 1/(1 + e^(−(v−c)/w)).
//
// Exact values (derived here): ds/dv = s(1 − s)/w is even about c, so
// ∫ v ds / ∫ ds = c over a range that holds both tails (here the tails
// left out are below e^(−29), negligible). s = 0.1 where
// e^(−(v−c)/w) = 9, at v = c − w·ln 9, and s = 0.9 at c + w·ln 9, so the
// width is 2·w·ln 9.
//
// Tolerance from the sampling step h: Handover integrates and crosses the
// piecewise linear interpolant ŝ of the samples, and |ŝ − s| ≤ h²/8 ·
// max|s”| on each segment (linear interpolation error, any numerical
// analysis text). For the logistic s” = s(1−s)(1−2s)/w², whose largest
// magnitude is 1/(6√3·w²).
//   - Switchover: integrating by parts, ∫ v dŝ − ∫ v ds = −∫ (ŝ − s) dv
//     (the samples at the ends are exact). Bounding |ŝ − s| by h²/8 times
//     the segment's max|s”| and summing, Σ h·max|s”| ≈ ∫|s”| dv =
//     2·max s' = 1/(2w), so the error is below h²/(16·w) (divided by
//     ∫ ds ≈ 1).
//   - Width: at each crossing the level error h²/8·max|s”| moves the
//     crossing by that over the slope there, s' = 0.1·0.9/w, so each end
//     is off by at most h²/(8·6√3·0.09·w) and the width by twice that.
//     Below c the share is convex, so ŝ ≥ s and the 10 % crossing comes
//     early; above c it is concave and the 90 % crossing comes late: the
//     measured width is never below 2·w·ln 9.
func TestHandoverLogistic(t *testing.T) {
	tests := []struct {
		name  string
		c, w  float64
		lo, h float64
		n     int
	}{
		{"current switch like", 0.9137, 0.03, 0, 0.01, 181},
		{"fine step", 0.9137, 0.03, 0, 0.002, 901},
		{"coarse step", 1.0421, 0.05, -0.2, 0.02, 121},
		{"wide handover", 1.7777, 0.12, -0.8, 0.01, 521},
		{"sharp", 0.61234, 0.012, 0, 0.005, 361},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			v := grid(tt.lo, tt.h, tt.n)
			share := make([]float64, len(v))
			for i, x := range v {
				share[i] = 1 / (1 + math.Exp(-(x-tt.c)/tt.w))
			}
			if share[0] > 1e-9 || share[len(v)-1] < 1-1e-9 {
				t.Fatalf("test setup: the range must hold both tails (share %g … %g)", share[0], share[len(v)-1])
			}
			in, ip := pairCurrents(share, 20e-6)
			sw, width := objectives.Handover(v, in, ip)
			h2 := tt.h * tt.h
			tolSw := h2 / (16 * tt.w)
			if !near(sw, tt.c, tolSw) {
				t.Errorf("switchover = %.9g V, want c = %.9g V within h²/(16w) = %.3g V", sw, tt.c, tolSw)
			}
			exact := 2 * tt.w * math.Log(9)
			tolW := 2 * h2 / (8 * 6 * math.Sqrt(3) * 0.09 * tt.w)
			if !near(width, exact, tolW) {
				t.Errorf("width = %.9g V, want 2·w·ln 9 = %.9g V within %.3g V", width, exact, tolW)
			}
			t.Logf("switchover error %.3g V (bound %.3g), width error %.3g V (bound %.3g)", sw-tt.c, tolSw, width-exact, tolW)
			if width < exact-1e-12 {
				t.Errorf("width = %.12g V below 2·w·ln 9 = %.12g V; the convex/concave halves make it an upper bound", width, exact)
			}
		})
	}
}

// TestHandoverTwoStep checks a two-step handover (share 0 → 0.5 plateau → 1,
// as the 1:3 mirrors give): docs/metrics.md#switchover puts the switchover in the middle
// of the plateau when the two steps are symmetric.
func TestHandoverTwoStep(t *testing.T) {
	v := grid(0, 0.01, 181)
	t.Run("linear steps", func(t *testing.T) {
		// Share 0 → 0.5 on [a1, b1], 0.5 on [b1, a2], 0.5 → 1 on [a2, b2],
		// with b1 − a1 = b2 − a2 = d. As in TestHandoverRamp each ramp
		// contributes its rise times its centre:
		// 0.5·(a1+b1)/2 + 0.5·(a2+b2)/2 = (a1+b1+a2+b2)/4, and with
		// a1 = b1 − d, b2 = a2 + d that is (b1 + a2)/2, the plateau's middle.
		// The 10 % point is on the first ramp, 0.2 of its way (share
		// 0.1 of 0.5); the 90 % point on the second, 0.8 of its way.
		for _, k := range [][4]int{{30, 50, 110, 130}, {60, 70, 100, 110}, {10, 80, 100, 170}} {
			a1, b1, a2, b2 := v[k[0]], v[k[1]], v[k[2]], v[k[3]]
			share := make([]float64, len(v))
			lower, upper := rampShare(v, a1, b1, 0, 0.5), rampShare(v, a2, b2, 0.5, 1)
			for i, x := range v {
				share[i] = lower[i]
				if x > b1 {
					share[i] = upper[i]
				}
			}
			in, ip := pairCurrents(share, 80e-6)
			sw, width := objectives.Handover(v, in, ip)
			if want := (b1 + a2) / 2; !near(sw, want, 1e-12) {
				t.Errorf("steps %v: switchover = %.15g V, want the plateau's middle %.15g V", k, sw, want)
			}
			lo, hi := a1+0.2*(b1-a1), a2+0.8*(b2-a2)
			if want := hi - lo; !near(width, want, 1e-12) {
				t.Errorf("steps %v: width = %.15g V, want %.15g V", k, width, want)
			}
		}
	})
	t.Run("1:3 mirror currents", func(t *testing.T) {
		// Pair currents of the 1:3 mirror scheme (docs/families.md#mirror-1to3): a
		// fraction x of the NMOS tail I is diverted and three times it
		// added to the PMOS tail: i_n = (1−x)·I, i_p = (1+3x)·I, x falling
		// linearly from 1 to 0 over the lower step; the upper step is its
		// mirror image, i_n = (1+3y)·I, i_p = (1−y)·I. The share is then
		// odd about the centre c (s(c+u) = 1 − s(c−u)) and the grid is
		// symmetric about c, so the switchover is c, the plateau's middle.
		const i0 = 20e-6
		c := v[90]
		in, ip := make([]float64, len(v)), make([]float64, len(v))
		for i := range v {
			u := float64(i - 90) // steps from the centre
			var x, y float64
			switch au := math.Abs(u); {
			case au >= 70: // beyond the step: one pair alone
				x = 1
			case au > 30:
				x = (au - 30) / 40
			}
			if u > 0 {
				x, y = 0, x
			}
			in[i] = (1 - x + 3*y) * i0
			ip[i] = (1 + 3*x - y) * i0
		}
		if in[0] != 0 || ip[len(v)-1] != 0 || in[90] != ip[90] {
			t.Fatalf("test setup: want share 0, 0.5, 1 at the ends and centre")
		}
		sw, width := objectives.Handover(v, in, ip)
		if !near(sw, c, 1e-12) {
			t.Errorf("switchover = %.15g V, want the plateau's middle %.15g V", sw, c)
		}
		// Width (derived here): on the lower step s = (1−x)/(2(1+x)) is
		// 10 % at x = 2/3, that is 30 + 40·2/3 steps (0.5667 V) below c, and
		// by symmetry 90 % as far above: 2·(0.3 + 0.4·2/3) V. The sampled
		// crossing is off by at most h²/8·max|s''|/min|s'| over its
		// segment (linear interpolation error): with dx/dv = 2.5/V,
		// |s''| = 2·2.5²/(1+x)³ ≤ 2.78/V² and |s'| = 2.5/(1+x)² ≥ 0.891/V
		// for x in [0.65, 0.675], so 3.9e-5 V per end.
		want := 2 * (0.3 + 0.4*2.0/3)
		if tol := 2 * 0.01 * 0.01 / 8 * 2.78 / 0.891; !near(width, want, tol) {
			t.Errorf("width = %.9g V, want %.9g V within %.2g V", width, want, tol)
		}
	})
}

// TestHandoverEdges checks the cases where the handover, or part of it, is
// undefined (docs/metrics.md#switchover: a single pair has no handover) and the rules for
// skipped points and non-monotone shares.
func TestHandoverEdges(t *testing.T) {
	nan := math.NaN()
	v := grid(0, 0.01, 101)
	ramp := rampShare(v, v[30], v[70], 0, 1) // switchover 0.5, width 0.32
	rin, rip := pairCurrents(ramp, 20e-6)
	zeros := make([]float64, len(v))
	tail := make([]float64, len(v))
	for i := range tail {
		tail[i] = 20e-6 * math.Min(1, float64(i)/20) // a tail that starts from 0 at one rail
	}

	// skipped: the ramp with both currents zeroed at the ends (a dead
	// region) and at points inside the ramp; on a ramp the interpolant
	// across a gap is the ramp still, so the result is unchanged.
	sin, sip := slices.Clone(rin), slices.Clone(rip)
	for _, i := range []int{0, 1, 2, 33, 34, 50, 61, 98, 99, 100} {
		sin[i], sip[i] = 0, 0
	}
	// non-monotone: 0 → 0.95 over [0.2, 0.4], down to 0.85 at 0.5, up to
	// 1 at 0.6. The highest vcm still below 90 % is on the last rise,
	// 0.5 + 0.05/0.15·0.1; the 10 % point 0.2 + 0.1/0.95·0.2.
	nm := make([]float64, len(v))
	for i, x := range v {
		switch {
		case i <= 20:
			nm[i] = 0
		case i <= 40:
			nm[i] = 0.95 * (x - v[20]) / (v[40] - v[20])
		case i <= 50:
			nm[i] = 0.95 - 0.1*(x-v[40])/(v[50]-v[40])
		case i <= 60:
			nm[i] = 0.85 + 0.15*(x-v[50])/(v[60]-v[50])
		default:
			nm[i] = 1
		}
	}
	nmIn, nmIP := pairCurrents(nm, 20e-6)
	partial := rampShare(v, v[30], v[70], 0, 0.7) // never reaches 90 %
	pin, pip := pairCurrents(partial, 20e-6)
	high := rampShare(v, v[30], v[70], 0.3, 1) // already above 10 % at the first point
	hin, hip := pairCurrents(high, 20e-6)
	oneIn, oneIP := make([]float64, len(v)), make([]float64, len(v)) // one conducting point
	oneIn[50], oneIP[50] = 5e-6, 15e-6

	tests := []struct {
		name      string
		in, ip    []float64
		sw, width float64 // NaN: want NaN
		checkSw   bool
	}{
		{"n-pair only (i_p ≡ 0)", tail, zeros, nan, nan, true},
		{"p-pair only (i_n ≡ 0)", zeros, tail, nan, nan, true},
		{"nothing conducts", zeros, zeros, nan, nan, true},
		{"one conducting point", oneIn, oneIP, nan, nan, true},
		{"zero-current points skipped", sin, sip, 0.5, 0.32, true},
		// A linear rise of any height has its centre as switchover
		// (TestHandoverRamp), but a share that never reaches 90 % has no
		// width.
		{"never reaches 90 %", pin, pip, 0.5, nan, true},
		// Share 0.3 → 1 over [0.3, 0.7] V reaches 90 % at
		// 0.3 + (0.9−0.3)/(1−0.3)·0.4; the lowest vcm at or above 10 % is
		// the first sample, 0 V.
		{"above 10 % from the start", hin, hip, 0.5, 0.3 + (0.9-0.3)/(1-0.3)*0.4, true},
		// Switchover checked in TestHandoverNonMonotoneSwitchover.
		{"non-monotone share", nmIn, nmIP, 0, (0.5 + 0.05/0.15*0.1) - (0.2 + 0.1/0.95*0.2), false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			sw, width := objectives.Handover(v, tt.in, tt.ip)
			if tt.checkSw && !near(sw, tt.sw, 1e-12) {
				t.Errorf("switchover = %.15g, want %.15g", sw, tt.sw)
			}
			if !near(width, tt.width, 1e-12) {
				t.Errorf("width = %.15g, want %.15g", width, tt.width)
			}
		})
	}
}

// TestHandoverNonMonotoneSwitchover checks the switchover of the
// non-monotone share by the integral itself (∫ v ds / ∫ ds): each linear
// piece contributes its change of share times its centre (derived in
// TestHandoverRamp).
func TestHandoverNonMonotoneSwitchover(t *testing.T) {
	v := grid(0, 0.01, 101)
	pieces := []struct{ a, b, s0, s1 float64 }{
		{0.2, 0.4, 0, 0.95}, {0.4, 0.5, 0.95, 0.85}, {0.5, 0.6, 0.85, 1},
	}
	share := make([]float64, len(v))
	var num, den float64
	for _, p := range pieces {
		num += (p.s1 - p.s0) * (p.a + p.b) / 2
		den += p.s1 - p.s0
		for i, x := range v {
			if x >= p.a-1e-12 && x <= p.b+1e-12 {
				share[i] = p.s0 + (p.s1-p.s0)*(x-p.a)/(p.b-p.a)
			} else if x > p.b {
				share[i] = p.s1
			}
		}
	}
	in, ip := pairCurrents(share, 20e-6)
	sw, _ := objectives.Handover(v, in, ip)
	if want := num / den; !near(sw, want, 1e-9) {
		t.Errorf("switchover = %.15g V, want %.15g V", sw, want)
	}
}

// TestMetricsJSON checks the JSON of Metrics: the seven keys of docs/files.md#eval-json
// plus gm_id_min (added by issue 3's search) and the mismatch figures
// offset and offset_drift (issue 9), null for NaN and ±Inf, and UnmarshalJSON reading it back (null as
// +Inf for gm_ripple, NaN elsewhere; finite values bit for bit, since
// encoding/json writes the shortest decimal that reads back exactly).
func TestMetricsJSON(t *testing.T) {
	keys := []string{"area", "gm_id_min", "gm_max", "gm_min", "gm_ripple", "min_supply", "noise", "offset", "offset_drift", "power", "slew", "slew_current", "switchover", "transition_width"}
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name  string
		m     objectives.Metrics
		nulls []string
	}{
		{"all finite", objectives.Metrics{GMMin: 1.9e-4, GMMax: 2.7e-4, GMRipple: 0.42105263157894735,
			Power: 7.2e-5, Area: 1.6e-10, Switchover: 1.02, TransitionWidth: 0.11, GMOverIDMin: 12.5, Offset: 3e-3, OffsetDrift: 1e-3, SlewCurrent: 2e-5, Slew: 4e6, MinSupply: 1.4, Noise: 2e-8}, nil},
		{"single pair", objectives.Metrics{GMMin: 0, GMMax: 3.1e-4, GMRipple: inf,
			Power: 4.5e-5, Area: 5.6e-11, Switchover: nan, TransitionWidth: nan, GMOverIDMin: 14, Offset: nan, OffsetDrift: nan, SlewCurrent: 0, Slew: nan, MinSupply: nan, Noise: nan},
			[]string{"gm_ripple", "switchover", "transition_width", "offset", "offset_drift", "slew", "min_supply", "noise"}},
		{"odd values", objectives.Metrics{GMMin: math.SmallestNonzeroFloat64, GMMax: math.MaxFloat64,
			GMRipple: math.Inf(-1), Power: nan, Area: 1.0000000000000002, Switchover: -0.1, TransitionWidth: 0, GMOverIDMin: nan, Offset: 1e-9, OffsetDrift: 0, SlewCurrent: 1, Slew: 1e12, MinSupply: 0.9, Noise: 1e-9},
			[]string{"gm_ripple", "power", "gm_id_min"}},
		{"zero value", objectives.Metrics{}, nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			b, err := json.Marshal(tt.m)
			if err != nil {
				t.Fatal(err)
			}
			var raw map[string]any
			if err := json.Unmarshal(b, &raw); err != nil {
				t.Fatalf("%s does not parse: %v", b, err)
			}
			var got []string
			for k, val := range raw {
				got = append(got, k)
				if isNull := val == nil; isNull != slices.Contains(tt.nulls, k) {
					t.Errorf("%s: %s = %v, want null %v", b, k, val, !isNull)
				}
			}
			slices.Sort(got)
			if !slices.Equal(got, keys) {
				t.Errorf("keys %v, want %v", got, keys)
			}
			var back objectives.Metrics
			if err := json.Unmarshal(b, &back); err != nil {
				t.Fatal(err)
			}
			fields := func(m objectives.Metrics) []float64 {
				return []float64{m.GMMin, m.GMMax, m.GMRipple, m.Power, m.Area, m.Switchover, m.TransitionWidth, m.GMOverIDMin}
			}
			names := []string{"gm_min", "gm_max", "gm_ripple", "power", "area", "switchover", "transition_width", "gm_id_min"}
			in, out := fields(tt.m), fields(back)
			for i := range in {
				switch {
				case slices.Contains(tt.nulls, names[i]) && names[i] == "gm_ripple":
					if !math.IsInf(out[i], 1) {
						t.Errorf("%s read back as %g, want +Inf", names[i], out[i])
					}
				case slices.Contains(tt.nulls, names[i]):
					if !math.IsNaN(out[i]) {
						t.Errorf("%s read back as %g, want NaN", names[i], out[i])
					}
				case math.Float64bits(out[i]) != math.Float64bits(in[i]):
					t.Errorf("%s read back as %.17g, want %.17g", names[i], out[i], in[i])
				}
			}
		})
	}
}

// TestMetricsUnmarshalMissing checks that keys a document leaves out read
// as null does (+Inf ripple, NaN elsewhere) and that a document that is not
// an object is an error.
func TestMetricsUnmarshalMissing(t *testing.T) {
	var m objectives.Metrics
	if err := json.Unmarshal([]byte(`{"gm_min": 1e-4, "gm_ripple": null}`), &m); err != nil {
		t.Fatal(err)
	}
	if m.GMMin != 1e-4 || !math.IsInf(m.GMRipple, 1) || !math.IsNaN(m.GMMax) || !math.IsNaN(m.Power) ||
		!math.IsNaN(m.Area) || !math.IsNaN(m.Switchover) || !math.IsNaN(m.TransitionWidth) {
		t.Errorf("got %+v", m)
	}
	for _, bad := range []string{`[1, 2]`, `{"gm_min": "1e-4"}`, `"x"`} {
		if err := json.Unmarshal([]byte(bad), &m); err == nil {
			t.Errorf("%s: no error", bad)
		}
	}
}

// TestMetricsSame checks the identity of two measurements: bit for bit,
// NaN matching NaN (IEEE 754 NaN never equals itself, so == would fail),
// +0 and −0 told apart, and every field taken into account, the last one
// added included (common practice, no source).
func TestMetricsSame(t *testing.T) {
	base := objectives.Metrics{GMMin: 1e-4, GMMax: 1.1e-4, GMRipple: 0.1, Power: 1e-4, Area: 1e-9,
		Switchover: math.NaN(), TransitionWidth: math.NaN(), GMOverIDMin: 12}
	for _, tc := range []struct {
		name   string
		change func(a, b *objectives.Metrics)
		same   bool
	}{
		{"identical, NaN fields included", func(_, _ *objectives.Metrics) {}, true},
		{"last field differs", func(_, b *objectives.Metrics) { b.GMOverIDMin = math.Nextafter(12, 13) }, false},
		{"NaN against a number", func(_, b *objectives.Metrics) { b.Switchover = 0.9 }, false},
		{"−0 against +0", func(a, b *objectives.Metrics) { a.GMRipple, b.GMRipple = math.Copysign(0, -1), 0 }, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a, b := base, base
			tc.change(&a, &b)
			if got := a.Same(b); got != tc.same {
				t.Errorf("Same = %v, want %v", got, tc.same)
			}
		})
	}
}
