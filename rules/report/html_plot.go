package report

import (
	"bytes"
	"fmt"
	"html"
	"image/color"
	"io"
	"math"
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
)

// Plot size and the resolution of PNG output.
const (
	plotWidth  = 5.2 * vg.Inch
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

// PlaneFigure builds the output-plane plot of one transistor: the safe
// area shaded and outlined, the saturation edge, the load line, the swing
// trajectory and one marker per case, with a legend and labelled axes (VCE
// in V, IC in A, mA or uA).
func PlaneFigure(pl plane.Plane) (*plot.Plot, error) {
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
		ax.Padding = 0
	}
	p.Legend.TextStyle.Font = sans(8)
	p.Legend.TextStyle.Color = inkColor
	p.Legend.Top = true
	p.Legend.XOffs = -30
	p.Legend.YOffs = -4
	p.Legend.ThumbnailWidth = 14

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
				p.Legend.Add(soaLegend(pl), l)
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
			p.Legend.Add("saturation edge", l)
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
			p.Legend.Add("DC load line", l)
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
		p.Legend.Add(label, s)
	}

	p.X.Min, p.X.Max = 0, pl.XMax
	p.Y.Min, p.Y.Max = 0, pl.YMax*k
	return p, nil
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

// render draws a plot onto a canvas, turning a panic of the drawing
// library (which it uses for impossible sizes) into an error.
func render(p *plot.Plot, c vg.CanvasSizer) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("drawing the plot: %v", r)
		}
	}()
	p.Draw(draw.New(c))
	return nil
}

// PlaneSVG writes the output-plane plot of one transistor as a standalone
// SVG document.
func PlaneSVG(w io.Writer, pl plane.Plane) error {
	p, err := PlaneFigure(pl)
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

// PlanePNG writes the output-plane plot of one transistor as a PNG image.
func PlanePNG(w io.Writer, pl plane.Plane) error {
	p, err := PlaneFigure(pl)
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
func inlineSVG(pl plane.Plane, label string) (string, error) {
	var b bytes.Buffer
	if err := PlaneSVG(&b, pl); err != nil {
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
