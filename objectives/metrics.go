// Package objectives turns solved sweeps into the metrics a designer
// reads (gm flatness, power, area, where and how sharply the pairs hand
// over), reads the design files and spec sheets that set them, and
// evaluates one sized candidate end to end.
package objectives

import (
	"cmp"
	"encoding/json"
	"math"
	"reflect"

	"pairsmith/sim"
	"pairsmith/topologies"
)

// Caution is printed with every result.
const Caution = "Estimates from compact models; verify with the foundry's models and a licensed sign-off flow before use."

// DeadGM is the fraction of gm_max below which gm counts as zero: a pair
// that has switched off. Where gm falls that low the ripple is unbounded.
const DeadGM = 1e-3

// Metrics are the figures of merit of one stage under one set of
// conditions (docs/metrics.md#scope-of-a-measurement). Values without a meaning for the stage are
// NaN (a single pair's switchover) or +Inf (an unbounded ripple); JSON
// writes both as null.
type Metrics struct {
	GMMin           float64 // S
	GMMax           float64 // S
	GMRipple        float64 // gm_max/gm_min − 1; +Inf when gm falls to zero
	Power           float64 // W, the largest over the range
	Area            float64 // m², Σ W·L·M
	Switchover      float64 // V, centre of the handover; NaN without one
	TransitionWidth float64 // V, 10 % to 90 % of the NMOS share; NaN without one
	// GMOverIDMin is the smallest 2·gm/(i_n + i_p) over the range, 1/V:
	// the gm/I_D of the input transistors where they are most strongly
	// inverted (exactly theirs where one pair conducts). Physics bounds
	// gm/I_D by 1/(n·U_T), its weak-inversion value; the level-1 model,
	// which has no weak inversion, can exceed that, so a large value flags
	// a design outside the model's validity. NaN when no pair conducts.
	GMOverIDMin float64
	// Offset is the k-sigma input offset from device mismatch, the
	// largest over the range, and OffsetDrift the k-sigma change of
	// offset between two common modes, V, with k the design's
	// mismatch.sigma (docs/mismatch.md); NaN when not estimated (a process
	// without mismatch coefficients, or a search's look that needs none).
	Offset, OffsetDrift float64
	// SlewCurrent is the smallest output current the stage delivers for a
	// large input over the range, A, and Slew that current into the
	// design's load, V/s (NaN without a load): docs/metrics.md#slew. NaN
	// when not estimated.
	SlewCurrent, Slew float64
	// MinSupply is the lowest supply at which the stage still works rail
	// to rail at every corner and temperature of its sign-off, V
	// (MinSupplyOf; docs/metrics.md#min_supply): one value for the whole
	// design, the same under each of its conditions. NaN when not
	// estimated, +Inf when it does not work at the highest supply.
	MinSupply float64
	// Noise is the input-referred voltage noise density at
	// the design's noise frequency (10 kHz unless set), the largest over
	// the range, V/√Hz
	// (docs/noise.md); NaN when not estimated.
	Noise float64
}

// MarshalJSON writes the metrics by their catalog keys (their names in
// docs/metrics.md), NaN and Inf as null.
func (m Metrics) MarshalJSON() ([]byte, error) { return json.Marshal(metricsJSON(catalog, m)) }

func metricsJSON(entries []Entry, m Metrics) map[string]*float64 {
	out := map[string]*float64{}
	for _, e := range entries {
		if e.Kind == Figure {
			out[e.Key] = finite(e.Value(m))
		}
	}
	return out
}

// UnmarshalJSON reads what MarshalJSON writes; null, or a key left out,
// reads back as +Inf for an unbounded figure (the ripple) and NaN
// elsewhere.
func (m *Metrics) UnmarshalJSON(b []byte) error {
	var raw map[string]*float64
	if err := json.Unmarshal(b, &raw); err != nil {
		return err
	}
	*m = metricsFromJSON(catalog, raw)
	return nil
}

func metricsFromJSON(entries []Entry, raw map[string]*float64) Metrics {
	var m Metrics
	for _, e := range entries {
		if e.Kind != Figure {
			continue
		}
		v := math.NaN()
		switch p := raw[e.Key]; {
		case p != nil:
			v = *p
		case e.Unbounded:
			v = math.Inf(1)
		}
		*e.Field(&m) = v
	}
	return m
}

func finite(v float64) *float64 {
	if !isFinite(v) {
		return nil
	}
	return &v
}

// CurvePoint is one point of a swept stage.
type CurvePoint struct {
	VCM float64 `json:"vcm"` // V
	GM  float64 `json:"gm"`  // S
	IN  float64 `json:"i_n"` // A, NMOS pair total
	IP  float64 `json:"i_p"` // A, PMOS pair total
}

// Curve extracts the gm and pair-current curves of a sweep.
func Curve(st *topologies.Stage, res *sim.Result) []CurvePoint {
	c := st.Circuit
	in, ip := c.ProbeIndex(topologies.ProbeIN), c.ProbeIndex(topologies.ProbeIP)
	out := make([]CurvePoint, res.Len())
	for i := range out {
		out[i] = CurvePoint{VCM: res.VCM[i], GM: res.GM[i], IN: res.Probe[in][i], IP: res.Probe[ip][i]}
	}
	return out
}

