package netlist

import (
	"path/filepath"
	"strings"
	"testing"
)

// An include name resolves without regard to letter case, component by
// component, only when exactly one file matches.
func TestFoldCase(t *testing.T) {
	tree := map[string][]string{
		"board":            {"Models", "top.cir", "a.inc", "A.INC"},
		"board/Models":     {"stage.inc"},
		"board/Models/sub": nil,
	}
	readDir := func(dir string) ([]string, error) { return tree[filepath.ToSlash(dir)], nil }
	for _, tc := range []struct {
		inc, want string
		ok        bool
	}{
		{"models/Stage.INC", "board/Models/stage.inc", true},
		{"Models/stage.inc", "board/Models/stage.inc", false}, // exact: nothing to fold
		{"a.Inc", "", false}, // a.inc and A.INC both match: ambiguous, not folded
		{"models/none.inc", "", false},
	} {
		got, ok := foldCase("board/top.cir", filepath.Join("board", filepath.FromSlash(tc.inc)), readDir)
		if ok != tc.ok || (ok && filepath.ToSlash(got) != tc.want) {
			t.Errorf("foldCase(%s) = %q, %v; want %q, %v", tc.inc, got, ok, tc.want, tc.ok)
		}
	}
	if _, ok := foldCase("board/top.cir", "board/x.inc", nil); ok {
		t.Error("folded without a directory lister")
	}
}

// A file with definitions and no circuit is a library; one element at top
// level makes it a circuit.
func TestLibraryOnly(t *testing.T) {
	for _, tc := range []struct {
		src  string
		want bool
	}{
		{".model N1 NPN (IS=1e-14)\n", true},
		{"* blocks\n.subckt DIV a b\nR1 a b 1k\n.ends\n", true},
		{"* values\n.param rtop=47k\n", true},
		{"* sections\n.lib typical\n.model N1 NPN\n.endl\n", true},
		{"amp\n.model N1 NPN\nQ1 c b 0 N1\nV1 c 0 5\nR1 c b 1k\n", false},
		{"div\n.subckt DIV a b\nR1 a b 1k\n.ends\nX1 in 0 DIV\nV1 in 0 1\n", false},
		{"* only a comment\n", false},
	} {
		d, _ := Parse("t.cir", []byte(tc.src), &LoadOptions{ReadFile: NoFiles})
		if got := d.LibraryOnly(); got != tc.want {
			t.Errorf("LibraryOnly(%q) = %v, want %v", tc.src, got, tc.want)
		}
	}
}

// SINE(...) is read as SIN(...): the waveform, its DC value at t = 0 and
// its arguments (SPICE SIN: VO VA FREQ).
func TestSineAlias(t *testing.T) {
	c, err := ReadSource("s.cir", []byte("s\nV1 in 0 SINE(0.5 10m 1k) AC 1\nR1 in 0 1k\n.end\n"), &LoadOptions{ReadFile: NoFiles})
	if err != nil {
		t.Fatal(err)
	}
	w := c.Elements[0].Source.Wave
	if w == nil || w.Kind != WaveSin || len(w.Args) != 3 || w.Args[1] != 0.01 || c.Elements[0].Source.DC != 0.5 {
		t.Errorf("SINE read as %+v, DC %g; want SIN(0.5 10m 1k), DC 0.5 V", w, c.Elements[0].Source.DC)
	}
	for _, n := range c.Notes {
		t.Errorf("unexpected note: %v", n)
	}
}

// The unit after an M does not help: 1MOhm is a milliohm too, and gets the
// alert; 10mOhm says milliohm on purpose and gets none.
func TestMilliWithUnit(t *testing.T) {
	c, _ := ReadSource("m.cir", []byte("m\nV1 a 0 5\nR1 a b 1MOhm\nR2 b 0 10mOhm\n.end\n"), &LoadOptions{ReadFile: NoFiles})
	var alerts []string
	for _, n := range c.Notes {
		if n.Alert {
			alerts = append(alerts, n.Error())
		}
	}
	if len(alerts) != 1 || !strings.Contains(alerts[0], "R1: 1MOhm is 1 milliohm") {
		t.Errorf("alerts %q; want one, on R1", alerts)
	}
}
