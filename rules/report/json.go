package report

import (
	"encoding/json"
	"io"
	"math"

	"github.com/biaslint/biaslint/checks"

	"github.com/biaslint/biaslint/rules"
)

// jsonFinding is one finding in the JSON report.
type jsonFinding struct {
	Rule     string             `json:"rule"`
	Severity string             `json:"severity"`
	Subject  string             `json:"subject"`
	Device   string             `json:"device"`
	File     string             `json:"file"`
	Line     int                `json:"line"`
	Column   int                `json:"column"`
	Scenario string             `json:"scenario"`
	Corner   string             `json:"corner,omitempty"`
	Message  string             `json:"message"`
	Values   map[string]float64 `json:"values"`
	Units    map[string]string  `json:"units,omitempty"`
	Value    *float64           `json:"value,omitempty"`
	Limit    *float64           `json:"limit,omitempty"`
	Unit     string             `json:"unit,omitempty"`
	Nets     []string           `json:"nets,omitempty"`
	Fix      string             `json:"fix,omitempty"`
	Unjudged bool               `json:"unjudged,omitempty"`
	Missing  []string           `json:"missing,omitempty"`
	// Related are the parts that make the finding happen, and where a
	// missing one belongs.
	Related []jsonRelated `json:"related,omitempty"`
	// Change is the computed value change that clears the finding.
	Change *jsonChange `json:"change,omitempty"`
	// Cases lists every case in which the rule is violated, worst first.
	Cases     []string `json:"cases"`
	Reason    string   `json:"reason,omitempty"`
	WaiverPos string   `json:"waiver_position,omitempty"`
}

// jsonRelated is one related part of a finding.
type jsonRelated struct {
	Role    string `json:"role"`
	Name    string `json:"name,omitempty"`
	File    string `json:"file"`
	Line    int    `json:"line"`
	Column  int    `json:"column"`
	Missing bool   `json:"missing,omitempty"`
	Message string `json:"message"`
}

// jsonChange is a computed resistor value change (rules.Change).
type jsonChange struct {
	Element  string   `json:"element"`
	File     string   `json:"file"`
	Line     int      `json:"line"`
	Column   int      `json:"column"`
	Old      string   `json:"old"`
	New      string   `json:"new"`
	OldValue float64  `json:"old_value"`
	NewValue float64  `json:"new_value"`
	Series   string   `json:"series"`
	Elements int      `json:"elements"`
	Cases    int      `json:"cases"`
	Clears   []string `json:"clears"`
	Text     string   `json:"text"`
}

// jsonUnjudged is one case that could not be solved.
type jsonUnjudged struct {
	Case   string `json:"case"`
	Reason string `json:"reason"`
}

type jsonNote struct {
	Severity string `json:"severity"`
	Position string `json:"position"`
	Message  string `json:"message"`
	// Alert marks a note every report shows (a value's letters that
	// people often misread).
	Alert bool `json:"alert,omitempty"`
}

type jsonFile struct {
	File  string `json:"file"`
	Title string `json:"title"`
	// Status is checked, input-errors, library, included (or a caller's
	// own word); Detail says more; Errors locate what kept the file from
	// being judged.
	Status string     `json:"status"`
	Detail string     `json:"status_detail,omitempty"`
	Errors []jsonNote `json:"errors"`
	// Temperature is the nominal case's circuit temperature, C, and
	// TemperatureFrom where it came from: --temp, .temp or ambient.
	Temperature     *float64 `json:"temperature,omitempty"`
	TemperatureFrom string   `json:"temperature_from,omitempty"`
	// Unjudged lists the cases that could not be solved and why (every
	// other case is judged).
	Unjudged []jsonUnjudged `json:"unjudged_cases,omitempty"`
	// StableStates names the cases that hold the stable states of a
	// circuit whose first DC solution was unstable (positive feedback),
	// the nominal case first; States describes them and the unstable point.
	StableStates []string      `json:"stable_states,omitempty"`
	States       string        `json:"states,omitempty"`
	Transistors  int           `json:"transistors"`
	BJTs         []jsonBJT     `json:"bjts"`
	Findings     []jsonFinding `json:"findings"`
	Waived       []jsonFinding `json:"waived"`
	Notes        []jsonNote    `json:"notes"`
	Summary      Counts        `json:"summary"`
}

