package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"github.com/biaslint/biaslint/rules/report"
)

// sarifSchema is the OASIS SARIF 2.1.0 schema kept beside the project.
const sarifSchema = "../shared/schemas/sarif-schema-2.1.0.json"

// The SARIF report validates against the OASIS SARIF 2.1.0 JSON schema.
func TestSARIFValidatesAgainstSchema(t *testing.T) {
	abs, err := filepath.Abs(sarifSchema)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(abs); err != nil {
		t.Skipf("SARIF schema not found at %s (it lives in ../shared/schemas): %v", abs, err)
	}
	c := jsonschema.NewCompiler()
	sch, err := c.Compile(abs)
	if err != nil {
		t.Fatalf("compile schema: %v", err)
	}
	inputs, _ := filepath.Glob("testdata/check/*.bad.cir")
	for _, args := range [][]string{
		append([]string{"check", "--format", "sarif"}, inputs...),
		{"check", "--format", "sarif", "--demo"},
		{"check", "--format", "sarif", "testdata/check/waivers.cir"},
		{"check", "--format", "sarif", "testdata/batch"}, // files that could not be judged: notifications
		{"check", "--format", "sarif", "--notes", "testdata/bad/annotation-bad.cir", "testdata/bad/text-after-end.cir"},
		{"check", "--format", "sarif", "--board", "testdata/check/waivers.board.yaml", "testdata/check/floating-base.bad.cir"},
	} {
		out, errs, code := runCLI(t, args...)
		if code == exitBadInput && !strings.Contains(strings.Join(args, " "), "testdata/batch") {
			t.Fatalf("%v: exit 2: %s", args, errs)
		}
		inst, err := jsonschema.UnmarshalJSON(strings.NewReader(out))
		if err != nil {
			t.Fatalf("%v: not JSON: %v", args, err)
		}
		if err := sch.Validate(inst); err != nil {
			t.Errorf("%v: SARIF does not validate: %v", args, err)
		}
		var log struct {
			Runs []struct {
				Tool struct {
					Driver struct {
						Rules []struct{ ID string } `json:"rules"`
					} `json:"driver"`
				} `json:"tool"`
				Results []struct {
					RuleID    string `json:"ruleId"`
					RuleIndex int    `json:"ruleIndex"`
				} `json:"results"`
			} `json:"runs"`
		}
		if err := json.Unmarshal([]byte(out), &log); err != nil {
			t.Fatal(err)
		}
		run := log.Runs[0]
		for _, r := range run.Results {
			if r.RuleIndex >= len(run.Tool.Driver.Rules) || run.Tool.Driver.Rules[r.RuleIndex].ID != r.RuleID {
				t.Errorf("result %s points at rule index %d, which is not that rule", r.RuleID, r.RuleIndex)
			}
		}
	}
}

// sarifOut is the part of a SARIF log the tests below read.
type sarifOut struct {
	Runs []struct {
		Invocations []struct {
			ExecutionSuccessful        bool `json:"executionSuccessful"`
			ExitCode                   int  `json:"exitCode"`
			ToolExecutionNotifications []struct {
				Level     string                `json:"level"`
				Message   struct{ Text string } `json:"message"`
				Locations []struct {
					PhysicalLocation struct {
						ArtifactLocation struct{ URI string } `json:"artifactLocation"`
						Region           struct {
							StartLine   int `json:"startLine"`
							StartColumn int `json:"startColumn"`
						} `json:"region"`
					} `json:"physicalLocation"`
				} `json:"locations"`
			} `json:"toolExecutionNotifications"`
		} `json:"invocations"`
		Results []struct {
			RuleID              string            `json:"ruleId"`
			PartialFingerprints map[string]string `json:"partialFingerprints"`
			Locations           []struct {
				PhysicalLocation struct {
					Region struct {
						StartLine int `json:"startLine"`
					} `json:"region"`
				} `json:"physicalLocation"`
				LogicalLocations []struct{ Name string } `json:"logicalLocations"`
			} `json:"locations"`
			Suppressions []struct {
				Kind          string `json:"kind"`
				Justification string `json:"justification"`
			} `json:"suppressions"`
		} `json:"results"`
	} `json:"runs"`
}

func sarifOf(t *testing.T, args ...string) (sarifOut, int) {
	t.Helper()
	out, errs, code := runCLI(t, append([]string{"check", "--format", "sarif"}, args...)...)
	var log sarifOut
	if err := json.Unmarshal([]byte(out), &log); err != nil || len(log.Runs) != 1 {
		t.Fatalf("check %v: not one SARIF run (%v); stderr %s", args, err, errs)
	}
	return log, code
}

