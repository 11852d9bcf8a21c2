package report

import (
	"fmt"
	"html/template"
	"io"
	"math"
	"sort"
	"strings"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/checks/plane"
	"github.com/biaslint/biaslint/netlist/units"
	"github.com/biaslint/biaslint/rules"
)

// HTMLOptions adjust the HTML review report.
type HTMLOptions struct {
	// Planes holds, per file of the report (same index as Report.Files),
	// the output planes of its transistors; a file without an entry gets
	// no plots.
	Planes [][]plane.Plane
	// Title heads the page; "" means "biaslint review".
	Title string
}

// HTML writes the review report: one self-contained page (inline CSS and
// SVG, no script, no external assets) that prints cleanly. For several
// files it opens with a grid of rule counts, files down and rules across,
// each file linking to its section. Each file's section holds a summary
// (transistors, counts by severity, rule set, temperature, ambient), the
// findings table, the waived findings with their reasons, one output-plane
// plot per transistor with its margins against the ratings, the input
// notes, and the safety cautions.
//
// html/template escapes every text; the page is then passed through
// Printable, so a control character or a bidirectional override in a name
// shows as an escape instead of reordering what the browser displays (the
// page's own markup holds none).
func HTML(w io.Writer, r *Report, opt HTMLOptions) error {
	page := htmlPageOf(r, opt)
	var b strings.Builder
	if err := htmlTemplate.Execute(&b, page); err != nil {
		return err
	}
	_, err := io.WriteString(w, Printable(b.String()))
	return err
}

type htmlPage struct {
	Title, Version, RuleSet, RuleSetDesc string
	Files                                []htmlFile
	Grid                                 *htmlGrid
	Totals                               Counts
	Cautions                             []string
	// Judged counts the files that were checked (the others have a status).
	Judged int
}

type htmlFile struct {
	ID, Path, Title    string
	Transistors        int
	Counts             Counts
	RuleSet, Temp, Amb string
	TopRule            string
	Findings, Waived   []htmlFinding
	Devices            []htmlDevice
	Notes              []string
	Hazard             bool
	Unplotted          int
	// Status says why the file was not checked ("" when it was) and
	// Errors are its located input errors.
	Status string
	Errors []string
}

type htmlFinding struct {
	Severity, Rule, Device, Pos, Message string
	Value, Case, Fix, Reason, WaiverPos  string
	// Related names the parts that make the finding happen.
	Related string
}

type htmlDevice struct {
	ID, Name, Caption string
	// Role and RoleReason say what the transistor does and why.
	Role, RoleReason string
	SVG              template.HTML
	PlotError        string
	Margins          []htmlMargin
	Points           []htmlPoint
	LoadNote         string
}

type htmlMargin struct {
	Label, Value, Limit, Share, Class string
}

type htmlPoint struct {
	Case, Kind, VCE, IC, Power, Region string
}

type htmlGrid struct {
	Rules []string
	Rows  []htmlGridRow
}

type htmlGridRow struct {
	// Status is the file's status when it was not checked, else "".
	ID, Path, Status string
	Transistors      int
	Cells            []htmlGridCell
	Counts           Counts
}

type htmlGridCell struct {
	N     int
	Class string
}

func htmlFindingOf(x rules.Finding) htmlFinding {
	h := htmlFinding{Severity: string(x.Severity), Rule: x.Rule, Device: x.Device, Pos: x.Pos.String(),
		Message: x.Message, Fix: x.Fix, Related: relatedText(x.Related)}
	if x.Change != nil {
		h.Fix = x.Change.String() + ". " + x.Fix
	}
	if x.HasLimit {
		h.Value = Figure(x.Value, x.Unit) + " against " + Figure(x.Limit, x.Unit)
	}
	if x.Scenario != "" {
		h.Case = rules.CaseName(x.Scenario, x.Corner)
		if also := x.AlsoIn; len(also) > 0 {
			more := ""
			if len(also) > 3 {
				more = fmt.Sprintf(" and %d more", len(also)-3)
				also = also[:3]
			}
			h.Case += " (also " + strings.Join(also, ", ") + more + ")"
		}
	}
	if x.Waived {
		h.Reason, h.WaiverPos = x.WaiverReason, x.WaiverPos.String()
	}
	return h
}

