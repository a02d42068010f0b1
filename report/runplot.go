package report

import (
	"cmp"
	"fmt"
	"image/color"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"pairsmith/objectives"
	"pairsmith/sizing"
	"pairsmith/units"
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

// mark is a family's marker in the run plots: a circle, a regular
// polygon or a star, drawn filled for a member of the Pareto front and as
// an outline (hollow) for every other candidate, so that shape and colour
// say the family and the fill says whether it is on the front. Every
// shape has a filled and a hollow form that tell apart (crosses and
// pluses, which have no inside, are not used).
type mark struct {
	sides  int     // 0: a circle; else the polygon's corners (the star's points)
	rot    float64 // the first corner's angle from straight up, radians
	star   float64 // > 0: a star whose inner corners are at this fraction of the radius
	size   float64 // radius factor that evens out the shapes' visual weight
	hollow bool
}

// familyMarks are the families' markers, in the order of topologies.All().
var familyMarks = [...]mark{
	{sides: 0, size: 1},                   // circle
	{sides: 4, rot: math.Pi / 4, size: 1}, // square
	{sides: 3, size: 1.3},                 // triangle, point up
	{sides: 4, size: 1.2},                 // diamond
	{sides: 3, rot: math.Pi, size: 1.3},   // triangle, point down
	{sides: 5, size: 1.1},                 // pentagon
	{sides: 5, star: 0.45, size: 1.45},    // star
	{sides: 6, rot: math.Pi / 6, size: 1}, // hexagon
}

// familyMark returns a family's filled marker.
func familyMark(name string) mark {
	i := max(familyIndex(name), 0)
	return familyMarks[i%len(familyMarks)]
}

// outline returns the hollow form of a marker.
func (m mark) outline() mark {
	m.hollow = true
	return m
}

// DrawGlyph implements draw.GlyphDrawer.
func (m mark) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius * vg.Length(m.size)
	var p vg.Path
	if m.sides == 0 {
		p.Move(vg.Point{X: pt.X + r, Y: pt.Y})
		p.Arc(pt, r, 0, 2*math.Pi)
	} else {
		n := m.sides
		step := 2 * math.Pi / float64(n)
		if m.star > 0 {
			n, step = 2*n, step/2
		}
		for i := 0; i < n; i++ {
			ri := r
			if m.star > 0 && i%2 == 1 {
				ri = r * vg.Length(m.star)
			}
			a := m.rot + float64(i)*step
			q := vg.Point{X: pt.X + ri*vg.Length(math.Sin(a)), Y: pt.Y + ri*vg.Length(math.Cos(a))}
			if i == 0 {
				p.Move(q)
			} else {
				p.Line(q)
			}
		}
	}
	p.Close()
	if m.hollow {
		c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(1.1)})
		c.Stroke(p)
		return
	}
	c.SetColor(sty.Color)
	c.Fill(p)
}

// styleGrey is the colour of the legend entries that explain a style
// (filled, hollow, thin, bold) rather than a family: no family has it.
var styleGrey = color.Gray{Y: 0x80}

// axisView is how a trade-off axis (or a metric standing in for one) is
// drawn: its label and unit, the value of a candidate in SI units and the
// spec's budget on it (NaN when none).
type axisView struct {
	name   string
	unit   string // SI unit symbol; "%" for the ripple
	value  func(objectives.Metrics) float64
	budget float64
}

// viewOf returns how an axis is drawn for a spec: the figure's plot label
// (objectives.Words.Plot) and values, a fraction in per cent, with the
// spec's target on it as its budget.
func viewOf(spec *objectives.Spec, axis string) axisView {
	e, ok := objectives.Lookup(axis)
	if !ok || e.Key != axis || e.Kind != objectives.Figure {
		return axisView{axis, "", func(objectives.Metrics) float64 { return math.NaN() }, math.NaN()}
	}
	budget := math.NaN()
	if e.HasTarget() && spec.Targets.Has(e.Target.Key) {
		budget, _ = spec.Targets.Bound(e.Target.Key)
	}
	v := axisView{name: e.PlotLabel(), unit: unitSymbol(e.Dim), value: e.Value, budget: budget}
	if e.Dim == units.Percent {
		v.unit, v.budget = "%", 100*budget
		v.value = func(m objectives.Metrics) float64 { return 100 * e.Value(m) }
	}
	return v
}

// scaled returns the factor that brings an axis's values up to maxAbs into
// a readable range and its label with the prefixed unit: area in µm²
// always (the unit layout uses), the ripple in per cent as it is.
func (a axisView) scaled(maxAbs float64) (factor float64, label string) {
	switch a.unit {
	case "%":
		f, p := plainScale(maxAbs)
		return f, a.name + " (" + p + "%)"
	case "m²":
		f, p := plainScale(maxAbs * 1e12)
		return 1e12 * f, a.name + " (" + p + "µm²)"
	case "":
		f, p := plainScale(maxAbs)
		if p == "" {
			return 1, a.name
		}
		return f, a.name + " (" + strings.TrimSpace(p) + ")"
	}
	f, p := ScaleSI(maxAbs)
	return f, a.name + " (" + p + a.unit + ")"
}

