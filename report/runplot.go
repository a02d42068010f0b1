package report

import (
	"cmp"
	"fmt"
	"image/color"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"pairsmith/objectives"
	"pairsmith/optimize"
)

// familyColours are the colours of the families in the run plots, in the
// order of topologies.All(): a qualitative palette that stays apart on
// white and for the common colour-vision deficiencies (Okabe and Ito,
// "Color Universal Design", 2008), with black for an eighth family.
var familyColours = [...]color.RGBA{
	{R: 0xe6, G: 0x9f, B: 0x00, A: 0xff}, // orange
	{R: 0x56, G: 0xb4, B: 0xe9, A: 0xff}, // sky blue
	{R: 0x00, G: 0x9e, B: 0x73, A: 0xff}, // bluish green
	{R: 0xd5, G: 0x5e, B: 0x00, A: 0xff}, // vermilion
	{R: 0x00, G: 0x72, B: 0xb2, A: 0xff}, // blue
	{R: 0xcc, G: 0x79, B: 0xa7, A: 0xff}, // reddish purple
	{R: 0x8c, G: 0x7a, B: 0x00, A: 0xff}, // dark yellow
	{R: 0x00, G: 0x00, B: 0x00, A: 0xff}, // black
}

// familyColour returns a family's colour in the run plots.
func familyColour(name string) color.Color {
	i := familyIndex(name)
	if i < 0 {
		return color.Gray{Y: 0x40}
	}
	return familyColours[i%len(familyColours)]
}

// familyGlyph returns a family's marker shape, so that families stay
// apart in grey print too.
func familyGlyph(name string) draw.GlyphDrawer {
	shapes := []draw.GlyphDrawer{draw.CircleGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{},
		draw.PyramidGlyph{}, draw.CrossGlyph{}, draw.PlusGlyph{}, draw.BoxGlyph{}, draw.RingGlyph{}}
	i := max(familyIndex(name), 0)
	return shapes[i%len(shapes)]
}

// axisView is how a trade-off axis (or a metric standing in for one) is
// drawn: its label and unit, the value of a candidate in SI units and the
// spec's budget on it (NaN when none).
type axisView struct {
	name   string
	unit   string // SI unit symbol; "%" for the ripple
	value  func(objectives.Metrics) float64
	budget float64
}

// viewOf returns how an axis is drawn for a spec.
func viewOf(spec *objectives.Spec, axis string) axisView {
	t := spec.Targets
	budget := func(name string, v float64) float64 {
		if t.Has(name) {
			return v
		}
		return math.NaN()
	}
	switch axis {
	case objectives.AxisGMRipple:
		return axisView{"gm ripple", "%", func(m objectives.Metrics) float64 { return 100 * m.GMRipple },
			100 * budget(objectives.TargetGMRippleMax, t.GMRippleMax)}
	case objectives.AxisPower:
		return axisView{"power", "W", func(m objectives.Metrics) float64 { return m.Power },
			budget(objectives.TargetPowerMax, t.PowerMax)}
	case objectives.AxisArea:
		return axisView{"area", "m²", func(m objectives.Metrics) float64 { return m.Area },
			budget(objectives.TargetAreaMax, t.AreaMax)}
	case objectives.AxisGMMin:
		return axisView{"gm_min", "S", func(m objectives.Metrics) float64 { return m.GMMin },
			budget(objectives.TargetGMMin, t.GMMin)}
	case objectives.AxisTransitionWidth:
		return axisView{"transition width", "V", func(m objectives.Metrics) float64 { return m.TransitionWidth },
			budget(objectives.TargetTransitionWidthMax, t.TransitionWidthMax)}
	}
	return axisView{axis, "", func(objectives.Metrics) float64 { return math.NaN() }, math.NaN()}
}

// scaled returns the factor that brings an axis's values up to maxAbs into
// a readable range and its label with the prefixed unit: area in µm²
// always (the unit layout uses), the ripple in per cent as it is.
func (a axisView) scaled(maxAbs float64) (factor float64, label string) {
	switch a.unit {
	case "%":
		return 1, a.name + " (%)"
	case "m²":
		return 1e12, a.name + " (µm²)"
	case "":
		return 1, a.name
	}
	f, p := ScaleSI(maxAbs)
	return f, a.name + " (" + p + a.unit + ")"
}

