package netlist

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/biaslint/biaslint/netlist/units"
)

// FuzzParse feeds arbitrary bytes through Parse and Flatten. Neither may
// panic, every diagnostic must carry a position in the input file, and an
// error-free result must have elements.
func FuzzParse(f *testing.F) {
	// The golden inputs are seeds too, besides testdata/fuzz/FuzzParse.
	if ins, _ := filepath.Glob(filepath.Join(goldenDir, "*.cir")); len(ins) > 0 {
		for _, in := range ins {
			if b, err := os.ReadFile(in); err == nil && len(b) < 4096 {
				f.Add(b)
			}
		}
	}
	f.Fuzz(func(t *testing.T, src []byte) {
		opts := &LoadOptions{ReadFile: NoFiles, MaxElements: 2000, MaxSubcktDepth: 8}
		d, _ := Parse("fuzz.cir", src, opts)
		if d == nil {
			t.Fatal("Parse returned no Deck")
		}
		c, err := Flatten(d)
		if c == nil {
			t.Fatal("Flatten returned no Circuit")
		}
		if l := AsErrorList(err); l != nil {
			for _, e := range l.List {
				if e.Pos.File == "" {
					t.Errorf("diagnostic without a file: %v", e)
				}
			}
		}
		if err == nil && len(c.Elements) == 0 {
			t.Error("no error and no elements")
		}
		for _, e := range c.Elements {
			if math.IsNaN(e.Value) || math.IsInf(e.Value, 0) || math.IsNaN(e.Area) {
				t.Errorf("%s: value %g area %g", e.Name, e.Value, e.Area)
			}
		}
	})
}

// FuzzValue feeds arbitrary text to the value reader and the expression
// evaluator: no panics, accepted values are finite, and what Format prints
// for a value without the mega prefix reads back within its 3 digits.
func FuzzValue(f *testing.F) {
	f.Fuzz(func(t *testing.T, s string) {
		v, _, err := units.ParseValue(s)
		if err == nil {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("ParseValue(%q) = %g", s, v)
			}
			out := units.Format(v, "")
			if back, err := units.Parse(out); err == nil && v != 0 && out[len(out)-1] != 'M' &&
				math.Abs(v) > 1e-15 && math.Abs(v) < 1e15 && math.Abs(back-v) > 0.006*math.Abs(v) {
				t.Errorf("Format(%g) = %q reads back as %g", v, out, back)
			}
		}
		ev := newEvaluator(&ErrorList{})
		e := &env{defs: map[string]*pdef{}}
		e.defs["x"] = &pdef{v: Value{Text: "2"}, in: e}
		for _, braced := range []bool{false, true} {
			if x, ok := ev.eval(Value{Text: s, Braced: braced, Pos: Pos{File: "f", Line: 1, Col: 1}}, e); ok && (math.IsNaN(x) || math.IsInf(x, 0)) {
				t.Fatalf("eval(%q) = %g", s, x)
			}
		}
	})
}
