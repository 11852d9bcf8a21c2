package report

import (
	"encoding/json"
	"io"
	"net/url"
	"path/filepath"
	"strings"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
)

// SARIFSchema is the schema URI written into SARIF reports (OASIS SARIF
// 2.1.0, errata 01).
const SARIFSchema = "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"

type sarifText struct {
	Text string `json:"text"`
}

type sarifRule struct {
	ID                   string         `json:"id"`
	ShortDescription     sarifText      `json:"shortDescription"`
	FullDescription      *sarifText     `json:"fullDescription,omitempty"`
	Help                 *sarifText     `json:"help,omitempty"`
	DefaultConfiguration sarifConfig    `json:"defaultConfiguration"`
	Properties           map[string]any `json:"properties,omitempty"`
}

type sarifConfig struct {
	Level string `json:"level"`
}

type sarifRegion struct {
	StartLine   int `json:"startLine"`
	StartColumn int `json:"startColumn,omitempty"`
}

type sarifLocation struct {
	PhysicalLocation struct {
		ArtifactLocation struct {
			URI string `json:"uri"`
		} `json:"artifactLocation"`
		Region *sarifRegion `json:"region,omitempty"`
	} `json:"physicalLocation"`
	LogicalLocations []sarifLogical `json:"logicalLocations,omitempty"`
}

type sarifLogical struct {
	Name               string `json:"name"`
	FullyQualifiedName string `json:"fullyQualifiedName,omitempty"`
	Kind               string `json:"kind,omitempty"`
}

type sarifSuppression struct {
	Kind          string `json:"kind"`
	Justification string `json:"justification,omitempty"`
}

type sarifResult struct {
	RuleID       string             `json:"ruleId"`
	RuleIndex    int                `json:"ruleIndex"`
	Level        string             `json:"level"`
	Message      sarifText          `json:"message"`
	Locations    []sarifLocation    `json:"locations"`
	Suppressions []sarifSuppression `json:"suppressions,omitempty"`
	Properties   map[string]any     `json:"properties,omitempty"`
}

type sarifLog struct {
	Schema  string     `json:"$schema"`
	Version string     `json:"version"`
	Runs    []sarifRun `json:"runs"`
}

type sarifRun struct {
	Tool struct {
		Driver struct {
			Name           string      `json:"name"`
			Version        string      `json:"version,omitempty"`
			InformationURI string      `json:"informationUri,omitempty"`
			Rules          []sarifRule `json:"rules"`
		} `json:"driver"`
	} `json:"tool"`
	Results     []sarifResult     `json:"results"`
	Invocations []sarifInvocation `json:"invocations,omitempty"`
}

// sarifInvocation carries the problems with the run's inputs as tool
// execution notifications: a file that could not be judged (its located
// errors, level error), a file left out on purpose (level note), and the
// warnings about reading a file (a case that could not be judged, say).
type sarifInvocation struct {
	ExecutionSuccessful bool                `json:"executionSuccessful"`
	Notifications       []sarifNotification `json:"toolExecutionNotifications,omitempty"`
}

type sarifNotification struct {
	Level     string          `json:"level"`
	Message   sarifText       `json:"message"`
	Locations []sarifLocation `json:"locations,omitempty"`
}

// fileNotifications lists the notifications of the files that were not
// checked, in report order; nil when every file was.
func fileNotifications(r *Report) []sarifNotification {
	var out []sarifNotification
	at := func(file string, line, col int) []sarifLocation {
		var loc sarifLocation
		loc.PhysicalLocation.ArtifactLocation.URI = fileURI(file)
		if line > 0 {
			loc.PhysicalLocation.Region = &sarifRegion{StartLine: line, StartColumn: col}
		}
		return []sarifLocation{loc}
	}
	for i := range r.Files {
		f := &r.Files[i]
		// Warnings about the input (a case that was not judged, an odd
		// annotation) go with the file's notifications.
		for _, e := range f.Notes {
			if e.Severity != netlist.SevWarning {
				continue
			}
			file := e.Pos.File
			if file == "" {
				file = f.Path
			}
			out = append(out, sarifNotification{Level: "warning", Message: sarifText{e.Msg}, Locations: at(file, e.Pos.Line, e.Pos.Col)})
		}
		if f.Status.Of() == StatusChecked {
			continue
		}
		if !f.Status.Failed() || len(f.Errors) == 0 {
			lvl := "note"
			if f.Status.Failed() {
				lvl = "error"
			}
			out = append(out, sarifNotification{Level: lvl, Message: sarifText{f.Path + ": " + StatusText(f)}, Locations: at(f.Path, 0, 0)})
			continue
		}
		for _, e := range f.Errors {
			file := e.Pos.File
			if file == "" {
				file = f.Path
			}
			out = append(out, sarifNotification{Level: "error", Message: sarifText{e.Msg}, Locations: at(file, e.Pos.Line, e.Pos.Col)})
		}
	}
	return out
}