// finiteVal reports whether v can be plotted.
func finiteVal(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// panelAxes returns the pairs of axes the Pareto figure draws: the first
// trade-off axis across, one panel for each other axis. A single axis is
// drawn against gm_min (or power, when the axis is gm_min).
func panelAxes(spec *objectives.Spec) (x axisView, ys []axisView) {
	axes := spec.Pareto
	if len(axes) == 0 {
		axes = objectives.DefaultPareto()
	}
	x = viewOf(spec, axes[0])
	for _, a := range axes[1:] {
		ys = append(ys, viewOf(spec, a))
	}
	if len(ys) == 0 {
		other := objectives.AxisGMMin
		if axes[0] == objectives.AxisGMMin {
			other = objectives.AxisPower
		}
		ys = append(ys, viewOf(spec, other))
	}
	return x, ys
}

// budgetLine makes a dashed red line through pts: a budget.
func budgetLine(pts plotter.XYs) (*plotter.Line, error) {
	l, err := plotter.NewLine(pts)
	if err != nil {
		return nil, err
	}
	l.LineStyle.Color = color.RGBA{R: 0xb0, G: 0x10, B: 0x10, A: 0xff}
	l.LineStyle.Width = vg.Points(1)
	l.LineStyle.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	return l, nil
}

// ParetoFigure draws the trade-offs of a run: the candidates on the Pareto
// front, coloured and shaped by family, with the first trade-off axis
// across and one panel for each further axis, the spec's budgets as dashed
// lines, and the other reported candidates (family bests off the front,
// nearest misses) as rings in their family's colour. Every axis starts at
// zero; the legend is beside the panels.
func ParetoFigure(res *optimize.StageResult) (*Figure, error) {
	spec := res.Spec
	xv, yvs := panelAxes(spec)
	var families []string
	front, off := 0, 0
	for _, c := range res.Candidates {
		if !c.Pareto {
			off++
			continue
		}
		front++
		if !slices.Contains(families, c.Topology) {
			families = append(families, c.Topology)
		}
	}
	sortFamilies(families)
	fig := &Figure{
		Title:   fmt.Sprintf("Pareto front of %s", oneLine(spec.Name)),
		Caption: objectives.Caution,
		SharedX: true,
	}
	if front > 0 {
		fig.Subtitle = fmt.Sprintf("%d candidates on the front, coloured by family; rings: other reported candidates; dashed: budgets", front)
	} else {
		fig.Subtitle = "no candidate meets the spec: the rings are the nearest misses; dashed: budgets"
	}
	legend := figureLegend()
	for _, fam := range families {
		legend.Add(fam, glyphThumb(familyColour(fam), familyGlyph(fam)))
	}
	// Families with candidates off the front only: their ring's colour.
	var offOnly []string
	for _, c := range res.Candidates {
		if !slices.Contains(families, c.Topology) && !slices.Contains(offOnly, c.Topology) {
			offOnly = append(offOnly, c.Topology)
		}
	}
	sortFamilies(offOnly)
	for _, fam := range offOnly {
		legend.Add(fam, glyphThumb(familyColour(fam), draw.RingGlyph{}))
	}
	if off > 0 {
		legend.Add("off the front", glyphThumb(color.Gray{Y: 0x60}, draw.RingGlyph{}))
	}
	xLim := axisLimit(res.Candidates, xv, front > 0)
	xScale, xLabel := xv.scaled(xLim)
	xTop := 1.1 * xLim * xScale
	if !(xTop > 0) {
		xTop = 1
	}
	budgets := false
	offChart := map[string]bool{}
	for _, yv := range yvs {
		yLim := axisLimit(res.Candidates, yv, front > 0)
		yScale, yLabel := yv.scaled(yLim)
		yTop := 1.1 * yLim * yScale
		if !(yTop > 0) {
			yTop = 1
		}
		p := newPanel(xLabel, yLabel)
		p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, xTop, 0, yTop
		point := func(c *optimize.StageCandidate) (plotter.XY, bool) {
			x, y := xv.value(c.Metrics)*xScale, yv.value(c.Metrics)*yScale
			if !finiteVal(x) || !finiteVal(y) {
				return plotter.XY{}, false
			}
			if x > xTop || y > yTop {
				offChart[c.ID] = true
				return plotter.XY{}, false
			}
			return plotter.XY{X: x, Y: y}, true
		}
		if finiteVal(xv.budget) {
			l, err := budgetLine(plotter.XYs{{X: xv.budget * xScale, Y: 0}, {X: xv.budget * xScale, Y: yTop}})
			if err != nil {
				return nil, err
			}
			p.Add(l)
			budgets = true
		}
		if finiteVal(yv.budget) {
			l, err := budgetLine(plotter.XYs{{X: 0, Y: yv.budget * yScale}, {X: xTop, Y: yv.budget * yScale}})
			if err != nil {
				return nil, err
			}
			p.Add(l)
			budgets = true
		}
		// The other candidates first, so that the front is drawn over them.
		for _, c := range res.Candidates {
			if pt, ok := point(c); ok && !c.Pareto {
				s, err := plotter.NewScatter(plotter.XYs{pt})
				if err != nil {
					return nil, fmt.Errorf("plot Pareto front: %w", err)
				}
				s.GlyphStyle = draw.GlyphStyle{Color: familyColour(c.Topology), Radius: vg.Points(3.5), Shape: draw.RingGlyph{}}
				p.Add(s)
			}
		}
		for _, fam := range families {
			var pts plotter.XYs
			for _, c := range res.Candidates {
				if pt, ok := point(c); ok && c.Pareto && c.Topology == fam {
					pts = append(pts, pt)
				}
			}
			if len(pts) == 0 {
				continue
			}
			s, err := plotter.NewScatter(pts)
			if err != nil {
				return nil, fmt.Errorf("plot Pareto front: %w", err)
			}
			s.GlyphStyle = draw.GlyphStyle{Color: familyColour(fam), Radius: vg.Points(3), Shape: familyGlyph(fam)}
			p.Add(s)
		}
		fig.Panels = append(fig.Panels, p)
	}
	if n := len(offChart); n > 0 {
		fig.Subtitle += fmt.Sprintf("; %d off the chart", n)
	}
	if budgets {
		l, err := budgetLine(plotter.XYs{{}, {X: 1}})
		if err != nil {
			return nil, err
		}
		legend.Add("budget", l)
	}
	fig.Legend = &legend
	return fig, nil
}

// figureLegend returns an empty legend in the style of the panels'.
func figureLegend() plot.Legend {
	l := plot.NewLegend()
	l.TextStyle.Font.Size = 9
	l.Padding = vg.Points(3)
	return l
}

// glyph is a legend thumbnail of one marker.
type glyph struct {
	style draw.GlyphStyle
}

// glyphThumb returns the legend thumbnail of a marker.
func glyphThumb(c color.Color, shape draw.GlyphDrawer) glyph {
	return glyph{draw.GlyphStyle{Color: c, Radius: vg.Points(3), Shape: shape}}
}

// Thumbnail implements plot.Thumbnailer.
func (g glyph) Thumbnail(c *draw.Canvas) {
	c.DrawGlyph(g.style, c.Center())
}

// sortFamilies orders family names as topologies.All() does.
func sortFamilies(names []string) {
	slices.SortStableFunc(names, func(a, b string) int { return cmp.Compare(familyIndex(a), familyIndex(b)) })
}

// maxOver returns the largest finite value of an axis over the
// candidates for which keep is true.
func maxOver(cs []*optimize.StageCandidate, a axisView, keep func(*optimize.StageCandidate) bool) float64 {
	m := 0.0
	for _, c := range cs {
		if v := a.value(c.Metrics); keep(c) && finiteVal(v) {
			m = math.Max(m, math.Abs(v))
		}
	}
	return m
}

// axisLimit returns how far an axis of the Pareto figure reaches: over the
// front and the budget, and over the other candidates within twice that, so
// that a far-off miss (a single pair's ripple of thousands of per cent)
// does not squash the front into a corner. Without a front (or when
// neither the front nor a budget gives the axis a value) it covers the
// candidates within ten times the budget (all of them without a budget).
func axisLimit(cs []*optimize.StageCandidate, a axisView, haveFront bool) float64 {
	budget := nanTo0(a.budget)
	if !haveFront {
		near := maxOver(cs, a, func(c *optimize.StageCandidate) bool { return budget == 0 || a.value(c.Metrics) <= 10*budget })
		return math.Max(near, budget)
	}
	base := math.Max(maxOver(cs, a, func(c *optimize.StageCandidate) bool { return c.Pareto }), budget)
	if base == 0 { // nothing on the front has a value here, and no budget
		return maxOver(cs, a, func(*optimize.StageCandidate) bool { return true })
	}
	others := maxOver(cs, a, func(c *optimize.StageCandidate) bool { return !c.Pareto && a.value(c.Metrics) <= 2*base })
	return math.Max(base, others)
}

func nanTo0(v float64) float64 {
	if finiteVal(v) {
		return v
	}
	return 0
}

// CurvesFigure draws gm against vcm of every family's best candidate on one
// chart, one line per family in its colour: solid for a candidate that
// meets the spec, dashed for a nearest miss. The spec's gm_min target is a
// dashed red line and the y axis starts at zero.
func CurvesFigure(res *optimize.StageResult) (*Figure, error) {
	spec := res.Spec
	type line struct {
		c  *optimize.StageCandidate
		xs []float64
		ys []float64
	}
	var lines []line
	top := 0.0
	for _, f := range res.Families {
		if f.Best == nil || f.Best.Eval == nil {
			continue
		}
		curve := f.Best.Eval.Curve()
		l := line{c: f.Best}
		for _, pt := range curve {
			l.xs, l.ys = append(l.xs, pt.VCM), append(l.ys, pt.GM)
		}
		top = math.Max(top, maxAbs(l.ys))
		lines = append(lines, l)
	}
	gmTarget := math.NaN()
	if spec.Targets.Has(objectives.TargetGMMin) {
		gmTarget = spec.Targets.GMMin
	}
	scale, pre := ScaleSI(math.Max(top, nanTo0(gmTarget)))
	p := newPanel("vcm (V)", "gm ("+pre+"S)")
	yTop := 1.1 * math.Max(top, nanTo0(gmTarget)) * scale
	if !(yTop > 0) {
		yTop = 1
	}
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = spec.Range.Low, spec.Range.High, 0, yTop
	legend := figureLegend()
	for _, l := range lines {
		var dashes []vg.Length
		label := fmt.Sprintf("%s (%s)", l.c.Topology, l.c.ID)
		if !l.c.Feasible {
			dashes = []vg.Length{vg.Points(5), vg.Points(2.5)}
			label += ", misses"
		}
		pl, err := SeriesLine(l.xs, l.ys, scale, familyColour(l.c.Topology), dashes)
		if err != nil {
			return nil, fmt.Errorf("plot gm of %s: %w", l.c.ID, err)
		}
		p.Add(pl)
		legend.Add(label, pl)
	}
	if finiteVal(gmTarget) {
		bl, err := budgetLine(plotter.XYs{{X: spec.Range.Low, Y: gmTarget * scale}, {X: spec.Range.High, Y: gmTarget * scale}})
		if err != nil {
			return nil, err
		}
		p.Add(bl)
		legend.Add("gm_min target", bl)
	}
	sub := "the best candidate of each family; dashed: misses the spec"
	if len(lines) == 0 {
		sub = "no family has an evaluated candidate"
	}
	return &Figure{
		Title:    fmt.Sprintf("gm over the input range, %s", oneLine(spec.Name)),
		Subtitle: sub,
		Caption:  objectives.Caution,
		Panels:   []*plot.Plot{p},
		Legend:   &legend,
		Height:   11 * vg.Centimeter,
	}, nil
}