func htmlPageOf(r *Report, opt HTMLOptions) htmlPage {
	page := htmlPage{Title: opt.Title, Version: r.Version, Totals: r.Counts(), Cautions: Cautions, Judged: r.Judged()}
	if page.Title == "" {
		page.Title = "biaslint review"
	}
	if r.RuleSet != nil {
		page.RuleSet, page.RuleSetDesc = r.RuleSet.Name, r.RuleSet.Description
	}
	for i := range r.Files {
		f := &r.Files[i]
		hf := htmlFile{ID: fmt.Sprintf("file-%d", i+1), Path: f.Path, Title: f.Title,
			Transistors: f.Transistors(), Counts: f.Counts(), RuleSet: page.RuleSet, TopRule: f.TopRule()}
		if an := f.Analysis; an != nil && len(an.Cases) > 0 {
			nom := an.Cases[0]
			hf.Amb = units.Format(nom.Ambient, "C")
			if nom.Solution != nil {
				hf.Temp = units.Format(nom.Solution.Temp, "C")
				if from := tempFromWords[an.TempFrom]; from != "" {
					hf.Temp += ", " + from
				}
			}
		}
		for _, x := range f.Findings {
			if x.Waived {
				hf.Waived = append(hf.Waived, htmlFindingOf(x))
				continue
			}
			hf.Findings = append(hf.Findings, htmlFindingOf(x))
			if Hazardous(x) && x.Severity == rules.SeverityError {
				hf.Hazard = true
			}
		}
		for _, n := range f.Notes {
			hf.Notes = append(hf.Notes, n.Error())
		}
		if f.Status.Of() != StatusChecked {
			hf.Status = StatusText(f)
			for _, e := range f.Errors {
				hf.Errors = append(hf.Errors, e.Error())
			}
		}
		var planes []plane.Plane
		if i < len(opt.Planes) {
			planes = opt.Planes[i]
		}
		hf.Devices = htmlDevices(hf.ID, f, planes)
		hf.Unplotted = hf.Transistors - len(hf.Devices)
		page.Files = append(page.Files, hf)
	}
	if len(r.Files) > 1 {
		page.Grid = htmlGridOf(r, page.Files)
	}
	return page
}

// htmlDevices builds one plot and margin table per transistor that has a
// plane.
func htmlDevices(fileID string, f *File, planes []plane.Plane) []htmlDevice {
	facts := map[string]checks.Transistor{}
	if f.Analysis != nil && len(f.Analysis.Cases) > 0 {
		for _, t := range f.Analysis.Cases[0].Transistors {
			facts[t.Name] = t
		}
	}
	var out []htmlDevice
	for j, pl := range planes {
		d := htmlDevice{ID: fmt.Sprintf("%s-q%d", fileID, j+1), Name: pl.Device, LoadNote: pl.LoadNote}
		label := fmt.Sprintf("Output plane of %s: IC against VCE with the load line, operating points and safe operating area", pl.Device)
		svg, err := inlineSVG(pl, label, MarksOf(f.Findings, pl.Device)...)
		if err != nil {
			d.PlotError = err.Error()
		} else {
			d.SVG = template.HTML(svg) // generated by PlaneSVG from numbers, with the label escaped
		}
		if ll := pl.Load; ll != nil {
			if ll.R == 0 {
				d.Caption = fmt.Sprintf("Load line: vertical at %s (no resistance in the collector-emitter loop).", units.Format(ll.VOpen, "V"))
			} else {
				d.Caption = fmt.Sprintf("Load line from %s open-circuit to %s short-circuit (%s in the loop).",
					units.Format(ll.VOpen, "V"), units.Format(ll.IShort, "A"), units.Format(ll.R, "Ohm"))
			}
		}
		t, ok := facts[pl.Device]
		d.Margins = htmlMargins(pl, t, ok)
		if ok {
			d.Role, d.RoleReason = t.Role, t.RoleReason
		}
		for _, p := range pl.Points {
			d.Points = append(d.Points, htmlPoint{Case: p.Case, Kind: string(p.Kind), VCE: units.Format(p.VCE, "V"),
				IC: units.Format(p.IC, "A"), Power: units.Format(p.Power, "W"), Region: p.Region})
		}
		out = append(out, d)
	}
	return out
}

