package main

import (
	"bytes"
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

// hostileNames is a netlist of our own whose title, element and node
// names and waiver reason are attacks on the outputs: markup for the HTML
// page, spreadsheet formulas for the CSV (the payload forms of the OWASP
// CSV injection cheat sheet), a bidirectional override (U+202E) and a C1
// control (U+009B) for a terminal.
const hostileNames = "testdata/hostile/names.cir"

// TestHostileNames: the text, CSV and HTML outputs of check and report
// show hostile names as text: escaped in HTML, neutralised in CSV, control
// characters escaped in text (goldens under testdata/golden).
func TestHostileNames(t *testing.T) {
	for _, tc := range []struct {
		golden string
		args   []string
	}{
		{"hostile-names.txt", []string{"check", hostileNames}},
		{"hostile-names.csv", []string{"check", "--format", "csv", hostileNames}},
		{"hostile-names-summary.csv", []string{"check", "--summary", "csv", hostileNames}},
	} {
		t.Run(tc.golden, func(t *testing.T) {
			out, errs, code := runCLI(t, tc.args...)
			if code != exitOK { // warnings only
				t.Fatalf("exit %d, want 0: %s", code, errs)
			}
			for _, bad := range []string{"\u202e", "\u009b"} {
				if strings.Contains(out, bad) {
					t.Errorf("output holds %q unescaped", bad)
				}
			}
			if strings.HasSuffix(tc.golden, ".csv") {
				recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
				if err != nil {
					t.Fatalf("not CSV: %v", err)
				}
				n := 0
				for _, rec := range recs[1:] {
					for _, c := range rec {
						if c != "" && strings.ContainsRune("=+-@\t\r", rune(c[0])) {
							t.Errorf("cell %q would start a formula", c)
						}
						if len(c) > 1 && c[0] == '\'' && strings.ContainsRune("=+-@", rune(c[1])) {
							n++
						}
					}
				}
				if n == 0 {
					t.Errorf("no neutralised cell: the hostile netlist no longer tests the CSV:\n%s", out)
				}
			}
			golden(t, tc.golden, out)
		})
	}
	t.Run("html", func(t *testing.T) {
		path := t.TempDir() + "/review.html"
		if _, errs, code := runCLI(t, "report", hostileNames, "--output", path); code != exitOK && code != exitFindings {
			t.Fatalf("exit %d: %s", code, errs)
		}
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		page := string(b)
		for _, bad := range []string{"<script", "<img", "<svg/onload", "<i>c</i>", "\u202e", "\u009b"} {
			if strings.Contains(page, bad) {
				t.Errorf("the page holds %q unescaped", bad)
			}
		}
		for _, want := range []string{"&lt;script&gt;", "Q&lt;img/src/x&gt;", "&lt;svg/onload"} {
			if !strings.Contains(page, want) {
				t.Errorf("the page does not show %q", want)
			}
		}
	})
}

// hostileSecret stands for another account's file: no message may repeat
// any of it.
const hostileSecret = "root:x:0:0:the-secret-line-of-someone-else:/root:/bin/bash"

// hostileTree writes, under dir, board/top.cir including include (as
// written) and outside/secret.txt, outside/bin.dat, board/pipe.lib (a
// FIFO), board/models/ (a folder), board/link.lib (a link to the secret),
// board/bin.lib (binary), and returns the path of top.cir.
func hostileTree(t *testing.T, dir, include string) string {
	t.Helper()
	for _, d := range []string{"board/models", "outside"} {
		if err := os.MkdirAll(filepath.Join(dir, d), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	writeFile(t, filepath.Join(dir, "outside", "secret.txt"), []byte(hostileSecret+"\n"+hostileSecret+"\n"))
	writeFile(t, filepath.Join(dir, "board", "bin.lib"), []byte("\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR"+hostileSecret))
	if err := os.Symlink(filepath.Join("..", "outside", "secret.txt"), filepath.Join(dir, "board", "link.lib")); err != nil {
		t.Skipf("no symbolic links: %v", err)
	}
	if err := syscall.Mkfifo(filepath.Join(dir, "board", "pipe.lib"), 0o644); err != nil {
		t.Skipf("no FIFOs: %v", err)
	}
	top := filepath.Join(dir, "board", "top.cir")
	writeFile(t, top, []byte("Hostile include probe\n.include "+include+"\nV1 a 0 5\nR1 a 0 1k\n.end\n"))
	return top
}

// runWithin is runCLI that fails the test instead of hanging when the
// command does not end within d (a FIFO opened blocking would hang).
func runWithin(t *testing.T, d time.Duration, args ...string) (string, string, int) {
	t.Helper()
	type result struct {
		out, errs string
		code      int
	}
	done := make(chan result, 1)
	go func() {
		var out, errb bytes.Buffer
		code := run(append([]string{"biaslint"}, args...), &out, &errb)
		done <- result{out.String(), errb.String(), code}
	}()
	select {
	case r := <-done:
		return r.out, r.errs, r.code
	case <-time.After(d):
		t.Fatalf("biaslint %v did not end within %v", args, d)
		return "", "", 0
	}
}

// TestHostileIncludes: includes that reach outside the allowed folders or
// name something that is not a regular file are located errors naming the
// path as written, with nothing of the target in them, exit 2, at once.
func TestHostileIncludes(t *testing.T) {
	for _, tc := range []struct {
		name, include string
		extra         []string // flags before the file
		want          string
	}{
		{"hostile-absolute", "$TMP/outside/secret.txt", nil, `:2:10: error: include "$TMP/outside/secret.txt" is outside the folders`},
		{"hostile-dotdot", "../outside/secret.txt", nil, `:2:10: error: include "../outside/secret.txt" is outside the folders`},
		{"hostile-symlink", "link.lib", nil, `:2:10: error: include "link.lib" is a symbolic link to a file outside`},
		{"hostile-fifo", "pipe.lib", nil, `:2:10: error: include "pipe.lib" is a named pipe (FIFO)`},
		{"hostile-dev-zero", "/dev/zero", nil, `:2:10: error: include "/dev/zero" is outside the folders`},
		{"hostile-dev-zero-allowed", "/dev/zero", []string{"--include-dir", "/dev"}, `:2:10: error: include "/dev/zero" is a device`},
		{"hostile-folder", "models", nil, `:2:10: error: include "models" is a folder`},
		{"hostile-binary", "bin.lib", nil, `top.cir:2:10: error: file "$TMP/board/bin.lib" is not text`},
		{"hostile-allowed-not-netlist", "../outside/secret.txt", []string{"--include-dir", "$TMP/outside"}, `:2:10: error: file "$TMP/outside/secret.txt" does not read as a netlist`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if strings.HasPrefix(tc.include, "/dev/") {
				if _, err := os.Stat(tc.include); err != nil {
					t.Skip(err)
				}
			}
			dir := t.TempDir()
			top := hostileTree(t, dir, strings.ReplaceAll(tc.include, "$TMP", dir))
			args := []string{"check"}
			for _, a := range tc.extra {
				args = append(args, strings.ReplaceAll(a, "$TMP", dir))
			}
			args = append(args, top)
			start := time.Now()
			out, errs, code := runWithin(t, 10*time.Second, args...)
			took := time.Since(start)
			errs = strings.ReplaceAll(errs, dir, "$TMP")
			if code != exitBadInput || out != "" {
				t.Errorf("exit %d, stdout %q; want 2 and nothing", code, out)
			}
			if !strings.Contains(errs, tc.want) {
				t.Errorf("stderr does not say %q:\n%s", tc.want, errs)
			}
			for _, ln := range strings.Split(strings.TrimRight(errs, "\n"), "\n") {
				if !located.MatchString(ln) {
					t.Errorf("message line without file:line:col: %q", ln)
				}
			}
			for _, part := range []string{"root:x", "secret-line", "/bin/bash", "IHDR"} {
				if strings.Contains(errs, part) {
					t.Errorf("the message repeats %q of the target:\n%s", part, errs)
				}
			}
			t.Logf("took %v", took)
			got := "$ biaslint " + strings.ReplaceAll(strings.Join(args, " "), dir, "$TMP") + "\nexit " + strconv.Itoa(code) + "\n" + errs
			badGolden(t, tc.name, got)
		})
	}
}

// TestHostileFolder: in a folder of submissions, a netlist that is a link
// to a file outside the folder is not read; the others are checked.
func TestHostileFolder(t *testing.T) {
	dir := t.TempDir()
	class := filepath.Join(dir, "class")
	if err := os.MkdirAll(class, 0o755); err != nil {
		t.Fatal(err)
	}
	writeFile(t, filepath.Join(dir, "secret.txt"), []byte(hostileSecret+"\n"))
	if err := os.Symlink(filepath.Join("..", "secret.txt"), filepath.Join(class, "alice.cir")); err != nil {
		t.Skipf("no symbolic links: %v", err)
	}
	src, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	writeFile(t, filepath.Join(class, "bob.cir"), src)
	out, errs, code := runWithin(t, 30*time.Second, "check", "--format", "csv", "--summary", "csv", class)
	if code != exitBadInput {
		t.Errorf("exit %d, want 2", code)
	}
	all := out + errs
	if strings.Contains(all, "secret-line") || strings.Contains(all, "root:x") {
		t.Errorf("the link's target leaks:\n%s", all)
	}
	if !strings.Contains(all, "alice.cir:1:1: error: netlist is a symbolic link to a file outside the folders being checked") ||
		!strings.Contains(out, `bob.cir,"Buzzer driver`) {
		t.Errorf("want alice.cir refused and bob.cir checked:\n%s", all)
	}
}

// TestIncludeDirFlag: --include-dir must name a folder.
func TestIncludeDirFlag(t *testing.T) {
	for _, d := range []string{"testdata/no-such-folder", good} {
		out, errs, code := runCLI(t, "check", "--include-dir", d, good)
		if code != exitBadInput || out != "" || !strings.Contains(errs, "--include-dir "+d+": not a folder") {
			t.Errorf("--include-dir %s: exit %d, stdout %q, stderr %q", d, code, out, errs)
		}
	}
}

// TestProjectIncludeDir: include-dir in the project file allows a folder,
// named relative to the project file, as --include-dir does.
func TestProjectIncludeDir(t *testing.T) {
	top := projectTree(t, map[string]string{
		"models/parts.lib":       ".model SHARED NPN (IS=1e-14 BF=200)\n",
		"boards/bench/stage.cir": "Stage using the shared models\n.include ../../models/parts.lib\nV1 vcc 0 12\nR1 vcc b 82k\nR2 b 0 15k\nRC vcc c 4.7k\nRE e 0 1k\nQ1 c b e SHARED\n.end\n",
	})
	t.Chdir(filepath.Join(top, "boards", "bench"))
	if _, errs, code := runCLI(t, "check", "stage.cir"); code != exitBadInput || !strings.Contains(errs, "is outside the folders") {
		t.Fatalf("without the project setting: exit %d, %s", code, errs)
	}
	writeFile(t, filepath.Join(top, "biaslint.yaml"), []byte("include-dir: [models]\n"))
	if _, errs, code := runCLI(t, "check", "stage.cir"); code == exitBadInput {
		t.Errorf("with include-dir in the project file: exit 2: %s", errs)
	}
	// The project file travels with the netlists (a pull request can
	// change it): it cannot allow a folder outside its own tree.
	for _, d := range []string{"/", "..", filepath.Dir(top)} {
		writeFile(t, filepath.Join(top, "biaslint.yaml"), []byte("include-dir: ["+d+"]\n"))
		if _, errs, code := runCLI(t, "check", "stage.cir"); code != exitBadInput || !strings.Contains(errs, "biaslint.yaml:1:14: error: project file: include-dir "+d+" is outside the project file's folder") {
			t.Errorf("include-dir %s in the project file: exit %d, %s", d, code, errs)
		}
	}
	// Nor name a parts library, board file or rule set elsewhere.
	if err := os.Symlink("/etc/passwd", filepath.Join(top, "linked.yaml")); err != nil {
		t.Fatal(err)
	}
	for _, kv := range []string{"parts: /etc/passwd", "board: ../outside.yaml", "ruleset: [/etc/passwd.yaml]", "parts: linked.yaml"} {
		writeFile(t, filepath.Join(top, "biaslint.yaml"), []byte(kv+"\n"))
		if _, errs, code := runCLI(t, "check", "stage.cir"); code != exitBadInput || !strings.Contains(errs, "is outside the project file's folder") || strings.Contains(errs, "root:") {
			t.Errorf("%s in the project file: exit %d, %s", kv, code, errs)
		}
	}
	// Nor loosen a per-file budget; tightening is fine.
	for _, kv := range []string{"file-timeout: 0", "file-timeout: 10m", "file-elements: 900000", "file-mib: 4096", "file-memory: 8192"} {
		writeFile(t, filepath.Join(top, "biaslint.yaml"), []byte(kv+"\n"))
		if _, errs, code := runCLI(t, "check", "stage.cir"); code != exitBadInput || !strings.Contains(errs, "would loosen the per-file budget") {
			t.Errorf("%s in the project file: exit %d, %s", kv, code, errs)
		}
	}
	writeFile(t, filepath.Join(top, "biaslint.yaml"), []byte("file-timeout: 20s\nfile-memory: 512\nfile-elements: 5000\nfile-mib: 8\ninclude-dir: [models]\n"))
	if _, errs, code := runCLI(t, "check", "stage.cir"); code == exitBadInput {
		t.Errorf("tighter budgets in the project file: exit 2: %s", errs)
	}
	// A folder that does not exist is reported as --include-dir would be.
	writeFile(t, filepath.Join(top, "biaslint.yaml"), []byte("include-dir: no-such-folder\n"))
	if _, errs, code := runCLI(t, "check", "stage.cir"); code != exitBadInput || !strings.Contains(errs, "not a folder") {
		t.Errorf("a missing folder: exit %d, %s", code, errs)
	}
}

// TestClassFoldersConfined: with one folder argument per submission (a
// glob matching each student's folder), a netlist cannot include a
// classmate's, and the classmate's is still checked on its own.
func TestClassFoldersConfined(t *testing.T) {
	labs := filepath.Join(t.TempDir(), "labs")
	for _, d := range []string{"alice", "bob"} {
		if err := os.MkdirAll(filepath.Join(labs, d), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	src, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	writeFile(t, filepath.Join(labs, "bob", "bob.cir"), src)
	writeFile(t, filepath.Join(labs, "alice", "alice.cir"), []byte("Alice's board, copied\n.include ../bob/bob.cir\n.end\n"))
	out, _, code := runCLI(t, "check", "--summary", "csv", filepath.Join(labs, "*"))
	if code != exitBadInput {
		t.Errorf("exit %d, want 2 (alice's include is refused)", code)
	}
	if !strings.Contains(out, `include ""../bob/bob.cir"" is outside the folders`) || !strings.Contains(out, "bob.cir,\"Buzzer driver") ||
		!strings.Contains(out, ",checked,") {
		t.Errorf("want alice's include refused and bob's board checked:\n%s", out)
	}
}

// TestHostileSideFiles: a rule set (or a rule set's extends), board file,
// parts library or project file that is a device or a FIFO is an error at
// once, never a hang or a read without end.
func TestHostileSideFiles(t *testing.T) {
	if _, err := os.Stat("/dev/zero"); err != nil {
		t.Skip(err)
	}
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe.yaml")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("no FIFOs: %v", err)
	}
	writeFile(t, filepath.Join(dir, "extends-zero.yaml"), []byte("name: x\nextends: /dev/zero\n"))
	writeFile(t, filepath.Join(dir, "extends-fifo.yaml"), []byte("name: x\nextends: pipe.yaml\n"))
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"--ruleset", "/dev/zero"}, "a device, not a regular file"},
		{[]string{"--ruleset", fifo}, "named pipe (FIFO)"},
		{[]string{"--ruleset", filepath.Join(dir, "extends-zero.yaml")}, "extends-zero.yaml:2:10: error: rule set \"/dev/zero\": is outside the folders rule sets may extend"},
		{[]string{"--ruleset", filepath.Join(dir, "extends-zero.yaml"), "--include-dir", "/dev"}, "extends-zero.yaml:2:10: error: rule set \"/dev/zero\": is a device"},
		{[]string{"--ruleset", filepath.Join(dir, "extends-fifo.yaml")}, "named pipe (FIFO)"},
		{[]string{"--board", "/dev/zero"}, "a device, not a regular file"},
		{[]string{"--board", fifo}, "named pipe (FIFO)"},
		{[]string{"--parts", "/dev/zero"}, "a device, not a regular file"},
		{[]string{"--config", fifo}, "named pipe (FIFO)"},
	} {
		args := append(append([]string{"check"}, tc.args...), good)
		out, errs, code := runWithin(t, 10*time.Second, args...)
		if code != exitBadInput || out != "" || !strings.Contains(errs, tc.want) {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want 2 and %q", tc.args, code, out, errs, tc.want)
		}
	}
}

