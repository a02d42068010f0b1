package report

import (
	"fmt"
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"pairsmith/objectives"
	"pairsmith/sizing"
)

// conditionsCandidate is the candidate whose conditions the report draws:
// the best, else the first reported one that was evaluated.
func conditionsCandidate(res *sizing.Result) *sizing.Candidate {
	if res.Best != nil && res.Best.Eval != nil {
		return res.Best
	}
	for _, c := range res.Candidates {
		if c.Eval != nil {
			return c
		}
	}
	return nil
}

// interpolate returns the curve's gm at vcm, linearly between its points,
// and whether vcm lies within it.
func interpolate(curve []objectives.CurvePoint, vcm float64) (float64, bool) {
	n := len(curve)
	if n == 0 || vcm < curve[0].VCM-1e-12 || vcm > curve[n-1].VCM+1e-12 {
		return 0, false
	}
	k := sort.Search(n, func(i int) bool { return curve[i].VCM >= vcm })
	if k == 0 {
		return curve[0].GM, true
	}
	if k == n {
		return curve[n-1].GM, true
	}
	a, b := curve[k-1], curve[k]
	if b.VCM == a.VCM {
		return b.GM, true
	}
	return a.GM + (vcm-a.VCM)/(b.VCM-a.VCM)*(b.GM-a.GM), true
}

// ConditionsFigure draws the gm of the run's best candidate (else its
// first reported one) against the common mode at every condition of the
// spec (docs/conditions.md): each condition a thin line, the band
// between the lowest and the highest gm at each common mode shaded, the
// nominal condition bold and the condition where gm_min is worst bold in
// dark red and named, with the spec's gm_min target.
func ConditionsFigure(res *sizing.Result) (*Figure, error) {
	spec := res.Spec
	c := conditionsCandidate(res)
	p := newPanel("vcm (V)", "gm (S)")
	fig := &Figure{Title: fmt.Sprintf("gm at every condition, %s", oneLine(spec.Name)), Caption: objectives.Caution,
		Panels: []*plot.Plot{p}, Width: runFigureWidth, Height: 11 * vg.Centimeter}
	if c == nil || len(c.Eval.Conditions) == 0 {
		fig.Subtitle = "no candidate was evaluated"
		return fig, nil
	}
	conds := c.Eval.Conditions
	top := 0.0
	for _, ce := range conds {
		for _, pt := range ce.Curve {
			top = math.Max(top, pt.GM)
		}
	}
	gmTarget := math.NaN()
	if spec.Targets.Has(objectives.TargetGMMin) {
		gmTarget = spec.Targets.GMMin
	}
	scale, pre := ScaleSI(math.Max(top, nanTo0(gmTarget)))
	p.Y.Label.Text = "gm (" + pre + "S)"
	// The band over every condition's common modes (their ranges end at
	// their own supplies), each bounded by the conditions that reach it.
	var at []float64
	for _, ce := range conds {
		for _, pt := range ce.Curve {
			at = append(at, pt.VCM)
		}
	}
	sort.Float64s(at)
	var lo, hi plotter.XYs
	for i, v := range at {
		if i > 0 && v-at[i-1] < 1e-9 {
			continue // the same common mode in another condition
		}
		mn, mx, any := math.Inf(1), math.Inf(-1), false
		for _, ce := range conds {
			if g, ok := interpolate(ce.Curve, v); ok {
				mn, mx, any = math.Min(mn, g), math.Max(mx, g), true
			}
		}
		if any {
			lo = append(lo, plotter.XY{X: v, Y: mn * scale})
			hi = append(hi, plotter.XY{X: v, Y: mx * scale})
		}
	}
	if band, err := bandBetween(lo, hi); err != nil {
		return nil, fmt.Errorf("plot the conditions' band: %w", err)
	} else if band != nil {
		p.Add(band)
	}
	legend := figureLegend()
	worst := 0 // the nominal condition, unless gm_min is worst elsewhere
	if w, ok := c.Worst.At[objectives.AxisGMMin]; ok && w > 0 && w < len(conds) {
		worst = w
	}
	curveLine := func(ce objectives.ConditionEval, col color.Color, width vg.Length, dashes []vg.Length) (*plotter.Line, error) {
		var xs, ys []float64
		for _, pt := range ce.Curve {
			xs, ys = append(xs, pt.VCM), append(ys, pt.GM)
		}
		l, err := SeriesLine(xs, ys, scale, col, dashes)
		if err != nil {
			return nil, fmt.Errorf("plot gm at %s: %w", ce.Condition, err)
		}
		l.LineStyle.Width = width
		return l, nil
	}
	for i, ce := range conds {
		if i == 0 || i == worst {
			continue
		}
		l, err := curveLine(ce, faded(styleGrey), thinWidth, nil)
		if err != nil {
			return nil, err
		}
		p.Add(l)
	}
	nom, err := curveLine(conds[0], familyColour(c.Topology), boldWidth, nil)
	if err != nil {
		return nil, err
	}
	p.Add(nom)
	others := len(conds) - 1
	if worst > 0 {
		// Solid, unlike the dashed gm_min target beside it.
		wl, err := curveLine(conds[worst], accentRed, boldWidth, nil)
		if err != nil {
			return nil, err
		}
		p.Add(wl)
		legend.Add("nominal: "+conds[0].Condition.String(), nom)
		legend.Add("lowest gm: "+conds[worst].Condition.String(), wl)
		others--
	} else {
		legend.Add("nominal, lowest gm: "+conds[0].Condition.String(), nom)
	}
	if others > 0 {
		l, err := thinSwatch()
		if err != nil {
			return nil, err
		}
		legend.Add(fmt.Sprintf("thin: the other %s; shaded: the range of all", conditionCount(others)), l)
	}
	high := spec.Range.High
	if len(at) > 0 {
		high = at[len(at)-1] // the highest supply's rail
	}
	if err := addGMTarget(p, &legend, spec, gmTarget, scale, high); err != nil {
		return nil, err
	}
	p.Y.Min, p.Y.Max = 0, 1.1*math.Max(top, nanTo0(gmTarget))*scale
	if !(p.Y.Max > 0) {
		p.Y.Max = 1
	}
	fig.Legend = &legend
	fig.Subtitle = fmt.Sprintf("%s (%s) at %s; ripple worst at %s", c.ID, c.Topology, conditionCount(len(conds)),
		conditionName(c, objectives.AxisGMRipple))
	return fig, nil
}

// bandColour shades a band: a light blue no family has.
var bandColour = color.NRGBA{R: 0x1f, G: 0x77, B: 0xb4, A: 0x30}

// bandBetween returns the shaded region between two curves over the same
// abscissae, lo and hi, without an outline; nil for fewer than two points.
func bandBetween(lo, hi plotter.XYs) (*plotter.Polygon, error) {
	if len(lo) < 2 || len(hi) != len(lo) {
		return nil, nil
	}
	ring := append(plotter.XYs{}, lo...)
	for i := len(hi) - 1; i >= 0; i-- {
		ring = append(ring, hi[i])
	}
	band, err := plotter.NewPolygon(ring)
	if err != nil {
		return nil, err
	}
	band.Color = bandColour
	band.LineStyle.Width = 0
	return band, nil
}

// conditionName names the condition where the candidate's figure key is
// worst, "—" when there is none.
func conditionName(c *sizing.Candidate, key string) string {
	if at, ok := c.Worst.Binding(c.Eval.Conditions, key); ok {
		return at.String()
	}
	return "—"
}
