package report

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
)

func sample() *Report {
	pos := netlist.Pos{File: "a b/board.cir", Line: 7, Col: 1}
	return &Report{Version: "test", Files: []File{{
		Path: "a b/board.cir",
		Findings: []rules.Finding{
			{Rule: "floating-base", Severity: rules.SeverityWarning, Subject: rules.SubjectTransistor, Device: "Q1", Pos: pos, Scenario: "nominal", Nets: []string{"c", "b", "0"}},
			{Rule: "floating-base", Severity: rules.SeverityWarning, Subject: rules.SubjectTransistor, Device: "Q2", Pos: pos, Scenario: "nominal"},
			{Rule: "vce-over-rating", Severity: rules.SeverityError, Device: "Q3", Pos: pos, Scenario: "nominal", HasLimit: true, Value: 48, Limit: 40, Unit: "V"},
			{Rule: "vce-over-rating", Severity: rules.SeverityError, Device: "Q4", Pos: pos, Waived: true, WaiverReason: "rev B"},
		},
	}}}
}

func TestCounts(t *testing.T) {
	r := sample()
	c := r.Counts()
	if c != (Counts{Error: 1, Warning: 2, Note: 0, Waived: 1}) {
		t.Errorf("counts %+v", c)
	}
	if !r.AtOrAbove(rules.SeverityError) || !r.AtOrAbove(rules.SeverityNote) {
		t.Error("AtOrAbove misses the error")
	}
	r.Files[0].Findings = r.Files[0].Findings[:2]
	if r.AtOrAbove(rules.SeverityError) || !r.AtOrAbove(rules.SeverityWarning) {
		t.Error("AtOrAbove: only warnings are left")
	}
	if got := r.Files[0].TopRule(); got != "floating-base" {
		t.Errorf("top rule %q", got)
	}
}

func TestTextAndSARIF(t *testing.T) {
	var b bytes.Buffer
	if err := Text(&b, sample(), TextOptions{}); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range []string{
		"a b/board.cir:7:1: error:", "[vce-over-rating]", "value    48.0 V against limit 40.0 V",
		"nets     C=c B=b E=0", "reason  rev B", "1 error, 2 warnings, 0 notes, 1 waived", "caution: ",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("text report lacks %q:\n%s", want, out)
		}
	}
	b.Reset()
	if err := SARIF(&b, sample()); err != nil {
		t.Fatal(err)
	}
	var log map[string]any
	if err := json.Unmarshal(b.Bytes(), &log); err != nil {
		t.Fatal(err)
	}
	s := b.String()
	if !strings.Contains(s, `"uri": "a%20b/board.cir"`) || !strings.Contains(s, `"justification": "rev B"`) {
		t.Errorf("SARIF lacks the escaped URI or the suppression:\n%s", s)
	}
}

func TestAlsoInShortened(t *testing.T) {
	if got := alsoIn([]string{"a", "b", "c"}); got != "a, b, c" {
		t.Errorf("three cases: %q", got)
	}
	if got := alsoIn([]string{"a", "b", "c", "d", "e"}); got != "a, b, c and 2 more cases" {
		t.Errorf("five cases: %q", got)
	}
	if got := alsoIn([]string{"a", "b", "c", "d"}); got != "a, b, c and 1 more case" {
		t.Errorf("four cases: %q", got)
	}
}
