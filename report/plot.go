package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"pairsmith/objectives"
)

// PlotFormats are the file extensions the plots are written in.
const PlotFormats = ".svg or .png"

// pngDPI is the resolution of PNG plots: crisp on a high-density screen
// while staying a small file.
const pngDPI = 144

// FormatError is a plot file name whose extension is not a format the
// plots are written in.
type FormatError struct {
	Path string // the file name as given
	Ext  string // its extension, "" when it has none
}

// Error names the file, the extension and what is accepted.
func (e *FormatError) Error() string {
	ext := e.Ext
	if ext == "" {
		ext = "no extension"
	} else {
		ext = fmt.Sprintf("%q", ext)
	}
	return fmt.Sprintf("plot file %s: got %s, want a file name ending in %s", e.Path, ext, PlotFormats)
}

// PlotFormat returns the image format of a plot file from its extension,
// "svg" or "png" (in any letter case), or a *FormatError.
func PlotFormat(path string) (string, error) {
	ext := filepath.Ext(path)
	switch strings.ToLower(ext) {
	case ".svg":
		return "svg", nil
	case ".png":
		return "png", nil
	}
	return "", &FormatError{Path: path, Ext: ext}
}

// Figure is a stack of plot panels with a title, a subtitle and a small
// caption, drawn onto one page. Panels are drawn top to bottom; with
// SharedX they share the range of their x axes, and only the bottom one
// shows the x tick labels and axis label.
type Figure struct {
	Title    string
	Subtitle string
	Caption  string
	Panels   []*plot.Plot
	SharedX  bool
	// Legend, when set, is drawn to the right of the panels, outside
	// them, for entries the panels share (families, say) and that would
	// hide data inside a panel.
	Legend *plot.Legend
	Width  vg.Length // 0: 18 cm
	Height vg.Length // 0: 7 cm per panel plus the titles
}

// Size returns the page size of the figure, defaults filled in.
func (f *Figure) Size() (w, h vg.Length) {
	w, h = f.Width, f.Height
	if w == 0 {
		w = 18 * vg.Centimeter
	}
	if h == 0 {
		h = vg.Length(len(f.Panels))*7*vg.Centimeter + 3*vg.Centimeter
	}
	return w, h
}

// textStyle returns a plain text style of the default plot font.
func textStyle(size vg.Length, c color.Color, xa text.XAlignment, ya text.YAlignment) text.Style {
	return text.Style{
		Color:   c,
		Font:    font.From(plot.DefaultFont, size),
		XAlign:  xa,
		YAlign:  ya,
		Handler: plot.DefaultTextHandler,
	}
}

// Draw draws the figure onto a canvas.
func (f *Figure) Draw(dc draw.Canvas) {
	dc.SetColor(color.White)
	dc.Fill(dc.Rectangle.Path())
	pad := 3 * vg.Millimeter
	top := dc.Max.Y - pad
	mid := (dc.Min.X + dc.Max.X) / 2
	width := dc.Max.X - dc.Min.X - 2*pad
	if f.Title != "" {
		sty := fitted(textStyle(13, color.Black, draw.XCenter, draw.YTop), f.Title, width)
		dc.FillText(sty, vg.Point{X: mid, Y: top}, f.Title)
		top -= sty.Height(f.Title) + vg.Millimeter
	}
	if f.Subtitle != "" {
		sty := fitted(textStyle(10, color.Gray{Y: 0x30}, draw.XCenter, draw.YTop), f.Subtitle, width)
		dc.FillText(sty, vg.Point{X: mid, Y: top}, f.Subtitle)
		top -= sty.Height(f.Subtitle)
	}
	bottom := dc.Min.Y + pad
	if f.Caption != "" {
		sty := fitted(textStyle(7.5, color.Gray{Y: 0x60}, draw.XCenter, draw.YBottom), f.Caption, width)
		dc.FillText(sty, vg.Point{X: mid, Y: bottom}, f.Caption)
		bottom += sty.Height(f.Caption) + vg.Millimeter
	}
	if len(f.Panels) == 0 {
		return
	}
	if f.SharedX {
		shareX(f.Panels)
	}
	area := draw.Crop(dc, 0, 0, bottom-dc.Min.Y, top-dc.Max.Y)
	if f.Legend != nil {
		r := f.Legend.Rectangle(area)
		w := r.Max.X - r.Min.X + 2*pad
		side := draw.Crop(area, area.Max.X-area.Min.X-w+pad, -pad, 0, -2*vg.Millimeter)
		lg := *f.Legend
		lg.Top, lg.Left = true, true
		lg.Draw(side)
		area = draw.Crop(area, 0, -w, 0, 0)
	}
	rows := make([][]*plot.Plot, len(f.Panels))
	for i, p := range f.Panels {
		rows[i] = []*plot.Plot{p}
	}
	tiles := draw.Tiles{
		Rows: len(f.Panels), Cols: 1,
		PadTop: 2 * vg.Millimeter, PadBottom: vg.Millimeter,
		PadLeft: 2 * vg.Millimeter, PadRight: 5 * vg.Millimeter,
		PadY: 2 * vg.Millimeter,
	}
	canvases := plot.Align(rows, tiles, area)
	for i, p := range f.Panels {
		p.Draw(canvases[i][0])
	}
}

