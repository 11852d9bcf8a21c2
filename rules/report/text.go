package report

import (
	"bytes"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/fatih/color"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
	"github.com/biaslint/biaslint/rules"
)

// TextOptions adjust the text report.
type TextOptions struct {
	// Color turns on terminal colour (the caller decides: a terminal, not
	// NO_COLOR, or --color always).
	Color bool
	// Notes prints the input notes (reading the netlist, annotations);
	// input warnings and alerts (netlist.Error.Alert: a value whose
	// letters people often misread) are printed either way.
	Notes bool
	// Transistors prints a table of each file's transistors: role, nominal
	// region, IC and VCE, and the hottest junction over every case.
	Transistors bool
}

type paint struct{ on bool }

// with makes s Printable and colours it.
func (p paint) with(s string, attrs ...color.Attribute) styled {
	s = Printable(s)
	if !p.on {
		return styled(s)
	}
	c := color.New(attrs...)
	c.EnableColor()
	return styled(c.Sprint(s))
}

func (p paint) severity(s rules.Severity) styled {
	switch s {
	case rules.SeverityError:
		return p.with(string(s), color.FgRed, color.Bold)
	case rules.SeverityWarning:
		return p.with(string(s), color.FgYellow, color.Bold)
	}
	return p.with(string(s), color.FgCyan)
}

// Text writes the report for people: per file, ordered by position, one
// block per finding whose first line reads like a compiler's
// ("file:line:col: severity: message [rule-id]"), then the device and its
// nets, the value against the limit, the case, and the fix; waived findings
// after, with their reasons; then a summary line, and the safety cautions.
func Text(w io.Writer, r *Report, opt TextOptions) error {
	p := paint{opt.Color}
	ew := &errWriter{w: w}
	hazard := false
	for i := range r.Files {
		f := &r.Files[i]
		if i > 0 {
			ew.printf("\n")
		}
		var title styled
		if f.Title != "" {
			title = "  " + p.with(f.Title, color.Faint)
		}
		ew.printf("%s%s\n", p.with(f.Path, color.Bold), title)
		if t := TempText(f); t != "" {
			ew.printf("  %s\n", p.with(t, color.Faint))
		}
		if f.Status.Of() != StatusChecked {
			writeUnchecked(ew, p, f, opt)
			continue
		}
		var waived []rules.Finding
		n := 0
		for _, x := range f.Findings {
			if x.Waived {
				waived = append(waived, x)
				continue
			}
			if Hazardous(x) && x.Severity == rules.SeverityError {
				hazard = true
			}
			n++
			ew.printf("\n%s: %s: %s %s\n", x.Pos, p.severity(x.Severity), x.Message, p.with("["+x.Rule+"]", color.Faint))
			ew.printf("    device   %s%s\n", x.Device, chain(x))
			if len(x.Nets) > 0 {
				ew.printf("    nets     %s\n", nets(x))
			}
			if len(x.Related) > 0 {
				ew.printf("    related  %s\n", relatedText(x.Related))
			}
			if x.HasLimit {
				ew.printf("    value    %s against limit %s\n", Figure(x.Value, x.Unit), Figure(x.Limit, x.Unit))
			}
			if x.Scenario != "" {
				ew.printf("    case     %s", rules.CaseName(x.Scenario, x.Corner))
				if len(x.AlsoIn) > 0 {
					ew.printf(" (also %s)", alsoIn(x.AlsoIn))
				}
				ew.printf("\n")
			}
			switch {
			case x.Change != nil:
				ew.printf("    fix      %s; 'biaslint fix' applies it\n", x.Change.String())
				if x.Fix != "" {
					ew.printf("             %s\n", x.Fix)
				}
			case x.Fix != "":
				ew.printf("    fix      %s\n", x.Fix)
			}
		}
		if n == 0 {
			ew.printf("\n  no findings\n")
		}
		if len(waived) > 0 {
			ew.printf("\n  waived:\n")
			for _, x := range waived {
				ew.printf("  %s: %s %s on %s: %s\n", x.Pos, x.Severity, p.with("["+x.Rule+"]", color.Faint), x.Device, x.Message)
				ew.printf("      reason  %s (waiver at %s)\n", x.WaiverReason, x.WaiverPos)
			}
		}
		writeNotes(ew, f, opt)
		if line := genericLine(f); line != "" {
			ew.printf("\n  %s\n", line)
		}
		if line := libraryLine(f); line != "" {
			ew.printf("\n  %s\n", line)
		}
		if opt.Transistors {
			writeTransistors(ew, f)
		}
		c := f.Counts()
		ew.printf("\n  %s: %s, %s judged, %s\n", f.Path, plural(f.Transistors(), "transistor"), plural(f.Cases(), "case"), countText(c))
	}
	if len(r.Files) > 1 {
		ew.printf("\n%s: %s\n", filesText(r), countText(r.Counts()))
	}
	ew.printf("\n")
	if hazard {
		ew.printf("%s\n", p.with("DANGER: findings above report hazardous voltage or heat on this design. Treat the board as dangerous until a qualified person has checked it.", color.FgRed, color.Bold))
	}
	for _, s := range Cautions {
		ew.printf("%s\n", p.with("caution: "+s, color.Faint))
	}
	return ew.err
}