// plainScale returns the factor and label prefix of an axis in a unit
// that keeps no SI prefix (per cent, µm²): 1 and "" while values up to
// maxAbs are written plainly (Plain's decimal range), else a power of ten
// as ScaleSI gives beyond its prefixes ("1e21 " for "gm ripple (1e21 %)").
func plainScale(maxAbs float64) (factor float64, prefix string) {
	if !(maxAbs > 0) || math.IsInf(maxAbs, 0) {
		return 1, ""
	}
	_, _, exp := sigDigits(maxAbs, Digits)
	if exp >= -3 && exp < 6 {
		return 1, ""
	}
	k := min(max(floorDiv3(exp), -100), 100)
	return math.Pow(10, float64(-3*k)), "1e" + strconv.Itoa(3*k) + " "
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

// accentRed draws what a figure is measured against or at: budgets and
// targets (dashed), the condition where gm is lowest, the sensitivity
// estimate beside Monte Carlo samples.
var accentRed = color.RGBA{R: 0xb0, G: 0x10, B: 0x10, A: 0xff}

// budgetLine makes a dashed red line through pts: a budget.
func budgetLine(pts plotter.XYs) (*plotter.Line, error) {
	l, err := plotter.NewLine(pts)
	if err != nil {
		return nil, err
	}
	l.LineStyle.Color = accentRed
	l.LineStyle.Width = vg.Points(1)
	l.LineStyle.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	return l, nil
}

// ParetoFigure draws the trade-offs of a run, with the first trade-off
// axis across and one panel for each further axis: every reported
// candidate in its family's colour and shape, filled when it is on the
// Pareto front and hollow when it is not (a family's best off the front,
// a nearest miss), the spec's budgets as dashed lines. The legend beside
// the panels names each family by its filled marker and explains the
// filled and hollow forms in grey, a colour no family has; the subtitle
// says how much of the front is shown. Every axis starts at zero.
func ParetoFigure(res *sizing.Result) (*Figure, error) {
	spec := res.Spec
	xv, yvs := panelAxes(spec)
	var families []string
	front, off := 0, 0
	for _, c := range res.Candidates {
		if c.Pareto {
			front++
		} else {
			off++
		}
		if !slices.Contains(families, c.Topology) {
			families = append(families, c.Topology)
		}
	}
	sortFamilies(families)
	fig := &Figure{
		Title:   fmt.Sprintf("Pareto front of %s", oneLine(spec.Name)),
		Caption: objectives.Caution,
		SharedX: true,
		Width:   runFigureWidth,
	}
	if front > 0 {
		reported, whole := FrontSize(res)
		shown := fmt.Sprintf("%d on the front", reported)
		if whole > reported {
			shown = fmt.Sprintf("the most spread %d of the %d on the front", reported, whole)
		}
		fig.Subtitle = "filled: " + shown + "; hollow: other reported candidates; colour and shape: family; dashed: budgets"
	} else {
		fig.Subtitle = "no candidate meets the spec: hollow, the nearest misses; colour and shape: family; dashed: budgets"
	}
	legend := figureLegend()
	for _, fam := range families {
		legend.Add(fam, glyphThumb(familyColour(fam), familyMark(fam)))
	}
	if front > 0 {
		legend.Add("on the front", glyphThumb(styleGrey, mark{size: 1}))
	}
	if off > 0 {
		legend.Add("not on the front", glyphThumb(styleGrey, mark{size: 1, hollow: true}))
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
		point := func(c *sizing.Candidate) (plotter.XY, bool) {
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
		for _, onFront := range []bool{false, true} {
			for _, fam := range families {
				var pts plotter.XYs
				for _, c := range res.Candidates {
					if pt, ok := point(c); ok && c.Pareto == onFront && c.Topology == fam {
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
				m := familyMark(fam)
				if !onFront {
					m = m.outline()
				}
				s.GlyphStyle = draw.GlyphStyle{Color: familyColour(fam), Radius: vg.Points(3), Shape: m}
				p.Add(s)
			}
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
func glyphThumb(c color.Color, shape mark) glyph {
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
func maxOver(cs []*sizing.Candidate, a axisView, keep func(*sizing.Candidate) bool) float64 {
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
func axisLimit(cs []*sizing.Candidate, a axisView, haveFront bool) float64 {
	budget := nanTo0(a.budget)
	if !haveFront {
		near := maxOver(cs, a, func(c *sizing.Candidate) bool { return budget == 0 || a.value(c.Metrics) <= 10*budget })
		return math.Max(near, budget)
	}
	base := math.Max(maxOver(cs, a, func(c *sizing.Candidate) bool { return c.Pareto }), budget)
	if base == 0 { // nothing on the front has a value here, and no budget
		return maxOver(cs, a, func(*sizing.Candidate) bool { return true })
	}
	others := maxOver(cs, a, func(c *sizing.Candidate) bool { return !c.Pareto && a.value(c.Metrics) <= 2*base })
	return math.Max(base, others)
}

func nanTo0(v float64) float64 {
	if finiteVal(v) {
		return v
	}
	return 0
}

// CurvesFigure draws gm against vcm on one chart: every reported member
// of the Pareto front as a thin line and every family's best candidate as
// a bold one, each in its family's colour; a best that misses the spec is
// dashed. The spec's gm_min target is a dashed red line and the y axis
// starts at zero. The legend names each family's best and explains the
// thin lines in grey, a colour no family has.
func CurvesFigure(res *sizing.Result) (*Figure, error) {
	spec := res.Spec
	type line struct {
		c      *sizing.Candidate
		xs, ys []float64
	}
	curveOf := func(c *sizing.Candidate) line {
		l := line{c: c}
		for _, pt := range c.Eval.Curve() {
			l.xs, l.ys = append(l.xs, pt.VCM), append(l.ys, pt.GM)
		}
		return l
	}
	var thin, bold []line
	top := 0.0
	for _, c := range res.Candidates {
		if c.Pareto && c.Eval != nil {
			l := curveOf(c)
			top = math.Max(top, maxAbs(l.ys))
			thin = append(thin, l)
		}
	}
	for _, f := range res.Families {
		if f.Best == nil || f.Best.Eval == nil {
			continue
		}
		l := curveOf(f.Best)
		top = math.Max(top, maxAbs(l.ys))
		bold = append(bold, l)
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
	for _, l := range thin {
		pl, err := SeriesLine(l.xs, l.ys, scale, faded(familyColour(l.c.Topology)), nil)
		if err != nil {
			return nil, fmt.Errorf("plot gm of %s: %w", l.c.ID, err)
		}
		pl.LineStyle.Width = thinWidth
		p.Add(pl)
	}
	for _, l := range bold {
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
		pl.LineStyle.Width = boldWidth
		p.Add(pl)
		legend.Add(label, pl)
	}
	if len(thin) > 0 {
		l, err := thinSwatch()
		if err != nil {
			return nil, err
		}
		legend.Add(fmt.Sprintf("thin: %d front members", len(thin)), l)
	}
	if err := addGMTarget(p, &legend, spec, gmTarget, scale, spec.Range.High); err != nil {
		return nil, err
	}
	var sub string
	switch {
	case len(thin) == 0 && len(bold) == 0:
		sub = "no family has an evaluated candidate"
	case len(thin) == 0:
		sub = "bold: the best candidate of each family (dashed: misses the spec); no candidate is on the front"
	default:
		reported, whole := FrontSize(res)
		front := fmt.Sprintf("the %d reported members of the front", reported)
		if whole > reported {
			front = fmt.Sprintf("the most spread %d of the %d on the front", reported, whole)
		}
		sub = "thin: " + front + "; bold: each family's best (dashed: misses the spec)"
	}
	return &Figure{
		Title:    fmt.Sprintf("gm over the input range, %s", oneLine(spec.Name)),
		Subtitle: sub,
		Caption:  objectives.Caution,
		Panels:   []*plot.Plot{p},
		Legend:   &legend,
		Width:    runFigureWidth,
		Height:   11 * vg.Centimeter,
	}, nil
}

// faded returns a colour at 60 % opacity, so that the thin lines of the
// front stay behind the bold ones where they cross.
func faded(c color.Color) color.Color {
	r, g, b, _ := c.RGBA()
	return color.NRGBA{R: uint8(r >> 8), G: uint8(g >> 8), B: uint8(b >> 8), A: 0x99}
}

// runFigureWidth is the width of the run plots: wide enough for the
// legend beside the panels, narrower than report.html's text column.
const runFigureWidth = 24 * vg.Centimeter

// Line widths of the gm curves: the front's members and the families'
// bests.
const (
	thinWidth = vg.Length(0.5)
	boldWidth = vg.Length(2.2)
)

// thinSwatch is the legend's sample of the thin grey lines, a colour no
// family has.
func thinSwatch() (*plotter.Line, error) {
	l, err := plotter.NewLine(plotter.XYs{{}, {X: 1}})
	if err != nil {
		return nil, err
	}
	l.LineStyle = draw.LineStyle{Color: styleGrey, Width: thinWidth}
	return l, nil
}

// addGMTarget draws a gm_min target (when finite) from the low end of the
// spec's input range to high as the dashed budget line, named in the
// legend.
func addGMTarget(p *plot.Plot, legend *plot.Legend, spec *objectives.Spec, gmTarget, scale, high float64) error {
	if !finiteVal(gmTarget) {
		return nil
	}
	bl, err := budgetLine(plotter.XYs{{X: spec.Range.Low, Y: gmTarget * scale}, {X: high, Y: gmTarget * scale}})
	if err != nil {
		return err
	}
	p.Add(bl)
	legend.Add("gm_min target", bl)
	return nil
}