// fitted shrinks a text style until txt fits in width.
func fitted(sty text.Style, txt string, width vg.Length) text.Style {
	for sty.Font.Size > 4 && sty.Width(txt) > width {
		sty.Font.Size *= 0.95
	}
	return sty
}

// shareX gives every panel the union of their x ranges and leaves the x
// tick labels and axis label to the bottom panel.
func shareX(ps []*plot.Plot) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range ps {
		lo, hi = math.Min(lo, p.X.Min), math.Max(hi, p.X.Max)
	}
	for i, p := range ps {
		p.X.Min, p.X.Max = lo, hi
		if i < len(ps)-1 {
			p.X.Label.Text = ""
			if _, done := p.X.Tick.Marker.(unlabelled); !done {
				p.X.Tick.Marker = unlabelled{p.X.Tick.Marker}
			}
		}
	}
}

// unlabelled keeps another ticker's tick marks and drops their labels.
type unlabelled struct{ plot.Ticker }

// Ticks returns the wrapped ticker's ticks without labels.
func (u unlabelled) Ticks(lo, hi float64) []plot.Tick {
	ts := u.Ticker.Ticks(lo, hi)
	for i := range ts {
		ts[i].Label = ""
	}
	return ts
}

// Render draws the figure in the named format, "svg" or "png".
func (f *Figure) Render(format string) ([]byte, error) {
	w, h := f.Size()
	var c vg.CanvasWriterTo
	switch format {
	case "svg":
		c = vgsvg.New(w, h)
	case "png":
		c = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(pngDPI))}
	default:
		return nil, &FormatError{Path: "(figure)", Ext: format}
	}
	f.Draw(draw.New(c))
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return nil, fmt.Errorf("render %s: %w", format, err)
	}
	return b.Bytes(), nil
}

// Save writes the figure to path in the format its extension names
// (see PlotFormat). Nothing is written when the format is not known.
func (f *Figure) Save(path string) error {
	format, err := PlotFormat(path)
	if err != nil {
		return err
	}
	data, err := f.Render(format)
	if err != nil {
		return fmt.Errorf("plot %s: %w", path, err)
	}
	if err := os.WriteFile(path, data, 0o644); err != nil {
		return &OutputError{Path: path, Err: err}
	}
	return nil
}

// ScaleSI returns the factor and SI prefix that bring values up to
// maxAbs into the range 1 … 1000, as SI chooses them (maxAbs rounded to
// Digits figures first): 2.2e-4 gives 1e6 and "µ", for an axis label
// "gm (µS)". Beyond femto and giga the prefix is a power of ten and a
// space, as SI's scientific notation writes it: 3.2e-18 gives 1e18 and
// "1e-18 ", for "gm (1e-18 S)". Zero or a non-finite maxAbs gives 1 and
// "".
func ScaleSI(maxAbs float64) (factor float64, prefix string) {
	if !(maxAbs > 0) || math.IsInf(maxAbs, 0) {
		return 1, ""
	}
	_, _, exp := sigDigits(maxAbs, Digits)
	// Powers of ten of a float64 stay within ±300, whose factor is finite.
	k := min(max(floorDiv3(exp), -100), 100)
	if k < siPrefixLow || k > siPrefixHigh {
		return math.Pow(10, float64(-3*k)), "1e" + strconv.Itoa(3*k) + " "
	}
	return math.Pow(1000, float64(-k)), siPrefix(k)
}