func chain(x rules.Finding) string {
	if len(x.Chain) == 0 {
		return ""
	}
	var parts []string
	for _, in := range x.Chain {
		parts = append(parts, fmt.Sprintf("%s (%s at %s)", in.Name, in.Subckt, in.Pos))
	}
	return "  placed by " + strings.Join(parts, " > ")
}

func plural(n int, word string) string {
	if n == 1 {
		return fmt.Sprintf("%d %s", n, word)
	}
	return fmt.Sprintf("%d %ss", n, word)
}

func countText(c Counts) string {
	return fmt.Sprintf("%s, %s, %s, %d waived", plural(c.Error, "error"), plural(c.Warning, "warning"), plural(c.Note, "note"), c.Waived)
}

// errWriter keeps the first write error.
type errWriter struct {
	w   io.Writer
	err error
}

// printf writes through Printable: every string argument that is not
// styled is escaped (see Printable), so nothing read from input can drive
// the terminal.
func (e *errWriter) printf(format string, args ...any) {
	if e.err == nil {
		_, e.err = fmt.Fprintf(e.w, format, printableArgs(args)...)
	}
}

// maxAlsoIn is how many other violating cases a text finding names before
// it only counts the rest (the JSON report lists them all).
const maxAlsoIn = 3

// alsoIn names the other cases where a finding holds, the first few by
// name and the rest by count.
func alsoIn(cases []string) string {
	if len(cases) <= maxAlsoIn {
		return strings.Join(cases, ", ")
	}
	more := len(cases) - maxAlsoIn
	word := "cases"
	if more == 1 {
		word = "case"
	}
	return fmt.Sprintf("%s and %d more %s", strings.Join(cases[:maxAlsoIn], ", "), more, word)
}