// TestRuleSetExtendsConfined: a rule set given with --ruleset that
// extends a file outside its folder, the project folder and the
// --include-dir folders is a located error naming the path as written and
// the flag that allows it; exit 2. With the folder allowed it loads.
func TestRuleSetExtendsConfined(t *testing.T) {
	root := t.TempDir()
	top, out := filepath.Join(root, "top"), filepath.Join(root, "out")
	for _, d := range []string{top, out} {
		if err := os.Mkdir(d, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	writeFile(t, filepath.Join(out, "base.yaml"), []byte("name: base\nextends: default\n"))
	writeFile(t, filepath.Join(top, "mine.yaml"), []byte("name: mine\nextends: ../out/base.yaml\n"))
	set := filepath.Join(top, "mine.yaml")
	_, errs, code := runCLI(t, "check", "--ruleset", set, good)
	want := set + `:2:10: error: rule set "../out/base.yaml": is outside the folders rule sets may extend`
	if code != exitBadInput || !strings.Contains(errs, want) || !strings.Contains(errs, "to allow it, pass --include-dir "+out) {
		t.Errorf("exit %d, stderr %q; want 2 and %q with the --include-dir hint", code, errs, want)
	}
	if _, errs, code := runCLI(t, "check", "--ruleset", set, "--include-dir", out, good); code == exitBadInput {
		t.Errorf("with --include-dir %s: exit %d, stderr %q", out, code, errs)
	}
}

// TestProjectRuleSetExtends: a rule set named in the project file may
// extend a set elsewhere in the project file's folder, not one outside it.
func TestProjectRuleSetExtends(t *testing.T) {
	root := t.TempDir()
	proj := filepath.Join(root, "proj")
	for _, d := range []string{filepath.Join(proj, "rules"), filepath.Join(proj, "shared"), filepath.Join(root, "out")} {
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	src, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	writeFile(t, filepath.Join(proj, "stage.cir"), src)
	writeFile(t, filepath.Join(proj, "shared", "base.yaml"), []byte("name: base\nextends: default\n"))
	writeFile(t, filepath.Join(root, "out", "base.yaml"), []byte("name: base\nextends: default\n"))
	writeFile(t, filepath.Join(proj, "biaslint.yaml"), []byte("ruleset: rules/mine.yaml\n"))
	t.Chdir(proj)
	writeFile(t, filepath.Join(proj, "rules", "mine.yaml"), []byte("name: mine\nextends: ../shared/base.yaml\n"))
	if _, errs, code := runCLI(t, "check", "stage.cir"); code == exitBadInput {
		t.Errorf("extends inside the project folder: exit 2: %s", errs)
	}
	writeFile(t, filepath.Join(proj, "rules", "mine.yaml"), []byte("name: mine\nextends: ../../out/base.yaml\n"))
	if _, errs, code := runCLI(t, "check", "stage.cir"); code != exitBadInput || !strings.Contains(errs, `rule set "../../out/base.yaml": is outside the folders rule sets may extend`) {
		t.Errorf("extends outside the project folder: exit %d, %s", code, errs)
	}
}
