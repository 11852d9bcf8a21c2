package report

import (
	"crypto/sha256"
	"encoding/hex"
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
	EndLine     int `json:"endLine,omitempty"`
	EndColumn   int `json:"endColumn,omitempty"`
}

// sarifFix is a proposed fix: one replacement of a value's text.
type sarifFix struct {
	Description     sarifText           `json:"description"`
	ArtifactChanges []sarifArtifactEdit `json:"artifactChanges"`
}

type sarifArtifactEdit struct {
	ArtifactLocation struct {
		URI string `json:"uri"`
	} `json:"artifactLocation"`
	Replacements []sarifReplacement `json:"replacements"`
}

type sarifReplacement struct {
	DeletedRegion   sarifRegion `json:"deletedRegion"`
	InsertedContent sarifText   `json:"insertedContent"`
}

type sarifLocation struct {
	// ID numbers a related location within its result.
	ID               *int `json:"id,omitempty"`
	PhysicalLocation struct {
		ArtifactLocation struct {
			URI string `json:"uri"`
		} `json:"artifactLocation"`
		Region *sarifRegion `json:"region,omitempty"`
	} `json:"physicalLocation"`
	LogicalLocations []sarifLogical `json:"logicalLocations,omitempty"`
	Message          *sarifText     `json:"message,omitempty"`
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
	RuleID              string            `json:"ruleId"`
	RuleIndex           int               `json:"ruleIndex"`
	Level               string            `json:"level"`
	Message             sarifText         `json:"message"`
	Locations           []sarifLocation   `json:"locations"`
	PartialFingerprints map[string]string `json:"partialFingerprints,omitempty"`
	// RelatedLocations are the parts that make the finding happen.
	RelatedLocations []sarifLocation    `json:"relatedLocations,omitempty"`
	Suppressions     []sarifSuppression `json:"suppressions,omitempty"`
	Fixes            []sarifFix         `json:"fixes,omitempty"`
	Properties       map[string]any     `json:"properties,omitempty"`
}

// sarifNotification is a message about the run itself: here a warning or
// note about reading the input.
type sarifNotification struct {
	Level     string          `json:"level"`
	Message   sarifText       `json:"message"`
	Locations []sarifLocation `json:"locations,omitempty"`
	// Properties name the checked netlist the notification is about
	// ("netlist") and, for a file's status, that status ("file_status"),
	// so that reports of several runs can be merged in file order.
	Properties map[string]any `json:"properties,omitempty"`
}

// sarifInvocation records how the run ended.
type sarifInvocation struct {
	ExecutionSuccessful        bool                `json:"executionSuccessful"`
	ExitCode                   int                 `json:"exitCode"`
	ToolExecutionNotifications []sarifNotification `json:"toolExecutionNotifications,omitempty"`
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
	Invocations []sarifInvocation `json:"invocations"`
	Results     []sarifResult     `json:"results"`
}

// FingerprintKey names biaslint's entry in a SARIF result's
// partialFingerprints; the suffix is the version of the recipe.
const FingerprintKey = "biaslintFinding/v1"

// Fingerprint identifies a finding across runs for code-review systems:
// the SHA-256 (first 128 bits, hex) of the rule id, the device's flat
// name and its nets, lower-cased and NUL-separated. Line numbers, values
// and messages are left out on purpose, so the same finding keeps its
// fingerprint when lines above it are edited or its value moves.
func Fingerprint(f rules.Finding) string {
	h := sha256.New()
	for _, part := range append([]string{f.Rule, f.Device}, f.Nets...) {
		h.Write([]byte(strings.ToLower(part)))
		h.Write([]byte{0})
	}
	return hex.EncodeToString(h.Sum(nil)[:16])
}

// physical locates a file position for SARIF; the region is left out
// when the position names no line.
func physical(file string, p netlist.Pos) sarifLocation {
	var loc sarifLocation
	loc.PhysicalLocation.ArtifactLocation.URI = fileURI(file)
	if p.Line > 0 {
		loc.PhysicalLocation.Region = &sarifRegion{StartLine: p.Line, StartColumn: p.Col}
	}
	return loc
}

