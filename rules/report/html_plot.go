package report

import (
	"bytes"
	"fmt"
	"html"
	"image/color"
	"io"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/biaslint/biaslint/checks/plane"
	"github.com/biaslint/biaslint/netlist/units"
	"github.com/biaslint/biaslint/rules"
)

// Plot size and the resolution of PNG output.
const (
	plotWidth  = 6.6 * vg.Inch
	plotHeight = 3.6 * vg.Inch
	pngDPI     = 144
)

// The plots' palette: ink on warm paper, the load line in slate blue, the
// safe area a pale clay tint bounded in brick, the saturation edge a muted
// violet, and one hue per kind of case.
var (
	inkColor   = color.RGBA{0x22, 0x2b, 0x36, 0xff}
	paperColor = color.RGBA{0xfd, 0xfb, 0xf6, 0xff}
	gridColor  = color.RGBA{0xe6, 0xe1, 0xd6, 0xff}
	loadColor  = color.RGBA{0x35, 0x58, 0x8f, 0xff}
	soaFill    = color.RGBA{0xf3, 0xe4, 0xd9, 0xff}
	soaEdge    = color.RGBA{0xa9, 0x3f, 0x2a, 0xff}
	satColor   = color.RGBA{0x7d, 0x6b, 0x9a, 0xff}
	kindColor  = map[plane.Kind]color.Color{
		plane.Nominal:    color.RGBA{0x1b, 0x1f, 0x24, 0xff},
		plane.Scenario:   color.RGBA{0xc9, 0x7c, 0x10, 0xff},
		plane.Corner:     color.RGBA{0x1f, 0x85, 0x7a, 0xff},
		plane.MonteCarlo: color.RGBA{0x8a, 0x93, 0xa3, 0xff},
		plane.Swing:      color.RGBA{0xa3, 0x30, 0x6b, 0xff},
	}
	kindGlyph = map[plane.Kind]draw.GlyphDrawer{
		plane.Nominal:    draw.CircleGlyph{},
		plane.Scenario:   draw.PyramidGlyph{},
		plane.Corner:     diamondGlyph{},
		plane.MonteCarlo: draw.CircleGlyph{},
		plane.Swing:      draw.RingGlyph{},
	}
	kindRadius = map[plane.Kind]vg.Length{
		plane.Nominal: 4.2, plane.Scenario: 3.6, plane.Corner: 3.8, plane.MonteCarlo: 1.6, plane.Swing: 2.6,
	}
	kindLabel = map[plane.Kind]string{
		plane.Nominal: "nominal", plane.Scenario: "scenario", plane.Corner: "corner", plane.MonteCarlo: "Monte Carlo",
		plane.Swing: "signal swing",
	}
)

// diamondGlyph is a filled square stood on its corner.
type diamondGlyph struct{}

// DrawGlyph implements draw.GlyphDrawer.
func (diamondGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius * 1.25
	p := make(vg.Path, 0, 5)
	p.Move(vg.Point{X: pt.X, Y: pt.Y + r})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y})
	p.Line(vg.Point{X: pt.X, Y: pt.Y - r})
	p.Line(vg.Point{X: pt.X - r, Y: pt.Y})
	p.Close()
	c.Fill(p)
}

// currentScale picks the unit the IC axis is drawn in for a range up to
// ymax A: A, mA or uA, and the factor from A.
func currentScale(ymax float64) (string, float64) {
	switch {
	case ymax < 1e-3:
		return "uA", 1e6
	case ymax < 1:
		return "mA", 1e3
	}
	return "A", 1
}

// Mark is a finding to mark on a plot, at the operating point of its case.
type Mark struct {
	// Case is the finding's worst case, "scenario" or "scenario/corner"
	// (rules.CaseName); Rule its rule id; Severity its severity.
	Case, Rule, Severity string
}

// MarksOf lists the unwaived findings on device as plot marks.
func MarksOf(findings []rules.Finding, device string) []Mark {
	var out []Mark
	for _, x := range findings {
		if x.Waived || x.Device != device || x.Scenario == "" {
			continue
		}
		out = append(out, Mark{Case: rules.CaseName(x.Scenario, x.Corner), Rule: x.Rule, Severity: string(x.Severity)})
	}
	return out
}

// PlanePlot is an output-plane plot with its legend, which is drawn beside
// the data area rather than over it.
type PlanePlot struct {
	Plot   *plot.Plot
	Legend plot.Legend
}

// legendGap separates the data area from the legend column.
const legendGap = 10

// layout splits c into the plot's area and the legend's column at its
// right, below the title.
func (f *PlanePlot) layout(c draw.Canvas) (plotArea, legendArea draw.Canvas) {
	r := f.Legend.Rectangle(c)
	w := r.Max.X - r.Min.X + 4
	plotArea = draw.Crop(c, 0, -(w + legendGap), 0, 0)
	top := f.Plot.Title.Padding + f.Plot.Title.TextStyle.Height(f.Plot.Title.Text) + 6
	legendArea = draw.Crop(c, c.Max.X-c.Min.X-w, -4, 0, -top)
	return plotArea, legendArea
}