// SeriesLine makes a line of (x, y·yScale) through the finite points of a
// series, coloured and dashed as given (nil dashes: solid).
func SeriesLine(xs, ys []float64, yScale float64, c color.Color, dashes []vg.Length) (*plotter.Line, error) {
	pts := make(plotter.XYs, 0, len(xs))
	for i := range xs {
		if i < len(ys) && !math.IsNaN(xs[i]) && !math.IsInf(xs[i], 0) && !math.IsNaN(ys[i]) && !math.IsInf(ys[i], 0) {
			pts = append(pts, plotter.XY{X: xs[i], Y: ys[i] * yScale})
		}
	}
	if len(pts) == 0 {
		return nil, fmt.Errorf("no finite points to plot")
	}
	l, err := plotter.NewLine(pts)
	if err != nil {
		return nil, err
	}
	l.LineStyle.Color = c
	l.LineStyle.Width = vg.Points(1.6)
	l.LineStyle.Dashes = dashes
	return l, nil
}

// NiceTicks places about Labels labelled ticks at steps of 1, 2 or 5
// times a power of ten, with unlabelled minor ticks between them, and
// writes the labels with just the decimals the step needs (0.2, 0.4, …
// rather than 0.20, 0.40). It is the usual "nice numbers" rule for axis
// labels (common practice, no source).
type NiceTicks struct {
	Labels int // wanted number of labelled ticks; 0 means 5
}

// Ticks returns the ticks for an axis from lo to hi.
func (t NiceTicks) Ticks(lo, hi float64) []plot.Tick {
	n := t.Labels
	if n <= 0 {
		n = 5
	}
	if !(hi > lo) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		return plot.DefaultTicks{}.Ticks(lo, hi)
	}
	raw := (hi - lo) / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	var step float64
	minors := 5
	switch f := raw / mag; {
	case f <= 1.5:
		step = mag
	case f <= 3:
		step, minors = 2*mag, 4
	case f <= 7:
		step = 5 * mag
	default:
		step = 10 * mag
	}
	dec := max(0, -int(math.Floor(math.Log10(step)+1e-9)))
	minor := step / float64(minors)
	var ts []plot.Tick
	for k := math.Ceil(lo/minor - 1e-9); k*minor <= hi+1e-9*step; k++ {
		v := k * minor
		if math.Abs(v) < 1e-12*step {
			v = 0
		}
		tick := plot.Tick{Value: v}
		if int64(k)%int64(minors) == 0 {
			tick.Label = strconv.FormatFloat(v, 'f', dec, 64)
		}
		ts = append(ts, tick)
	}
	return ts
}

// newPanel makes a panel with light grid lines and the legend in the top
// right corner.
func newPanel(xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	grid := plotter.NewGrid()
	grid.Vertical.Color = color.Gray{Y: 0xe0}
	grid.Horizontal.Color = color.Gray{Y: 0xe0}
	p.Add(grid)
	p.X.Tick.Marker = NiceTicks{Labels: 6}
	p.Y.Tick.Marker = NiceTicks{Labels: 5}
	p.Legend.Top = true
	p.Legend.TextStyle.Font.Size = 9
	p.Legend.Padding = vg.Points(2)
	p.Legend.XOffs = -2 * vg.Millimeter
	p.Legend.YOffs = -vg.Millimeter
	return p
}

// maxAbs returns the largest |v| of the finite values.
func maxAbs(vs []float64) float64 {
	m := 0.0
	for _, v := range vs {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			m = math.Max(m, math.Abs(v))
		}
	}
	return m
}

// headroom is how far above the data the y axes reach, as a fraction of
// the data maximum, leaving room for the legend.
const headroom = 1.3

// markSwitchover adds a dashed vertical line at vcm = at, spanning 0 … top.
func markSwitchover(p *plot.Plot, at, top float64, legend string) error {
	if !finiteVal(at) {
		return nil
	}
	l, err := plotter.NewLine(plotter.XYs{{X: at, Y: 0}, {X: at, Y: top}})
	if err != nil {
		return err
	}
	l.LineStyle.Color = color.Gray{Y: 0x80}
	l.LineStyle.Width = vg.Points(0.8)
	l.LineStyle.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
	p.Add(l)
	if legend != "" {
		p.Legend.Add(legend, l)
	}
	return nil
}

