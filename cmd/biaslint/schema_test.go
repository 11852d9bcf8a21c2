package main

import (
	"path/filepath"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"
)

// compileSchema compiles a JSON Schema file of the repository.
func compileSchema(t *testing.T, path string) *jsonschema.Schema {
	t.Helper()
	abs, err := filepath.Abs(path)
	if err != nil {
		t.Fatal(err)
	}
	sch, err := jsonschema.NewCompiler().Compile(abs)
	if err != nil {
		t.Fatalf("compile %s: %v", path, err)
	}
	return sch
}

// validate runs biaslint with args and validates its standard output.
func validate(t *testing.T, sch *jsonschema.Schema, args ...string) {
	t.Helper()
	out, errs, code := runCLI(t, args...)
	if code == exitBadInput {
		t.Fatalf("%v: exit 2: %s", args, errs)
	}
	inst, err := jsonschema.UnmarshalJSON(strings.NewReader(out))
	if err != nil {
		t.Fatalf("%v: not JSON: %v", args, err)
	}
	if err := sch.Validate(inst); err != nil {
		t.Errorf("%v: does not validate against its schema: %v", args, err)
	}
}

// The JSON reports of check and op validate against the schemas kept in
// rules/report/schema, over every trigger netlist, the demo, waivers and
// the op corpus; and the schemas are strict enough to reject a report
// that lost its format version or grew an undocumented field.
func TestJSONReportsValidateAgainstSchemas(t *testing.T) {
	check := compileSchema(t, "rules/report/schema/check-report.schema.json")
	bad, _ := filepath.Glob("testdata/check/*.cir")
	validate(t, check, append([]string{"check", "--format", "json"}, bad...)...)
	validate(t, check, "check", "--format", "json", "--demo")
	validate(t, check, "check", "--format", "json", "--notes", "testdata/bad/annotation-bad.cir")

	op := compileSchema(t, "rules/report/schema/op-report.schema.json")
	ops, _ := filepath.Glob("testdata/op/*.cir")
	validate(t, op, append([]string{"op", "--format", "json"}, ops...)...)
	validate(t, op, "op", "--format", "json", "--thermal", "--demo")
	// A point that is not physical, alerts, several .temp values, and a
	// batch with files that could not be judged (exit status 2).
	validate(t, check, "check", "--format", "json", "testdata/dialect/stiff.cir", "testdata/dialect/handtyped.cir", "testdata/dialect/spice2.cir")
	validate(t, op, "op", "--format", "json", "testdata/dialect/stiff.cir")
	// A circuit with two stable states.
	validate(t, check, "check", "--format", "json", "testdata/op/latch.cir")
	out, _, _ := runCLI(t, "check", "--format", "json", "testdata/batch")
	if inst, err := jsonschema.UnmarshalJSON(strings.NewReader(out)); err != nil || check.Validate(inst) != nil {
		t.Errorf("the mixed batch's report does not validate: %v %v", err, check.Validate(inst))
	}

	for _, doc := range []string{
		`{"ruleset":"default","ambient":25,"results":[],"summary":{"error":0,"warning":0,"note":0,"waived":0}}`,
		`{"format_version":1,"ruleset":"default","ambient":25,"results":[],"summary":{"error":0,"warning":0,"note":0,"waived":0},"extra":1}`,
		`{"format_version":2,"ruleset":"default","ambient":25,"results":[],"summary":{"error":0,"warning":0,"note":0,"waived":0}}`,
	} {
		inst, err := jsonschema.UnmarshalJSON(strings.NewReader(doc))
		if err != nil {
			t.Fatal(err)
		}
		if check.Validate(inst) == nil {
			t.Errorf("the check schema accepts %s", doc)
		}
	}
}
