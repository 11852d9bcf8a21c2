package main

import (
	"encoding/csv"
	"os"
	"strings"
	"testing"
)

// hostileNames is a netlist of our own whose title, element and node
// names and waiver reason are attacks on the outputs: markup for the HTML
// page, spreadsheet formulas for the CSV (the payload forms of the OWASP
// CSV injection cheat sheet), a bidirectional override (U+202E) and a C1
// control (U+009B) for a terminal.
const hostileNames = "testdata/hostile/names.cir"

// TestHostileNames: the text, CSV and HTML outputs of check and report
// show hostile names as text: escaped in HTML, neutralised in CSV, control
// characters escaped in text (goldens under testdata/golden).
func TestHostileNames(t *testing.T) {
	for _, tc := range []struct {
		golden string
		args   []string
	}{
		{"hostile-names.txt", []string{"check", hostileNames}},
		{"hostile-names.csv", []string{"check", "--format", "csv", hostileNames}},
		{"hostile-names-summary.csv", []string{"check", "--summary", "csv", hostileNames}},
	} {
		t.Run(tc.golden, func(t *testing.T) {
			out, errs, code := runCLI(t, tc.args...)
			if code != exitOK { // warnings only
				t.Fatalf("exit %d, want 0: %s", code, errs)
			}
			for _, bad := range []string{"\u202e", "\u009b"} {
				if strings.Contains(out, bad) {
					t.Errorf("output holds %q unescaped", bad)
				}
			}
			if strings.HasSuffix(tc.golden, ".csv") {
				recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
				if err != nil {
					t.Fatalf("not CSV: %v", err)
				}
				n := 0
				for _, rec := range recs[1:] {
					for _, c := range rec {
						if c != "" && strings.ContainsRune("=+-@\t\r", rune(c[0])) {
							t.Errorf("cell %q would start a formula", c)
						}
						if len(c) > 1 && c[0] == '\'' && strings.ContainsRune("=+-@", rune(c[1])) {
							n++
						}
					}
				}
				if n == 0 {
					t.Errorf("no neutralised cell: the hostile netlist no longer tests the CSV:\n%s", out)
				}
			}
			golden(t, tc.golden, out)
		})
	}
	t.Run("html", func(t *testing.T) {
		path := t.TempDir() + "/review.html"
		if _, errs, code := runCLI(t, "report", hostileNames, "--output", path); code != exitOK && code != exitFindings {
			t.Fatalf("exit %d: %s", code, errs)
		}
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		page := string(b)
		for _, bad := range []string{"<script", "<img", "<svg/onload", "<i>c</i>"} {
			if strings.Contains(page, bad) {
				t.Errorf("the page holds %q unescaped", bad)
			}
		}
		for _, want := range []string{"&lt;script&gt;", "Q&lt;img/src/x&gt;", "&lt;svg/onload"} {
			if !strings.Contains(page, want) {
				t.Errorf("the page does not show %q", want)
			}
		}
	})
}