// CurvePanels makes the two panels of an evaluated sweep against vcm:
// gm on top and the NMOS and PMOS pair currents i_n and i_p below, each
// in the SI prefix its values call for (µS and µA for typical stages),
// both y axes starting at zero so that the ripple reads true, and the
// switchover marked when the stage has one.
func CurvePanels(ev *objectives.Evaluation) (gm, currents *plot.Plot, err error) {
	curve := ev.Curve()
	n := len(curve)
	if n == 0 {
		return nil, nil, fmt.Errorf("plot %s: the evaluation has no curve", ev.Design.Topology)
	}
	vcm, g, in, ip := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i, c := range curve {
		vcm[i], g[i], in[i], ip[i] = c.VCM, c.GM, c.IN, c.IP
	}
	sw := ev.Metrics.Switchover
	// Line colours, dark enough on white; i_p is also dashed so the two
	// currents stay apart in grey print.
	colourGM := color.RGBA{R: 0x1f, G: 0x3a, B: 0x93, A: 0xff}
	colourN := color.RGBA{R: 0x1f, G: 0x77, B: 0xb4, A: 0xff}
	colourP := color.RGBA{R: 0xd6, G: 0x5f, B: 0x00, A: 0xff}

	gScale, gPre := ScaleSI(maxAbs(g))
	gm = newPanel("", "gm ("+gPre+"S)")
	gl, err := SeriesLine(vcm, g, gScale, colourGM, nil)
	if err != nil {
		return nil, nil, fmt.Errorf("plot gm: %w", err)
	}
	gm.Add(gl)
	gm.Legend.Add("gm", gl)
	gTop := headroom * maxAbs(g) * gScale
	if err := markSwitchover(gm, sw, gTop, ""); err != nil {
		return nil, nil, err
	}
	gm.Y.Min, gm.Y.Max = 0, math.Max(gTop, 1e-12)

	iScale, iPre := ScaleSI(math.Max(maxAbs(in), maxAbs(ip)))
	currents = newPanel("vcm (V)", "pair current ("+iPre+"A)")
	nl, err := SeriesLine(vcm, in, iScale, colourN, nil)
	if err != nil {
		return nil, nil, fmt.Errorf("plot i_n: %w", err)
	}
	pl, err := SeriesLine(vcm, ip, iScale, colourP, []vg.Length{vg.Points(5), vg.Points(2.5)})
	if err != nil {
		return nil, nil, fmt.Errorf("plot i_p: %w", err)
	}
	// A single-pair family has no current in the other pair: leave its
	// line out rather than draw a zero that looks measured.
	hasN, hasP := true, true
	if ev.Stage != nil {
		hasN, hasP = ev.Stage.PairN[0] != "", ev.Stage.PairP[0] != ""
	}
	if hasN {
		currents.Add(nl)
		currents.Legend.Add("i_n (NMOS pair)", nl)
	}
	if hasP {
		currents.Add(pl)
		currents.Legend.Add("i_p (PMOS pair)", pl)
	}
	iTop := headroom * math.Max(maxAbs(in), maxAbs(ip)) * iScale
	swLegend := ""
	if !math.IsNaN(sw) {
		swLegend = "switchover " + SI(sw, "V", tableDigits)
	}
	if err := markSwitchover(currents, sw, iTop, swLegend); err != nil {
		return nil, nil, err
	}
	currents.Y.Min, currents.Y.Max = 0, math.Max(iTop, 1e-12)

	lo, hi := ev.Design.Sweep.Low, ev.Design.Sweep.High
	if !(hi > lo) {
		lo, hi = vcm[0], vcm[n-1]
	}
	for _, p := range []*plot.Plot{gm, currents} {
		p.X.Min, p.X.Max = lo, hi
	}
	return gm, currents, nil
}

// EvalFigure makes the figure of an evaluated sweep: the panels of
// CurvePanels sharing the vcm axis, titled with the topology, process,
// supply and temperature, the gm ripple and power in the subtitle and the
// caution as the caption.
func EvalFigure(ev *objectives.Evaluation) (*Figure, error) {
	gm, cur, err := CurvePanels(ev)
	if err != nil {
		return nil, err
	}
	d := ev.Design
	proc := d.ProcessRef
	if d.Process != nil {
		proc = d.Process.Name
	}
	m := ev.Metrics
	return &Figure{
		Title: fmt.Sprintf("%s on %s, supply %s, %s", d.Topology, proc, SI(d.Supply, "V", tableDigits), Celsius(d.TempK)),
		Subtitle: fmt.Sprintf("gm ripple %s    gm %s … %s    power %s",
			RippleText(m.GMRipple), SI(m.GMMin, "S", tableDigits), SI(m.GMMax, "S", tableDigits), SI(m.Power, "W", tableDigits)),
		Caption: objectives.Caution,
		Panels:  []*plot.Plot{gm, cur},
		SharedX: true,
	}, nil
}

// PlotEval writes the plot of an evaluated sweep (see EvalFigure) to
// path, as SVG or PNG by its extension; any other extension is a
// *FormatError and nothing is written.
func PlotEval(path string, ev *objectives.Evaluation) error {
	if _, err := PlotFormat(path); err != nil {
		return err
	}
	fig, err := EvalFigure(ev)
	if err != nil {
		return err
	}
	return fig.Save(path)
}
