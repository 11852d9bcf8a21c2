package main

import (
	"bytes"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// TestDeterminism builds the binary once and runs it with GOMAXPROCS=1 and
// GOMAXPROCS=2 on the demo and on every netlist of testdata/check, in
// every output format: stdout, stderr and the exit status must be
// byte-identical (design.md: the same input gives byte-identical output,
// whatever GOMAXPROCS is).
func TestDeterminism(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary")
	}
	bin := filepath.Join(t.TempDir(), "biaslint")
	if out, err := exec.Command("go", "build", "-o", bin, "./cmd/biaslint").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	files, err := filepath.Glob("testdata/check/*.cir")
	if err != nil || len(files) == 0 {
		t.Fatalf("no netlists in testdata/check (%v)", err)
	}
	var runs [][]string
	for _, in := range append([][]string{{"--demo"}}, wrapEach(files)...) {
		for _, f := range []string{"text", "json", "sarif"} {
			runs = append(runs, append([]string{"check", "--format", f}, in...))
		}
		for _, f := range []string{"text", "json"} {
			runs = append(runs, append([]string{"op", "--format", f}, in...))
		}
	}
	// All files in one run too: the order of files must not vary either.
	runs = append(runs, append([]string{"check", "--format", "json"}, files...))
	// A board large enough for the sparse solver's ordering and the
	// parallel Thevenin and sensitivity solves to matter.
	big := stagesNetlist(t, t.TempDir(), 40)
	runs = append(runs, []string{"check", "--format", "json", big}, []string{"op", "--format", "json", big})
	for _, args := range runs {
		one := runBinary(t, bin, "1", args)
		two := runBinary(t, bin, "2", args)
		if !bytes.Equal(one, two) {
			t.Errorf("biaslint %v: output differs between GOMAXPROCS=1 and 2:\n--- 1\n%s\n--- 2\n%s", args, one, two)
		}
		if again := runBinary(t, bin, "2", args); !bytes.Equal(two, again) {
			t.Errorf("biaslint %v: output differs between two runs with GOMAXPROCS=2", args)
		}
	}
}

func wrapEach(files []string) [][]string {
	out := make([][]string, len(files))
	for i, f := range files {
		out[i] = []string{f}
	}
	return out
}

// runBinary runs bin with GOMAXPROCS set and returns the exit status,
// stdout and stderr as one byte string.
func runBinary(t *testing.T, bin, procs string, args []string) []byte {
	t.Helper()
	cmd := exec.Command(bin, args...)
	cmd.Env = append(os.Environ(), "GOMAXPROCS="+procs, "NO_COLOR=1")
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	code := 0
	if err := cmd.Run(); err != nil {
		var ee *exec.ExitError
		if !errors.As(err, &ee) {
			t.Fatalf("run %v: %v", args, err)
		}
		code = ee.ExitCode()
	}
	if code > exitBadInput {
		t.Errorf("biaslint %v: exit status %d\n%s", args, code, errb.Bytes())
	}
	return append(append([]byte{byte('0' + code), '\n'}, out.Bytes()...), errb.Bytes()...)
}
