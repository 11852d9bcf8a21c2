package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/rules"
	"github.com/biaslint/biaslint/rules/report"
)

// This file runs the corpus of malformed inputs in testdata/bad. Each case
// names its command line, the exit status it must end with and words the
// message must name (the offending text); what biaslint prints is compared
// with testdata/bad/<case>.golden (rewrite with -update). Inputs too big to
// commit (a 50 MB file, a 1 MB line, a deep include chain) are generated
// into t.TempDir() at run time, and that directory prints as $TMP.

// badCase is one malformed input.
type badCase struct {
	name string
	// args is the command line after "biaslint"; gen, when set, writes the
	// input into dir first and returns the command line.
	args []string
	gen  func(t *testing.T, dir string) []string
	// code is the exit status: 2 for input that cannot be read, 0 or 1 for
	// input that is legal but odd (with a located warning).
	code int
	// want lists text the message must contain: the offending token or
	// name, so the user knows what to fix.
	want []string
	// unlocated allows a message without file:line:col (command-line
	// problems that have no place in a file).
	unlocated bool
}

const (
	good   = "testdata/check/floating-base.bad.cir"
	badDir = "testdata/bad"
)

func netlistCase(name string, code int, want ...string) badCase {
	return badCase{name: name, args: []string{"check", filepath.Join(badDir, name+".cir")}, code: code, want: want}
}

func rulesetCase(name string, want ...string) badCase {
	return badCase{name: name, args: []string{"check", "--ruleset", filepath.Join(badDir, name+".yaml"), good}, code: 2, want: want}
}

func boardCase(name string, code int, want ...string) badCase {
	return badCase{name: name, args: []string{"check", "--board", filepath.Join(badDir, name+".yaml"), good}, code: code, want: want}
}

