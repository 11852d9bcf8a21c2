package main

import (
	"bytes"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// "biaslint --version" and "biaslint version" print the same line: the
// module version and the commit, from the binary's build information.
func TestVersion(t *testing.T) {
	a, _, c1 := runCLI(t, "--version")
	b, _, c2 := runCLI(t, "version")
	if c1 != exitOK || c2 != exitOK || a != b {
		t.Fatalf("--version %q (exit %d) and version %q (exit %d) differ", a, c1, b, c2)
	}
	if want := readBuildInfo().String() + "\n"; a != want || !strings.HasPrefix(a, "biaslint ") {
		t.Errorf("version = %q, want %q", a, want)
	}
	if _, _, code := runCLI(t, "version", "extra"); code != exitBadInput {
		t.Errorf("version extra: exit %d, want 2", code)
	}
}

func TestBuildInfoString(t *testing.T) {
	for _, tc := range []struct {
		b    buildInfo
		want string
	}{
		{buildInfo{Version: "v0.2.0", Commit: "0123456789abcdef0123", Time: "2026-12-01T10:00:00Z", Go: "go1.26.8"},
			"biaslint v0.2.0 (commit 0123456789ab of 2026-12-01T10:00:00Z, built with go1.26.8)"},
		{buildInfo{Version: "(devel)", Commit: "abc", Modified: true},
			"biaslint (devel) (commit abc with uncommitted changes)"},
		{buildInfo{Version: "(devel)", Go: "go1.26.8"}, "biaslint (devel) (commit unknown, built with go1.26.8)"},
	} {
		if got := tc.b.String(); got != tc.want {
			t.Errorf("%+v: got %q, want %q", tc.b, got, tc.want)
		}
	}
}

// "biaslint help COMMAND" prints that command's flags; an unknown topic
// is a usage error naming the nearest command.
func TestHelpCommand(t *testing.T) {
	out, errs, code := runCLI(t, "help", "check")
	if code != exitOK || !strings.Contains(out, "biaslint check") || !strings.Contains(out, "--fail-on") {
		t.Errorf("help check: exit %d, stdout %q, stderr %q", code, out, errs)
	}
	flagHelp, _, _ := runCLI(t, "check", "--help")
	if !strings.Contains(flagHelp, "--fail-on") {
		t.Errorf("check --help does not list --fail-on")
	}
	for _, args := range [][]string{{"help"}, {"--help"}, {"-h"}, {}} {
		out, errs, code := runCLI(t, args...)
		if code != exitOK || !strings.Contains(out, "completion") || !strings.Contains(out, "--version") {
			t.Errorf("biaslint %v: exit %d, %q %q", args, code, out, errs)
		}
	}
	out, errs, code = runCLI(t, "help", "chekc")
	if code != exitBadInput || out != "" || !strings.Contains(errs, `did you mean "check"?`) {
		t.Errorf("help chekc: exit %d, stdout %q, stderr %q", code, out, errs)
	}
}

// An unknown command is exit status 2 with the nearest command named when
// the word is a plausible typo, and no guess for an unrelated word.
func TestUnknownCommand(t *testing.T) {
	for _, tc := range []struct{ word, near string }{
		{"chek", "check"}, {"Check", "check"}, {"reprot", "report"}, {"explian", "explain"},
		{"rule", "rules"}, {"ops", "op"}, {"versoin", "version"}, {"frobnicate", ""}, {"x", ""},
	} {
		out, errs, code := runCLI(t, tc.word, "testdata/check/floating-base.bad.cir")
		if code != exitBadInput || out != "" {
			t.Errorf("%s: exit %d, stdout %q", tc.word, code, out)
		}
		if !strings.Contains(errs, `"`+tc.word+`" is not a command`) {
			t.Errorf("%s: stderr %q does not say it is not a command", tc.word, errs)
		}
		if got := strings.Contains(errs, "did you mean"); got != (tc.near != "") ||
			tc.near != "" && !strings.Contains(errs, `did you mean "`+tc.near+`"?`) {
			t.Errorf("%s: stderr %q, want suggestion %q", tc.word, errs, tc.near)
		}
	}
}

// Edit distances of textbook pairs: kitten/sitting 3 and flaw/lawn 2 are
// the standard worked examples of the Levenshtein distance (from memory);
// with transpositions (optimal string alignment) ca/ac is 1 and ca/abc 3,
// the usual example of how it differs from the unrestricted Damerau
// distance, 2 (from memory).
func TestEditDistance(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		d    int
	}{
		{"kitten", "sitting", 3}, {"flaw", "lawn", 2}, {"", "abc", 3}, {"abc", "", 3}, {"same", "same", 0},
		{"chek", "check", 1}, {"reprot", "report", 1}, {"ca", "ac", 1}, {"ca", "abc", 3},
	} {
		if got := editDistance(tc.a, tc.b); got != tc.d {
			t.Errorf("editDistance(%q, %q) = %d, want %d", tc.a, tc.b, got, tc.d)
		}
	}
}

