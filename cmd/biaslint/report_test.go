package main

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/rules"
)

// checkTotals runs check --format json on args and counts its files,
// transistors and (unwaived) findings.
func checkTotals(t *testing.T, args ...string) (files, transistors, findings int) {
	t.Helper()
	js, errs, _ := runCLI(t, append([]string{"check", "--format", "json"}, args...)...)
	var r struct {
		Results []struct {
			Transistors int               `json:"transistors"`
			Findings    []json.RawMessage `json:"findings"`
		} `json:"results"`
	}
	if err := json.Unmarshal([]byte(js), &r); err != nil {
		t.Fatalf("check %v: not JSON (%v): %s", args, err, errs)
	}
	for _, f := range r.Results {
		findings += len(f.Findings)
		transistors += f.Transistors
	}
	return len(r.Results), transistors, findings
}

func TestReportCommand(t *testing.T) {
	out := filepath.Join(t.TempDir(), "review.html")
	stdout, errs, code := runCLI(t, "report", "--output", out, "--title", "Rev B review", "testdata/check")
	if code != exitOK || stdout != "" {
		t.Fatalf("exit %d, stdout %q, stderr %s", code, stdout, errs)
	}
	page, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	files, transistors, findings := checkTotals(t, "testdata/check")
	s := string(page)
	if n := strings.Count(s, `<tr class="finding">`); n != findings {
		t.Errorf("%d finding rows, want the %d findings of check --format json", n, findings)
	}
	if n := strings.Count(s, `<svg class="plane"`); n != transistors {
		t.Errorf("%d plots, want one per transistor (%d)", n, transistors)
	}
	if n := strings.Count(s, `<tr class="grid-row">`); n != files {
		t.Errorf("%d grid rows, want one per file (%d)", n, files)
	}
	if !strings.Contains(s, "<title>Rev B review</title>") {
		t.Error("the title is not used")
	}
	// The demo report goes to stdout without --output.
	stdout, _, code = runCLI(t, "report", "--demo")
	if code != exitOK || !strings.HasPrefix(stdout, "<!DOCTYPE html>") || strings.Count(stdout, `<svg class="plane"`) != 7 {
		t.Errorf("report --demo: exit %d, %d plots", code, strings.Count(stdout, `<svg class="plane"`))
	}
}

func TestPlotCommand(t *testing.T) {
	dir := t.TempDir()
	svg := filepath.Join(dir, "q1.svg")
	if _, errs, code := runCLI(t, "plot", "--output", svg, "Q1", "testdata/check/saturated-linear-stage.bad.cir"); code != exitOK {
		t.Fatalf("plot svg: exit %d: %s", code, errs)
	}
	data, err := os.ReadFile(svg)
	if err != nil {
		t.Fatal(err)
	}
	if err := xml.Unmarshal(data, new(struct{})); err != nil || !bytes.Contains(data, []byte("DC load line")) {
		t.Errorf("not an SVG plot (%v)", err)
	}
	pngPath := filepath.Join(dir, "q4.PNG")
	if _, errs, code := runCLI(t, "plot", "--demo", "--output", pngPath, "q4"); code != exitOK {
		t.Fatalf("plot png: exit %d: %s", code, errs)
	}
	f, err := os.Open(pngPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := png.Decode(f); err != nil {
		t.Errorf("not a PNG: %v", err)
	}
	// SVG to stdout.
	if out, _, code := runCLI(t, "plot", "--demo", "X1.Q1"); code != exitOK || !strings.Contains(out, "<svg") {
		t.Errorf("plot to stdout: exit %d", code)
	}
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"plot", "--demo"}, "name a DEVICE"},
		{[]string{"plot", "Q1"}, "name a DEVICE"},
		{[]string{"plot", "--demo", "Q9"}, "no transistor Q9"},
		{[]string{"plot", "--demo", "--output", filepath.Join(dir, "q.pdf"), "Q1"}, "write .svg or .png"},
		{[]string{"plot", "Q1", "testdata/nope.cir"}, "nope.cir"},
	} {
		if _, errs, code := runCLI(t, tc.args...); code != exitBadInput || !strings.Contains(errs, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want 2 and %q", tc.args, code, errs, tc.want)
		}
	}
}

func TestInit(t *testing.T) {
	root, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	t.Chdir(dir)
	out, errs, code := runCLI(t, "init")
	if code != exitOK || !strings.Contains(out, "wrote biaslint.yaml, biaslint-team.yaml and board.yaml") {
		t.Fatalf("init: exit %d, %q %q", code, out, errs)
	}
	// The rule set loads, extends the default and tightens it.
	rs, err := rules.Load(initRuleSetFile, rules.LoadOptions{})
	if err != nil {
		t.Fatalf("the starter rule set does not load: %v", err)
	}
	if p, ok := rs.Param("vceo_share"); !ok || p.Value != 0.8 {
		t.Errorf("vceo_share = %+v, want 0.8", p)
	}
	if rs.Rule("tj-over-limit") == nil {
		t.Error("the example rule is missing")
	}
	if rs.Rule("vce-over-rating") == nil || len(rs.Extends) == 0 || rs.Extends[0] != "default" {
		t.Errorf("the default rules are not inherited (extends %v)", rs.Extends)
	}
	// The board template parses, and so does every example in it once
	// uncommented.
	src, err := os.ReadFile(initBoardFile)
	if err != nil {
		t.Fatal(err)
	}
	b, err := board.Parse(initBoardFile, src, nil)
	if err != nil || b.Ambient != 25 {
		t.Fatalf("board template: %v (ambient %v)", err, b)
	}
	var open []string
	for _, line := range strings.Split(string(src), "\n") {
		if strings.HasPrefix(line, "# ") {
			line = strings.TrimPrefix(line, "# ")
		}
		open = append(open, line)
	}
	full, err := board.Parse(initBoardFile, []byte(strings.Join(open, "\n")), nil)
	if err != nil {
		t.Fatalf("board template with its examples: %v", err)
	}
	if full.Part("MYNPN") == nil || full.Device("RLOAD") == nil || len(full.Waivers) != 1 {
		t.Errorf("examples not read: %+v", full)
	}
	// Both work with check.
	net := filepath.Join(root, "testdata", "check", "saturated-linear-stage.good.cir")
	if _, errs, code := runCLI(t, "check", "--ruleset", initRuleSetFile, "--board", initBoardFile, net); code == exitBadInput {
		t.Errorf("check with the starter files: %s", errs)
	}

	// A second run refuses and leaves the files as they were.
	os.WriteFile(initBoardFile, []byte("ambient: 40\n"), 0o644)
	_, errs, code = runCLI(t, "init")
	if code != exitBadInput || !strings.Contains(errs, "already exists; nothing written") {
		t.Errorf("second init: exit %d, %q", code, errs)
	}
	if got, _ := os.ReadFile(initBoardFile); string(got) != "ambient: 40\n" {
		t.Error("init overwrote board.yaml")
	}
	// With only one of them present, nothing is written either.
	os.Remove(initRuleSetFile)
	if _, _, code = runCLI(t, "init"); code != exitBadInput {
		t.Errorf("init with board.yaml present: exit %d", code)
	}
	if _, err := os.Stat(initRuleSetFile); err == nil {
		t.Error("init wrote the rule set although board.yaml exists")
	}
	if _, errs, code := runCLI(t, "init", "extra"); code != exitBadInput || !strings.Contains(errs, "no arguments") {
		t.Errorf("init extra: exit %d %q", code, errs)
	}
}
