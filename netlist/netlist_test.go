package netlist

import (
	"errors"
	"fmt"
	"io/fs"
	"math"
	"strings"
	"testing"
)

// memFS returns LoadOptions reading from an in-memory file set.
func memFS(files map[string]string) *LoadOptions {
	return &LoadOptions{ReadFile: func(name string) ([]byte, error) {
		s, ok := files[name]
		if !ok {
			return nil, fs.ErrNotExist
		}
		return []byte(s), nil
	}}
}

// mustMention fails unless err's text contains every want.
func mustMention(t *testing.T, err error, want ...string) {
	t.Helper()
	if err == nil {
		t.Fatalf("no error, want one mentioning %q", want)
	}
	for _, w := range want {
		if !strings.Contains(err.Error(), w) {
			t.Errorf("error %q does not mention %q", err, w)
		}
	}
}

func TestIncludeDepthLimit(t *testing.T) {
	files := map[string]string{"top.cir": "deep includes\n.include f1.inc\nR1 a 0 1\n"}
	for i := 1; i <= 20; i++ {
		files[fmt.Sprintf("f%d.inc", i)] = fmt.Sprintf(".include f%d.inc\n", i+1)
	}
	files["f21.inc"] = "R2 a 0 1\n"
	_, err := Read("top.cir", memFS(files))
	mustMention(t, err, "f16.inc:1:10", "nested deeper than the limit of 16")

	o := memFS(files)
	o.MaxIncludeDepth = 30
	c, err := Read("top.cir", o)
	if err != nil || c.Element("R2") == nil {
		t.Errorf("with a limit of 30: %v, R2 %v", err, c.Element("R2"))
	}
}

func TestSubcktDepthLimit(t *testing.T) {
	var b strings.Builder
	b.WriteString("deep hierarchy\n")
	for i := 0; i < 40; i++ {
		fmt.Fprintf(&b, ".subckt S%d a\nX1 a S%d\n.ends\n", i, i+1)
	}
	b.WriteString(".subckt S40 a\nR1 a 0 1\n.ends\nX0 n S0\n")
	_, err := Parse("deep.cir", []byte(b.String()), nil)
	if err != nil {
		t.Fatalf("Parse: %v", err)
	}
	_, err = Read("deep.cir", memFS(map[string]string{"deep.cir": b.String()}))
	mustMention(t, err, "nested deeper than the limit of 32")

	o := memFS(map[string]string{"deep.cir": b.String()})
	o.MaxSubcktDepth = 64
	c, err := Read("deep.cir", o)
	if err != nil {
		t.Fatal(err)
	}
	want := "X0" + strings.Repeat(".X1", 40) + ".R1"
	if c.Element(want) == nil || len(c.Elements[0].Chain) != 41 {
		t.Errorf("elements %v, want %s with a chain of 41", c.Elements[0].Name, want)
	}
}

// TestElementLimit checks that an exponential fan-out of instances stops at
// the element limit instead of running away: 10 levels of 10 instances
// would be 1e10 resistors.
func TestElementLimit(t *testing.T) {
	var b strings.Builder
	b.WriteString("fan-out bomb\n.subckt L10 a\nR1 a 0 1\n.ends\n")
	for i := 9; i >= 0; i-- {
		fmt.Fprintf(&b, ".subckt L%d a\n", i)
		for j := 0; j < 10; j++ {
			fmt.Fprintf(&b, "X%d a L%d\n", j, i+1)
		}
		b.WriteString(".ends\n")
	}
	b.WriteString("X1 n L0\n")
	o := memFS(map[string]string{"bomb.cir": b.String()})
	o.MaxElements = 5000
	c, err := Read("bomb.cir", o)
	mustMention(t, err, "more than 5000 elements")
	if len(c.Elements) != 5000 {
		t.Errorf("%d elements, want the limit 5000", len(c.Elements))
	}
}

func TestFileSizeLimit(t *testing.T) {
	o := memFS(map[string]string{"big.cir": "title\n" + strings.Repeat("* padding\n", 100)})
	o.MaxFileSize = 500
	_, err := Read("big.cir", o)
	mustMention(t, err, "big.cir:1:1", "larger than the limit of 500 bytes")
}

func TestLoadMissingFile(t *testing.T) {
	d, err := Load("nowhere.cir", memFS(nil))
	mustMention(t, err, "nowhere.cir", "cannot read netlist")
	if d == nil || d.Top == nil {
		t.Fatal("Load must return a usable Deck on error")
	}
	if _, err := Flatten(d); err == nil {
		t.Error("Flatten of a failed Load: no error")
	}
}

