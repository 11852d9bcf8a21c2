package main

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/golden")

// TestMain runs the CLI tests from the repository root, so paths in
// reports read "testdata/...".
func TestMain(m *testing.M) {
	flag.Parse()
	if err := os.Chdir("../.."); err != nil {
		os.Stderr.WriteString(err.Error() + "\n")
		os.Exit(2)
	}
	os.Setenv("NO_COLOR", "1")
	os.Exit(m.Run())
}

// runCLI runs biaslint with args and returns stdout, stderr and the status.
func runCLI(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(append([]string{"biaslint"}, args...), &out, &errb)
	return out.String(), errb.String(), code
}

// golden compares got with testdata/golden/name, or rewrites it with -update.
func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", "golden", name)
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./cmd/biaslint -update to create it)", err)
	}
	if got != string(want) {
		t.Errorf("output differs from %s (run with -update to accept):\n--- got\n%s\n--- want\n%s", path, got, want)
	}
}

func TestUsageErrors(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"op"}, "no netlist given"},
		{[]string{"check", "--format", "xml", "--demo"}, "--format must be"},
		{[]string{"check", "--fail-on", "fatal", "--demo"}, "--fail-on must be"},
		{[]string{"check", "--set", "nosuch=1", "--demo"}, "nosuch"},
		{[]string{"check", "--only", "no-such-rule", "--demo"}, "no-such-rule"},
		{[]string{"explain", "no-such-rule"}, "no rule"},
		{[]string{"op", "--demo", "extra.cir"}, "--demo takes no FILE"},
		{[]string{"check", "--no-such-flag"}, "no-such-flag"},
		{[]string{"op", "testdata/does-not-exist.cir"}, "does-not-exist.cir"},
	} {
		t.Run(strings.Join(tc.args, " "), func(t *testing.T) {
			out, errs, code := runCLI(t, tc.args...)
			if code != exitBadInput {
				t.Errorf("exit status %d, want 2", code)
			}
			if !strings.Contains(errs, tc.want) {
				t.Errorf("stderr %q does not mention %q", errs, tc.want)
			}
			if out != "" {
				t.Errorf("stdout not empty on bad input: %q", out)
			}
		})
	}
}

// Flags may follow the FILE arguments, as the usage lines show them.
func TestFlagsAfterFiles(t *testing.T) {
	path := "testdata/check/floating-base.bad.cir"
	before, _, c1 := runCLI(t, "check", "--format", "json", "--fail-on", "warning", path)
	after, _, c2 := runCLI(t, "check", path, "--format", "json", "--fail-on=warning")
	if before != after || c1 != c2 || c1 != exitFindings {
		t.Errorf("flags after the file changed the result: exit %d vs %d", c1, c2)
	}
	out := filepath.Join(t.TempDir(), "r.json")
	if _, errs, code := runCLI(t, "check", path, "-o", out, "--format", "json"); code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if b, err := os.ReadFile(out); err != nil || string(b) != before {
		t.Errorf("-o after the file: %v", err)
	}
}