// Draw draws the plot in c with the legend in a column at its right,
// outside the data area.
func (f *PlanePlot) Draw(c draw.Canvas) {
	plotArea, legendArea := f.layout(c)
	f.Plot.Draw(plotArea)
	f.Legend.Draw(legendArea)
}

// PlaneFigure builds the output-plane plot of one transistor: the safe
// area shaded and outlined, the saturation edge, the load line, the swing
// trajectory, one marker per case and a ring with the rule id at the
// case of each mark, with a legend beside the data and labelled axes (VCE
// in V, IC in A, mA or uA) with six to ten labelled ticks each. The data
// area keeps a margin inside its axes, so points on its edges show whole.
func PlaneFigure(pl plane.Plane, marks ...Mark) (*PlanePlot, error) {
	if !(pl.XMax > 0) || !(pl.YMax > 0) || math.IsInf(pl.XMax, 0) || math.IsInf(pl.YMax, 0) {
		return nil, fmt.Errorf("%s: no plotted area", pl.Device)
	}
	unit, k := currentScale(pl.YMax)
	xy := func(pts []plane.Point) plotter.XYs {
		out := make(plotter.XYs, 0, len(pts))
		for _, p := range pts {
			if !math.IsNaN(p.VCE) && !math.IsNaN(p.IC) && !math.IsInf(p.VCE, 0) && !math.IsInf(p.IC, 0) {
				out = append(out, plotter.XY{X: p.VCE, Y: p.IC * k})
			}
		}
		return out
	}
	sans := func(size vg.Length) font.Font {
		return font.From(font.Font{Typeface: "Liberation", Variant: "Sans"}, size)
	}

	p := plot.New()
	p.BackgroundColor = paperColor
	p.Title.Text = pl.Device
	if pl.Model != "" {
		p.Title.Text += "  (" + pl.Model + ", " + strings.ToUpper(pl.Polarity) + ")"
	}
	p.Title.TextStyle.Font = sans(12)
	p.Title.TextStyle.Color = inkColor
	p.Title.Padding = 6
	fwd := "VCE"
	if pl.Polarity == "pnp" {
		fwd = "VEC"
	}
	p.X.Label.Text = fwd + " (V)"
	p.Y.Label.Text = "IC (" + strings.Replace(unit, "u", "µ", 1) + ")"
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		ax.Label.TextStyle.Font = sans(10)
		ax.Label.TextStyle.Color = inkColor
		ax.Tick.Label.Font = sans(8.5)
		ax.Tick.Label.Color = inkColor
		ax.Color = inkColor
		ax.Tick.Color = inkColor
		ax.Tick.Marker = niceTicks{}
		// A gap between each axis and the data, a little more than the
		// largest marker, so points at VCE = 0 or IC = 0 show whole.
		ax.Padding = 7
	}
	fig := &PlanePlot{Plot: p, Legend: plot.NewLegend()}
	leg := &fig.Legend
	leg.TextStyle.Font = sans(8)
	leg.TextStyle.Color = inkColor
	leg.Top = true
	leg.Left = true
	leg.ThumbnailWidth = 14
	leg.Padding = 3

	// The safe area, shaded under its outline.
	var outline []plane.Point
	for _, s := range pl.SOA.Segments {
		outline = append(outline, s.Points...)
	}
	if len(outline) > 0 {
		last := outline[len(outline)-1]
		area := append([]plane.Point{{VCE: 0, IC: 0}, {VCE: 0, IC: outline[0].IC}}, outline...)
		area = append(area, plane.Point{VCE: last.VCE, IC: 0})
		if poly, err := plotter.NewPolygon(xy(area)); err == nil {
			poly.Color = soaFill
			poly.LineStyle.Width = 0
			p.Add(poly)
		}
		first := true
		for _, s := range pl.SOA.Segments {
			l, err := plotter.NewLine(xy(s.Points))
			if err != nil {
				continue
			}
			l.Color, l.Width = soaEdge, 1.4
			if s.Limit == "power" {
				l.Dashes = []vg.Length{5, 2.5}
			}
			p.Add(l)
			if first {
				leg.Add(soaLegend(pl), l)
				first = false
			}
		}
	}

	grid := plotter.NewGrid()
	grid.Vertical.Color, grid.Horizontal.Color = gridColor, gridColor
	grid.Vertical.Width, grid.Horizontal.Width = 0.6, 0.6
	p.Add(grid)

	if len(pl.Saturation) > 1 {
		if l, err := plotter.NewLine(xy(pl.Saturation)); err == nil {
			l.Color, l.Width, l.Dashes = satColor, 1.1, []vg.Length{1.5, 2}
			p.Add(l)
			leg.Add("saturation edge", l)
		}
	}

	if ll := pl.Load; ll != nil {
		pts := ll.Curve
		if ll.R == 0 {
			pts = []plane.Point{{VCE: ll.VOpen, IC: 0}, {VCE: ll.VOpen, IC: pl.YMax}}
		}
		if l, err := plotter.NewLine(xy(pts)); err == nil {
			l.Color, l.Width = loadColor, 1.8
			p.Add(l)
			leg.Add("DC load line", l)
		}
	}

	for _, tr := range pl.Swings {
		if len(tr.Points) < 2 {
			continue
		}
		if l, err := plotter.NewLine(xy(tr.Points)); err == nil {
			l.Color, l.Width, l.Dashes = kindColor[plane.Swing], 1.2, []vg.Length{3, 2}
			p.Add(l)
		}
	}
	// Markers: drawn with the nominal point last, on top of the others;
	// listed in the legend nominal first.
	scatters := map[plane.Kind]*plotter.Scatter{}
	for i := len(plane.Kinds) - 1; i >= 0; i-- {
		kind := plane.Kinds[i]
		var pts []plane.Point
		for _, op := range pl.Points {
			if op.Kind == kind {
				pts = append(pts, op.Point)
			}
		}
		d := xy(pts)
		if len(d) == 0 {
			continue
		}
		s, err := plotter.NewScatter(d)
		if err != nil {
			continue
		}
		s.GlyphStyle = draw.GlyphStyle{Color: kindColor[kind], Radius: kindRadius[kind], Shape: kindGlyph[kind]}
		p.Add(s)
		scatters[kind] = s
	}
	for _, kind := range plane.Kinds {
		s := scatters[kind]
		if s == nil {
			continue
		}
		label := kindLabel[kind] + " Q point"
		if kind == plane.Swing && len(pl.Swings) > 0 {
			label = kindLabel[kind] + " (" + strings.Join(swingSources(pl), ", ") + ")"
		}
		leg.Add(label, s)
	}

	addMarks(p, leg, pl, marks, xy)

	p.X.Min, p.X.Max = 0, pl.XMax
	p.Y.Min, p.Y.Max = 0, pl.YMax*k
	return fig, nil
}