func TestIncludesDisabled(t *testing.T) {
	o := &LoadOptions{ReadFile: func(string) ([]byte, error) { return nil, errors.New("includes are disabled") }}
	_, err := Parse("t.cir", []byte("t\n.include parts.inc\nR1 a 0 1\n"), o)
	mustMention(t, err, "t.cir:2:10", `cannot read include file "parts.inc": includes are disabled`)
}

func TestDeck(t *testing.T) {
	src := "Battery monitor\n.param rtop=100k\n.subckt DIV in out\nR1 in out {rtop}\nR2 out 0 33k\n.ends\n" +
		"VBAT bat 0 3.7\nX1 bat sense DIV\n.model QM NPN(BF=100)\n"
	d, err := Parse("mon.cir", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	if d.Title != "Battery monitor" || len(d.Top.Elements) != 2 || len(d.Top.Subckts) != 1 || len(d.Top.Models) != 1 {
		t.Fatalf("deck: title %q, %d elements, %d subckts, %d models", d.Title, len(d.Top.Elements), len(d.Top.Subckts), len(d.Top.Models))
	}
	div := d.Top.Subckts[0]
	if div.Name.Text != "DIV" || len(div.Ports) != 2 || div.Parent != d.Top || div.Pos != (Pos{"mon.cir", 3, 1}) {
		t.Errorf("subckt %+v", div)
	}
	if v := div.Elements[0].Value; v == nil || !v.Braced || v.Text != "rtop" || v.Pos != (Pos{"mon.cir", 4, 11}) {
		t.Errorf("R1 value %+v", v)
	}
	c, err := Flatten(d)
	if err != nil {
		t.Fatal(err)
	}
	// 100k from the top-level .param, read through the instance.
	if r := c.Element("x1.r1"); r == nil || r.Value != 100e3 || r.Nodes[1] != "sense" {
		t.Errorf("X1.R1 = %+v", r)
	}
}

// TestNodeSpelling: names match case-insensitively and print as first
// written (design notes, conventions).
func TestNodeSpelling(t *testing.T) {
	src := "t\nV1 VCC 0 5\nR1 vcc Out 1k\nR2 OUT gnd 1k\nR3 out GND 1k\n"
	c, err := Parse("t.cir", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	flat, err := Flatten(c)
	if err != nil {
		t.Fatal(err)
	}
	got := fmt.Sprint(flat.Element("r1").Nodes, flat.Element("r2").Nodes, flat.Element("R3").Nodes)
	if want := "[VCC Out] [Out 0] [Out 0]"; got != want {
		t.Errorf("nodes %s, want %s", got, want)
	}
}

func TestErrorCap(t *testing.T) {
	var b strings.Builder
	b.WriteString("many errors\n")
	for i := 0; i < 3*MaxErrors; i++ {
		fmt.Fprintf(&b, "Z%d a b\n", i)
	}
	_, err := Parse("t.cir", []byte(b.String()), nil)
	l := AsErrorList(err)
	if l == nil || len(l.Errors()) != MaxErrors || l.Dropped() != 2*MaxErrors {
		t.Fatalf("kept %d, dropped %d; want %d and %d", len(l.Errors()), l.Dropped(), MaxErrors, 2*MaxErrors)
	}
	mustMention(t, err, fmt.Sprintf("(and %d more errors)", 2*MaxErrors))
}

func TestAsErrorList(t *testing.T) {
	if AsErrorList(errors.New("x")) != nil || AsErrorList(nil) != nil {
		t.Error("AsErrorList of a foreign error must be nil")
	}
}

// TestExpressions checks parameter arithmetic against exact values.
func TestExpressions(t *testing.T) {
	tests := []struct {
		expr string
		want float64
	}{
		{"2*1k", 2000},            // SPICE suffix inside an expression
		{"4k7/47", 100},           // IEC 60062 code inside an expression
		{"1meg/1k", 1000},         // MEG is 1e6, K is 1e3 (SPICE2 scale factors)
		{"sqrt(16)", 4},           // exact
		{"pow(2, 10)", 1024},      // exact
		{"pwr(3, 2)", 9},          // exact
		{"2^3 + 2**2", 12},        // exact
		{"log(exp(2))", 2},        // natural logarithm, as SPICE
		{"ln(1)", 0},              // exact
		{"log10(1000)", 3},        // exact
		{"min(3, 1, 2)", 1},       // exact
		{"max(3, 1, 2)", 3},       // exact
		{"abs(-2.5)", 2.5},        // exact
		{"int(-2.7)", -2},         // truncation towards zero
		{"a + b", 3},              // parameters
		{"A*B", 2},                // names are case-insensitive
		{"a > 0.5 ? 10 : 20", 10}, // ternary
		{"pi", math.Pi},           // constant
		{"(a + b) / 2", 1.5},
		{"-a", -1},
	}
	ev := newEvaluator(&ErrorList{})
	e := &env{defs: map[string]*pdef{}}
	e.defs["a"] = &pdef{v: Value{Text: "1"}, in: e}
	e.defs["b"] = &pdef{v: Value{Text: "a*2", Braced: true}, in: e}
	for _, tt := range tests {
		got, ok := ev.eval(Value{Text: tt.expr, Braced: true}, e)
		if !ok || math.Abs(got-tt.want) > 1e-12*math.Max(1, math.Abs(tt.want)) {
			t.Errorf("{%s} = %g, %v; want %g (%v)", tt.expr, got, ok, tt.want, ev.errs.Err())
		}
	}
	// Unbraced expressions, as .param lines often write them.
	for _, tt := range []struct {
		text string
		want float64
	}{{"2*b", 4}, {"b/2", 1}, {"-1.5", -1.5}} {
		if got, ok := ev.eval(Value{Text: tt.text}, e); !ok || got != tt.want {
			t.Errorf("%s = %g, %v; want %g", tt.text, got, ok, tt.want)
		}
	}
}

// TestValueAtZero: the DC value of a source written with only a waveform
// is the waveform at t = 0. SPICE2 user's guide (Nagel, 1975) defines SIN,
// PULSE, PWL and EXP; the PHASE argument of SIN (degrees) is the later
// SPICE3-class extension (from memory).
func TestValueAtZero(t *testing.T) {
	tests := []struct {
		kind WaveKind
		args []float64
		want float64
	}{
		{WaveSin, []float64{1.5, 2, 1e3}, 1.5},             // VO + VA*sin(0)
		{WaveSin, []float64{1, 2, 1e3, 0, 0, 90}, 3},       // sin(90 deg) = 1
		{WaveSin, []float64{1, 2, 1e3, 0, 0, -30}, 0},      // sin(-30 deg) = -1/2
		{WaveSin, []float64{1, 2, 1e3, 1e-3, 0, 90}, 1},    // TD > 0 holds VO
		{WavePulse, []float64{-1, 5, 0, 1e-9, 1e-9}, -1},   // V1
		{WaveExp, []float64{0.3, 5, 1e-6, 1e-6}, 0.3},      // V1
		{WavePWL, []float64{0, 2, 1, 4}, 2},                // first point at 0
		{WavePWL, []float64{1e-3, 7, 2e-3, 9}, 7},          // held before T1
		{WavePWL, []float64{-1, 0, 1, 10}, 5},              // interpolated
		{WavePWL, []float64{-2, 1, -1, 3}, 3},              // after the last point
		{WavePWL, []float64{-1, 0, -1, 4, 1, 4}, 4},        // a step at t = -1
		{WavePWL, []float64{-1e-3, 0, 0, 6, 1e-3, 0}, 6.0}, // a point exactly at 0
	}
	for _, tt := range tests {
		w := &Waveform{Kind: tt.kind, Args: tt.args}
		if got := w.ValueAtZero(); math.Abs(got-tt.want) > 1e-12 {
			t.Errorf("%s%v at 0 = %g, want %g", tt.kind, tt.args, got, tt.want)
		}
	}
}

func TestModelAliases(t *testing.T) {
	tests := []struct {
		t     ModelType
		in    string
		out   string
		known bool
	}{
		{NPN, "va", "VAF", true},
		{PNP, "VB", "VAR", true},
		{NPN, "ik", "IKF", true},
		{NPN, "Vceo", "VCEO", false},
		{Diode, "cj0", "CJO", true},
		{Diode, "VB", "VB", false}, // VB is a BJT alias only
		{"nmos", "vto", "VTO", false},
	}
	for _, tt := range tests {
		out, known := canonicalParam(tt.t, tt.in)
		if out != tt.out || known != tt.known {
			t.Errorf("canonicalParam(%s, %s) = %s, %v; want %s, %v", tt.t, tt.in, out, known, tt.out, tt.known)
		}
	}
}

// TestPositions checks token columns on continuation lines and after tabs.
func TestPositions(t *testing.T) {
	src := "t\nQ1\tc b\n+   e QX\n.model QX NPN(BF=1)\n"
	d, err := Parse("p.cir", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	q := d.Top.Elements[0]
	got := fmt.Sprint(q.Nodes[0].Pos, " ", q.Nodes[2].Pos, " ", q.Extra[0].Pos)
	if want := "p.cir:2:4 p.cir:3:5 p.cir:3:7"; got != want {
		t.Errorf("positions %s, want %s", got, want)
	}
}

func TestNotesReachable(t *testing.T) {
	d, _ := Parse("n.cir", []byte("t\nR1 a 0 4k7\n.frobnicate\n"), nil)
	if len(d.Notes()) != 1 || !strings.Contains(d.Notes()[0].Msg, ".frobnicate") {
		t.Errorf("deck notes %v", d.Notes())
	}
	c, err := Flatten(d)
	if err != nil {
		t.Fatal(err)
	}
	if len(c.Notes) != 2 || !strings.Contains(c.Notes[0].Msg, "IEC 60062") {
		t.Errorf("circuit notes %v", c.Notes)
	}
}

func TestDefinitionNestingLimit(t *testing.T) {
	src := "nested definitions\n" + strings.Repeat(".subckt S a\n", 40) + "R1 a 0 1\n" + strings.Repeat(".ends\n", 40) + "R2 b 0 1\n"
	d, err := Parse("n.cir", []byte(src), nil)
	mustMention(t, err, "n.cir:34:1", "nested deeper than the limit of 32")
	if len(d.Top.Elements) != 1 || d.Top.Elements[0].Name.Text != "R2" {
		t.Errorf("top level after the skipped definition: %v", d.Top.Elements)
	}
}

// ReadSource parses and flattens text in memory; with NoFiles an include is
// a located error, never a file-system read.
func TestReadSourceNoFiles(t *testing.T) {
	c, err := ReadSource("mem.cir", []byte("probe bias\nV1 a 0 5\nR1 a 0 1k\n"), &LoadOptions{ReadFile: NoFiles})
	if err != nil || len(c.Elements) != 2 {
		t.Fatalf("ReadSource: %v, %d elements", err, len(c.Elements))
	}
	_, err = ReadSource("mem.cir", []byte("probe bias\n.include parts.inc\nR1 a 0 1k\n"), &LoadOptions{ReadFile: NoFiles})
	mustMention(t, err, "mem.cir:2:10", "includes are disabled")
	// The include policy holds for any reader: a path outside is refused
	// before the reader is asked.
	_, err = ReadSource("mem.cir", []byte("probe bias\n.include /etc/passwd\nR1 a 0 1k\n"), &LoadOptions{ReadFile: NoFiles})
	mustMention(t, err, "mem.cir:2:10", `"/etc/passwd" is outside the folders`)
}

// TestTitleLooksLikeElement: a file whose only element is on its first
// line has no elements, since SPICE reads the first line as the title
// (Nagel 1975, the SPICE2 input format); the error says so and quotes the
// line, shortened. A title that reads as words keeps the plain error.
func TestTitleLooksLikeElement(t *testing.T) {
	for _, tc := range []struct {
		src  string
		want []string
		not  string
	}{
		{"R1 a\n", []string{"one.cir:1:1", "no elements", `"R1 a"`, "is the netlist's title"}, ""},
		{"Q1 c b e BC547 with a long trailing comment\n.end\n", []string{"one.cir:1:1", `"Q1 c b e BC547 with a lo..."`}, ""},
		{"bias probe\n.end\n", []string{"one.cir:1:1", "no elements"}, "title"},
		{"Empty deck: comments only\n* nothing\n", []string{"one.cir:1:1", "no elements"}, "title"},
		{"Lab 3 bias\n", []string{"one.cir:1:1", "no elements"}, "title"},
	} {
		_, err := ReadSource("one.cir", []byte(tc.src), &LoadOptions{ReadFile: NoFiles})
		mustMention(t, err, tc.want...)
		if tc.not != "" && err != nil && strings.Contains(err.Error(), tc.not) {
			t.Errorf("%q: error %q mentions %q", tc.src, err, tc.not)
		}
	}
}

// TestTitleElementWarning: SPICE reads the first line as the title
// (Nagel 1975), so a netlist typed without one loses its first element;
// when that line reads as an element on two nets of the circuit the
// reader warns at 1:1. Titles that only look a little like elements do
// not warn.
func TestTitleElementWarning(t *testing.T) {
	body := "R1 vcc b 47k\nR2 b 0 10k\nQ1 c b 0 qn\nRC vcc c 4.7k\n.model qn npn\n.end\n"
	for _, tc := range []struct {
		title string
		warn  bool
	}{
		{"VCC vcc 0 12", true},
		{"vin b 0 dc 0.7", true},
		{"Q1 bias test", false},         // no nets of the circuit
		{"R1 vcc b 47k", false},         // R1 is in the circuit: the title names it
		{"Common emitter vcc 0", false}, // the second and third words are not both nets
		{"VCC vcc vcc", false},
	} {
		c, err := ReadSource("t.cir", []byte(tc.title+"\n"+body), &LoadOptions{ReadFile: NoFiles})
		if err != nil {
			t.Fatalf("%q: %v", tc.title, err)
		}
		warned := false
		for _, n := range c.Notes {
			if strings.Contains(n.Error(), "t.cir:1:1") && strings.Contains(n.Error(), "is read as the netlist's title") {
				warned = true
			}
		}
		if warned != tc.warn {
			t.Errorf("title %q: warned %v, want %v (notes %v)", tc.title, warned, tc.warn, c.Notes)
		}
	}
}