var badCases = []badCase{
	// Netlist syntax and values.
	netlistCase("unknown-element", 2, ":4:1:", "'W'", "W1"),
	netlistCase("missing-nodes", 2, ":3:1:", "R1", "found 1"),
	netlistCase("value-dots", 2, ":3:8:", `"1.2.3k"`),
	netlistCase("value-word", 2, ":3:8:", "abc"),
	netlistCase("value-nan", 2, ":2:8:", `"NaN"`),
	netlistCase("value-overflow", 2, ":3:8:", `"1e999"`),
	netlistCase("value-zero-resistor", 2, ":3:1:", "R1", "V1", "zero-ohm"),
	// Values whose letters are often misread: read as SPICE reads them, with an alert in the default report.
	netlistCase("value-letters", 0, ":6:8:", "1M is 1 milliohm", "1MEG"),
	{name: "set-share-plain", args: []string{"check", "--set", "vceo_share=80", good}, code: 2, want: []string{"vceo_share", "80%"}, unlocated: true},
	netlistCase("parens-open", 2, ":2:11:", "'('"),
	netlistCase("parens-continuation", 2, ":2:15:", "'('"),
	netlistCase("parens-extra-close", 2, ":3:10:", "')'"),
	netlistCase("continuation-first", 2, ":2:1:", "'+'"),
	netlistCase("duplicate-names", 2, ":4:1:", "R1", ":3:1"),
	netlistCase("source-missing-value", 2, ":2:8:", "V1", "DC"),
	{name: "text-after-end", args: []string{"check", "--notes", "testdata/bad/text-after-end.cir"}, code: 0, want: []string{":5:1:", "after .end"}},
	netlistCase("param-undefined", 2, ":4:9:", "rlaod"),
	netlistCase("param-cycle", 2, "a -> b -> a"),
	netlistCase("expr-malformed", 2, ":3:8:", "{2*(1k+}"),
	netlistCase("expr-unclosed-brace", 2, ":3:8:", "'{'"),
	netlistCase("expr-divzero", 2, ":4:8:", "{1k/r}"),
	// Models and subcircuits.
	netlistCase("model-undefined", 2, ":5:12:", "NOSUCH"),
	netlistCase("model-wrong-type", 2, ":5:12:", "DMOD", "NPN or PNP"),
	netlistCase("model-unknown-type", 2, ":4:1:", "M1"),
	netlistCase("subckt-ports", 2, ":7:1:", "DIV", "2 ports", "3 nets"),
	netlistCase("subckt-missing", 2, ":3:8:", "NOSUCH"),
	netlistCase("subckt-recursive", 2, ":4:1:", "LOOP -> LOOP"),
	netlistCase("subckt-mutual", 2, "PING -> PONG -> PING"),
	netlistCase("ends-without-subckt", 2, ":4:1:", ".ends"),
	netlistCase("subckt-unclosed", 2, ":3:1:", "DIV", ".ends"),
	// Files and includes.
	netlistCase("include-missing", 2, ":2:10:", "models/nosuch.lib"),
	netlistCase("include-self", 2, ":2:10:", "include-self.cir"),
	netlistCase("include-cycle", 2, "include-cycle-b.inc:2:10:", "include-cycle.cir"),
	netlistCase("empty", 2, "empty.cir:1:1:"),
	netlistCase("title-only", 2, "title-only.cir:1:1:"),
	netlistCase("comments-only", 2, "comments-only.cir:1:1:"),
	netlistCase("binary", 2, ":2:1:", "0x00"),
	netlistCase("binary-png", 2, ":2:1:", "0x1a"),
	{name: "missing-file", args: []string{"check", "testdata/bad/no-such-file.cir"}, code: 2, want: []string{"no-such-file.cir: ", "no such file"}, unlocated: true},
	// Circuit topology the solver cannot solve.
	// Nodes reached only through capacitors are tied down by GMIN, with a note.
	{name: "floating-node", args: []string{"check", "--notes", "testdata/bad/floating-node.cir"}, code: 0, want: []string{":4:1:", "mid", "C1", "GMIN"}},
	netlistCase("no-ground", 2, ":2:1:", "ground"),
	netlistCase("vsource-loop", 2, ":3:1:", "V1", "V2"),
	netlistCase("inductor-loop", 2, ":3:1:", "L1", "V1"),
	netlistCase("isource-cutset", 2, ":4:1:", "I1", "net c"),
	netlistCase("isource-series", 2, ":2:1:", "I1", "I2"),
	netlistCase("solver-no-convergence", 2, ":4:1:", "no DC operating point", "D1", "Q1"),
	netlistCase("solver-temperature", 2, ":5:1:", "Q1", "QX"),
	// Limits.
	netlistCase("limit-elements", 2, ":3:1:", "200000 elements"),
	netlistCase("limit-subckt-depth", 2, "X1", "limit of 32"),
	netlistCase("limit-errors", 2, "(and 10 more errors)"),
	{name: "limit-file-size", gen: genBigFile, code: 2, want: []string{"$TMP/big.cir:1:1:", "limit"}},
	{name: "limit-line-length", gen: genLongLine, code: 2, want: []string{"$TMP/line.cir:3:1:", "limit of 1048576 bytes"}},
	{name: "limit-solver-size", gen: genArray, code: 2, want: []string{"$TMP/array.cir:1:1:", "270000 unknowns", "250000"}},
	{name: "limit-include-depth", gen: genIncludeChain, code: 2, want: []string{"$TMP/inc16.inc:2:10:", "limit of 16"}},
	// Annotations: legal netlists whose annotations are odd give located warnings.
	netlistCase("annotation-bad", 0, ":8:11:", "4.7.7k", "Q9", "amplifier", "*@colour"),
	netlistCase("waiver-unknown-rule", 0, ":8:1:", `"no-such-rule"`),
	// Rule sets.
	rulesetCase("ruleset-yaml-syntax", "ruleset-yaml-syntax.yaml:2:1:"),
	rulesetCase("ruleset-yaml-tab", "ruleset-yaml-tab.yaml:3:1:"),
	rulesetCase("ruleset-unknown-key", ":7:5:", `"mesage"`),
	rulesetCase("ruleset-expr-syntax", ":6:20:", `"vce < (1 +"`),
	rulesetCase("ruleset-expr-type", ":6:11:", "bool"),
	rulesetCase("ruleset-expr-unknown-fact", ":6:11:", "vcesat"),
	rulesetCase("ruleset-template-unclosed", ":7:15:", `"{"`),
	rulesetCase("ruleset-extends-missing", ":2:10:", "no-such-parent.yaml"),
	rulesetCase("ruleset-extends-self", ":2:10:", "ruleset-extends-self.yaml"),
	rulesetCase("ruleset-empty", ":1:1:", "empty"),
	rulesetCase("ruleset-not-mapping", ":1:1:", "mapping"),
	rulesetCase("ruleset-bad-param", ":4:15:", "1.2.3%"),
	rulesetCase("ruleset-unknown-param", ":6:23:", `"nosuch"`),
	rulesetCase("ruleset-huge-expr", ":6:", "nodes"),
	rulesetCase("ruleset-bad-severity", ":4:12:", `"fatal"`),
	{name: "ruleset-unknown-name", args: []string{"check", "--ruleset", "no-such-set", good}, code: 2, want: []string{`"no-such-set"`}, unlocated: true},
	{name: "parts-bad", args: []string{"check", "--parts", "testdata/bad/parts-bad.yaml", good}, code: 2, want: []string{"parts-bad.yaml:1:1:"}},
	// Board files.
	boardCase("board-yaml-syntax", 2, ":2:1:", "YAML"),
	boardCase("board-unknown-key", 2, ":2:1:", `"boards"`),
	boardCase("board-unknown-device", 2, ":2:3:", "Q9"),
	boardCase("board-bad-value", 2, ":2:25:", `"4.7.7k"`),
	boardCase("board-bad-ambient", 2, ":1:10:", `"hot"`),
	boardCase("board-nan", 2, ":1:10:", `".nan"`, `".inf"`),
	boardCase("board-waiver-no-reason", 2, ":2:5:", "floating-base", "reason"),
	boardCase("board-waiver-unknown-rule", 0, ":2:5:", `"flaoting-base"`),
	// Output that cannot be written.
	{name: "output-no-dir", args: []string{"check", "--output", "testdata/bad/no-such-dir/report.txt", good}, code: 2,
		want: []string{"testdata/bad/no-such-dir/report.txt"}, unlocated: true},
}

