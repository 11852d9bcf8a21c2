package main

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestFileTimeout: a file past its time budget is reported as not checked,
// with the reason, and the other files of the batch are checked in full.
func TestFileTimeout(t *testing.T) {
	demo := "rulesets/demo/bench-logger.cir"
	// One file named: a tiny budget always runs out before the first
	// Newton iteration; the run fails as for any file it cannot judge.
	out, errs, code := runCLI(t, "check", "--file-timeout", "1ns", demo)
	if code != exitBadInput || out != "" {
		t.Errorf("exit %d, stdout %q; want 2 and nothing", code, out)
	}
	if want := demo + ":1:1: error: not checked: checking took longer than the limit of 1ns per file (raise it with --file-timeout)"; strings.TrimSpace(errs) != want {
		t.Errorf("stderr %q, want %q", errs, want)
	}

	// A batch in which one file runs out of time (its context is done from
	// the start: the same as a budget that ran out, without waiting).
	dir := slowBatch(t, demo, good)
	out, errs, code = runCLI(t, "check", "--format", "json", dir)
	if code != exitBadInput {
		t.Errorf("exit %d, want 2 (a file could not be checked): %s", code, errs)
	}
	overOne(t, out, "slow.cir", "--file-timeout")
	// The text report says it in words.
	out, _, _ = runCLI(t, "check", dir)
	if !strings.Contains(out, "slow.cir: not checked, over its budget") || !strings.Contains(out, "quick.cir: 1 transistor") {
		t.Errorf("text report:\n%s", out)
	}
}

// TestFileSizeBudgets: --file-elements and --file-mib bound one netlist;
// past them is a located error of that file. Bad values are usage errors.
func TestFileSizeBudgets(t *testing.T) {
	_, errs, code := runCLI(t, "check", "--file-elements", "3", good)
	if code != exitBadInput || !strings.Contains(errs, "floating-base.bad.cir:") || !strings.Contains(errs, "more than 3 elements") {
		t.Errorf("--file-elements 3: exit %d, %s", code, errs)
	}
	dir := t.TempDir()
	writeFile(t, filepath.Join(dir, "filler.inc"), []byte(strings.Repeat("* filler comment line of a shared model file\n", 15000))) // about 700 kB
	writeFile(t, filepath.Join(dir, "top.cir"), []byte("Includes past the byte budget\n.include filler.inc\n.include filler.inc\nV1 a 0 5\nR1 a 0 1k\n.end\n"))
	_, errs, code = runCLI(t, "check", "--file-mib", "1", filepath.Join(dir, "top.cir"))
	if code != exitBadInput || !strings.Contains(errs, "top.cir:3:10:") || !strings.Contains(errs, "limit of 1048576 bytes (1 MiB)") {
		t.Errorf("--file-mib 1: exit %d, %s", code, errs)
	}
	for _, args := range [][]string{
		{"--file-timeout", "-1s"}, {"--file-elements", "0"}, {"--file-mib", "0"}, {"--file-timeout", "soon"},
	} {
		_, errs, code := runCLI(t, append(append([]string{"check"}, args...), good)...)
		if code != exitBadInput || !strings.Contains(errs, strings.TrimLeft(args[0], "-")) {
			t.Errorf("%v: exit %d, %q", args, code, errs)
		}
	}
}