// htmlMargins compares the worst operating point over the cases with each
// rating: the largest VCE with VCEO, IC with ICmax, power with Pd(Ta), and
// the nominal junction temperature with Tj,max.
func htmlMargins(pl plane.Plane, t checks.Transistor, haveFacts bool) []htmlMargin {
	worst := func(get func(plane.OpPoint) float64) (float64, string) {
		v, at := math.Inf(-1), ""
		for _, p := range pl.Points {
			if x := get(p); x > v {
				v, at = x, p.Case
			}
		}
		return v, at
	}
	row := func(label string, v float64, at string, limit float64, unit string) htmlMargin {
		m := htmlMargin{Label: label, Value: units.Format(v, unit), Limit: "not rated", Class: "unknown"}
		if math.IsInf(v, -1) || math.IsNaN(v) {
			// No case gave a physical point.
			m.Value = "not known"
			if !math.IsNaN(limit) && !math.IsInf(limit, 0) {
				m.Limit = units.Format(limit, unit)
			}
			return m
		}
		if at != "" && len(pl.Points) > 1 {
			m.Value += " (" + at + ")"
		}
		if !math.IsNaN(limit) && !math.IsInf(limit, 0) {
			m.Limit = units.Format(limit, unit)
			m.Class = "ok"
			if limit > 0 {
				share := v / limit
				m.Share = fmt.Sprintf("%.0f %%", 100*share)
				switch {
				case share > 1:
					m.Class = "over"
				case share > 0.8:
					m.Class = "near"
				}
			} else if v > 0 {
				m.Class = "over"
			}
		}
		return m
	}
	var out []htmlMargin
	fwd := "VCE"
	if pl.Polarity == "pnp" {
		fwd = "VEC"
	}
	v, at := worst(func(p plane.OpPoint) float64 { return p.VCE })
	out = append(out, row(fwd+" against VCEO", v, at, pl.SOA.VCEO, "V"))
	v, at = worst(func(p plane.OpPoint) float64 { return p.IC })
	out = append(out, row("IC against ICmax", v, at, pl.SOA.ICMax, "A"))
	v, at = worst(func(p plane.OpPoint) float64 { return p.Power })
	out = append(out, row("power against Pd("+units.Format(pl.Ambient, "C")+")", v, at, pl.SOA.Pd, "W"))
	if haveFacts && !math.IsNaN(t.Tj) {
		out = append(out, tjMargin(t.Tj, t.Ambient, t.Rating.TjMax))
	}
	return out
}

// tjMargin compares the junction temperature with Tj,max. Celsius values
// do not divide (0 C is no zero of heat), so the share is of the rise
// the rating allows above the ambient, (Tj - Ta)/(Tj,max - Ta), and the
// margin Tj,max - Tj is a temperature difference, in kelvin.
func tjMargin(tj, ta, tjMax float64) htmlMargin {
	m := htmlMargin{Label: "Tj against Tj,max", Value: units.Format(tj, "C"), Limit: "not rated", Class: "unknown"}
	if math.IsNaN(tjMax) || math.IsInf(tjMax, 0) {
		return m
	}
	m.Limit = units.Format(tjMax, "C")
	margin := tjMax - tj
	m.Share = units.Format(margin, "K") + " below"
	m.Class = "ok"
	if margin < 0 {
		m.Share = units.Format(-margin, "K") + " above"
		m.Class = "over"
	}
	if allowed := tjMax - ta; allowed > 0 && !math.IsNaN(ta) {
		share := (tj - ta) / allowed
		m.Share = fmt.Sprintf("%.0f %% of the %s rise; %s", 100*share, units.Format(allowed, "K"), m.Share)
		if share > 0.8 && share <= 1 {
			m.Class = "near"
		}
	}
	return m
}

