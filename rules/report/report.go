// Package report renders the findings of a check run: a compiler-style text
// report for people, JSON for scripts, and SARIF 2.1.0 for code-review and
// CI systems. It only formats; every number comes from the findings and the
// analysis it is given.
package report

import (
	"sort"
	"strings"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
)

// Status says how checking one file of a run ended. It is a word, so a
// caller can add reasons of its own (a time budget, say) as further
// constants: every renderer prints the word as it is, and a status that is
// neither StatusChecked nor a skip counts as a failure (Failed).
type Status string

// The statuses of a file.
const (
	// StatusChecked: the file was read, solved and judged (the zero value
	// reads as this).
	StatusChecked Status = "checked"
	// StatusInputErrors: the file could not be judged; File.Errors says
	// where and why.
	StatusInputErrors Status = "input-errors"
	// StatusLibrary: the file holds only definitions (.subckt, .model,
	// .param, .lib sections) and no circuit; it is listed, not checked.
	StatusLibrary Status = "library"
	// StatusIncluded: another file of the run includes this one, so it is
	// checked as part of that file and not again on its own.
	StatusIncluded Status = "included"
	// StatusOverBudget: checking the file ran past a per-file budget (the
	// time limit); StatusDetail says which. The run goes on with the
	// other files.
	StatusOverBudget Status = "over-budget"
)

// Of returns s, with the zero value read as StatusChecked.
func (s Status) Of() Status {
	if s == "" {
		return StatusChecked
	}
	return s
}

// Skipped reports whether the file was left out on purpose (a library, a
// file another one includes): not a failure.
func (s Status) Skipped() bool { return s == StatusLibrary || s == StatusIncluded }

// Failed reports whether the file could not be judged for a reason the
// user must act on: any status but checked and the skips.
func (s Status) Failed() bool { return s.Of() != StatusChecked && !s.Skipped() }

// File is the outcome of checking one netlist.
type File struct {
	// Path is the netlist as named on the command line.
	Path  string
	Title string
	// Status says whether the file was checked, and if not, why;
	// StatusDetail says more in words (for StatusIncluded: the path of
	// the file that includes it).
	Status       Status
	StatusDetail string
	// Errors are the located problems that kept the file from being
	// judged (Status StatusInputErrors).
	Errors []*netlist.Error
	// Analysis is what checks computed; Findings what the rules found,
	// waived ones included (Finding.Waived).
	Analysis *checks.Analysis
	Findings []rules.Finding
	// Notes are located notes and warnings about reading the input (the
	// netlist, its annotations, the board file).
	Notes []*netlist.Error
}

// Transistors counts the BJTs of the nominal case.
func (f *File) Transistors() int {
	if f.Analysis == nil || len(f.Analysis.Cases) == 0 {
		return 0
	}
	return len(f.Analysis.Cases[0].Transistors)
}

// Cases counts the cases the file was judged in: nominal, drive levels,
// opened drives, swing points, corners and Monte Carlo runs.
func (f *File) Cases() int {
	if f.Analysis == nil {
		return 0
	}
	return len(f.Analysis.Cases)
}

// Report is one check run over one or more netlists.
type Report struct {
	Files []File
	// RuleSet is the rule set the run used.
	RuleSet *rules.RuleSet
	// Ambient is the ambient temperature of the run, C.
	Ambient float64
	// Version is the tool's version, for SARIF.
	Version string
	// ExitCode is the exit status the run ends with (0, or 1 when a
	// finding reached --fail-on), for SARIF's invocation record.
	ExitCode int
}

// Counts tallies findings by severity; waived findings count only as waived.
type Counts struct {
	Error   int `json:"error"`
	Warning int `json:"warning"`
	Note    int `json:"note"`
	Waived  int `json:"waived"`
}

// Add counts one finding.
func (c *Counts) Add(f rules.Finding) {
	if f.Waived {
		c.Waived++
		return
	}
	switch f.Severity {
	case rules.SeverityError:
		c.Error++
	case rules.SeverityWarning:
		c.Warning++
	default:
		c.Note++
	}
}

// Plus returns the sum of two tallies.
func (c Counts) Plus(d Counts) Counts {
	return Counts{c.Error + d.Error, c.Warning + d.Warning, c.Note + d.Note, c.Waived + d.Waived}
}

// Counts tallies the file's findings.
func (f *File) Counts() Counts {
	var c Counts
	for _, x := range f.Findings {
		c.Add(x)
	}
	return c
}

// Counts tallies every file's findings.
func (r *Report) Counts() Counts {
	var c Counts
	for i := range r.Files {
		c = c.Plus(r.Files[i].Counts())
	}
	return c
}

// Failed returns the files that could not be judged (Status.Failed).
func (r *Report) Failed() []*File {
	var out []*File
	for i := range r.Files {
		if r.Files[i].Status.Failed() {
			out = append(out, &r.Files[i])
		}
	}
	return out
}

// Judged counts the files that were checked.
func (r *Report) Judged() int {
	n := 0
	for i := range r.Files {
		if r.Files[i].Status.Of() == StatusChecked {
			n++
		}
	}
	return n
}

// AtOrAbove reports whether any unwaived finding has severity s or worse.
func (r *Report) AtOrAbove(s rules.Severity) bool {
	for _, f := range r.Files {
		for _, x := range f.Findings {
			if !x.Waived && x.Severity.Rank() <= s.Rank() {
				return true
			}
		}
	}
	return false
}

// TopRule returns the most frequent rule, the one that fired most often in the file (unwaived),
// ties broken by id; "" when nothing fired.
func (f *File) TopRule() string {
	n := map[string]int{}
	for _, x := range f.Findings {
		if !x.Waived {
			n[x.Rule]++
		}
	}
	best, bestN := "", 0
	ids := make([]string, 0, len(n))
	for id := range n {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	for _, id := range ids {
		if n[id] > bestN {
			best, bestN = id, n[id]
		}
	}
	return best
}

// Cautions are printed with every text report: the tool is a review aid
// and defers to measurement and to qualified people.
var Cautions = []string{
	"biaslint is a review aid. Its operating points come from device models and nominal values; they do not replace measurement, inspection, or sign-off by a qualified person.",
	"Boards with mains or other hazardous voltages, or with parts that run hot, must be handled and approved as local electrical codes and licensed practice require.",
}

// Hazardous reports whether any finding of the file concerns a hazardous
// voltage or heat, so the cautions can say so plainly.
func Hazardous(f rules.Finding) bool {
	id, _ := rules.CanonicalRuleID(strings.ToLower(f.Rule))
	switch id {
	case "power-over-rating", "tj-over-rating", "tj-over-limit":
		return true
	}
	return strings.Contains(id, "hazard") || strings.Contains(id, "thermal")
}

// nets describes a finding's nets for the text report, naming a
// transistor's terminals ("C=out B=in E=0") and a resistor's ends.
func nets(f rules.Finding) string {
	var labels []string
	switch f.Subject {
	case rules.SubjectTransistor:
		labels = []string{"C", "B", "E"}
	case rules.SubjectResistor:
		labels = []string{"A", "B"}
	}
	parts := make([]string, len(f.Nets))
	for i, n := range f.Nets {
		if i < len(labels) && len(f.Nets) == len(labels) {
			n = labels[i] + "=" + n
		}
		parts[i] = n
	}
	return strings.Join(parts, " ")
}
