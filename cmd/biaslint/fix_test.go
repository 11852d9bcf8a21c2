package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules/fix"
)

// findingsJSON runs check --format json on one file and returns its findings.
func findingsJSON(t *testing.T, args ...string) []jsonFindingOut {
	t.Helper()
	out, errs, code := runCLI(t, append([]string{"check", "--format", "json"}, args...)...)
	if code == exitBadInput {
		t.Fatalf("check %v: exit %d: %s", args, code, errs)
	}
	var rep struct {
		Results []struct {
			Findings []jsonFindingOut `json:"findings"`
		} `json:"results"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("check %v: %v", args, err)
	}
	if len(rep.Results) != 1 {
		t.Fatalf("check %v: %d results", args, len(rep.Results))
	}
	return rep.Results[0].Findings
}

type jsonFindingOut struct {
	Rule   string `json:"rule"`
	Device string `json:"device"`
	Change *struct {
		Element string   `json:"element"`
		Line    int      `json:"line"`
		Column  int      `json:"column"`
		Old     string   `json:"old"`
		New     string   `json:"new"`
		Series  string   `json:"series"`
		Cases   int      `json:"cases"`
		Clears  []string `json:"clears"`
		Text    string   `json:"text"`
	} `json:"change"`
}

// TestComputedFixesVerified: every fix check computes for the netlists of
// the rule and topology corpora (testdata/check, testdata/roles) is applied to a copy of the netlist's
// text, and check is run again on the copy: the finding it was computed
// for must be gone and no finding may be there that was not before. The
// test also needs the search to find fixes at all, so that it can fail.
func TestComputedFixesVerified(t *testing.T) {
	if testing.Short() {
		t.Skip("solves every corpus netlist several times")
	}
	files, _ := filepath.Glob("testdata/check/*.cir")
	roles, _ := filepath.Glob("testdata/roles/*.cir")
	files = append(files, roles...)
	dir := t.TempDir()
	found, verified := 0, 0
	for _, path := range files {
		before := findingsJSON(t, path)
		was := map[string]bool{}
		for _, f := range before {
			was[f.Rule+" "+f.Device] = true
		}
		src, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		for i, f := range before {
			ch := f.Change
			if ch == nil {
				continue
			}
			found++
			if ch.Cases <= 0 || !strings.Contains(ch.Text, "clears "+f.Rule) {
				t.Errorf("%s: %s on %s: change %+v", path, f.Rule, f.Device, ch)
			}
			text, err := fix.Apply(src, []fix.Edit{{Pos: netlist.Pos{Line: ch.Line, Col: ch.Column}, Old: ch.Old, New: ch.New}})
			if err != nil {
				t.Errorf("%s: %v", path, err)
				continue
			}
			fixed := filepath.Join(dir, strings.TrimSuffix(filepath.Base(path), ".cir")+"-"+string(rune('a'+i))+".cir")
			if err := os.WriteFile(fixed, text, 0o644); err != nil {
				t.Fatal(err)
			}
			after := findingsJSON(t, "--fixes=false", fixed)
			ok := true
			for _, g := range after {
				if g.Rule == f.Rule && g.Device == f.Device {
					t.Errorf("%s: %s does not clear %s on %s", path, ch.Text, f.Rule, f.Device)
					ok = false
				}
				if !was[g.Rule+" "+g.Device] {
					t.Errorf("%s: %s raises %s on %s", path, ch.Text, g.Rule, g.Device)
					ok = false
				}
			}
			if ok {
				verified++
			}
			t.Logf("%s: %s", filepath.Base(path), ch.Text)
		}
	}
	t.Logf("%d fixes found, %d verified by checking the fixed netlist again", found, verified)
	if found < 10 {
		t.Errorf("only %d fixes found in the corpus", found)
	}
}

// A resistor inside a subcircuit used twice: one change of its text fixes
// both instances, and fix writes just that value.
const twoDrivers = `two lamp drivers from a controller, base resistors too large
VCC vcc 0 12
VA a 0 PULSE(0 3.3 0 1u 1u 5m 10m)
VB bb 0 PULSE(0 3.3 0 1u 1u 2m 4m)
X1 a vcc drv
X2 bb vcc drv
.subckt drv ctl sup
RB ctl b 47k
RBE b 0 100k
RLAMP sup c 120
*@device RLAMP power_rating=2
Q1 c b 0 BC337-25
.model BC337-25 NPN (IS=1e-14 BF=250)
.ends
.end
`

func TestFixCommand(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "lamps.cir")
	if err := os.WriteFile(path, []byte(twoDrivers), 0o640); err != nil {
		t.Fatal(err)
	}
	// The preview shows the change and writes nothing.
	out, errs, code := runCLI(t, "fix", "--preview", path)
	if code != exitOK {
		t.Fatalf("fix --preview: exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "-RB ctl b 47k\n+RB ctl b ") || !strings.Contains(out, "(the value of 2 instances)") {
		t.Errorf("preview:\n%s", out)
	}
	if got, _ := os.ReadFile(path); string(got) != twoDrivers {
		t.Fatal("--preview changed the file")
	}
	out, errs, code = runCLI(t, "fix", path)
	if code != exitOK {
		t.Fatalf("fix: exit %d: %s", code, errs)
	}
	got, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	// Only the value's text changed: the rest of the file is as it was.
	i := strings.Index(twoDrivers, "RB ctl b 47k") + len("RB ctl b ")
	newText := string(got[i : i+len(got)-len(twoDrivers)+3])
	if string(got) != twoDrivers[:i]+newText+twoDrivers[i+3:] {
		t.Errorf("fix changed more than the value:\n%s", got)
	}
	if _, ok := fix.ValueText(1000, newText); !ok {
		t.Errorf("new value %q", newText)
	}
	if fi, err := os.Stat(path); err != nil || fi.Mode().Perm() != 0o640 {
		t.Errorf("mode %v %v", fi.Mode(), err)
	}
	for _, f := range findingsJSON(t, path) {
		if f.Rule == "weak-switch-drive" {
			t.Errorf("still weak after fix: %+v\n%s", f, out)
		}
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 1 {
		t.Errorf("temporary files left: %v", entries)
	}
	// Neither can standard input.
	if _, errs, code := runCLI(t, "fix", "-"); code != exitBadInput || !strings.Contains(errs, "standard input cannot be changed") {
		t.Errorf("fix -: exit %d: %s", code, errs)
	}
	// The built-in demo cannot be written.
	if _, errs, code := runCLI(t, "fix", "--demo"); code != exitBadInput || !strings.Contains(errs, "--preview") {
		t.Errorf("fix --demo: exit %d: %s", code, errs)
	}
}

// BenchmarkCheckFixes times check on the weak-switch corpus netlist with
// the computed fix (one finding, searched and verified) and without it.
func BenchmarkCheckFixes(b *testing.B) {
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"with", []string{"biaslint", "check", "testdata/check/weak-switch-drive.bad.cir"}},
		{"without", []string{"biaslint", "check", "--fixes=false", "testdata/check/weak-switch-drive.bad.cir"}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			for b.Loop() {
				var out strings.Builder
				run(tc.args, &out, &out)
			}
		})
	}
}

// twentyDrivers is a board of twenty relay drivers whose base resistors
// are all too large (a demo of our own): twenty findings, more than the
// check's search budget covers.
func twentyDrivers() string {
	var b strings.Builder
	b.WriteString("twenty relay drivers, base resistors too large\nVCC vcc 0 12\n")
	for i := range 20 {
		fmt.Fprintf(&b, "VP%d p%d 0 PULSE(0 3.3 0 1u 1u 5m 10m)\nRB%d p%d b%d 47k\nRBE%d b%d 0 100k\nRC%d vcc c%d 120\n*@device RC%d power_rating=2\nQ%d c%d b%d 0 BC337-25\n",
			i, i, i, i, i, i, i, i, i, i, i, i, i)
	}
	b.WriteString(".model BC337-25 NPN (IS=1e-14 BF=250)\n.end\n")
	return b.String()
}

// BenchmarkCheckFixesTwenty times check on the twenty-driver board with
// and without the computed fixes: the search's budget keeps it to about
// one more check's worth of solving.
func BenchmarkCheckFixesTwenty(b *testing.B) {
	path := filepath.Join(b.TempDir(), "twenty.cir")
	if err := os.WriteFile(path, []byte(twentyDrivers()), 0o644); err != nil {
		b.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"with", []string{"biaslint", "check", path}},
		{"without", []string{"biaslint", "check", "--fixes=false", path}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			for b.Loop() {
				var out strings.Builder
				run(tc.args, &out, &out)
			}
		})
	}
}

// A value in an included file is changed there, and fix says so.
func TestFixIncludedFile(t *testing.T) {
	dir := t.TempDir()
	main := filepath.Join(dir, "panel.cir")
	inc := filepath.Join(dir, "driver.inc")
	if err := os.WriteFile(main, []byte("panel lamp driver\nVCC vcc 0 12\nVA a 0 PULSE(0 3.3 0 1u 1u 5m 10m)\n.include driver.inc\nX1 a vcc drv\n.end\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	lib := ".subckt drv ctl sup\nRB ctl b 47k\nRBE b 0 100k\nRLAMP sup c 120\n*@device RLAMP power_rating=2\nQ1 c b 0 BC337-25\n.model BC337-25 NPN (IS=1e-14 BF=250)\n.ends\n"
	if err := os.WriteFile(inc, []byte(lib), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errs, code := runCLI(t, "fix", main)
	if code != exitOK || !strings.Contains(out, "(in an included file)") {
		t.Fatalf("fix: exit %d: %s%s", code, out, errs)
	}
	got, _ := os.ReadFile(inc)
	if string(got) == lib || !strings.HasPrefix(string(got), ".subckt drv ctl sup\nRB ctl b ") {
		t.Errorf("included file:\n%s", got)
	}
}

// BenchmarkClassOf200Fixes times a text check of the class of 200 lab
// boards (batch_test.go) with the computed fixes, against --fixes=false.
func BenchmarkClassOf200Fixes(b *testing.B) {
	dir := b.TempDir()
	writeClass(b, dir, 200)
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"with", []string{"biaslint", "check", dir}},
		{"without", []string{"biaslint", "check", "--fixes=false", dir}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			for b.Loop() {
				var out strings.Builder
				run(tc.args, &out, &out)
			}
		})
	}
}