// writeTransistors prints the transistor table of one file: each
// transistor's role and the case that matters for it (a switch at its on
// level, every other role at nominal; see bjtsOf), its worst case and the
// hottest junction over every case; then why each has its role.
func writeTransistors(ew *errWriter, f *File) {
	bjts := bjtsOf(f.Analysis)
	if len(bjts) == 0 {
		return
	}
	var b bytes.Buffer
	tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  transistor\trole\tcase\tregion\tIC\tVCE\tpower\tworst case\thottest Tj")
	val := func(v *float64, unit string) string {
		if v == nil {
			return "-"
		}
		return units.Format(*v, unit)
	}
	for _, t := range bjts {
		hot := val(t.TjMax, "C")
		if t.TjMaxCase != "" {
			hot += " (" + t.TjMaxCase + ")"
		}
		worst := "-"
		switch t.Worst {
		case "beta":
			worst = "forced beta " + val(t.WorstValue, "")
		case "vce":
			worst = "VCE " + val(t.WorstValue, "V")
		case "ic":
			worst = "IC " + val(t.WorstValue, "A")
		}
		if t.WorstCase != "" {
			worst += " (" + t.WorstCase + ")"
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", t.Name, t.Role, t.Case, t.Region,
			val(t.IC, "A"), val(t.VCE, "V"), val(t.Power, "W"), worst, hot)
	}
	fmt.Fprintln(tw)
	for _, t := range bjts {
		fmt.Fprintf(tw, "  %s\t%s: %s\n", t.Name, t.Role, t.RoleReason)
	}
	tw.Flush()
	ew.printf("\n%s", b.String())
}

// maxGenericNamed is how many devices the generic-ratings line names
// before it counts the rest.
const maxGenericNamed = 8

// byPart groups the transistors of a file's nominal case that keep
// returns true for, by the ratings' part name, as "Q1, Q2 (2N3904), Q3
// (BC547B)" naming at most maxGenericNamed devices and counting the rest;
// "" when there are none.
func byPart(f *File, keep func(t *checks.Transistor) bool, label func(t *checks.Transistor) string) string {
	if f.Analysis == nil || len(f.Analysis.Cases) == 0 {
		return ""
	}
	var groups []string
	names := map[string][]string{}
	n := 0
	for i := range f.Analysis.Cases[0].Transistors {
		t := &f.Analysis.Cases[0].Transistors[i]
		if !keep(t) {
			continue
		}
		g := label(t)
		if _, seen := names[g]; !seen {
			groups = append(groups, g)
		}
		names[g] = append(names[g], t.Name)
		n++
	}
	if n == 0 {
		return ""
	}
	var parts []string
	shown := 0
	for _, g := range groups {
		ns := names[g]
		if left := maxGenericNamed - shown; len(ns) > left {
			ns = ns[:max(left, 0)]
		}
		shown += len(ns)
		if len(ns) > 0 {
			parts = append(parts, strings.Join(ns, ", ")+" ("+g+")")
		}
	}
	out := strings.Join(parts, ", ")
	if n > shown {
		out += fmt.Sprintf(" and %d more", n-shown)
	}
	return out
}

// genericLine names, in one line, the transistors of a file that were
// judged against the generic class because neither the parts library nor
// an annotation knew their model; "" when there are none.
func genericLine(f *File) string {
	list := byPart(f, func(t *checks.Transistor) bool { return t.Rating.Generic },
		func(t *checks.Transistor) string { return "model " + t.Model })
	if list == "" {
		return ""
	}
	return "generic ratings: " + list + " judged against the conservative generic class; name a library type or give *@part ratings"
}

// libraryLine names, in one line, the transistors of a file judged against
// the parts library's types and classes, whose ratings are recalled from
// data sheets, with the caution to check the part's own; "" when none.
func libraryLine(f *File) string {
	list := byPart(f, func(t *checks.Transistor) bool {
		return !t.Rating.Generic && strings.HasPrefix(t.Rating.Origin, "parts library:")
	}, func(t *checks.Transistor) string { return t.Rating.Part })
	if list == "" {
		return ""
	}
	return "library ratings: " + list + ", from memory of data sheets; check the data sheet of the part you use"
}

// relatedText lists a finding's related parts on one line: "RB at
// board.cir:5:1 (base resistor); no bleed resistor: one belongs ...
// (near board.cir:5:1)".
func relatedText(rs []rules.Related) string {
	parts := make([]string, len(rs))
	for i, r := range rs {
		if r.Missing {
			parts[i] = r.Message + " (near " + r.Pos.String() + ")"
			continue
		}
		parts[i] = r.Name + " at " + r.Pos.String() + " (" + r.Role + ")"
	}
	return strings.Join(parts, "; ")
}