// Measure computes the metrics of a sweep over all its points.
func Measure(st *topologies.Stage, res *sim.Result) Metrics {
	c := st.Circuit
	var m Metrics
	in, ip := res.Probe[c.ProbeIndex(topologies.ProbeIN)], res.Probe[c.ProbeIndex(topologies.ProbeIP)]
	m.GMMin, m.GMMax, m.GMOverIDMin = math.Inf(1), math.Inf(-1), math.Inf(1)
	m.Offset, m.OffsetDrift = math.NaN(), math.NaN()
	m.SlewCurrent, m.Slew, m.MinSupply, m.Noise = math.NaN(), math.NaN(), math.NaN(), math.NaN()
	for i, g := range res.GM {
		// A gm below zero here lies within the solver's tolerance of it
		// (CheckPhysical refuses a sweep with one beyond): it is zero.
		g = max(g, 0)
		m.GMMin = min(m.GMMin, g)
		m.GMMax = max(m.GMMax, g)
		if tot := in[i] + ip[i]; tot > 0 {
			m.GMOverIDMin = min(m.GMOverIDMin, 2*g/tot)
		}
	}
	if math.IsInf(m.GMOverIDMin, 1) {
		m.GMOverIDMin = math.NaN()
	}
	m.GMRipple = Ripple(m.GMMin, m.GMMax)
	// Power: the stage's own supply current at its worst point, plus the
	// summing stage's constant bias.
	for _, p := range res.Probe[c.ProbeIndex(topologies.ProbePower)] {
		m.Power = max(m.Power, p)
	}
	m.Power += st.Supply * summingCurrent(st, res)
	for _, t := range c.Mosfets {
		m.Area += t.Geom.Area()
	}
	m.Switchover, m.TransitionWidth = math.NaN(), math.NaN()
	if st.PairN[0] != "" && st.PairP[0] != "" {
		m.Switchover, m.TransitionWidth = Handover(res.VCM, in, ip)
	}
	return m
}

// Ripple returns gm_max/gm_min − 1, or +Inf when gm_min is zero (below
// DeadGM·gm_max) or negative. Evaluate and MeasureDesign refuse a sweep
// whose gm is negative beyond the solver's tolerance (CheckPhysical), so
// in their metrics +Inf always means a gm that falls to zero.
func Ripple(gmMin, gmMax float64) float64 {
	if !(gmMax > 0) || !(gmMin > DeadGM*gmMax) {
		return math.Inf(1)
	}
	return gmMax/gmMin - 1
}

// Handover returns the switchover — the centre of the handover,
// ∫ vcm · d share / ∫ d share with share = i_n / (i_n + i_p) — and the
// transition width, from the lowest vcm where the share reaches 10 % to
// the highest where it is still below 90 %, both interpolated linearly
// between samples. A share that moves both ways can put that ratio
// outside the sweep (a net change small beside the moves); the switchover
// is then the centre of all the moves, ∫ vcm · |d share| / ∫ |d share|,
// which is inside. Either is NaN when the share does not cover the
// span it needs: no net change of share for the switchover, a share that
// never reaches 10 % or 90 % for the width.
func Handover(vcm, in, ip []float64) (switchover, width float64) {
	switchover, width = shareCentre(vcm, in, ip, nil, nil), math.NaN()
	// One pass over the points where some pair conducts: the two
	// crossings.
	var (
		prevX, prevS float64
		lo           = math.NaN()
		seen         int
		crossHi      = math.NaN() // upward 90 % crossing after the last point below it
	)
	for i := range vcm {
		tot := in[i] + ip[i]
		if !(tot > 0) {
			continue
		}
		x, sh := vcm[i], in[i]/tot
		switch {
		case seen == 0 && sh >= 0.1:
			lo = x
		case seen > 0 && math.IsNaN(lo) && sh >= 0.1:
			lo = cross(prevX, prevS, x, sh, 0.1)
		}
		if seen > 0 && prevS < 0.9 && sh >= 0.9 {
			crossHi = cross(prevX, prevS, x, sh, 0.9)
		}
		if sh < 0.9 {
			crossHi = math.NaN()
		}
		prevX, prevS = x, sh
		seen++
	}
	// The highest vcm still below 90 % is where the share last crosses
	// 90 % upwards (crossHi); a share that ends below 90 % has none.
	if hi := crossHi; seen >= 2 && !math.IsNaN(lo) && !math.IsNaN(hi) && hi >= lo {
		width = hi - lo
	}
	return switchover, width
}