// Colours of the finding rings, by severity.
var markColor = map[string]color.Color{
	"error":   color.RGBA{0xa9, 0x3f, 0x2a, 0xff},
	"warning": color.RGBA{0xb8, 0x6f, 0x0c, 0xff},
	"note":    color.RGBA{0x35, 0x58, 0x8f, 0xff},
}

// addMarks rings the operating point of each mark's case and writes the
// rule id beside it; several findings at one point share the ring and
// list their ids. A mark whose case has no plotted point is left out.
func addMarks(p *plot.Plot, leg *plot.Legend, pl plane.Plane, marks []Mark, xy func([]plane.Point) plotter.XYs) {
	type spot struct {
		pt       plane.Point
		ids      []string
		severity string
	}
	var spots []*spot
	at := map[string]*spot{}
	rank := map[string]int{"error": 0, "warning": 1, "note": 2}
	for _, m := range marks {
		s := at[m.Case]
		if s == nil {
			for _, op := range pl.Points {
				if op.Case == m.Case {
					s = &spot{pt: op.Point, severity: m.Severity}
					break
				}
			}
			if s == nil {
				continue
			}
			at[m.Case] = s
			spots = append(spots, s)
		}
		s.ids = append(s.ids, m.Rule)
		if rank[m.Severity] < rank[s.severity] {
			s.severity = m.Severity
		}
	}
	legended := map[string]bool{}
	// Labels of nearby spots are stacked, one text line apart, so that
	// two findings at neighbouring cases stay readable.
	var placed [][2]float64
	for _, s := range spots {
		d := xy([]plane.Point{s.pt})
		if len(d) == 0 {
			continue
		}
		ring, err := plotter.NewScatter(d)
		if err != nil {
			continue
		}
		col := markColor[s.severity]
		ring.GlyphStyle = draw.GlyphStyle{Color: col, Radius: 7, Shape: draw.RingGlyph{}}
		p.Add(ring)
		fx, fy := s.pt.VCE/pl.XMax, s.pt.IC/pl.YMax
		line := 0
		for _, q := range placed {
			if math.Abs(q[0]-fx) < 0.25 && math.Abs(q[1]-fy) < 0.08 {
				line++
			}
		}
		placed = append(placed, [2]float64{fx, fy})
		labels, err := plotter.NewLabels(plotter.XYLabels{XYs: d, Labels: []string{strings.Join(s.ids, ", ")}})
		if err == nil {
			for i := range labels.TextStyle {
				labels.TextStyle[i].Color = col
				labels.TextStyle[i].Font = font.From(font.Font{Typeface: "Liberation", Variant: "Sans"}, 7.5)
			}
			labels.Offset = vg.Point{X: 9, Y: 3 - vg.Length(10*line)}
			p.Add(labels)
		}
		if !legended[s.severity] {
			legended[s.severity] = true
			leg.Add(s.severity+" found here", ring)
		}
	}
}