// htmlGridOf counts each file's unwaived findings per rule, for the rules
// that fired anywhere (sorted by id). A cell's class is the worst severity
// among its findings.
func htmlGridOf(r *Report, files []htmlFile) *htmlGrid {
	ruleSet := map[string]bool{}
	for _, f := range r.Files {
		for _, x := range f.Findings {
			if !x.Waived {
				ruleSet[x.Rule] = true
			}
		}
	}
	g := &htmlGrid{}
	for id := range ruleSet {
		g.Rules = append(g.Rules, id)
	}
	sort.Strings(g.Rules)
	for i, f := range r.Files {
		row := htmlGridRow{ID: files[i].ID, Path: f.Path, Transistors: files[i].Transistors, Counts: files[i].Counts}
		if st := f.Status.Of(); st != StatusChecked {
			row.Status = string(st)
		}
		for _, id := range g.Rules {
			cell := htmlGridCell{}
			rank := 99
			for _, x := range f.Findings {
				if x.Waived || x.Rule != id {
					continue
				}
				cell.N++
				if x.Severity.Rank() < rank {
					rank, cell.Class = x.Severity.Rank(), "sev-"+string(x.Severity)
				}
			}
			row.Cells = append(row.Cells, cell)
		}
		g.Rows = append(g.Rows, row)
	}
	return g
}

var htmlTemplate = template.Must(template.New("review").Funcs(template.FuncMap{"plural": plural}).Parse(htmlSource))

// htmlSource is the page. Its colours follow the plots' palette (see
// html_plot.go).
const htmlSource = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="biaslint {{.Version}}">
<title>{{.Title}}</title>
<style>
:root { --ink:#222b36; --paper:#fdfbf6; --rule:#e6e1d6; --muted:#6b6f76; --load:#35588f;
  --err:#a93f2a; --warn:#b86f0c; --note:#35588f; --ok:#2f7a55; --clay:#f3e4d9; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink);
  font: 15px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "Liberation Sans", Arial, sans-serif; }