// The same finding keeps its fingerprint across two runs and across an
// edit of unrelated lines (comments and an extra divider above the
// transistor move it down three lines), and different findings get
// different fingerprints.
func TestSARIFFingerprintsStable(t *testing.T) {
	path := "testdata/check/weak-switch-drive.bad.cir"
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(src), "\n")
	edited := lines[0] + "* reviewed 2026-11, rev C\n* an unrelated divider added below\nVREF ref 0 2.5\nRREF ref 0 10k\n" + strings.Join(lines[1:], "")
	dir := t.TempDir()
	moved := filepath.Join(dir, "weak-switch-drive.bad.cir")
	if err := os.WriteFile(moved, []byte(edited), 0o644); err != nil {
		t.Fatal(err)
	}
	type key struct{ rule, device string }
	prints := func(args ...string) (map[key]string, map[key]int) {
		log, _ := sarifOf(t, args...)
		fp, line := map[key]string{}, map[key]int{}
		for _, r := range log.Runs[0].Results {
			k := key{r.RuleID, r.Locations[0].LogicalLocations[0].Name}
			fp[k] = r.PartialFingerprints[report.FingerprintKey]
			line[k] = r.Locations[0].PhysicalLocation.Region.StartLine
			if len(fp[k]) != 32 {
				t.Errorf("%v: fingerprint %q, want 32 hex digits", k, fp[k])
			}
		}
		return fp, line
	}
	a, la := prints(path)
	b, _ := prints(path)
	c, lc := prints(moved)
	if len(a) == 0 {
		t.Fatal("no results")
	}
	seen := map[string]key{}
	for k, v := range a {
		if b[k] != v {
			t.Errorf("%v: fingerprint changed between two runs: %s, %s", k, v, b[k])
		}
		if c[k] != v {
			t.Errorf("%v: fingerprint changed after an unrelated edit: %s, %s", k, v, c[k])
		}
		if lc[k] == la[k] {
			t.Errorf("%v: the edit did not move the finding (line %d)", k, la[k])
		}
		if other, dup := seen[v]; dup {
			t.Errorf("%v and %v share fingerprint %s", k, other, v)
		}
		seen[v] = k
	}
}

// A board-file waiver is an external suppression, a *@waive annotation an
// in-source one; both carry the reason. The invocation records the exit
// status, and input warnings become tool-execution notifications at
// their positions.
func TestSARIFSuppressionsInvocationNotifications(t *testing.T) {
	dir := t.TempDir()
	boardPath := filepath.Join(dir, "board.yaml")
	if err := os.WriteFile(boardPath, []byte("waivers:\n  - {rule: floating-base, device: Q1, reason: reset pull-down on the controller}\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	suppression := func(args ...string) (string, string) {
		log, _ := sarifOf(t, args...)
		for _, r := range log.Runs[0].Results {
			if r.RuleID == "floating-base" && len(r.Suppressions) == 1 {
				return r.Suppressions[0].Kind, r.Suppressions[0].Justification
			}
		}
		return "", ""
	}
	if kind, why := suppression("--board", boardPath, "testdata/check/floating-base.bad.cir"); kind != "external" || !strings.Contains(why, "reset pull-down") {
		t.Errorf("board-file waiver: suppression %q %q, want external with the reason", kind, why)
	}
	if kind, why := suppression("testdata/check/waivers.cir"); kind != "inSource" || !strings.Contains(why, "pull-down") {
		t.Errorf("annotation waiver: suppression %q %q, want inSource with the reason", kind, why)
	}

	for _, failOn := range []string{"error", "warning"} {
		log, code := sarifOf(t, "--fail-on", failOn, "testdata/check/floating-base.bad.cir")
		inv := log.Runs[0].Invocations
		if len(inv) != 1 || !inv[0].ExecutionSuccessful || inv[0].ExitCode != code {
			t.Errorf("--fail-on %s: invocations %+v, process exit %d", failOn, inv, code)
		}
	}

	log, _ := sarifOf(t, "--notes", "testdata/bad/annotation-bad.cir")
	notes := log.Runs[0].Invocations[0].ToolExecutionNotifications
	found := false
	for _, n := range notes {
		loc := n.Locations[0].PhysicalLocation
		if n.Level == "warning" && strings.Contains(n.Message.Text, "4.7.7k") &&
			loc.ArtifactLocation.URI == "testdata/bad/annotation-bad.cir" && loc.Region.StartLine == 8 && loc.Region.StartColumn == 11 {
			found = true
		}
	}
	if !found {
		t.Errorf("the annotation warning at 8:11 is not a notification: %+v", notes)
	}
}
