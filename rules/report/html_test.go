package report

import (
	"bytes"
	"encoding/xml"
	"image/png"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/checks/plane"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
)

// analysed reads, analyses and judges netlist text with the default rules.
func analysed(t *testing.T, name, src string) (File, []plane.Plane) {
	t.Helper()
	c, err := netlist.ReadSource(name, []byte(src), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err != nil {
		t.Fatal(err)
	}
	an, err := checks.Analyze(c, checks.Options{})
	if err != nil {
		t.Fatal(err)
	}
	rs, err := rules.Load("default", rules.LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	fs, err := rules.Evaluate(rs, an, rules.EvalOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return File{Path: name, Title: c.Title, Analysis: an, Findings: fs}, plane.All(an)
}

// Two stages of our own: a sound degenerated common-emitter stage, and one
// with its base divider swapped (the base near the supply, so the stage
// saturates: IC is set by 12 V/(RC+RE) = 2.1 mA with VCE near 0, hand
// estimate).
const (
	goodStage = "<good & proper>\nV1 vcc 0 12\nR1 vcc b 82k\nR2 b 0 15k\nRC vcc c 4.7k\nRE e 0 1k\nQ1 c b e N\n*@device Q1 role=linear\n" +
		".model N NPN (IS=1e-14 BF=200)\n*@part N vceo=40 vcbo=60 vebo=6 icmax=100m pd=300m tjmax=150 rthja=400\n.end\n"
	badStage = "swapped divider\nV1 vcc 0 12\nR1 vcc b 15k\nR2 b 0 82k\nRC vcc c 4.7k\nRE e 0 1k\nQ1 c b e N\nQ2 c2 b e2 N\nRC2 vcc c2 10k\nRE2 e2 0 2k\n" +
		"*@device Q1 role=linear\n*@device Q2 role=linear\n" +
		".model N NPN (IS=1e-14 BF=200)\n*@part N vceo=40 vcbo=60 vebo=6 icmax=100m pd=300m tjmax=150 rthja=400\n.end\n"
)

func htmlOf(t *testing.T, r *Report, opt HTMLOptions) string {
	t.Helper()
	var b bytes.Buffer
	if err := HTML(&b, r, opt); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

func TestHTMLReport(t *testing.T) {
	f1, p1 := analysed(t, "good.cir", goodStage)
	f2, p2 := analysed(t, "bad.cir", badStage)
	// A waived finding, to see its reason on the page.
	f2.Findings = append(f2.Findings, rules.Finding{Rule: "vce-over-rating", Severity: rules.SeverityError, Device: "Q2",
		Pos: netlist.Pos{File: "bad.cir", Line: 8, Col: 1}, Waived: true, WaiverReason: "bench unit <only>"})
	r := &Report{Files: []File{f1, f2}, Version: "test"}
	page := htmlOf(t, r, HTMLOptions{Planes: [][]plane.Plane{p1, p2}})

	// Self-contained: no script, no external or linked asset of any kind.
	for _, bad := range []string{"<script", "<link", "<img", "<iframe", " src=", "@import", "url(http", `href="http`, "xlink:href=\"http"} {
		if strings.Contains(page, bad) {
			t.Errorf("page contains %q", bad)
		}
	}
	// One plot per transistor (1 + 2), one row per unwaived finding.
	if n, want := strings.Count(page, `<svg class="plane"`), f1.Transistors()+f2.Transistors(); n != want || want != 3 {
		t.Errorf("%d plots, want %d (one per transistor)", n, want)
	}
	unwaived := 0
	for _, x := range append(append([]rules.Finding(nil), f1.Findings...), f2.Findings...) {
		if !x.Waived {
			unwaived++
		}
	}
	if unwaived == 0 {
		t.Fatal("the swapped divider should give findings")
	}
	if n := strings.Count(page, `<tr class="finding">`); n != unwaived {
		t.Errorf("%d finding rows, want %d", n, unwaived)
	}
	if !strings.Contains(page, "saturated-linear-stage") || !strings.Contains(page, "bad.cir:7:1") {
		t.Error("the saturation finding with its location is missing")
	}
	if n := strings.Count(page, `<tr class="waived-finding">`); n != 1 || !strings.Contains(page, "bench unit &lt;only&gt;") {
		t.Errorf("waived rows %d, or the reason is not shown escaped", n)
	}
	// Text from the netlist is escaped.
	if strings.Contains(page, "<good & proper>") || !strings.Contains(page, "&lt;good &amp; proper&gt;") {
		t.Error("the title is not escaped")
	}
	// The grid links every file to its section.
	for _, id := range []string{"file-1", "file-2"} {
		if !strings.Contains(page, `href="#`+id+`"`) || !strings.Contains(page, `id="`+id+`"`) {
			t.Errorf("no link to or anchor for %s", id)
		}
	}
	if !strings.Contains(page, `<th class="rule"><code>saturated-linear-stage</code></th>`) {
		t.Error("the grid has no column for the rule that fired")
	}
	// The cautions are on the page, once per file.
	if n := strings.Count(page, Cautions[0]); n != 2 {
		t.Errorf("cautions shown %d times, want 2", n)
	}
	// The same input gives the same bytes.
	if again := htmlOf(t, r, HTMLOptions{Planes: [][]plane.Plane{p1, p2}}); again != page {
		t.Error("two renderings differ")
	}
	// One file: no grid.
	one := htmlOf(t, &Report{Files: []File{f1}}, HTMLOptions{Planes: [][]plane.Plane{p1}})
	if strings.Contains(one, `class="grid"`) {
		t.Error("a single file should have no overview grid")
	}
	// Without planes the page still renders, with no plots.
	if none := htmlOf(t, r, HTMLOptions{}); strings.Contains(none, "<svg") {
		t.Error("plots without planes")
	}
}

func TestHTMLGridCounts(t *testing.T) {
	r := batchSample()
	files := htmlPageOf(r, HTMLOptions{}).Files
	g := htmlGridOf(r, files)
	if strings.Join(g.Rules, " ") != "cutoff-linear-stage floating-base vce-over-rating" {
		t.Fatalf("rules %v", g.Rules)
	}
	// sample(): floating-base twice (warning), vce-over-rating once (error,
	// the waived one not counted).
	want := [][]htmlGridCell{
		{{}, {2, "sev-warning"}, {1, "sev-error"}},
		{{1, "sev-warning"}, {}, {}},
	}
	for i, row := range g.Rows {
		for j, c := range row.Cells {
			if c != want[i][j] {
				t.Errorf("cell %d,%d = %+v, want %+v", i, j, c, want[i][j])
			}
		}
	}
}

func TestHTMLMargins(t *testing.T) {
	pl := plane.Plane{Polarity: "npn", Ambient: 25, SOA: plane.SOA{VCEO: 40, ICMax: math.NaN(), Pd: 0.5},
		Points: []plane.OpPoint{
			{Point: plane.Point{VCE: 46, IC: 1e-3}, Case: "nominal", Power: 0.045},
			{Point: plane.Point{VCE: 30, IC: 2e-3}, Case: "hot", Power: 0.42},
		}}
	m := htmlMargins(pl, checks.Transistor{TransistorFixed: &checks.TransistorFixed{}}, false)
	if len(m) != 3 {
		t.Fatalf("margins %+v", m)
	}
	// 46/40 = 115 % over; ICmax unknown; 0.42/0.5 = 84 % near the limit
	// (the report's own thresholds: over 100 %, near above 80 %).
	for i, want := range []htmlMargin{
		{Label: "VCE against VCEO", Value: "46.0 V (nominal)", Limit: "40.0 V", Share: "115 %", Class: "over"},
		{Label: "IC against ICmax", Value: "2.00 mA (hot)", Limit: "not rated", Class: "unknown"},
		{Label: "power against Pd(25.0 C)", Value: "420 mW (hot)", Limit: "500 mW", Share: "84 %", Class: "near"},
	} {
		if m[i] != want {
			t.Errorf("margin %d = %+v, want %+v", i, m[i], want)
		}
	}
}

func TestPlaneSVGAndPNG(t *testing.T) {
	_, pls := analysed(t, "good.cir", goodStage)
	if len(pls) != 1 {
		t.Fatalf("planes %d", len(pls))
	}
	pl := pls[0]
	var b bytes.Buffer
	if err := PlaneSVG(&b, pl); err != nil {
		t.Fatal(err)
	}
	// Well-formed XML, with the labels a reader needs.
	dec := xml.NewDecoder(bytes.NewReader(b.Bytes()))
	var text strings.Builder
	for {
		tok, err := dec.Token()
		if err != nil {
			if err.Error() != "EOF" {
				t.Fatalf("SVG is not well-formed: %v", err)
			}
			break
		}
		if cd, ok := tok.(xml.CharData); ok {
			text.Write(cd)
		}
	}
	for _, want := range []string{"Q1", "VCE (V)", "IC (mA)", "DC load line", "saturation edge", "nominal Q point", "safe area (Pd 300 mW at 25.0 C)"} {
		if !strings.Contains(text.String(), want) {
			t.Errorf("SVG text lacks %q", want)
		}
	}
	inline, err := inlineSVG(pl, `a "label"`)
	if err != nil || !strings.HasPrefix(inline, `<svg class="plane" role="img" aria-label="a &#34;label&#34;"`) {
		t.Errorf("inline SVG starts %.80q (%v)", inline, err)
	}

	b.Reset()
	if err := PlanePNG(&b, pl); err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(&b)
	if err != nil {
		t.Fatal(err)
	}
	// 6.6 in x 3.6 in at 144 dpi.
	if sz := img.Bounds().Size(); sz.X < 947 || sz.X > 953 || sz.Y < 515 || sz.Y > 520 {
		t.Errorf("PNG size %v, want about 950 x 518", sz)
	}
	colours := map[uint32]bool{}
	for y := 0; y < img.Bounds().Dy(); y += 3 {
		for x := 0; x < img.Bounds().Dx(); x += 3 {
			r, g, bl, _ := img.At(x, y).RGBA()
			colours[r>>8<<16|g>>8<<8|bl>>8] = true
		}
	}
	if len(colours) < 8 {
		t.Errorf("PNG has %d colours; it looks blank", len(colours))
	}

	if err := PlaneSVG(&b, plane.Plane{Device: "Q9"}); err == nil {
		t.Error("a plane with no area should not draw")
	}
}

func TestCurrentScale(t *testing.T) {
	for _, tc := range []struct {
		ymax float64
		unit string
		k    float64
	}{{5e-4, "uA", 1e6}, {2.2e-3, "mA", 1e3}, {0.5, "mA", 1e3}, {3, "A", 1}} {
		if u, k := currentScale(tc.ymax); u != tc.unit || k != tc.k {
			t.Errorf("currentScale(%g) = %s, %g", tc.ymax, u, k)
		}
	}
}

// The plots' markers follow the case kinds: every kind has a colour, a
// glyph, a size and a legend label.
func TestKindStyles(t *testing.T) {
	for _, k := range plane.Kinds {
		if kindColor[k] == nil || kindGlyph[k] == nil || kindRadius[k] == 0 || kindLabel[k] == "" {
			t.Errorf("kind %s has no complete style", k)
		}
	}
}

// Axes get six to eleven labelled ticks at 1, 2, 2.5 or 5 times a power
// of ten (the usual "nice numbers" choice of plotting texts; from memory).
func TestNiceTicks(t *testing.T) {
	for _, tc := range []struct {
		lo, hi float64
		step   float64
	}{
		{0, 13.2, 2}, {0, 44, 5}, {0, 220, 25}, {0, 1.1, 0.2}, {0, 0.033, 0.005}, {0, 10, 1}, {-2, 7, 1},
	} {
		var labelled []float64
		for _, tk := range (niceTicks{}).Ticks(tc.lo, tc.hi) {
			if tk.Label != "" {
				labelled = append(labelled, tk.Value)
			}
		}
		if n := len(labelled); n < 6 || n > 11 {
			t.Errorf("[%g, %g]: %d labelled ticks %v, want 6 to 11", tc.lo, tc.hi, n, labelled)
		}
		if len(labelled) > 1 && math.Abs(labelled[1]-labelled[0]-tc.step) > 1e-12 {
			t.Errorf("[%g, %g]: step %g, want %g", tc.lo, tc.hi, labelled[1]-labelled[0], tc.step)
		}
	}
}

// The legend sits beside the data area, not on it; each finding is ringed
// at its case's point with its rule id; and the data area keeps a margin
// inside its axes.
func TestPlaneMarksAndLegend(t *testing.T) {
	f, pls := analysed(t, "bad.cir", badStage)
	if len(pls) == 0 || len(f.Findings) == 0 {
		t.Fatalf("planes %d, findings %d", len(pls), len(f.Findings))
	}
	pl := pls[0]
	for _, p := range pls {
		if len(MarksOf(f.Findings, p.Device)) > 0 {
			pl = p
		}
	}
	marks := MarksOf(f.Findings, pl.Device)
	if len(marks) == 0 {
		t.Fatal("no marks for the bad stage's findings")
	}
	fig, err := PlaneFigure(pl, marks...)
	if err != nil {
		t.Fatal(err)
	}
	c := draw.New(vgimg.New(plotWidth, plotHeight))
	plotArea, legendArea := fig.layout(c)
	data := fig.Plot.DataCanvas(plotArea)
	if legendArea.Min.X < data.Max.X {
		t.Errorf("legend starts at x=%v, inside the data area ending at %v", legendArea.Min.X, data.Max.X)
	}
	if fig.Plot.X.Padding <= 0 || fig.Plot.Y.Padding <= 0 {
		t.Errorf("no margin between the axes and the data")
	}
	var b bytes.Buffer
	if err := PlaneSVG(&b, pl, marks...); err != nil {
		t.Fatal(err)
	}
	for _, m := range marks {
		if !strings.Contains(b.String(), m.Rule) {
			t.Errorf("the plot does not name finding %s", m.Rule)
		}
	}
	if !strings.Contains(b.String(), "found here") {
		t.Error("the legend does not explain the finding rings")
	}
}