// niceTicks places labelled ticks at 1, 2 or 5 times a power of ten, six
// to ten of them across the axis, with an unlabelled tick between each
// pair.
type niceTicks struct{}

// Ticks implements plot.Ticker.
func (niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) || math.IsInf(hi-lo, 0) {
		return nil
	}
	step := niceStep(hi - lo)
	var out []plot.Tick
	first := math.Ceil(lo/step-1e-9) * step
	for i := 0; i < 40; i++ {
		v := first + float64(i)*step
		if v > hi+step*1e-9 {
			break
		}
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		out = append(out, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', -1, 64)})
		if half := v + step/2; half <= hi {
			out = append(out, plot.Tick{Value: half})
		}
	}
	return out
}

// niceStep is the tick step for a span: the smallest of 1, 2, 2.5 and 5
// times a power of ten that gives at most ten steps, so that five to ten
// steps (six to eleven labelled ticks) cross the axis.
func niceStep(span float64) float64 {
	mag := math.Pow(10, math.Floor(math.Log10(span/10)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if span/(m*mag) <= 10 {
			return roundStep(m * mag)
		}
	}
	return roundStep(10 * mag)
}

// roundStep removes the binary noise of a power of ten (0.1*3 and the
// like), so labels print as written.
func roundStep(v float64) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 3, 64), 64)
	if err != nil {
		return v
	}
	return r
}

// swingSources lists the sources of a plane's swing trajectories.
func swingSources(pl plane.Plane) []string {
	var out []string
	for _, tr := range pl.Swings {
		out = append(out, tr.Source)
	}
	return out
}

// soaLegend names the safe-area outline with the ambient of its power
// limit.
func soaLegend(pl plane.Plane) string {
	if math.IsNaN(pl.SOA.Pd) {
		return "safe operating area"
	}
	return fmt.Sprintf("safe area (Pd %s at %s)", units.Format(pl.SOA.Pd, "W"), units.Format(pl.Ambient, "C"))
}

// render draws a figure onto a canvas, turning a panic of the drawing
// library (which it uses for impossible sizes) into an error.
func render(f *PlanePlot, c vg.CanvasSizer) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("drawing the plot: %v", r)
		}
	}()
	f.Draw(draw.New(c))
	return nil
}

// PlaneSVG writes the output-plane plot of one transistor as a standalone
// SVG document, with marks for its findings.
func PlaneSVG(w io.Writer, pl plane.Plane, marks ...Mark) error {
	p, err := PlaneFigure(pl, marks...)
	if err != nil {
		return err
	}
	c := vgsvg.New(plotWidth, plotHeight)
	if err := render(p, c); err != nil {
		return err
	}
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return err
	}
	_, err = w.Write(sansFallback(b.Bytes()))
	return err
}

// PlanePNG writes the output-plane plot of one transistor as a PNG image,
// with marks for its findings.
func PlanePNG(w io.Writer, pl plane.Plane, marks ...Mark) error {
	p, err := PlaneFigure(pl, marks...)
	if err != nil {
		return err
	}
	c := vgimg.NewWith(vgimg.UseWH(plotWidth, plotHeight), vgimg.UseDPI(pngDPI))
	if err := render(p, c); err != nil {
		return err
	}
	_, err = vgimg.PngCanvas{Canvas: c}.WriteTo(w)
	return err
}

// sansFallback lets a browser without the plot's font substitute a sans
// serif one rather than its default serif.
func sansFallback(svg []byte) []byte {
	return bytes.ReplaceAll(svg, []byte("font-family:Liberation Sans;"),
		[]byte("font-family:Liberation Sans,Arial,Helvetica,sans-serif;"))
}

// inlineSVG returns the plot as an <svg> element for an HTML page: the XML
// prolog dropped, a class and an accessible label added.
func inlineSVG(pl plane.Plane, label string, marks ...Mark) (string, error) {
	var b bytes.Buffer
	if err := PlaneSVG(&b, pl, marks...); err != nil {
		return "", err
	}
	s := b.String()
	i := strings.Index(s, "<svg")
	if i < 0 {
		return "", fmt.Errorf("%s: the plot is not SVG", pl.Device)
	}
	s = s[i:]
	return `<svg class="plane" role="img" aria-label="` + html.EscapeString(label) + `"` + strings.TrimPrefix(s, "<svg"), nil
}
