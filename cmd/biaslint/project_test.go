package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// projectTree makes a repository in a temporary folder: .git at the top,
// the floating-base trigger netlist (one warning, no error) in
// boards/bench, and files given by name relative to the top. It returns
// the top folder.
func projectTree(t *testing.T, files map[string]string) string {
	t.Helper()
	top := t.TempDir()
	src, err := os.ReadFile("testdata/check/floating-base.bad.cir")
	if err != nil {
		t.Fatal(err)
	}
	files[".git/HEAD"] = "ref: refs/heads/main\n"
	files["boards/bench/pin.cir"] = string(src)
	for name, text := range files {
		p := filepath.Join(top, filepath.FromSlash(name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return top
}

// A waiver board file: it accepts the trigger's floating-base finding.
const projectBoard = "waivers:\n  - {rule: floating-base, device: Q1, reason: held off by the controller's reset pull-down}\n"

// The project file is found from the current folder upward up to the
// repository root, and its settings apply: --fail-on, the board file
// (named relative to the project file), the rule set.
func TestProjectFileDiscovery(t *testing.T) {
	top := projectTree(t, map[string]string{
		"biaslint.yaml": "fail-on: warning\nruleset: [default]\n",
	})
	t.Chdir(filepath.Join(top, "boards", "bench"))
	if found, _ := findProjectFile("."); found != filepath.Join(top, "biaslint.yaml") {
		t.Errorf("found %q, want the top's biaslint.yaml", found)
	}
	// fail-on: warning makes the trigger's warning fail the run.
	if _, errs, code := runCLI(t, "check", "pin.cir"); code != exitFindings {
		t.Errorf("with the project file: exit %d, want 1 (fail-on: warning): %s", code, errs)
	}
	if _, _, code := runCLI(t, "check", "--no-config", "pin.cir"); code != exitOK {
		t.Errorf("--no-config: exit %d, want 0 (the default fail-on error)", code)
	}
}

// The search stops at the repository root: a biaslint.yaml above the
// folder holding .git is not read.
func TestProjectFileStopsAtRepositoryRoot(t *testing.T) {
	outer := t.TempDir()
	if err := os.WriteFile(filepath.Join(outer, "biaslint.yaml"), []byte("fail-on: warning\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	repo := filepath.Join(outer, "repo")
	for _, d := range []string{filepath.Join(repo, ".git"), filepath.Join(repo, "sub")} {
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	if found, _ := findProjectFile(filepath.Join(repo, "sub")); found != "" {
		t.Errorf("found %q above the repository root", found)
	}
	// Without a repository, the search goes on upward and finds it.
	if err := os.RemoveAll(filepath.Join(repo, ".git")); err != nil {
		t.Fatal(err)
	}
	if found, _ := findProjectFile(filepath.Join(repo, "sub")); found != filepath.Join(outer, "biaslint.yaml") {
		t.Errorf("without .git: found %q, want %s", found, filepath.Join(outer, "biaslint.yaml"))
	}
}

// Flags win over the project file; settings the command line leaves alone
// still come from it; --config reads a named file instead.
func TestProjectFilePrecedence(t *testing.T) {
	top := projectTree(t, map[string]string{
		"biaslint.yaml":     "fail-on: warning\nboard: review/board.yaml\nset: {switch_on_current: 1A}\n",
		"review/board.yaml": projectBoard,
		"other.yaml":        "fail-on: note\n",
	})
	t.Chdir(filepath.Join(top, "boards", "bench"))
	// The board file waives the warning: nothing left at warning.
	r, code := checkJSONOf(t, "pin.cir")
	if code != exitOK || len(r.Results) != 1 || len(r.Results[0].Waived) != 1 {
		t.Fatalf("board from the project file: exit %d, %+v", code, r.Results)
	}
	// --board on the command line wins: an empty board waives nothing,
	// and fail-on: warning (still from the file) fails the run.
	if err := os.WriteFile("empty-board.yaml", []byte("ambient: 25\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, _, code := runCLI(t, "check", "--board", "empty-board.yaml", "pin.cir"); code != exitFindings {
		t.Errorf("--board flag: exit %d, want 1", code)
	}
	// --fail-on on the command line wins over fail-on: warning.
	if _, _, code := runCLI(t, "check", "--board", "empty-board.yaml", "--fail-on", "error", "pin.cir"); code != exitOK {
		t.Errorf("--fail-on error over the file's warning: exit %d, want 0", code)
	}
	// --set NAME on the command line wins over set: NAME in the file.
	out, _, _ := runCLI(t, "rules", "--set", "switch_on_current=2mA")
	if !strings.Contains(out, "switch_on_current") || !strings.Contains(out, "2.00 mA") {
		t.Errorf("rules with --set over the file's set: %s", out)
	}
	out, _, _ = runCLI(t, "rules")
	if !strings.Contains(out, "1.00 A") {
		t.Errorf("rules with the file's set: switch_on_current is not 1 A:\n%s", out)
	}
	// --config reads another file instead of the one found.
	if _, _, code := runCLI(t, "check", "--config", filepath.Join(top, "other.yaml"), "pin.cir"); code != exitFindings {
		t.Errorf("--config other.yaml (fail-on: note): exit %d, want 1", code)
	}
	if _, errs, code := runCLI(t, "check", "--config", "x.yaml", "--no-config", "pin.cir"); code != exitBadInput || !strings.Contains(errs, "contradict") {
		t.Errorf("--config with --no-config: exit %d, %q", code, errs)
	}
}

// A bad project file is a located error, exit status 2.
func TestProjectFileErrors(t *testing.T) {
	for _, tc := range []struct{ text, want string }{
		{"rulset: [default]\n", `biaslint.yaml:1:1: error: project file: unknown key "rulset"`},
		{"fail-on: [warning]\n", "biaslint.yaml:1:10: error: project file: fail-on: expected a single value"},
		{"fail-on: fatal\n", "--fail-on must be error, warning or note"},
		{"set: 80%\n", "biaslint.yaml:1:6: error: project file: set: expected a mapping"},
		{"board: [x\n", "biaslint.yaml:"},
		{"- a\n", "biaslint.yaml:1:1: error: project file: expected a mapping"},
	} {
		top := projectTree(t, map[string]string{"biaslint.yaml": tc.text})
		out, errs, code := runCLI(t, "check", "--config", filepath.Join(top, "biaslint.yaml"), filepath.Join(top, "boards/bench/pin.cir"))
		errs = strings.ReplaceAll(errs, top+string(filepath.Separator), "")
		if code != exitBadInput || out != "" || !strings.Contains(errs, tc.want) {
			t.Errorf("%q: exit %d, stdout %q, stderr %q; want %q", tc.text, code, out, errs, tc.want)
		}
	}
}

// init writes the project file with the team rule set and the board file,
// says it will be picked up, and check then uses all three.
func TestInitProjectPickedUp(t *testing.T) {
	top := projectTree(t, map[string]string{})
	t.Chdir(top)
	out, errs, code := runCLI(t, "init")
	if code != exitOK || !strings.Contains(out, "biaslint.yaml") || !strings.Contains(out, "picks it up") {
		t.Fatalf("init: exit %d, %q, %q", code, out, errs)
	}
	t.Chdir(filepath.Join(top, "boards"))
	rules, _, _ := runCLI(t, "rules")
	if !strings.HasPrefix(rules, "rule set team (") {
		t.Errorf("rules below the project: %q, want the team rule set init wrote", firstLine(rules))
	}
	if _, errs, code := runCLI(t, "check", "bench/pin.cir"); code == exitBadInput {
		t.Errorf("check with the files init wrote: exit 2: %s", errs)
	}
	t.Chdir(top)
	if _, errs, code := runCLI(t, "init"); code != exitBadInput || !strings.Contains(errs, "already exists") {
		t.Errorf("second init: exit %d, %q", code, errs)
	}
}

// With files: in the project file, plain "biaslint check" (no FILE) checks
// them, relative to the project file, from any folder below it; FILE
// arguments win.
func TestProjectFileFiles(t *testing.T) {
	top := projectTree(t, map[string]string{
		"biaslint.yaml": "files: [boards]\nfail-on: warning\n",
		"other/x.cir":   "Divider only\nV1 a 0 5\nR1 a b 1k\nR2 b 0 1k\n.end\n",
	})
	t.Chdir(filepath.Join(top, "other"))
	r, code := checkJSONOf(t)
	if code != exitFindings || len(r.Results) != 1 || !strings.HasSuffix(r.Results[0].File, filepath.Join("boards", "bench", "pin.cir")) {
		t.Errorf("plain check: exit %d, %+v; want boards/bench/pin.cir checked, exit 1", code, r.Results)
	}
	r, code = checkJSONOf(t, "x.cir")
	if code != exitOK || len(r.Results) != 1 || r.Results[0].File != "x.cir" {
		t.Errorf("check x.cir: exit %d, %+v; want only x.cir", code, r.Results)
	}
}
