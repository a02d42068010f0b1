package report

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"pairsmith/objectives"
	"pairsmith/sizing"
)

// MonteCarloFigure draws the run's Monte Carlo samples of its best
// candidate (else its first reported one) at the nominal condition
// (sizing.Result.MonteCarloOf): the offset against the common mode with
// its ±k-sigma band (offsetBand), a histogram of the input offset at the
// common mode where its spread is largest and one of the switchover's
// shift from its mean, each as a density beside the Gaussian of the
// sensitivity estimate's σ there (docs/mismatch.md).
func MonteCarloFigure(res *sizing.Result) (*Figure, error) {
	fig := &Figure{Title: fmt.Sprintf("Monte Carlo of a candidate, %s", oneLine(res.Spec.Name)), Caption: objectives.Caution,
		Width: runFigureWidth}
	b := res.MonteCarloOf
	if b == nil || b.MonteCarlo == nil || b.Eval == nil || len(b.Eval.Conditions) == 0 || b.Eval.Conditions[0].Mismatch == nil {
		fig.Subtitle = "no Monte Carlo: no candidate was reported, the process has no mismatch coefficients, " +
			"the run was stopped first, or a sample had no DC solution"
		return fig, nil
	}
	mc, sens := b.MonteCarlo, b.Eval.Conditions[0].Mismatch
	// The common mode of the largest Monte Carlo spread.
	at := 0
	for i, s := range mc.Offset {
		if !math.IsNaN(s) && (math.IsNaN(mc.Offset[at]) || s > mc.Offset[at]) {
			at = i
		}
	}
	offs := make(plotter.Values, 0, len(mc.SampleOffsets))
	for _, o := range mc.SampleOffsets {
		if at < len(o) && !math.IsNaN(o[at]) {
			offs = append(offs, o[at]*1e3)
		}
	}
	// Both are the nominal condition's sweep, point for point.
	sigmaAt := math.NaN()
	if len(sens.Offset) == len(mc.Offset) {
		sigmaAt = sens.Offset[at]
	}
	panel := func(vals plotter.Values, sigma float64, xLabel, what string) (*plot.Plot, error) {
		p := newPanel(xLabel, "density (1/mV)")
		if len(vals) < 2 {
			return p, nil
		}
		mean := stat.Mean(vals, nil)
		for i := range vals {
			vals[i] -= mean
		}
		h, err := plotter.NewHist(vals, 30)
		if err != nil {
			return nil, fmt.Errorf("histogram of %s: %w", what, err)
		}
		h.Normalize(1)
		h.FillColor = color.NRGBA{R: 0x1f, G: 0x77, B: 0xb4, A: 0x80}
		h.LineStyle.Width = 0
		p.Add(h)
		if s := sigma * 1e3; s > 0 {
			g := plotter.NewFunction(func(x float64) float64 { return math.Exp(-x*x/(2*s*s)) / (s * math.Sqrt(2*math.Pi)) })
			g.Color = accentRed
			g.Width = boldWidth
			p.Add(g)
			p.Legend.Add(fmt.Sprintf("sensitivity: σ %.3g mV", s), g)
		}
		p.Legend.Add(fmt.Sprintf("%d samples: σ %.3g mV", len(vals), stat.StdDev(vals, nil)), h)
		p.Legend.Top = true
		return p, nil
	}
	po, err := panel(offs, sigmaAt, fmt.Sprintf("offset at vcm %s (mV, about its mean)", SI(mc.VCM[at], "V", tableDigits)), "the offset")
	if err != nil {
		return nil, err
	}
	band, err := offsetBand(sens, mc)
	if err != nil {
		return nil, err
	}
	fig.Panels = []*plot.Plot{band, po}
	if !math.IsNaN(sens.SwitchoverSigma) {
		sw := make(plotter.Values, 0, len(mc.SampleSwitchovers))
		for _, v := range mc.SampleSwitchovers {
			if !math.IsNaN(v) {
				sw = append(sw, v*1e3)
			}
		}
		ps, err := panel(sw, sens.SwitchoverSigma, "switchover (mV, about its mean)", "the switchover")
		if err != nil {
			return nil, err
		}
		fig.Panels = append(fig.Panels, ps)
	}
	fig.Subtitle = fmt.Sprintf("%s (%s), %d samples at %s, beside the first-order sensitivity estimate", b.ID, b.Topology, mc.Samples,
		b.Eval.Conditions[0].Condition)
	return fig, nil
}

// bandSamples is how many of the Monte Carlo samples' offset curves the
// band panel draws: enough to see them cross the band, few enough to see
// each.
const bandSamples = 12

// offsetBand draws the offset against the common mode: the sensitivity
// estimate's ±k·σ band shaded, the Monte Carlo samples' own ±k·σ as
// lines, and the first bandSamples samples' offset curves about their
// mean, where the offset moves from one pair's to the other's across the
// handover.
func offsetBand(sens, mc *objectives.MismatchResult) (*plot.Plot, error) {
	k := sens.Sigma
	p := newPanel("vcm (V)", "offset about the mean (mV)")
	top := 0.0 // the largest |offset| drawn, mV (NaN where gm is dead passes)
	reach := func(v float64) {
		if v > top {
			top = v
		}
	}
	var up, dn plotter.XYs
	for i, v := range sens.VCM {
		if s := sens.Offset[i]; !math.IsNaN(s) {
			up, dn = append(up, plotter.XY{X: v, Y: k * s * 1e3}), append(dn, plotter.XY{X: v, Y: -k * s * 1e3})
			reach(k * s * 1e3)
		}
	}
	if poly, err := bandBetween(dn, up); err != nil {
		return nil, fmt.Errorf("plot the offset band: %w", err)
	} else if poly != nil {
		p.Add(poly)
		p.Legend.Add(fmt.Sprintf("sensitivity: ±%g σ", k), poly)
	}
	mean := make([]float64, len(mc.VCM))
	for _, o := range mc.SampleOffsets {
		for i := range mean {
			mean[i] += o[i] / float64(len(mc.SampleOffsets))
		}
	}
	for j, o := range mc.SampleOffsets {
		if j >= bandSamples {
			break
		}
		ys := make([]float64, len(o))
		for i := range o {
			ys[i] = o[i] - mean[i]
			reach(math.Abs(ys[i]) * 1e3)
		}
		l, err := SeriesLine(mc.VCM, ys, 1e3, faded(styleGrey), nil)
		if err != nil {
			return nil, fmt.Errorf("plot sample %d: %w", j, err)
		}
		l.LineStyle.Width = thinWidth
		p.Add(l)
		if j == 0 {
			p.Legend.Add(fmt.Sprintf("%d of the samples", min(bandSamples, len(mc.SampleOffsets))), l)
		}
	}
	for _, sign := range []float64{1, -1} {
		ys := make([]float64, len(mc.Offset))
		for i, s := range mc.Offset {
			ys[i] = sign * k * s
			reach(k * s * 1e3)
		}
		l, err := SeriesLine(mc.VCM, ys, 1e3, accentRed, []vg.Length{vg.Points(5), vg.Points(2.5)})
		if err != nil {
			return nil, fmt.Errorf("plot the samples' band: %w", err)
		}
		p.Add(l)
		if sign > 0 {
			p.Legend.Add(fmt.Sprintf("Monte Carlo: ±%g σ", k), l)
		}
	}
	p.Legend.Top = true
	if top > 0 { // room above the curves for the legend
		p.Y.Min, p.Y.Max = -1.15*top, 1.9*top
	}
	return p, nil
}
