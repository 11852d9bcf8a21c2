package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"
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