// located is the shape of every message line about input: file:line:col.
var located = regexp.MustCompile(`^\S+:\d+:\d+: |^\(and \d+ more errors\)$`)

// nonFinite finds NaN or Inf printed as a number.
var nonFinite = regexp.MustCompile(`(?i)(^|[^a-z])[+-]?(nan|inf)([^a-z]|$)`)

func TestBadInputs(t *testing.T) {
	if len(badCases) < 40 {
		t.Fatalf("the malformed corpus has %d cases, want at least 40", len(badCases))
	}
	seen := map[string]bool{}
	for _, tc := range badCases {
		if seen[tc.name] {
			t.Fatalf("case %s listed twice", tc.name)
		}
		seen[tc.name] = true
		t.Run(tc.name, func(t *testing.T) {
			args := tc.args
			dir := ""
			if tc.gen != nil {
				dir = t.TempDir()
				args = tc.gen(t, dir)
			}
			out, errs, code := runCLI(t, args...)
			if dir != "" {
				out = strings.ReplaceAll(out, dir, "$TMP")
				errs = strings.ReplaceAll(errs, dir, "$TMP")
			}
			if code != tc.code {
				t.Errorf("exit status %d, want %d\nstderr: %s", code, tc.code, errs)
			}
			if strings.Contains(errs, "goroutine ") || strings.Contains(errs, "panic") {
				t.Errorf("stack trace on stderr:\n%s", errs)
			}
			msg := errs
			if tc.code == exitBadInput {
				if out != "" {
					t.Errorf("stdout not empty on bad input: %q", out)
				}
				if strings.TrimSpace(errs) == "" {
					t.Error("no message on stderr")
				}
				for _, ln := range strings.Split(strings.TrimRight(errs, "\n"), "\n") {
					if !tc.unlocated && !located.MatchString(ln) {
						t.Errorf("message line without file:line:col: %q", ln)
					}
				}
			} else {
				msg = errs + out
				if nonFinite.MatchString(out) {
					t.Errorf("report prints a non-finite number:\n%s", out)
				}
			}
			for _, w := range tc.want {
				if !strings.Contains(msg, w) {
					t.Errorf("message does not name %q:\n%s", w, msg)
				}
			}
			got := fmt.Sprintf("$ biaslint %s\nexit %d\n%s", strings.Join(args, " "), code, errs)
			if tc.code != exitBadInput {
				got += "--- stdout\n" + out
			}
			if dir != "" {
				got = strings.ReplaceAll(got, dir, "$TMP")
			}
			badGolden(t, tc.name, got)
		})
	}
}