// jsonBJT is one transistor in the case that matters for its role
// (forward-referenced facts, SI units): a switch at its on level (the
// nominal-corner drive level where it carries the most collector current),
// every other role at the nominal point; with its worst case over every
// case and its hottest junction. A value that is not known (a missing
// rating) is left out.
type jsonBJT struct {
	Name     string `json:"name"`
	Model    string `json:"model"`
	Polarity string `json:"polarity"`
	// Part names the ratings' source (a library type or class, or a
	// *@part annotation); Generic is true when the device was judged
	// against the generic class.
	Part       string   `json:"part"`
	Generic    bool     `json:"generic,omitempty"`
	Role       string   `json:"role"`
	RoleFrom   string   `json:"role_from"`
	RoleReason string   `json:"role_reason"`
	Case       string   `json:"case"`
	Region     string   `json:"region"`
	VCE        *float64 `json:"vce,omitempty"`
	IC         *float64 `json:"ic,omitempty"`
	Power      *float64 `json:"power,omitempty"`
	Tj         *float64 `json:"tj,omitempty"`
	// Worst is the quantity that matters most for the role at its worst
	// case: "beta" (a conducting switch's largest forced beta), "vce" (a
	// linear stage's smallest VCE) or "ic" (the largest IC of a push-pull
	// half, a clamp or a diode).
	Worst      string   `json:"worst,omitempty"`
	WorstValue *float64 `json:"worst_value,omitempty"`
	WorstCase  string   `json:"worst_case,omitempty"`
	TjMax      *float64 `json:"tj_worst,omitempty"`
	TjMaxCase  string   `json:"tj_worst_case,omitempty"`
}

func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// switchOnIC is the collector current above which a switch counts as on
// when its worst forced beta is sought, A (the default rule set's
// switch_on_current).
const switchOnIC = 100e-6

// bjtsOf lists the transistors of an analysis for the reports, each in
// the case that matters for its role (see jsonBJT).
func bjtsOf(an *checks.Analysis) []jsonBJT {
	out := []jsonBJT{}
	if an == nil || len(an.Cases) == 0 {
		return out
	}
	at := map[string]int{}
	shown := map[string]float64{}
	hottest := map[string]float64{}
	worst := map[string]float64{}
	row := func(t *checks.Transistor, c *checks.Case) jsonBJT {
		return jsonBJT{Name: t.Name, Model: t.Model, Polarity: t.Polarity, Part: t.Rating.Part,
			Generic: t.Rating.Generic, Role: t.Role, RoleFrom: t.RoleFrom,
			RoleReason: t.RoleReason, Case: rules.CaseName(c.Scenario, c.Corner), Region: t.Region,
			VCE: finite(t.VCE), IC: finite(t.IC), Power: finite(t.Power), Tj: finite(t.Tj)}
	}
	nom := &an.Cases[0]
	for i := range nom.Transistors {
		t := &nom.Transistors[i]
		at[t.Name] = i
		out = append(out, row(t, nom))
		shown[t.Name] = t.IC
	}
	for ci := range an.Cases {
		c := &an.Cases[ci]
		for k := range c.Transistors {
			t := &c.Transistors[k]
			i, ok := at[t.Name]
			if !ok {
				continue
			}
			// A switch at its on level: the first nominal-corner drive level
			// that carries materially more collector current (half as much
			// again) than the case shown so far; a switch already on at
			// nominal stays there.
			if t.Role == checks.RoleSwitch && c.Kind == checks.KindLevel && c.Corner == "" && t.IC > 1.5*shown[t.Name] && t.IC > switchOnIC {
				shown[t.Name] = t.IC
				w, wv, wc, tm, tmc := out[i].Worst, out[i].WorstValue, out[i].WorstCase, out[i].TjMax, out[i].TjMaxCase
				out[i] = row(t, c)
				out[i].Worst, out[i].WorstValue, out[i].WorstCase, out[i].TjMax, out[i].TjMaxCase = w, wv, wc, tm, tmc
			}
			if !math.IsNaN(t.Tj) && !math.IsInf(t.Tj, 0) {
				// Junctions within a microkelvin are a tie: the earlier case
				// stays, so rounding-level differences do not move the label.
				if h, seen := hottest[t.Name]; !seen || t.Tj > h+1e-6 {
					hottest[t.Name] = t.Tj
					out[i].TjMax, out[i].TjMaxCase = finite(t.Tj), rules.CaseName(c.Scenario, c.Corner)
				}
			}
			if c.Kind == checks.KindSwing || c.Kind == checks.KindOpen {
				continue // the worst case of the bias, not of a signal or a fault
			}
			var q string
			var v float64
			switch {
			case t.Role == checks.RoleSwitch:
				if !(t.IC > switchOnIC) || math.IsNaN(t.Beta) {
					continue
				}
				q, v = "beta", t.Beta
			case t.Linear:
				q, v = "vce", -t.VCE // smallest VCE
			default:
				q, v = "ic", t.IC
			}
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			if w, seen := worst[t.Name]; !seen || v > w {
				worst[t.Name] = v
				if q == "vce" {
					v = -v
				}
				out[i].Worst, out[i].WorstValue, out[i].WorstCase = q, finite(v), rules.CaseName(c.Scenario, c.Corner)
			}
		}
	}
	return out
}