// ruleHelp is a rule's help text: the fix, the condition it fires on and
// where to read more.
func ruleHelp(ru *rules.Rule) string {
	var parts []string
	if fix := strings.TrimSpace(ru.Fix); fix != "" {
		parts = append(parts, "Fix: "+strings.Join(strings.Fields(fix), " "))
	}
	if ru.When != "" {
		parts = append(parts, "Fires when: "+strings.Join(strings.Fields(ru.When), " "))
	}
	parts = append(parts, "Run 'biaslint explain "+ru.ID+"' for the rationale, the value against the limit and the parameters.")
	return strings.Join(parts, "\n\n")
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

// SARIF writes the findings as one SARIF 2.1.0 run: the active rules'
// metadata in the driver's rules array (rationale, help with the fix and
// condition, default level), one result per finding located at the
// device's netlist line with a partial fingerprint (see Fingerprint),
// waived findings as results with a suppression carrying the waiver's
// reason (inSource for a netlist annotation, external for a board file),
// and one invocation with the exit code and the input warnings and notes
// as tool-execution notifications.
func SARIF(w io.Writer, r *Report) error {
	var run sarifRun
	run.Tool.Driver.Name = "biaslint"
	run.Tool.Driver.Version = r.Version
	run.Tool.Driver.Rules = []sarifRule{}
	run.Results = []sarifResult{}
	inv := sarifInvocation{ExecutionSuccessful: true, ExitCode: r.ExitCode}
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
			sr := sarifRule{ID: ru.ID, ShortDescription: sarifText{FirstSentence(ru.Rationale)},
				DefaultConfiguration: sarifConfig{Level: level(ru.Severity)},
				Properties:           map[string]any{"subject": string(ru.Subject), "condition": ru.When}}
			if sr.ShortDescription.Text == "" {
				sr.ShortDescription.Text = ru.ID
			}
			if ru.Rationale != "" {
				sr.FullDescription = &sarifText{strings.TrimSpace(ru.Rationale)}
			}
			sr.Help = &sarifText{ruleHelp(ru)}
			addRule(sr)
		}
	}
	for _, f := range r.Files {
		for _, x := range f.Findings {
			idx := addRule(sarifRule{ID: x.Rule, ShortDescription: sarifText{x.Rule},
				DefaultConfiguration: sarifConfig{Level: level(x.Severity)}})
			res := sarifResult{RuleID: x.Rule, RuleIndex: idx, Level: level(x.Severity), Message: sarifText{x.Message}}
			file := x.Pos.File
			if file == "" {
				file = f.Path
			}
			loc := physical(file, x.Pos)
			loc.LogicalLocations = []sarifLogical{{Name: x.Device, Kind: "element"}}
			res.Locations = []sarifLocation{loc}
			for i, rel := range x.Related {
				res.RelatedLocations = append(res.RelatedLocations, relatedLocation(i, rel, f.Path))
			}
			res.PartialFingerprints = map[string]string{FingerprintKey: Fingerprint(x)}
			// netlist names the checked file the result came from (its
			// location may be an included file or the board file), so that
			// reports of several runs can be merged in file order.
			props := map[string]any{"device": x.Device, "case": rules.CaseName(x.Scenario, x.Corner), "netlist": f.Path}
			if x.HasLimit {
				props["value"], props["limit"], props["unit"] = x.Value, x.Limit, x.Unit
			}
			if len(x.AlsoIn) > 0 {
				props["alsoIn"] = x.AlsoIn
			}
			res.Properties = props
			if ch := x.Change; ch != nil {
				var edit sarifArtifactEdit
				edit.ArtifactLocation.URI = fileURI(ch.Pos.File)
				// The region covers the value's text on its line; the end
				// column is one past its last byte (SARIF 2.1.0, 3.30).
				edit.Replacements = []sarifReplacement{{
					DeletedRegion: sarifRegion{StartLine: ch.Pos.Line, StartColumn: ch.Pos.Col,
						EndLine: ch.Pos.Line, EndColumn: ch.Pos.Col + len(ch.Old)},
					InsertedContent: sarifText{ch.New}}}
				res.Fixes = []sarifFix{{Description: sarifText{ch.String()}, ArtifactChanges: []sarifArtifactEdit{edit}}}
			}
			if x.Waived {
				kind := "inSource"
				if x.WaiverExternal {
					kind = "external"
				}
				res.Suppressions = []sarifSuppression{{Kind: kind, Justification: x.WaiverReason}}
			}
			run.Results = append(run.Results, res)
		}
		for _, n := range f.Notes {
			file := n.Pos.File
			if file == "" {
				file = f.Path
			}
			note := sarifNotification{Level: n.Severity.String(), Message: sarifText{n.Msg}, Properties: map[string]any{"netlist": f.Path}}
			note.Locations = []sarifLocation{physical(file, n.Pos)}
			inv.ToolExecutionNotifications = append(inv.ToolExecutionNotifications, note)
		}
	}
	inv.ToolExecutionNotifications = append(inv.ToolExecutionNotifications, statusNotifications(r)...)
	if len(r.Failed()) > 0 {
		inv.ExecutionSuccessful = false
	}
	run.Invocations = []sarifInvocation{inv}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(sarifLog{Schema: SARIFSchema, Version: "2.1.0", Runs: []sarifRun{run}})
}

// statusNotifications lists the notifications of the files that were not
// checked, in report order: a file that could not be judged gives its
// located errors (level error), a file left out on purpose (a library, an
// included file) one note.
func statusNotifications(r *Report) []sarifNotification {
	var out []sarifNotification
	for i := range r.Files {
		f := &r.Files[i]
		if f.Status.Of() == StatusChecked {
			continue
		}
		if !f.Status.Failed() || len(f.Errors) == 0 {
			lvl := "note"
			if f.Status.Failed() {
				lvl = "error"
			}
			out = append(out, sarifNotification{Level: lvl, Message: sarifText{f.Path + ": " + StatusText(f)},
				Locations:  []sarifLocation{physical(f.Path, netlist.Pos{})},
				Properties: map[string]any{"netlist": f.Path, "file_status": string(f.Status.Of())}})
			continue
		}
		for _, e := range f.Errors {
			file := e.Pos.File
			if file == "" {
				file = f.Path
			}
			out = append(out, sarifNotification{Level: "error", Message: sarifText{e.Msg}, Locations: []sarifLocation{physical(file, e.Pos)},
				Properties: map[string]any{"netlist": f.Path, "file_status": string(f.Status.Of())}})
		}
	}
	return out
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

// relatedLocation is one related part of a finding as a SARIF location
// (a part that is missing is located where it belongs and has no
// logical location).
func relatedLocation(id int, r rules.Related, path string) sarifLocation {
	file := r.Pos.File
	if file == "" {
		file = path
	}
	loc := physical(file, r.Pos)
	loc.ID = &id
	if r.Name != "" {
		loc.LogicalLocations = []sarifLogical{{Name: r.Name, Kind: "element"}}
	}
	loc.Message = &sarifText{r.Message}
	return loc
}