// StatusText says in words why a file was not checked.
func StatusText(f *File) string {
	var s string
	switch f.Status.Of() {
	case StatusChecked:
		s = "checked"
	case StatusInputErrors:
		s = "not checked: input errors"
	case StatusOverBudget:
		s = "not checked: over its budget"
	case StatusLibrary:
		s = "library (only .subckt, .model, .param or .lib definitions, no circuit): listed, not checked on its own"
	case StatusIncluded:
		by := f.StatusDetail
		if by == "" {
			by = "another file of the run"
		}
		return "included by " + by + ": checked as part of it, not on its own"
	default:
		s = "not checked: " + string(f.Status)
	}
	if f.StatusDetail != "" {
		s += " (" + f.StatusDetail + ")"
	}
	return s
}

// writeUnchecked prints the block of a file that was not checked: why,
// and its located errors.
func writeUnchecked(ew *errWriter, p paint, f *File, opt TextOptions) {
	ew.printf("\n  %s\n", StatusText(f))
	for _, e := range f.Errors {
		ew.printf("  %s: %s: %s\n", e.Pos, p.severity(rules.SeverityError), e.Msg)
	}
	writeNotes(ew, f, opt)
	switch {
	case f.Status.Of() == StatusOverBudget:
		ew.printf("\n  %s: not checked, over its budget\n", f.Path)
	case f.Status.Failed():
		ew.printf("\n  %s: not checked, %s\n", f.Path, plural(len(f.Errors), "input error"))
	}
}

// filesText counts the files of a run, saying how many were not checked.
func filesText(r *Report) string {
	n := map[Status]int{}
	var order []Status
	for i := range r.Files {
		s := r.Files[i].Status.Of()
		if n[s] == 0 {
			order = append(order, s)
		}
		n[s]++
	}
	s := plural(len(r.Files), "file")
	if len(order) == 1 && order[0] == StatusChecked {
		return s
	}
	var parts []string
	for _, st := range []Status{StatusChecked, StatusLibrary, StatusIncluded, StatusInputErrors} {
		if n[st] > 0 {
			parts = append(parts, fmt.Sprintf("%d %s", n[st], st))
		}
	}
	for _, st := range order {
		switch st {
		case StatusChecked, StatusLibrary, StatusIncluded, StatusInputErrors:
		default:
			parts = append(parts, fmt.Sprintf("%d %s", n[st], st))
		}
	}
	return s + " (" + strings.Join(parts, ", ") + ")"
}

// writeNotes prints a file's input notes: warnings and alerts (readings
// people often get wrong) always, other notes when asked for.
func writeNotes(ew *errWriter, f *File, opt TextOptions) {
	var shown []*netlist.Error
	for _, e := range f.Notes {
		if opt.Notes || e.Severity == netlist.SevWarning || e.Alert {
			shown = append(shown, e)
		}
	}
	if len(shown) > 0 {
		ew.printf("\n  input notes:\n")
		for _, e := range shown {
			ew.printf("  %s\n", e.Error())
		}
	}
}

// tempFromWords say where a circuit temperature came from
// (checks.Analysis.TempFrom).
var tempFromWords = map[string]string{
	checks.TempFromOption: "from --temp", checks.TempFromNetlist: "from the netlist's .temp", checks.TempFromAmbient: "the ambient",
}

// TempText says at which temperatures a file's nominal case was solved:
// the circuit temperature and where it came from, and the ambient; "" when
// the file was not analysed.
func TempText(f *File) string {
	an := f.Analysis
	if an == nil || len(an.Cases) == 0 {
		return ""
	}
	from := tempFromWords[an.TempFrom]
	if from == "" {
		from = an.TempFrom
	}
	return fmt.Sprintf("circuit at %s (%s), ambient %s", units.Format(an.Temp, "C"), from, units.Format(an.Cases[0].Ambient, "C"))
}