header.page { padding: 1.4rem 2rem 1rem; border-bottom: 3px solid var(--ink); }
header.page h1 { margin: 0 0 .2rem; font-size: 1.6rem; letter-spacing: .01em; }
header.page p { margin: .1rem 0; color: var(--muted); }
main { padding: 0 2rem 2rem; max-width: 1280px; }
h2 { margin: 2.2rem 0 .4rem; font-size: 1.3rem; border-bottom: 1px solid var(--rule); padding-bottom: .2rem; }
h2 .title { font-weight: normal; color: var(--muted); font-size: 1rem; margin-left: .6rem; }
h3 { font-size: 1.05rem; margin: 1.4rem 0 .4rem; }
a { color: var(--load); }
code, .pos { font-family: ui-monospace, "Liberation Mono", Menlo, Consolas, monospace; font-size: .88em; }
table { border-collapse: collapse; margin: .3rem 0 1rem; }
th, td { text-align: left; vertical-align: top; padding: .3rem .55rem; border-bottom: 1px solid var(--rule); }
th { font-size: .8rem; text-transform: uppercase; letter-spacing: .04em; color: var(--muted); font-weight: 600; }
dl.summary { display: grid; grid-template-columns: max-content 1fr; gap: .15rem 1rem; margin: .4rem 0 1rem; }
dl.summary dt { color: var(--muted); }
dl.summary dd { margin: 0; }
.chip { display: inline-block; min-width: 4.4rem; padding: .05rem .45rem; border-radius: .6rem;
  font-size: .78rem; font-weight: 600; text-align: center; color: #fff; }
.chip.error { background: var(--err); } .chip.warning { background: var(--warn); } .chip.note { background: var(--note); }
.count-error { color: var(--err); font-weight: 600; } .count-warning { color: var(--warn); font-weight: 600; }
table.findings, table.waived { width: 100%; }
td.fix { color: var(--muted); min-width: 14rem; } td.msg { min-width: 18rem; } div.related { color: var(--muted); font-size: 0.9em; margin-top: 0.2rem; }
table.findings td.pos, table.waived td.pos { overflow-wrap: anywhere; min-width: 8rem; }
table.grid td.n { text-align: center; min-width: 2.2rem; }
table.grid td.path { white-space: nowrap; }
div.scroll { overflow-x: auto; }
table.grid th.rule { writing-mode: vertical-rl; transform: rotate(180deg); text-transform: none; letter-spacing: 0; white-space: nowrap; }
table.grid td.sev-error { background: #f3d6cf; } table.grid td.sev-warning { background: #f6e6c8; } table.grid td.sev-note { background: #dde5f1; }
.devices { display: grid; grid-template-columns: repeat(auto-fill, minmax(430px, 1fr)); gap: 1.2rem; }
figure.device { margin: 0; padding: .6rem; background: #fff; border: 1px solid var(--rule); border-radius: .3rem; }
figure.device svg { width: 100%; height: auto; display: block; }
figcaption { font-size: .85rem; color: var(--muted); margin-top: .3rem; }
table.margins td.over { color: var(--err); font-weight: 700; } table.margins td.near { color: var(--warn); font-weight: 600; }
table.margins td.ok { color: var(--ok); } table.margins td.unknown { color: var(--muted); }
table.margins, table.points { font-size: .85rem; margin-bottom: .3rem; }
.none { color: var(--ok); }
.danger { border: 2px solid var(--err); color: var(--err); font-weight: 700; padding: .5rem .8rem; margin: .8rem 0; }
ul.cautions { font-size: .82rem; color: var(--muted); padding-left: 1.1rem; }
details { margin: .4rem 0 1rem; } summary { cursor: pointer; color: var(--muted); }
footer { padding: 1rem 2rem 2rem; color: var(--muted); font-size: .8rem; border-top: 1px solid var(--rule); }
@media print {
  body { background: #fff; font-size: 10.5pt; }
  main { padding: 0; max-width: none; }
  header.page { padding: 0 0 .5rem; }
  section.file { break-before: page; }
  section.file:first-of-type { break-before: auto; }
  figure.device, table.margins, tr { break-inside: avoid; }
  .devices { grid-template-columns: 1fr 1fr; }
  a { color: inherit; text-decoration: none; }
  div.scroll { overflow: visible; }
  .chip, table.grid td, .danger { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  details > summary { display: none; }
  footer { border: 0; }
}
@page { margin: 14mm; }
</style>
</head>
<body>
<header class="page">
<h1>{{.Title}}</h1>
<p>{{len .Files}} netlist{{if ne (len .Files) 1}}s{{end}}{{if ne .Judged (len .Files)}} ({{.Judged}} of them){{end}} checked against rule set <strong>{{.RuleSet}}</strong>{{if .RuleSetDesc}}: {{.RuleSetDesc}}{{end}}</p>
<p>{{plural .Totals.Error "error"}}, {{plural .Totals.Warning "warning"}}, {{plural .Totals.Note "note"}}, {{.Totals.Waived}} waived</p>
</header>
<main>
{{with .Grid}}
<section class="overview">
<h2 id="overview">Overview</h2>
<div class="scroll"><table class="grid">
<thead><tr><th>file</th><th>transistors</th><th>errors</th><th>warnings</th><th>notes</th>{{range .Rules}}<th class="rule"><code>{{.}}</code></th>{{end}}</tr></thead>
<tbody>
{{range .Rows}}<tr class="grid-row"><td class="path"><a href="#{{.ID}}">{{.Path}}</a>{{if .Status}} <span class="unchecked">({{.Status}})</span>{{end}}</td><td class="n">{{.Transistors}}</td><td class="n{{if .Counts.Error}} count-error{{end}}">{{.Counts.Error}}</td><td class="n{{if .Counts.Warning}} count-warning{{end}}">{{.Counts.Warning}}</td><td class="n">{{.Counts.Note}}</td>{{range .Cells}}<td class="n {{.Class}}">{{if .N}}{{.N}}{{end}}</td>{{end}}</tr>
{{end}}</tbody>
</table></div>
</section>
{{end}}
{{range .Files}}
<section class="file" id="{{.ID}}">
<h2><code>{{.Path}}</code>{{if .Title}}<span class="title">{{.Title}}</span>{{end}}</h2>
{{if .Status}}<p class="unchecked">{{.Status}}</p>
{{if .Errors}}<ul class="errors">{{range .Errors}}<li class="pos">{{.}}</li>{{end}}</ul>{{end}}
{{else}}
{{if .Hazard}}<p class="danger">Danger: findings below report hazardous voltage or heat on this design. Treat the board as dangerous until a qualified person has checked it.</p>{{end}}
<dl class="summary">
<dt>transistors</dt><dd>{{.Transistors}}</dd>
<dt>findings</dt><dd><span{{if .Counts.Error}} class="count-error"{{end}}>{{plural .Counts.Error "error"}}</span>, <span{{if .Counts.Warning}} class="count-warning"{{end}}>{{plural .Counts.Warning "warning"}}</span>, {{plural .Counts.Note "note"}}, {{.Counts.Waived}} waived</dd>
{{if .TopRule}}<dt>most frequent rule</dt><dd><code>{{.TopRule}}</code></dd>{{end}}
<dt>rule set</dt><dd>{{.RuleSet}}</dd>
{{if .Temp}}<dt>temperature</dt><dd>{{.Temp}} (circuit, nominal case)</dd>{{end}}
{{if .Amb}}<dt>ambient</dt><dd>{{.Amb}}</dd>{{end}}
</dl>
<h3>Findings</h3>
{{if .Findings}}
<table class="findings">
<thead><tr><th>severity</th><th>rule</th><th>device</th><th>location</th><th>finding</th><th>value against limit</th><th>worst case</th><th>fix</th></tr></thead>
<tbody>
{{range .Findings}}<tr class="finding"><td><span class="chip {{.Severity}}">{{.Severity}}</span></td><td><code>{{.Rule}}</code></td><td>{{.Device}}</td><td class="pos">{{.Pos}}</td><td class="msg">{{.Message}}{{if .Related}}<div class="related">related: {{.Related}}</div>{{end}}</td><td>{{.Value}}</td><td>{{.Case}}</td><td class="fix">{{.Fix}}</td></tr>
{{end}}</tbody>
</table>
{{else}}<p class="none">No findings.</p>{{end}}
{{if .Waived}}
<h3>Waived</h3>
<table class="waived">
<thead><tr><th>severity</th><th>rule</th><th>device</th><th>location</th><th>finding</th><th>reason</th><th>waiver</th></tr></thead>
<tbody>
{{range .Waived}}<tr class="waived-finding"><td><span class="chip {{.Severity}}">{{.Severity}}</span></td><td><code>{{.Rule}}</code></td><td>{{.Device}}</td><td class="pos">{{.Pos}}</td><td class="msg">{{.Message}}{{if .Related}}<div class="related">related: {{.Related}}</div>{{end}}</td><td>{{.Reason}}</td><td class="pos">{{.WaiverPos}}</td></tr>
{{end}}</tbody>
</table>
{{end}}
{{if .Devices}}
<h3>Transistors on their output characteristics</h3>
<div class="devices">
{{range .Devices}}<figure class="device" id="{{.ID}}">
{{if .SVG}}{{.SVG}}{{else}}<p>No plot: {{.PlotError}}</p>{{end}}
<figcaption>{{if .Role}}<strong>{{.Name}}: {{.Role}}</strong> ({{.RoleReason}}). {{end}}{{.Caption}}{{if .LoadNote}} No load line: {{.LoadNote}}.{{end}}</figcaption>
<table class="margins"><thead><tr><th>worst case</th><th>value</th><th>rating</th><th>share</th></tr></thead><tbody>
{{range .Margins}}<tr><td>{{.Label}}</td><td>{{.Value}}</td><td>{{.Limit}}</td><td class="{{.Class}}">{{.Share}}</td></tr>
{{end}}</tbody></table>
{{if gt (len .Points) 1}}<details><summary>operating point in each of {{len .Points}} cases</summary>
<table class="points"><thead><tr><th>case</th><th>kind</th><th>VCE</th><th>IC</th><th>power</th><th>region</th></tr></thead><tbody>
{{range .Points}}<tr><td>{{.Case}}</td><td>{{.Kind}}</td><td>{{.VCE}}</td><td>{{.IC}}</td><td>{{.Power}}</td><td>{{.Region}}</td></tr>
{{end}}</tbody></table></details>{{else}}{{range .Points}}<p class="pos">{{.Case}}: VCE {{.VCE}}, IC {{.IC}}, {{.Power}}, {{.Region}}</p>{{end}}{{end}}
</figure>
{{end}}</div>
{{end}}
{{if .Unplotted}}<p>{{.Unplotted}} transistor(s) could not be plotted.</p>{{end}}
{{if .Notes}}<details><summary>{{len .Notes}} input notes</summary><ul>{{range .Notes}}<li class="pos">{{.}}</li>{{end}}</ul></details>{{end}}
{{end}}
<ul class="cautions">{{range $.Cautions}}<li>{{.}}</li>{{end}}</ul>
</section>
{{end}}
</main>
<footer>Written by biaslint {{.Version}}. Every figure on this page comes from the netlists' device models and nominal values; measure the board before relying on it.</footer>
</body>
</html>
`
