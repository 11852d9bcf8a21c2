package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"
)

// touch writes a file, making its directory.
func touch(t testing.TB, path, text string) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

func TestExpandArgs(t *testing.T) {
	dir := t.TempDir()
	for _, p := range []string{"b.cir", "a.NET", "sub/c.sp", "sub/d.spice", "sub/e.spi", "sub/f.ckt", "notes.txt", ".hidden/g.cir", "x/readme.md"} {
		touch(t, filepath.Join(dir, p), "t\n.end\n")
	}
	j := func(ps ...string) []string {
		var out []string
		for _, p := range ps {
			out = append(out, filepath.Join(dir, p))
		}
		return out
	}
	for _, tc := range []struct {
		name string
		args []string
		want []string
		err  string
	}{
		{"directory: every netlist extension, sorted, hidden skipped", []string{dir},
			j("a.NET", "b.cir", "sub/c.sp", "sub/d.spice", "sub/e.spi", "sub/f.ckt"), ""},
		{"glob, sorted", []string{filepath.Join(dir, "sub", "*.sp*")}, j("sub/c.sp", "sub/d.spice", "sub/e.spi"), ""},
		{"glob matching a directory walks it", []string{filepath.Join(dir, "su?")}, j("sub/c.sp", "sub/d.spice", "sub/e.spi", "sub/f.ckt"), ""},
		{"files keep their order, a repeat is read once", []string{filepath.Join(dir, "sub/f.ckt"), filepath.Join(dir, "b.cir"), filepath.Join(dir, "sub", "..", "b.cir")},
			j("sub/f.ckt", "b.cir"), ""},
		{"an explicit file of any extension", []string{filepath.Join(dir, "notes.txt")}, j("notes.txt"), ""},
		{"a missing file is left for the reader to report", []string{filepath.Join(dir, "nope.cir")}, j("nope.cir"), ""},
		{"empty directory", []string{filepath.Join(dir, "x")}, nil, "no netlist files"},
		{"glob without a match", []string{filepath.Join(dir, "*.nothing")}, nil, "no file matches"},
		{"bad pattern", []string{filepath.Join(dir, "[")}, nil, "bad pattern"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := expandArgs(tc.args)
			if tc.err != "" {
				if err == nil || !strings.Contains(err.Error(), tc.err) {
					t.Fatalf("err = %v, want %q", err, tc.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if strings.Join(got, "\n") != strings.Join(tc.want, "\n") {
				t.Errorf("got\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(tc.want, "\n"))
			}
		})
	}
}

// The lab circuit of a class: a common-emitter amplifier with a base
// divider and an emitter resistor (VCC 12 V, R1 82k, R2 15k, RC 4.7k, RE
// 1k: VB = 12*15/97 = 1.86 V, IE = (1.86 - 0.65)/1k = 1.2 mA, VCE = 12 -
// 1.2 mA*5.7k = 5.1 V, hand estimate with VBE about 0.65 V, common
// practice). Each student's resistors differ by up to 8 %, which keeps VCE
// between about 3 and 7 V; some boards carry one of the classic mistakes.
const labCircuit = `Lab 3 common-emitter amplifier, student %03d (%s)
VCC vcc 0 12
VIN in 0 SIN(0 10m 1k)
CIN in b 10u
%sR2 b 0 %s
RC vcc c %s
%sQ1 c b %s LAB_NPN
*@device Q1 role=linear
.model LAB_NPN NPN (IS=1e-14 BF=200 VAF=100)
*@part LAB_NPN vceo=40 vcbo=60 vebo=6 icmax=200m pd=500m tjmax=150 rthja=250 hfemin=100 hfemax=300
.end
`

// labMistake is one kind of board in the class and the per-file counts the
// default rules give it, by hand:
//   - sound: no findings (VCE 3-7 V, forward-active, degenerated, divider
//     stiff against the base current, a 10 mV input times a gain of about
//     RC/RE = 4.7 far inside the headroom);
//   - swapped divider (R1 and R2 exchanged): the base sits near 10 V and
//     the stage saturates, IC = 12 V/(RC+RE) = 2.1 mA at VCE near 0: one
//     saturated-linear-stage warning;
//   - no top resistor: nothing biases the base, IC is leakage: one
//     cutoff-linear-stage warning;
//   - collector resistor ten times too large: IC*RC would exceed the
//     supply, so the stage saturates: one saturated-linear-stage warning;
//   - no emitter resistor: one no-emitter-degeneration warning, and the
//     divider's 1.86 V straight on the base drives IB = (1.86 - 0.7)/12.7k
//     = 91 uA, far more than RC allows, so it also saturates: two warnings.
type labMistake struct {
	name                    string
	errors, warnings, notes int
	top                     string
	swapped, noR1, noRE     bool
	rcFactor                float64
}

var labMistakes = []labMistake{
	{name: "sound", rcFactor: 1},
	{name: "swapped divider", warnings: 1, top: "saturated-linear-stage", swapped: true, rcFactor: 1},
	{name: "no top resistor", warnings: 1, top: "cutoff-linear-stage", noR1: true, rcFactor: 1},
	{name: "RC ten times too large", warnings: 1, top: "saturated-linear-stage", rcFactor: 10},
	{name: "no emitter resistor", warnings: 2, top: "no-emitter-degeneration", noRE: true, rcFactor: 1},
}

// classBoard is one generated netlist and the mistake it carries.
type classBoard struct {
	path    string
	mistake labMistake
}

// writeClass writes n variants of the lab circuit into dir, about a third
// of them with a mistake, from a fixed seed.
func writeClass(t testing.TB, dir string, n int) []classBoard {
	rng := rand.New(rand.NewPCG(2024, 3))
	vary := func(v float64) string { return fmt.Sprintf("%.4g", v*(0.92+0.16*rng.Float64())) }
	var out []classBoard
	for i := 1; i <= n; i++ {
		m := labMistakes[0]
		if rng.IntN(3) == 0 {
			m = labMistakes[1+rng.IntN(len(labMistakes)-1)]
		}
		r1, r2, rc, re := vary(82e3), vary(15e3), vary(4.7e3*m.rcFactor), vary(1e3)
		if m.swapped {
			r1, r2 = r2, r1
		}
		top := "R1 vcc b " + r1 + "\n"
		if m.noR1 {
			top = ""
		}
		emitter, reLine := "e", "RE e 0 "+re+"\n"
		if m.noRE {
			emitter, reLine = "0", ""
		}
		path := filepath.Join(dir, fmt.Sprintf("group%d", i%4), fmt.Sprintf("student%03d.cir", i))
		touch(t, path, fmt.Sprintf(labCircuit, i, m.name, top, r2, rc, reLine, emitter))
		out = append(out, classBoard{path: path, mistake: m})
	}
	return out
}

// A class of 200 boards checked in one command gives, per file, the counts
// its seeded mistake should give, in path order.
func TestClassOf200(t *testing.T) {
	dir := t.TempDir()
	boards := writeClass(t, dir, 200)
	start := time.Now()
	out, errs, code := runCLI(t, "check", "--summary", "csv", dir)
	elapsed := time.Since(start)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	t.Logf("200 boards checked in %v (GOMAXPROCS %d)", elapsed, runtime.GOMAXPROCS(0))
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 201 {
		t.Fatalf("%d rows, want a header and 200", len(recs))
	}
	want := map[string]labMistake{}
	kinds := map[string]int{}
	for _, b := range boards {
		want[b.path] = b.mistake
		kinds[b.mistake.name]++
	}
	if len(kinds) != len(labMistakes) {
		t.Fatalf("the class has %d kinds of board, want all %d: %v", len(kinds), len(labMistakes), kinds)
	}
	prev := ""
	for _, r := range recs[1:] {
		path, m := r[0], want[r[0]]
		if m.name == "" {
			t.Fatalf("row for unknown file %s", path)
		}
		if path <= prev {
			t.Errorf("%s after %s: not in path order", path, prev)
		}
		prev = path
		got := strings.Join([]string{r[2], r[3], r[4], r[5], r[7]}, " ")
		exp := fmt.Sprintf("1 %d %d %d %s", m.errors, m.warnings, m.notes, m.top)
		if got != exp {
			t.Errorf("%s (%s): transistors, errors, warnings, notes, top rule = %s, want %s", path, m.name, got, exp)
		}
	}

	// One CSV row per finding, and the text report's closing table.
	out, _, _ = runCLI(t, "check", "--format", "csv", dir)
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	nf := 0
	for _, b := range boards {
		nf += b.mistake.warnings + b.mistake.errors
	}
	if len(rows)-1 != nf {
		t.Errorf("%d finding rows, want %d", len(rows)-1, nf)
	}
	out, _, _ = runCLI(t, "check", dir)
	tail := out[strings.LastIndex(out, "file "):]
	if !strings.Contains(tail, "most frequent rule") || !strings.Contains(tail, "total (200 files)") || strings.Count(tail, "student") != 200 {
		t.Errorf("text report does not end with the per-file table:\n%.600s", tail)
	}
}

// The same batch gives the same bytes on one core and on several.
func TestBatchDeterministic(t *testing.T) {
	dir := t.TempDir()
	writeClass(t, dir, 24)
	prev := runtime.GOMAXPROCS(1)
	defer runtime.GOMAXPROCS(prev)
	var outs []string
	for _, procs := range []int{1, 2, 4} {
		runtime.GOMAXPROCS(procs)
		for _, f := range []string{"text", "json", "csv"} {
			out, _, _ := runCLI(t, "check", "--format", f, dir)
			outs = append(outs, out)
		}
	}
	for i := 3; i < len(outs); i++ {
		if outs[i] != outs[i%3] {
			t.Errorf("output %d differs between GOMAXPROCS settings", i)
		}
	}
}

func TestBatchUsage(t *testing.T) {
	empty := t.TempDir()
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"check", empty}, "no netlist files"},
		{[]string{"check", filepath.Join(empty, "*.cir")}, "no file matches"},
		{[]string{"check", "--summary", "xml", "--demo"}, "--summary must be"},
		{[]string{"check", "--format", "html", "--demo"}, "--format must be"},
		{[]string{"report", empty}, "no netlist files"},
	} {
		t.Run(strings.Join(tc.args, " "), func(t *testing.T) {
			_, errs, code := runCLI(t, tc.args...)
			if code != exitBadInput || !strings.Contains(errs, tc.want) {
				t.Errorf("exit %d, stderr %q; want 2 and %q", code, errs, tc.want)
			}
		})
	}
	// A netlist that cannot be read does not stop the batch: its located
	// error is in its own result, the file after it is reported in full,
	// and the exit status is 2.
	dir := t.TempDir()
	touch(t, filepath.Join(dir, "a.cir"), "t\nQ1 c b\n.end\n")
	touch(t, filepath.Join(dir, "b.cir"), "t\nV1 a 0 1\nR1 a 0 1k\n.end\n")
	out, errs, code := runCLI(t, "check", dir)
	if code != exitBadInput || !strings.Contains(out, "a.cir:2") || !strings.Contains(out, "b.cir: 0 transistors") ||
		!strings.Contains(errs, "1 of 2 files could not be checked") {
		t.Errorf("exit %d, stdout %q, stderr %q; want 2, a located error in a.cir and b.cir reported", code, out, errs)
	}
}