// badGolden compares got with testdata/bad/name.golden, or rewrites it
// with -update, through the golden helper of main_test.go.
func badGolden(t *testing.T, name, got string) {
	t.Helper()
	golden(t, filepath.Join("..", "bad", name+".golden"), got)
}

// genBigFile writes a 50 MB netlist of resistor lines, over the file size
// limit.
func genBigFile(t *testing.T, dir string) []string {
	path := filepath.Join(dir, "big.cir")
	var b bytes.Buffer
	b.WriteString("Fifty megabytes of resistors\nV1 n0 0 5\n")
	for i := 0; b.Len() < 50_000_000; i++ {
		fmt.Fprintf(&b, "R%d n%d n%d 1k\n", i, i, i+1)
	}
	writeFile(t, path, b.Bytes())
	return []string{"check", path}
}

// genLongLine writes a netlist with one line of 1 MiB and a bit.
func genLongLine(t *testing.T, dir string) []string {
	path := filepath.Join(dir, "line.cir")
	src := "One line longer than the limit\nV1 a 0 5\nR1 a 0 1k " + strings.Repeat("x", 1<<20) + "\nR2 a 0 1k\n.end\n"
	writeFile(t, path, []byte(src))
	return []string{"check", path}
}

// genArray writes 45000 transistors whose model has RB, RC and RE, each
// on nets of its own: three node and three internal-node unknowns each,
// 270000 in all, past the solver's 250000, in a file of about 1.3 MB.
func genArray(t *testing.T, dir string) []string {
	var b strings.Builder
	b.WriteString("Transistor array too large for the solver\n.model QR NPN(RB=100 RC=10 RE=1)\n")
	for i := 0; i < 45000; i++ {
		fmt.Fprintf(&b, "Q%d c%d b%d e%d QR\n", i, i, i, i)
	}
	b.WriteString(".end\n")
	path := filepath.Join(dir, "array.cir")
	writeFile(t, path, []byte(b.String()))
	return []string{"op", path}
}

// genIncludeChain writes top.cir including inc1.inc including inc2.inc
// and so on, 20 deep: past the include depth limit of 16.
func genIncludeChain(t *testing.T, dir string) []string {
	writeFile(t, filepath.Join(dir, "top.cir"), []byte("Include chain 20 deep\n.include inc1.inc\nV1 a 0 5\nR1 a 0 1k\n.end\n"))
	for i := 1; i <= 20; i++ {
		writeFile(t, filepath.Join(dir, fmt.Sprintf("inc%d.inc", i)),
			[]byte(fmt.Sprintf("* level %d\n.include inc%d.inc\nR%d a 0 1k\n", i, i+1, 100+i)))
	}
	return []string{"check", filepath.Join(dir, "top.cir")}
}