// shareCentre returns Handover's switchover over the points k = 0 … M−1
// where a pair conducts, of common mode x_k and share s_k = in/(in+ip):
// the centroid of the share's steps, S = Σ m_k·Δ_k / (s_M−1 − s_0)
// (Δ_k = s_k − s_k−1, m_k = (x_k−1 + x_k)/2), or, where S falls outside
// the points, S' = Σ m_k·|Δ_k| / Σ |Δ_k|; NaN for fewer than two points
// or a net change of share of 1e-3 or less. When gIn and gIp are not
// nil (as long as vcm) it also sets them to the switchover's gradient
// with respect to each point's pair currents, by the chain rule through
// the shares, ∂s/∂in = ip/(in+ip)², ∂s/∂ip = −in/(in+ip)², with
//
//	∂S/∂s_k  = (m_k − m_k+1 + S·([k = 0] − [k = M−1])) / (s_M−1 − s_0),
//	∂S'/∂s_k = (m_k·σ_k − m_k+1·σ_k+1 − S'·(σ_k − σ_k+1)) / Σ |Δ_k|,
//
// σ_k the sign of Δ_k, and m, σ zero outside 1 … M−1 (zero where no
// pair conducts, or where the switchover is NaN).
func shareCentre(vcm, in, ip, gIn, gIp []float64) float64 {
	var (
		first, firstX, prevX, prevS float64
		num, absNum, absSum         float64 // Σ m·Δ, Σ m·|Δ|, Σ |Δ|
		seen                        int
	)
	for i := range vcm {
		tot := in[i] + ip[i]
		if !(tot > 0) {
			continue
		}
		x, sh := vcm[i], in[i]/tot
		if seen == 0 {
			first, firstX = sh, x
		} else {
			mid, ds := 0.5*(prevX+x), sh-prevS
			num += mid * ds
			absNum += mid * math.Abs(ds)
			absSum += math.Abs(ds)
		}
		prevX, prevS = x, sh
		seen++
	}
	if gIn != nil {
		clear(gIn)
		clear(gIp)
	}
	total := prevS - first
	if seen < 2 || !(math.Abs(total) > 1e-3) {
		return math.NaN()
	}
	sw, steps := num/total, false // steps: the centroid of |Δ| instead
	if !(sw >= firstX && sw <= prevX) {
		sw, steps = absNum/absSum, true
	}
	if gIn == nil {
		return sw
	}
	// The points where a pair conducts, for the gradient: at[k] is the
	// k-th's index.
	at := make([]int, 0, seen)
	for i := range vcm {
		if in[i]+ip[i] > 0 {
			at = append(at, i)
		}
	}
	share := func(k int) float64 { return in[at[k]] / (in[at[k]] + ip[at[k]]) }
	mid := func(k int) float64 { // m_k, zero outside 1 … M−1
		if k < 1 || k >= len(at) {
			return 0
		}
		return 0.5 * (vcm[at[k-1]] + vcm[at[k]])
	}
	sign := func(k int) float64 { // σ_k, zero outside 1 … M−1
		if k < 1 || k >= len(at) {
			return 0
		}
		d := share(k) - share(k-1)
		return float64(cmp.Compare(d, 0))
	}
	for k, i := range at {
		var d float64
		if steps {
			d = (mid(k)*sign(k) - mid(k+1)*sign(k+1) - sw*(sign(k)-sign(k+1))) / absSum
		} else {
			d = mid(k) - mid(k+1)
			switch k {
			case 0:
				d += sw
			case len(at) - 1:
				d -= sw
			}
			d /= total
		}
		tot := in[i] + ip[i]
		gIn[i], gIp[i] = d*ip[i]/(tot*tot), -d*in[i]/(tot*tot)
	}
	return sw
}

// cross interpolates where the segment (x0,s0)–(x1,s1) reaches level.
func cross(x0, s0, x1, s1, level float64) float64 {
	if s1 == s0 {
		return x0
	}
	return x0 + (level-s0)/(s1-s0)*(x1-x0)
}

// Same reports whether two measurements are identical, bit for bit with
// NaN matching NaN, field by field (by reflection, so that a field added
// to Metrics is compared too): the contract a design file written for a
// candidate meets when it is evaluated again.
func (m Metrics) Same(o Metrics) bool {
	x, y := reflect.ValueOf(m), reflect.ValueOf(o)
	for i := range x.NumField() {
		f, g := x.Field(i), y.Field(i)
		if f.Kind() != reflect.Float64 {
			if !reflect.DeepEqual(f.Interface(), g.Interface()) {
				return false
			}
			continue
		}
		p, q := f.Float(), g.Float()
		if math.Float64bits(p) != math.Float64bits(q) && !(math.IsNaN(p) && math.IsNaN(q)) {
			return false
		}
	}
	return true
}

// summingCurrent is the summing stage's supply current for a sweep: that
// of topologies.SummingCurrent at the pairs' largest currents over it.
func summingCurrent(st *topologies.Stage, res *sim.Result) float64 {
	c := st.Circuit
	in, ip := res.Probe[c.ProbeIndex(topologies.ProbeIN)], res.Probe[c.ProbeIndex(topologies.ProbeIP)]
	var inMax, ipMax float64
	for i := range in {
		inMax, ipMax = max(inMax, in[i]), max(ipMax, ip[i])
	}
	return topologies.SummingCurrent(inMax, ipMax)
}