// BenchmarkClassOf200 times checking a class of 200 boards (the target is
// under 5 s on two cores).
func BenchmarkClassOf200(b *testing.B) {
	dir := b.TempDir()
	writeClass(b, dir, 200)
	for b.Loop() {
		var out strings.Builder
		if code := run([]string{"biaslint", "check", "--summary", "csv", dir}, &out, &out); code != exitOK {
			b.Fatalf("exit %d: %s", code, out.String())
		}
	}
}

// BenchmarkClassReport200 times the HTML report of the same class (200
// files, 200 plots, the grid).
func BenchmarkClassReport200(b *testing.B) {
	dir := b.TempDir()
	writeClass(b, dir, 200)
	html := filepath.Join(b.TempDir(), "class.html")
	for b.Loop() {
		var out strings.Builder
		if code := run([]string{"biaslint", "report", "--output", html, dir}, &out, &out); code != exitOK {
			b.Fatalf("exit %d: %s", code, out.String())
		}
	}
}

// A class folder as it comes: a sound board, a library of shared models
// (no circuit), a board with typos, a board one of whose cases has no DC
// operating point, and a board with the stage file it includes. Every
// good result is reported, every problem is located in its own file's
// result, and the exit status is 2 (a file could not be judged); the
// report formats agree on each file's status.
func TestMixedBatch(t *testing.T) {
	const dir = "testdata/batch"
	status := map[string]string{
		"testdata/batch/broken.cir": "input-errors",
		"testdata/batch/faulty.cir": "checked",
		"testdata/batch/good.cir":   "checked",
		"testdata/batch/models.spi": "library",
		"testdata/batch/stage.sp":   "included",
		"testdata/batch/top.cir":    "checked",
	}
	for _, f := range []string{"text", "json", "sarif"} {
		out, errs, code := runCLI(t, "check", "--format", f, dir)
		if code != exitBadInput {
			t.Errorf("%s: exit %d, want 2 (a file could not be judged); stderr %s", f, code, errs)
		}
		golden(t, "batch-mixed."+f, out)
		wants := []string{
			"broken.cir:3:10", "4.7.7k", "broken.cir:4:1", // both typos, located
			"cases VDRV high, VDRV high/hfe min", "unjudged", "tried newton", // the unsolvable cases, named, and what was tried
		}
		if f == "sarif" { // locations are structured
			wants[0], wants[2] = `"startColumn": 10`, `"uri": "testdata/batch/broken.cir"`
		}
		for _, w := range wants {
			if !strings.Contains(out, w) {
				t.Errorf("%s report does not name %q", f, w)
			}
		}
		if f != "text" && !strings.Contains(errs, "broken.cir:3:10:") {
			t.Errorf("%s: stderr does not repeat the located errors: %q", f, errs)
		}
	}
	// JSON names each unjudged case with its reason.
	js, _, _ := runCLI(t, "check", "--format", "json", dir)
	var rep struct {
		Results []struct {
			File     string                          `json:"file"`
			Unjudged []struct{ Case, Reason string } `json:"unjudged_cases"`
		} `json:"results"`
	}
	if err := json.Unmarshal([]byte(js), &rep); err != nil {
		t.Fatal(err)
	}
	for _, r := range rep.Results {
		if r.File != "testdata/batch/faulty.cir" {
			continue
		}
		if len(r.Unjudged) == 0 || r.Unjudged[0].Case != "VDRV high" || !strings.Contains(r.Unjudged[0].Reason, "tried newton") {
			t.Errorf("faulty.cir unjudged_cases %+v; want VDRV high first, with what was tried", r.Unjudged)
		}
	}
	// The per-file summary: one row per file, with its status.
	out, _, code := runCLI(t, "check", "--summary", "csv", dir)
	if code != exitBadInput {
		t.Errorf("summary csv: exit %d, want 2", code)
	}
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != len(status)+1 {
		t.Fatalf("%d summary rows, want %d and a header:\n%s", len(recs)-1, len(status), out)
	}
	for _, r := range recs[1:] {
		if want := status[r[0]]; r[8] != want {
			t.Errorf("%s: status %q, want %q", r[0], r[8], want)
		}
		if r[0] == "testdata/batch/broken.cir" && !strings.Contains(r[9], "broken.cir:3:10") {
			t.Errorf("broken.cir: problem %q does not locate the error", r[9])
		}
		if r[0] == "testdata/batch/good.cir" && r[2] != "1" {
			t.Errorf("good.cir: %s transistors, want 1", r[2])
		}
	}
	// The review page is still written, with the good files on it.
	page := filepath.Join(t.TempDir(), "class.html")
	if _, errs, code := runCLI(t, "report", "--output", page, dir); code != exitBadInput {
		t.Errorf("report: exit %d, want 2; stderr %s", code, errs)
	}
	b, err := os.ReadFile(page)
	if err != nil {
		t.Fatalf("report wrote no page: %v", err)
	}
	for _, w := range []string{"good.cir", "top.cir", "broken.cir:3:10", "library", "(input-errors)"} {
		if !strings.Contains(string(b), w) {
			t.Errorf("review page does not show %q", w)
		}
	}
}
