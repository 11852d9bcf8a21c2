package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// checkJSON is the part of `check --format json` the tests read.
type checkJSON struct {
	Results []struct {
		File     string `json:"file"`
		Findings []struct {
			Rule     string             `json:"rule"`
			Severity string             `json:"severity"`
			Device   string             `json:"device"`
			Line     int                `json:"line"`
			Column   int                `json:"column"`
			Scenario string             `json:"scenario"`
			Message  string             `json:"message"`
			Values   map[string]float64 `json:"values"`
		} `json:"findings"`
		Waived []struct {
			Rule   string `json:"rule"`
			Device string `json:"device"`
			Reason string `json:"reason"`
		} `json:"waived"`
	} `json:"results"`
	Summary map[string]int `json:"summary"`
}

func checkJSONOf(t *testing.T, args ...string) (checkJSON, int) {
	t.Helper()
	out, errs, code := runCLI(t, append([]string{"check", "--format", "json"}, args...)...)
	var r checkJSON
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatalf("check %v: not JSON (%v); stderr: %s", args, err, errs)
	}
	return r, code
}

func rulesFired(r checkJSON) []string {
	set := map[string]bool{}
	for _, f := range r.Results {
		for _, x := range f.Findings {
			set[x.Rule] = true
		}
	}
	var ids []string
	for id := range set {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	return ids
}

// Every default rule has a netlist of our own that must trigger it
// (testdata/check/RULE.bad.cir, with the hand estimate in its comments)
// and a corrected twin that must not (RULE.good.cir).
func TestDefaultRulesTriggerAndTwin(t *testing.T) {
	bad, _ := filepath.Glob("testdata/check/*.bad.cir")
	if len(bad) < 17 {
		t.Fatalf("found %d trigger netlists, want one per default rule (17)", len(bad))
	}
	for _, path := range bad {
		rule := strings.TrimSuffix(filepath.Base(path), ".bad.cir")
		t.Run(rule, func(t *testing.T) {
			r, code := checkJSONOf(t, path)
			if !contains(rulesFired(r), rule) {
				t.Errorf("%s: %s did not fire; fired %v", path, rule, rulesFired(r))
			}
			if code == exitBadInput {
				t.Errorf("%s: exit status 2", path)
			}
			twin := strings.Replace(path, ".bad.cir", ".good.cir", 1)
			if _, err := os.Stat(twin); err != nil {
				t.Fatalf("no corrected twin %s", twin)
			}
			r, code = checkJSONOf(t, twin)
			if contains(rulesFired(r), rule) {
				t.Errorf("%s: %s fired on the corrected twin", twin, rule)
			}
			if r.Summary["error"] == 0 && code != exitOK {
				t.Errorf("%s: exit status %d with no errors", twin, code)
			}
		})
	}
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// The demo's first revision carries five mistakes of different kinds,
// each explained with a hand estimate in rulesets/demo/bench-logger-rev-a.cir;
// check --demo finds each on its device, once, and nothing on the stages
// that are right. The corrected revision B has no findings at all.
func TestDemoRevisions(t *testing.T) {
	r, code := checkJSONOf(t, "--demo")
	if code != exitFindings {
		t.Errorf("check --demo: exit %d, want 1 (findings)", code)
	}
	want := map[string]string{
		"weak-switch-drive":       "X1.Q1",
		"floating-base":           "Q4",
		"signal-clipping":         "Q1",
		"power-over-rating":       "Q6",
		"vbe-reverse-over-rating": "X2.Q1",
	}
	got := map[string]string{}
	for _, x := range r.Results[0].Findings {
		if _, dup := got[x.Rule]; dup {
			t.Errorf("%s found twice", x.Rule)
		}
		got[x.Rule] = x.Device
		if want[x.Rule] != x.Device {
			t.Errorf("unexpected finding %s on %s (%s)", x.Rule, x.Device, x.Message)
		}
	}
	for rule, dev := range want {
		if got[rule] != dev {
			t.Errorf("rev A: %s not found on %s", rule, dev)
		}
	}
	// The power-over-rating of Q6 is a hot-corner problem only: every case
	// it is found in is at the 70 C ambient.
	out, _, _ := runCLI(t, "check", "--format", "json", "--demo")
	var full struct {
		Results []struct {
			Findings []struct {
				Rule  string   `json:"rule"`
				Cases []string `json:"cases"`
			} `json:"findings"`
		} `json:"results"`
	}
	if err := json.Unmarshal([]byte(out), &full); err != nil {
		t.Fatal(err)
	}
	for _, x := range full.Results[0].Findings {
		if x.Rule != "power-over-rating" {
			continue
		}
		for _, c := range x.Cases {
			if !strings.Contains(c, "ambient 70 C") {
				t.Errorf("power-over-rating in case %q, want only 70 C corners", c)
			}
		}
	}

	r, code = checkJSONOf(t, "--demo-rev", "B")
	if code != exitOK || r.Summary["error"]+r.Summary["warning"]+r.Summary["note"] != 0 {
		t.Errorf("rev B: exit %d, %+v; want no findings", code, r.Summary)
	}
}

// "biaslint demo" writes each revision to a file that checks the same as
// the built-in one.
func TestDemoWrite(t *testing.T) {
	dir := t.TempDir()
	for _, rev := range []string{"A", "B"} {
		path := filepath.Join(dir, "board-"+rev+".cir")
		out, errs, code := runCLI(t, "demo", "--rev", rev, "--output", path)
		if code != exitOK || !strings.Contains(out, "check it with") {
			t.Fatalf("demo --rev %s: exit %d %q %q", rev, code, out, errs)
		}
		builtin, _, c1 := runCLI(t, "check", "--format", "json", "--demo-rev", rev)
		copied, _, c2 := runCLI(t, "check", "--format", "json", path)
		name := map[string]string{"A": "bench-logger-rev-a.cir", "B": "bench-logger.cir"}[rev]
		if c1 != c2 || strings.ReplaceAll(builtin, name, path) != copied {
			t.Errorf("rev %s: the written copy checks differently from the built-in one", rev)
		}
	}
	printed, _, _ := runCLI(t, "demo")
	if !strings.HasPrefix(printed, "Bench logger interface board, rev A") {
		t.Errorf("demo prints %q first, want revision A", firstLine(printed))
	}
	if _, errs, code := runCLI(t, "demo", "--rev", "C"); code != exitBadInput || !strings.Contains(errs, "revisions A and B") {
		t.Errorf("demo --rev C: exit %d %q", code, errs)
	}
}

// Exit status follows --fail-on: the floating-base trigger has a warning
// and no error.
func TestFailOn(t *testing.T) {
	path := "testdata/check/floating-base.bad.cir"
	if _, _, code := runCLI(t, "check", path); code != exitOK {
		t.Errorf("--fail-on error (default): exit %d, want 0 with only a warning", code)
	}
	if _, _, code := runCLI(t, "check", "--fail-on", "warning", path); code != exitFindings {
		t.Errorf("--fail-on warning: exit %d, want 1", code)
	}
	if _, _, code := runCLI(t, "check", "--skip", "floating-base", "--fail-on", "note", path); code != exitOK {
		t.Errorf("--skip floating-base --fail-on note: exit %d, want 0", code)
	}
}

func TestGoldenReports(t *testing.T) {
	for _, tc := range []struct {
		golden string
		args   []string
	}{
		{"check-weak-switch.txt", []string{"check", "testdata/check/weak-switch-drive.bad.cir"}},
		{"check-power-over-rating.json", []string{"check", "--format", "json", "testdata/check/power-over-rating.bad.cir"}},
		{"check-vbe-reverse.sarif", []string{"check", "--format", "sarif", "testdata/check/vbe-reverse-over-rating.bad.cir"}},
		{"check-demo.txt", []string{"check", "--demo", "--notes"}},
		{"check-demo-rev-b.txt", []string{"check", "--demo-rev", "B", "--notes"}},
		{"op-demo.txt", []string{"op", "--demo"}},
		{"op-demo.json", []string{"op", "--demo", "--format", "json"}},
		{"rules-default.txt", []string{"rules"}},
		{"explain-floating-base.txt", []string{"explain", "floating-base"}},
	} {
		t.Run(tc.golden, func(t *testing.T) {
			out, errs, code := runCLI(t, tc.args...)
			if code == exitBadInput {
				t.Fatalf("exit 2: %s", errs)
			}
			golden(t, tc.golden, out)
		})
	}
}

// Waivers: a matching waiver moves the finding to the waived list with its
// reason; one that matches nothing and one naming an unknown rule are each
// reported, never dropped.
func TestWaivers(t *testing.T) {
	r, _ := checkJSONOf(t, "testdata/check/waivers.cir")
	if len(r.Results) != 1 {
		t.Fatalf("results: %d", len(r.Results))
	}
	f := r.Results[0]
	if len(f.Waived) != 1 || f.Waived[0].Rule != "floating-base" || f.Waived[0].Device != "Q1" ||
		!strings.Contains(f.Waived[0].Reason, "pull-down") {
		t.Errorf("waived = %+v, want floating-base on Q1 with its reason", f.Waived)
	}
	got := map[string]int{}
	for _, x := range f.Findings {
		got[x.Rule] = x.Line
	}
	if got["unused-waiver"] != 12 || got["waiver-unknown-rule"] != 13 {
		t.Errorf("waiver findings by line = %v, want unused-waiver at 12 and waiver-unknown-rule at 13", got)
	}
	if _, fired := got["floating-base"]; fired {
		t.Errorf("waived finding still listed as a finding")
	}
	if r.Summary["waived"] != 1 {
		t.Errorf("summary waived = %d, want 1", r.Summary["waived"])
	}
}

// The JSON report lists each transistor's junction temperature: at the
// nominal case Tj = Ta + P*RthJA (common practice), with the demo's
// *@part RthJA of 250 K/W and the 25 C default ambient, and the hottest
// junction at the 70 C ambient corner (0:70 C by default). The corrected
// revision B of the demo is used, where every junction has a stable
// temperature.
func TestJunctionTemperatureReported(t *testing.T) {
	out, _, _ := runCLI(t, "check", "--format", "json", "--demo-rev", "B")
	var r struct {
		Results []struct {
			BJTs []struct {
				Name      string  `json:"name"`
				Power     float64 `json:"power"`
				Tj        float64 `json:"tj"`
				TjWorst   float64 `json:"tj_worst"`
				WorstCase string  `json:"tj_worst_case"`
			} `json:"bjts"`
		} `json:"results"`
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if len(r.Results) != 1 || len(r.Results[0].BJTs) != 7 {
		t.Fatalf("want 7 transistors of the demo board, got %+v", r.Results)
	}
	for _, q := range r.Results[0].BJTs {
		// The electro-thermal fixed point settles to 1 mK steps, so Tj
		// and the power solved at it agree to a few mK.
		if want := 25 + q.Power*250; math.Abs(q.Tj-want) > 5e-3 {
			t.Errorf("%s: tj %g C, want 25 + P*250 = %g C", q.Name, q.Tj, want)
		}
		if q.TjWorst < 70 || !strings.Contains(q.WorstCase, "ambient 70 C") {
			t.Errorf("%s: hottest junction %g C in %q, want at least 70 C in an ambient 70 C corner", q.Name, q.TjWorst, q.WorstCase)
		}
	}
}