// The completion scripts name every command and every flag; the bash
// script, loaded into a real bash, completes command names, flags, a
// flag's fixed values and file names.
func TestCompletion(t *testing.T) {
	model := completionModel(newApp(nil, nil))
	for _, shell := range []string{"bash", "zsh", "fish"} {
		out, errs, code := runCLI(t, "completion", shell)
		if code != exitOK {
			t.Fatalf("completion %s: exit %d: %s", shell, code, errs)
		}
		for _, c := range model {
			if !strings.Contains(out, c.Name) {
				t.Errorf("%s script does not name command %s", shell, c.Name)
			}
			for _, f := range c.Flags {
				if !strings.Contains(out, f.Names[0]) {
					t.Errorf("%s script does not name %s --%s", shell, c.Name, f.Names[0])
				}
			}
		}
	}
	if _, errs, code := runCLI(t, "completion", "tcsh"); code != exitBadInput || !strings.Contains(errs, "tcsh") {
		t.Errorf("completion tcsh: exit %d, %q", code, errs)
	}
	bash, err := exec.LookPath("bash")
	if err != nil {
		t.Skip("no bash to run the bash completion in")
	}
	script, _, _ := runCLI(t, "completion", "bash")
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "board.cir"), []byte("x"), 0o644)
	complete := func(words ...string) []string {
		t.Helper()
		var in bytes.Buffer
		in.WriteString(script)
		in.WriteString("COMP_WORDS=(")
		for _, w := range words {
			in.WriteString("'" + w + "' ")
		}
		in.WriteString(")\n")
		in.WriteString("COMP_CWORD=" + strings.Repeat("x", 0))
		in.WriteString(string(rune('0'+len(words)-1)) + "\n")
		in.WriteString("_biaslint\nprintf '%s\\n' \"${COMPREPLY[@]}\"\n")
		cmd := exec.Command(bash, "--norc", "--noprofile")
		cmd.Dir = dir
		cmd.Stdin = &in
		out, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("bash: %v: %s", err, out)
		}
		return strings.Fields(string(out))
	}
	for _, tc := range []struct {
		words []string
		want  []string
	}{
		{[]string{"biaslint", "ch"}, []string{"check"}},
		{[]string{"biaslint", "co"}, []string{"completion"}},
		{[]string{"biaslint", "check", "--fail"}, []string{"--fail-on"}},
		{[]string{"biaslint", "check", "--fail-on", "w"}, []string{"warning"}},
		{[]string{"biaslint", "op", "--format", ""}, []string{"text", "json"}},
		{[]string{"biaslint", "check", "--ruleset", "team"}, []string{"team-strict"}},
		{[]string{"biaslint", "check", "bo"}, []string{"board.cir"}},
		{[]string{"biaslint", "completion", "z"}, []string{"zsh"}},
	} {
		if got := complete(tc.words...); strings.Join(got, " ") != strings.Join(tc.want, " ") {
			t.Errorf("complete %q = %q, want %q", tc.words, got, tc.want)
		}
	}
}

// "-" as FILE reads the netlist from standard input: the report is the
// file's, named <stdin>, and includes resolve from the current directory.
func TestStdin(t *testing.T) {
	defer func(r io.Reader) { stdin = r }(stdin)
	path := "testdata/check/floating-base.bad.cir"
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	fromFile, _, c1 := runCLI(t, "check", "--format", "json", path)
	stdin = bytes.NewReader(src)
	fromStdin, errs, c2 := runCLI(t, "check", "--format", "json", "-")
	if c1 != c2 || strings.ReplaceAll(fromFile, path, stdinName) != fromStdin {
		t.Errorf("check - differs from check FILE (exit %d vs %d; %s):\n%s\n---\n%s", c2, c1, errs, fromStdin, fromFile)
	}
	// Includes: testdata/netlist/includes.cir includes lib/... relative to
	// its directory; from standard input they resolve from the cwd.
	inc, err := os.ReadFile("testdata/netlist/includes.cir")
	if err != nil {
		t.Fatal(err)
	}
	want, _, _ := runCLI(t, "op", "testdata/netlist/includes.cir")
	t.Chdir("testdata/netlist")
	stdin = bytes.NewReader(inc)
	got, errs, code := runCLI(t, "op", "-")
	if code != exitOK {
		t.Fatalf("op - with includes: exit %d: %s", code, errs)
	}
	// The paths of the included files are as read: relative to the cwd.
	want = strings.ReplaceAll(want, "testdata/netlist/lib/", "lib/")
	if strings.ReplaceAll(want, "testdata/netlist/includes.cir", stdinName) != got {
		t.Errorf("op - with includes differs:\n%s\n---\n%s", got, want)
	}
}