// TestOpPlotTimeout: op and plot have check's time budget: a tiny one
// stops the solve, says why with the flag to raise it, and exits 2; in an
// op batch the other files are still solved and printed.
func TestOpPlotTimeout(t *testing.T) {
	demo := "rulesets/demo/bench-logger.cir"
	const why = "not checked: checking took longer than the limit of 1ns per file (raise it with --file-timeout)"
	out, errs, code := runCLI(t, "op", "--file-timeout", "1ns", demo)
	if code != exitBadInput || out != "" || strings.TrimSpace(errs) != demo+":1:1: error: "+why {
		t.Errorf("op: exit %d, stdout %q, stderr %q; want 2, nothing and %q", code, out, errs, why)
	}
	out, errs, code = runCLI(t, "plot", "--file-timeout", "1ns", "Q1", demo)
	if code != exitBadInput || out != "" || !strings.Contains(errs, "--file-timeout") || !strings.Contains(errs, demo) {
		t.Errorf("plot: exit %d, stdout %q, stderr %q; want 2, nothing and the budget named", code, out, errs)
	}

	// An op batch with one file out of time from the start.
	dir := slowBatch(t, demo, good)
	out, errs, code = runCLI(t, "op", "--format", "json", filepath.Join(dir, "slow.cir"), filepath.Join(dir, "quick.cir"))
	if code != exitBadInput || !strings.Contains(errs, "slow.cir:1:1: error: not checked") || strings.Contains(errs, "quick.cir") {
		t.Errorf("op batch: exit %d, stderr %q; want 2 and only slow.cir out of budget", code, errs)
	}
	var got struct {
		Results []struct {
			File string `json:"file"`
		} `json:"results"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil || len(got.Results) != 1 || filepath.Base(got.Results[0].File) != "quick.cir" {
		t.Errorf("op batch: results %+v (%v); want quick.cir alone", got.Results, err)
	}
}

// slowBatch writes a batch folder of slow.cir (a copy of slow) and
// quick.cir (a copy of quick), and makes slow.cir's time budget run out
// from the start (the same as a budget that ran out, without waiting)
// until the test ends.
func slowBatch(t *testing.T, slow, quick string) string {
	t.Helper()
	dir := t.TempDir()
	for name, from := range map[string]string{"slow.cir": slow, "quick.cir": quick} {
		src, err := os.ReadFile(from)
		if err != nil {
			t.Fatal(err)
		}
		writeFile(t, filepath.Join(dir, name), src)
	}
	saved := budgetContext
	t.Cleanup(func() { budgetContext = saved })
	budgetContext = func(path string, d time.Duration) (context.Context, context.CancelFunc) {
		if filepath.Base(path) == "slow.cir" {
			return context.WithDeadline(context.Background(), time.Now().Add(-time.Second))
		}
		return saved(path, d)
	}
	return dir
}

// stagesFile writes a board of n divider-biased common-emitter stages
// (invented test data) into dir.
func stagesFile(t *testing.T, dir, name string, n int) string {
	t.Helper()
	var s strings.Builder
	fmt.Fprintf(&s, "%d stages on one supply\nVCC vcc 0 DC 12\n.model SNPN NPN(IS=5f BF=180 VAF=80)\n", n)
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&s, "R1_%d vcc b%d 47k\nR2_%d b%d 0 10k\nRC%d vcc c%d 4.7k\nRE%d e%d 0 1k\nQ%d c%d b%d e%d SNPN\n", i, i, i, i, i, i, i, i, i, i, i, i)
	}
	s.WriteString(".end\n")
	p := filepath.Join(dir, name)
	writeFile(t, p, []byte(s.String()))
	return p
}

// TestFileMemory: a file whose analysis would hold more than --file-memory
// is not checked (refused before its cases are solved), says why with the
// flag to raise it, and the other files of the batch are checked in full.
// A full check of 25 stages (57 cases) is estimated at 2 MiB, the
// operating point of 200 stages at 3 MiB, one transistor at well under
// 1 MiB (checks/memory.go).
func TestFileMemory(t *testing.T) {
	dir := t.TempDir()
	big := stagesFile(t, dir, "big.cir", 25)
	src, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	writeFile(t, filepath.Join(dir, "quick.cir"), src)

	const why = "error: not checked: checking it would hold about 2 MiB for 57 cases, more than the limit of 1 MiB per file (raise it with --file-memory)"
	out, errs, code := runCLI(t, "check", "--file-memory", "1", big)
	if code != exitBadInput || out != "" || strings.TrimSpace(errs) != big+":1:1: "+why {
		t.Errorf("one file: exit %d, stdout %q, stderr %q; want 2, nothing and %q", code, out, errs, why)
	}
	out, errs, code = runCLI(t, "fix", "--preview", "--file-memory", "1", big)
	if code != exitBadInput || out != "" || !strings.Contains(errs, big+":1:1: "+why) || !strings.Contains(errs, "nothing written") {
		t.Errorf("fix: exit %d, stdout %q, stderr %q", code, out, errs)
	}
	wide := stagesFile(t, t.TempDir(), "wide.cir", 200)
	out, errs, code = runCLI(t, "op", "--file-memory", "1", wide)
	if code != exitBadInput || out != "" || !strings.Contains(errs, "wide.cir:1:1: error: not checked: checking it would hold about 3 MiB for 1 case") || !strings.Contains(errs, "--file-memory") {
		t.Errorf("op: exit %d, stdout %q, stderr %q", code, out, errs)
	}

	out, errs, code = runCLI(t, "check", "--format", "json", "--file-memory", "1", dir)
	if code != exitBadInput {
		t.Errorf("batch: exit %d, want 2 (a file could not be checked): %s", code, errs)
	}
	overOne(t, out, "big.cir", "--file-memory")
	// With the default budget the board is checked.
	if _, errs, code := runCLI(t, "check", big); code == exitBadInput {
		t.Errorf("default budget: exit 2: %s", errs)
	}
	for _, v := range []string{"0", "-5", "2000000"} {
		if _, errs, code := runCLI(t, "check", "--file-memory", v, big); code != exitBadInput || !strings.Contains(errs, "--file-memory "+v) {
			t.Errorf("--file-memory %s: exit %d, %q", v, code, errs)
		}
	}
}

// overOne checks a JSON batch report in which the file named over is
// over-budget (no findings, the detail naming the flag that raises the
// budget) and quick.cir is checked in full.
func overOne(t *testing.T, out, over, flag string) {
	t.Helper()
	var rep struct {
		Results []struct {
			File, Status string
			StatusDetail string `json:"status_detail"`
			Findings     []json.RawMessage
		}
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("JSON: %v\n%s", err, out)
	}
	got := map[string]string{}
	for _, r := range rep.Results {
		got[filepath.Base(r.File)] = r.Status
		switch filepath.Base(r.File) {
		case over:
			if !strings.Contains(r.StatusDetail, flag) || len(r.Findings) != 0 {
				t.Errorf("%s: detail %q, %d findings", over, r.StatusDetail, len(r.Findings))
			}
		case "quick.cir":
			if len(r.Findings) == 0 {
				t.Errorf("quick.cir: no findings; it was not checked in full")
			}
		}
	}
	if got[over] != "over-budget" || got["quick.cir"] != "checked" {
		t.Errorf("statuses %v, want %s over-budget and quick.cir checked", got, over)
	}
}
