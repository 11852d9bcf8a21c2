package report

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/biaslint/biaslint/rules"
)

// CSVHeader names the columns of CSV, one row per finding.
var CSVHeader = []string{"file", "line", "column", "severity", "rule", "device", "case", "value", "limit", "unit",
	"message", "fix", "waived", "waiver_reason"}

// SummaryHeader names the columns of SummaryCSV, one row per file.
// status is the file's Status and problem its first input error (or why
// it was left out), empty for a checked file.
var SummaryHeader = []string{"file", "title", "transistors", "errors", "warnings", "notes", "waived", "most_frequent_rule", "status", "problem"}

// csvNumber writes an SI value in full precision (shortest form that reads
// back exactly), so a spreadsheet gets the number, not a rounded display.
func csvNumber(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// CSV writes one row per finding (waived ones too, marked), under
// CSVHeader: the location, severity, rule, device, the worst case, the
// value and limit in SI units with their unit, the message and fix, and the
// waiver. Files come in report order and findings in the order of the
// report.
func CSV(w io.Writer, r *Report) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(CSVHeader); err != nil {
		return err
	}
	for i := range r.Files {
		f := &r.Files[i]
		for _, x := range f.Findings {
			var val, lim, unit string
			if x.HasLimit {
				val, lim, unit = csvNumber(x.Value), csvNumber(x.Limit), x.Unit
			}
			file := x.Pos.File
			if file == "" {
				file = f.Path
			}
			rec := []string{cell(file), strconv.Itoa(x.Pos.Line), strconv.Itoa(x.Pos.Col), cell(string(x.Severity)), cell(x.Rule), cell(x.Device),
				cell(rules.CaseName(x.Scenario, x.Corner)), val, lim, cell(unit), cell(x.Message), cell(x.Fix),
				strconv.FormatBool(x.Waived), cell(x.WaiverReason)}
			if err := cw.Write(rec); err != nil {
				return err
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

// SummaryCSV writes one row per file under SummaryHeader: the counts by
// severity (waived findings only as waived) and the rule that fired most.
func SummaryCSV(w io.Writer, r *Report) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(SummaryHeader); err != nil {
		return err
	}
	for i := range r.Files {
		f := &r.Files[i]
		c := f.Counts()
		problem := ""
		switch {
		case len(f.Errors) > 0:
			problem = f.Errors[0].Error()
			if len(f.Errors) > 1 {
				problem += fmt.Sprintf(" (and %d more)", len(f.Errors)-1)
			}
		case f.Status.Of() != StatusChecked:
			problem = StatusText(f)
		}
		rec := []string{cell(f.Path), cell(f.Title), strconv.Itoa(f.Transistors()), strconv.Itoa(c.Error), strconv.Itoa(c.Warning),
			strconv.Itoa(c.Note), strconv.Itoa(c.Waived), cell(f.TopRule()), string(f.Status.Of()), cell(problem)}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// SummaryTable writes the per-file summary as an aligned text table: file,
// transistors, errors, warnings, notes and the rule that fired most, then
// a totals row.
func SummaryTable(w io.Writer, r *Report) error {
	head := []string{"file", "transistors", "errors", "warnings", "notes", "most frequent rule"}
	// A status column only when some file was not checked.
	status := false
	for i := range r.Files {
		status = status || r.Files[i].Status.Of() != StatusChecked
	}
	if status {
		head = append(head, "status")
	}
	rows := [][]string{head}
	total := Counts{}
	nt := 0
	for i := range r.Files {
		f := &r.Files[i]
		c := f.Counts()
		total = total.Plus(c)
		nt += f.Transistors()
		top := f.TopRule()
		if top == "" {
			top = "-"
		}
		row := []string{f.Path, strconv.Itoa(f.Transistors()), strconv.Itoa(c.Error), strconv.Itoa(c.Warning), strconv.Itoa(c.Note), top}
		if status {
			row = append(row, string(f.Status.Of()))
		}
		rows = append(rows, row)
	}
	foot := []string{fmt.Sprintf("total (%d files)", len(r.Files)), strconv.Itoa(nt), strconv.Itoa(total.Error),
		strconv.Itoa(total.Warning), strconv.Itoa(total.Note), ""}
	if status {
		foot = append(foot, fmt.Sprintf("%d checked", r.Judged()))
	}
	rows = append(rows, foot)
	width := make([]int, len(head))
	for _, row := range rows {
		for j, cell := range row {
			width[j] = max(width[j], len([]rune(cell)))
		}
	}
	ew := &errWriter{w: w}
	for i, row := range rows {
		var b strings.Builder
		for j, cell := range row {
			pad := width[j] - len([]rune(cell))
			switch {
			case j == 0 || j >= 5: // file, most frequent rule, status: text
				b.WriteString(cell)
				if j < len(row)-1 {
					b.WriteString(strings.Repeat(" ", pad))
				}
			default: // numbers right-aligned
				b.WriteString(strings.Repeat(" ", pad) + cell)
			}
			if j < len(row)-1 {
				b.WriteString("  ")
			}
		}
		ew.printf("%s\n", strings.TrimRight(b.String(), " "))
		if i == 0 || i == len(rows)-2 {
			ew.printf("%s\n", strings.Repeat("-", sum(width)+2*(len(width)-1)))
		}
	}
	return ew.err
}

func sum(xs []int) int {
	n := 0
	for _, x := range xs {
		n += x
	}
	return n
}

// cell prepares a text for a CSV cell, as the OWASP guidance on CSV
// injection recommends: folded onto one line (blanks, tabs and line breaks
// to single spaces), control characters escaped (Printable), and, when it
// begins with a character a spreadsheet reads as the start of a formula or
// command (= + - @, tab, carriage return), prefixed with an apostrophe so it
// stays text (a netlist's file or device name is not trusted input in a
// class's gradebook). The csv package quotes separators and quotes inside.
func cell(s string) string {
	s = Printable(strings.Join(strings.Fields(s), " "))
	if s != "" && strings.ContainsRune(formulaStart, rune(s[0])) {
		s = "'" + s
	}
	return s
}

// formulaStart holds the first characters that make a spreadsheet read a
// cell as a formula (OWASP, "CSV Injection"). Tab and carriage return
// cannot begin a folded cell; they are listed so the rule reads whole.
const formulaStart = "=+-@\t\r"