// NO_COLOR turns colour off when it is set and not empty; an empty
// NO_COLOR is as if unset (no-color.org).
func TestNoColor(t *testing.T) {
	for _, tc := range []struct {
		env      string
		terminal bool
		want     bool
	}{
		{"", true, true}, {"1", true, false}, {"0", true, false}, {"", false, false}, {"1", false, false},
	} {
		if got := autoColor(tc.env, tc.terminal); got != tc.want {
			t.Errorf("NO_COLOR=%q terminal=%v: colour %v, want %v", tc.env, tc.terminal, got, tc.want)
		}
	}
}

// Tables align the same with colour as without: the coloured output, with
// its escape sequences removed, is the plain output byte for byte.
func TestColourTablesAlign(t *testing.T) {
	for _, args := range [][]string{
		{"op", "--demo"},
		{"check", "--demo", "--notes"},
		{"check", "testdata/check/weak-switch-drive.bad.cir", "testdata/check/floating-base.bad.cir"},
	} {
		plain, _, _ := runCLI(t, append(args, "--color", "never")...)
		coloured, _, _ := runCLI(t, append(args, "--color", "always")...)
		if !strings.Contains(coloured, "\x1b[") {
			t.Errorf("%v --color always: no colour", args)
		}
		if got := ansiStrip.ReplaceAllString(coloured, ""); got != plain {
			t.Errorf("%v: coloured output differs from plain once its colour is removed:\n%s\n---\n%s", args, got, plain)
		}
	}
}

var ansiStrip = regexp.MustCompile("\x1b\\[[0-9;]*m")

// Older names keep working with a note: the annotation key power= (now
// power_rating=), a renamed rule id in --only and in a waiver, and the
// rule-set keys severity/severities (notes on standard error).
func TestOldNamesStillRead(t *testing.T) {
	defer func(r io.Reader) { stdin = r }(stdin)
	src := "Lamp driver with old annotation keys\nV1 vcc 0 12\nRL vcc c 10\n*@device RL power=5\nVB b 0 PULSE(0 5 0 1u 1u 1m 2m)\nRB b bq 470\nQ1 c bq 0 QL\n.model QL NPN (BF=100)\n*@waive overdissipation Q1 lamp driver on a heat sink\n.end\n"
	stdin = strings.NewReader(src)
	out, errs, code := runCLI(t, "check", "--notes", "-")
	if code == exitBadInput {
		t.Fatalf("exit 2: %s", errs)
	}
	if !strings.Contains(out, `"power" is now called "power_rating"`) {
		t.Errorf("no note about power=:\n%s", out)
	}
	if strings.Contains(out, "waiver-unknown-rule") {
		t.Errorf("the waiver of the old id overdissipation is not matched to power-over-rating:\n%s", out)
	}
	if _, errs, code := runCLI(t, "check", "--only", "vce-overstress,overdissipation", "--demo"); code == exitBadInput {
		t.Errorf("--only with old ids: exit 2: %s", errs)
	}
	dir := t.TempDir()
	set := filepath.Join(dir, "old.yaml")
	os.WriteFile(set, []byte("name: old\nextends: default\nseverities:\n  floating-base: error\nrules:\n  - id: hot-junction\n    severity: warning\n    subject: transistor\n    when: tj > 100\n    message: hot\n"), 0o644)
	_, errs, code = runCLI(t, "check", "--ruleset", set, "--demo")
	if code == exitBadInput {
		t.Fatalf("old rule set: exit 2: %s", errs)
	}
	for _, want := range []string{`note: the section "severities" is now called "levels"`, `note: the rule key "severity" is now called "level"`,
		`note: rule "hot-junction" is now called "tj-over-limit"`} {
		if !strings.Contains(errs, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errs)
		}
	}
}