func writeFile(t *testing.T, path string, data []byte) {
	t.Helper()
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestOutputFile: --output writes exactly what stdout would get, for every
// command and format, and leaves no temporary file behind.
func TestOutputFile(t *testing.T) {
	for _, args := range [][]string{
		{"check", "--format", "text", good}, {"check", "--format", "json", good}, {"check", "--format", "sarif", good},
		{"op", "--format", "text", "--demo"}, {"op", "--format", "json", "--demo"}, {"rules"},
	} {
		t.Run(strings.Join(args, " "), func(t *testing.T) {
			want, _, code := runCLI(t, args...)
			dir := t.TempDir()
			path := filepath.Join(dir, "report.out")
			withOut := append([]string{args[0], "--output", path}, args[1:]...)
			out, errs, code2 := runCLI(t, withOut...)
			if code2 != code || out != "" {
				t.Fatalf("with --output: exit %d (want %d), stdout %q, stderr %q", code2, code, out, errs)
			}
			got, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			if string(got) != want {
				t.Errorf("--output file differs from stdout:\n%s\n--- stdout\n%s", got, want)
			}
			onlyFiles(t, dir, "report.out")
		})
	}
}

// TestOutputFailure: a run that fails leaves no report and no temporary
// file, and an existing report is left as it was.
func TestOutputFailure(t *testing.T) {
	for _, f := range []string{"text", "json", "sarif"} {
		for _, in := range [][]string{
			{"testdata/bad/vsource-loop.cir"},
			{"--ruleset", "testdata/bad/ruleset-expr-type.yaml", good},
			{"--board", "testdata/bad/board-yaml-syntax.yaml", good},
		} {
			dir := t.TempDir()
			fresh := filepath.Join(dir, "fresh."+f)
			old := filepath.Join(dir, "old."+f)
			writeFile(t, old, []byte("previous report\n"))
			for _, path := range []string{fresh, old} {
				args := append([]string{"check", "--format", f, "--output", path}, in...)
				out, errs, code := runCLI(t, args...)
				if code != exitBadInput || out != "" || errs == "" {
					t.Errorf("%v: exit %d, stdout %q, stderr %q; want 2, nothing, a message", args, code, out, errs)
				}
			}
			if _, err := os.Stat(fresh); !os.IsNotExist(err) {
				t.Errorf("%s %v: a failed run left %s (%v)", f, in, fresh, err)
			}
			if b, _ := os.ReadFile(old); string(b) != "previous report\n" {
				t.Errorf("%s %v: a failed run changed the existing report to %q", f, in, b)
			}
			onlyFiles(t, dir, "old."+f)
		}
	}
}

// onlyFiles fails unless dir holds exactly the named files.
func onlyFiles(t *testing.T, dir string, names ...string) {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, e := range ents {
		got = append(got, e.Name())
	}
	if strings.Join(got, " ") != strings.Join(names, " ") {
		t.Errorf("%s holds %v, want only %v", dir, got, names)
	}
}

// TestReportNonFinite: a finding carrying NaN or Inf (which Evaluate never
// makes; see FuzzEvaluate) must not give half-written JSON or SARIF: the
// writer fails before writing anything, or writes valid JSON with no
// non-finite number in it.
func TestReportNonFinite(t *testing.T) {
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		f := rules.Finding{Rule: "r", Severity: rules.SeverityError, Device: "Q1", Message: "m",
			Value: v, Limit: v, HasLimit: true, Values: []rules.Quantity{{Value: v}}}
		r := &report.Report{Files: []report.File{{Path: "x.cir", Findings: []rules.Finding{f}}}, Version: toolVersion()}
		for name, write := range map[string]func(*bytes.Buffer) error{
			"json":  func(b *bytes.Buffer) error { return report.JSON(b, r) },
			"sarif": func(b *bytes.Buffer) error { return report.SARIF(b, r) },
		} {
			var b bytes.Buffer
			err := write(&b)
			switch {
			case err != nil && b.Len() > 0:
				t.Errorf("%s with %g: error %v after writing %d bytes", name, v, err, b.Len())
			case err == nil && !json.Valid(b.Bytes()):
				t.Errorf("%s with %g: invalid JSON:\n%s", name, v, b.Bytes())
			case err == nil && nonFinite.Match(b.Bytes()):
				t.Errorf("%s with %g: non-finite number in output:\n%s", name, v, b.Bytes())
			}
		}
	}
}