// FormatVersion is the version of the JSON report shapes (check and op),
// written as "format_version". It changes when a field is removed or
// changes meaning; fields may be added within a version. The shapes are
// described by the JSON Schemas in rules/report/schema.
const FormatVersion = 1

type jsonReport struct {
	FormatVersion int        `json:"format_version"`
	RuleSet       string     `json:"ruleset"`
	Ambient       float64    `json:"ambient"`
	Results       []jsonFile `json:"results"`
	Summary       Counts     `json:"summary"`
}

func toJSON(f rules.Finding) jsonFinding {
	j := jsonFinding{
		Rule: f.Rule, Severity: string(f.Severity), Subject: string(f.Subject), Device: f.Device,
		File: f.Pos.File, Line: f.Pos.Line, Column: f.Pos.Col, Scenario: f.Scenario, Corner: f.Corner,
		Message: f.Message, Values: map[string]float64{}, Nets: f.Nets, Fix: f.Fix,
		Unjudged: f.Unjudged, Missing: f.Missing,
		Cases: append([]string{rules.CaseName(f.Scenario, f.Corner)}, f.AlsoIn...),
	}
	for _, r := range f.Related {
		j.Related = append(j.Related, jsonRelated{Role: r.Role, Name: r.Name, File: r.Pos.File, Line: r.Pos.Line,
			Column: r.Pos.Col, Missing: r.Missing, Message: r.Message})
	}
	if c := f.Change; c != nil {
		j.Change = &jsonChange{Element: c.Element, File: c.Pos.File, Line: c.Pos.Line, Column: c.Pos.Col, Old: c.Old, New: c.New,
			OldValue: c.OldValue, NewValue: c.NewValue, Series: c.Series, Elements: c.Elements, Cases: c.Cases,
			Clears: c.Clears, Text: c.String()}
	}
	for _, q := range f.Values {
		j.Values[q.Name] = q.Value
		if q.Unit != "" {
			if j.Units == nil {
				j.Units = map[string]string{}
			}
			j.Units[q.Name] = q.Unit
		}
	}
	if f.HasLimit {
		v, l := f.Value, f.Limit
		j.Value, j.Limit, j.Unit = &v, &l, f.Unit
	}
	if f.Waived {
		j.Reason = f.WaiverReason
		j.WaiverPos = f.WaiverPos.String()
	}
	return j
}

// JSON writes the machine-readable report: per file its findings, waived
// findings (with reasons), input notes and counts, then the run's counts.
// Values are SI; the shape is documented in the README.
func JSON(w io.Writer, r *Report) error {
	out := jsonReport{FormatVersion: FormatVersion, Ambient: r.Ambient, Results: []jsonFile{}}
	if r.RuleSet != nil {
		out.RuleSet = r.RuleSet.Name
	}
	for i := range r.Files {
		f := &r.Files[i]
		jf := jsonFile{File: f.Path, Title: f.Title, Status: string(f.Status.Of()), Detail: f.StatusDetail, Errors: []jsonNote{},
			Transistors: f.Transistors(), BJTs: bjtsOf(f.Analysis),
			Findings: []jsonFinding{}, Waived: []jsonFinding{}, Notes: []jsonNote{}, Summary: f.Counts()}
		for _, e := range f.Errors {
			jf.Errors = append(jf.Errors, jsonNote{Severity: "error", Position: e.Pos.String(), Message: e.Msg})
		}
		if an := f.Analysis; an != nil && an.TempFrom != "" {
			jf.Temperature, jf.TemperatureFrom = finite(an.Temp), an.TempFrom
		}
		if an := f.Analysis; an != nil && an.States != nil {
			for _, ci := range an.States.Cases {
				if ci < len(an.Cases) {
					c := an.Cases[ci]
					jf.StableStates = append(jf.StableStates, rules.CaseName(c.Scenario, c.Corner))
				}
			}
			jf.States = an.States.Message
		}
		if an := f.Analysis; an != nil {
			for _, c := range an.Cases {
				if c.Unjudged != "" {
					jf.Unjudged = append(jf.Unjudged, jsonUnjudged{Case: rules.CaseName(c.Scenario, c.Corner), Reason: c.Unjudged})
				}
			}
		}
		for _, x := range f.Findings {
			if x.Waived {
				jf.Waived = append(jf.Waived, toJSON(x))
			} else {
				jf.Findings = append(jf.Findings, toJSON(x))
			}
		}
		for _, n := range f.Notes {
			jf.Notes = append(jf.Notes, jsonNote{Severity: n.Severity.String(), Position: n.Pos.String(), Message: n.Msg, Alert: n.Alert})
		}
		out.Results = append(out.Results, jf)
	}
	out.Summary = r.Counts()
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(out)
}