// fileURI turns a path into a relative URI reference with forward slashes.
func fileURI(p string) string {
	p = filepath.ToSlash(p)
	segs := strings.Split(p, "/")
	for i, s := range segs {
		segs[i] = url.PathEscape(s)
	}
	return strings.Join(segs, "/")
}

func firstSentence(s string) string {
	s = strings.Join(strings.Fields(s), " ")
	if i := strings.Index(s, ". "); i >= 0 {
		return s[:i+1]
	}
	return s
}

// SARIF writes the findings as one SARIF 2.1.0 run: the active rules'
// metadata in the driver's rules array (rationale, fix, default level,
// condition), one result per finding located at the device's netlist line,
// and waived findings as results with an in-source suppression carrying the
// waiver's reason.
func SARIF(w io.Writer, r *Report) error {
	var run sarifRun
	run.Tool.Driver.Name = "biaslint"
	run.Tool.Driver.Version = r.Version
	run.Tool.Driver.Rules = []sarifRule{}
	run.Results = []sarifResult{}
	index := map[string]int{}
	addRule := func(sr sarifRule) int {
		if i, ok := index[sr.ID]; ok {
			return i
		}
		index[sr.ID] = len(run.Tool.Driver.Rules)
		run.Tool.Driver.Rules = append(run.Tool.Driver.Rules, sr)
		return index[sr.ID]
	}
	if r.RuleSet != nil {
		for _, ru := range r.RuleSet.Rules {
			sr := sarifRule{ID: ru.ID, ShortDescription: sarifText{firstSentence(ru.Rationale)},
				DefaultConfiguration: sarifConfig{Level: level(ru.Severity)},
				Properties:           map[string]any{"subject": string(ru.Subject), "condition": ru.When}}
			if sr.ShortDescription.Text == "" {
				sr.ShortDescription.Text = ru.ID
			}
			if ru.Rationale != "" {
				sr.FullDescription = &sarifText{strings.TrimSpace(ru.Rationale)}
			}
			if ru.Fix != "" {
				sr.Help = &sarifText{strings.TrimSpace(ru.Fix)}
			}
			addRule(sr)
		}
	}
	for _, f := range r.Files {
		for _, x := range f.Findings {
			idx := addRule(sarifRule{ID: x.Rule, ShortDescription: sarifText{x.Rule},
				DefaultConfiguration: sarifConfig{Level: level(x.Severity)}})
			res := sarifResult{RuleID: x.Rule, RuleIndex: idx, Level: level(x.Severity), Message: sarifText{x.Message}}
			var loc sarifLocation
			file := x.Pos.File
			if file == "" {
				file = f.Path
			}
			loc.PhysicalLocation.ArtifactLocation.URI = fileURI(file)
			if x.Pos.Line > 0 {
				loc.PhysicalLocation.Region = &sarifRegion{StartLine: x.Pos.Line, StartColumn: x.Pos.Col}
			}
			loc.LogicalLocations = []sarifLogical{{Name: x.Device, Kind: "element"}}
			res.Locations = []sarifLocation{loc}
			props := map[string]any{"device": x.Device, "case": rules.CaseName(x.Scenario, x.Corner)}
			if x.HasLimit {
				props["value"], props["limit"], props["unit"] = x.Value, x.Limit, x.Unit
			}
			if len(x.AlsoIn) > 0 {
				props["alsoIn"] = x.AlsoIn
			}
			res.Properties = props
			if x.Waived {
				res.Suppressions = []sarifSuppression{{Kind: "inSource", Justification: x.WaiverReason}}
			}
			run.Results = append(run.Results, res)
		}
	}
	if ns := fileNotifications(r); len(ns) > 0 {
		run.Invocations = []sarifInvocation{{ExecutionSuccessful: len(r.Failed()) == 0, Notifications: ns}}
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(sarifLog{Schema: SARIFSchema, Version: "2.1.0", Runs: []sarifRun{run}})
}

func level(s rules.Severity) string {
	switch s {
	case rules.SeverityError:
		return "error"
	case rules.SeverityWarning:
		return "warning"
	}
	return "note"
}
