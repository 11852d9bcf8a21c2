package report

import (
	"bytes"
	"encoding/csv"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
)

// batchSample is two files: sample()'s, and one whose names would start a
// spreadsheet formula and whose message spans lines and holds commas.
func batchSample() *Report {
	r := sample()
	pos := netlist.Pos{File: "=cmd.cir", Line: 3, Col: 2}
	r.Files = append(r.Files, File{Path: "=cmd.cir", Title: "-lab 4, group 7", Findings: []rules.Finding{
		{Rule: "cutoff-linear-stage", Severity: rules.SeverityWarning, Device: "@Q1", Pos: pos, Scenario: "nominal", Corner: "hfe-min",
			Message: "stage is cut off,\n  IC 1 pA", HasLimit: true, Value: 1e-12, Limit: 1e-6, Unit: "A"},
	}})
	return r
}

func TestCSV(t *testing.T) {
	var b bytes.Buffer
	if err := CSV(&b, batchSample()); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatalf("not CSV: %v", err)
	}
	// A header and one row per finding, waived ones included (4 + 1).
	if len(recs) != 6 {
		t.Fatalf("%d records, want 6:\n%v", len(recs), recs)
	}
	if strings.Join(recs[0], ",") != strings.Join(CSVHeader, ",") {
		t.Errorf("header %v", recs[0])
	}
	col := map[string]int{}
	for i, h := range CSVHeader {
		col[h] = i
	}
	for _, tc := range []struct {
		row       int
		key, want string
	}{
		{1, "file", "a b/board.cir"},
		{1, "line", "7"},
		{3, "value", "48"},
		{3, "limit", "40"},
		{3, "unit", "V"},
		{2, "value", ""}, // no limit given
		{4, "waived", "true"},
		{4, "waiver_reason", "rev B"},
		{5, "file", "'=cmd.cir"}, // kept as text by a spreadsheet
		{5, "device", "'@Q1"},
		{5, "case", "nominal/hfe-min"},
		{5, "message", "stage is cut off, IC 1 pA"},
		{5, "value", "1e-12"}, // SI, full precision
	} {
		if got := recs[tc.row][col[tc.key]]; got != tc.want {
			t.Errorf("row %d %s = %q, want %q", tc.row, tc.key, got, tc.want)
		}
	}
}

func TestSummaryCSV(t *testing.T) {
	var b bytes.Buffer
	if err := SummaryCSV(&b, batchSample()); err != nil {
		t.Fatal(err)
	}
	want := "file,title,transistors,errors,warnings,notes,waived,most_frequent_rule,status,problem\n" +
		"a b/board.cir,,0,1,2,0,1,floating-base,checked,\n" +
		"'=cmd.cir,\"'-lab 4, group 7\",0,0,1,0,0,cutoff-linear-stage,checked,\n"
	if b.String() != want {
		t.Errorf("summary CSV:\n%s\nwant:\n%s", b.String(), want)
	}
}

// A file that could not be judged, and one left out as a library, get
// their rows with the status and the first located error.
func TestSummaryUnchecked(t *testing.T) {
	r := &Report{Files: []File{
		{Path: "bad.cir", Status: StatusInputErrors, Errors: []*netlist.Error{
			{Pos: netlist.Pos{File: "bad.cir", Line: 3, Col: 8}, Msg: `bad value "4.7.7k"`},
			{Pos: netlist.Pos{File: "bad.cir", Line: 4, Col: 1}, Msg: "Q1 needs a model"}}},
		{Path: "lib.spi", Status: StatusLibrary},
		{Path: "good.cir"},
	}}
	var b bytes.Buffer
	if err := SummaryCSV(&b, r); err != nil {
		t.Fatal(err)
	}
	want := "file,title,transistors,errors,warnings,notes,waived,most_frequent_rule,status,problem\n" +
		"bad.cir,,0,0,0,0,0,,input-errors,\"bad.cir:3:8: error: bad value \"\"4.7.7k\"\" (and 1 more)\"\n" +
		"lib.spi,,0,0,0,0,0,,library,\"library (only .subckt, .model, .param or .lib definitions, no circuit): listed, not checked on its own\"\n" +
		"good.cir,,0,0,0,0,0,,checked,\n"
	if b.String() != want {
		t.Errorf("summary CSV:\n%s\nwant:\n%s", b.String(), want)
	}
	b.Reset()
	if err := SummaryTable(&b, r); err != nil {
		t.Fatal(err)
	}
	wantTable := `file             transistors  errors  warnings  notes  most frequent rule  status
---------------------------------------------------------------------------------------
bad.cir                    0       0         0      0  -                   input-errors
lib.spi                    0       0         0      0  -                   library
good.cir                   0       0         0      0  -                   checked
---------------------------------------------------------------------------------------
total (3 files)            0       0         0      0                      1 checked
`
	if b.String() != wantTable {
		t.Errorf("summary table:\n%s\nwant:\n%s", b.String(), wantTable)
	}
	if n := len(r.Failed()); n != 1 {
		t.Errorf("%d failed files, want 1 (a library is not a failure)", n)
	}
}

func TestSummaryTable(t *testing.T) {
	var b bytes.Buffer
	if err := SummaryTable(&b, batchSample()); err != nil {
		t.Fatal(err)
	}
	want := `file             transistors  errors  warnings  notes  most frequent rule
--------------------------------------------------------------------------
a b/board.cir              0       1         2      0  floating-base
=cmd.cir                   0       0         1      0  cutoff-linear-stage
--------------------------------------------------------------------------
total (2 files)            0       1         3      0
`
	if b.String() != want {
		t.Errorf("summary table:\n%s\nwant:\n%s", b.String(), want)
	}
}
