package main

import (
	"math"
	"os"
	"strings"
	"testing"
)

// Netlists of our own in the dialects real files come in (testdata/dialect):
// a schematic editor's export, a SPICE2-style deck with a POLY source and
// two .TEMP values, a hand-typed lab file with the 1M slip, a base tied
// straight to a controller pin, a class board naming standard types
// without .model cards (Q2's 1.41 mA checks by hand: divider 1.364 V less
// 70 mV across its 8.5 kOhm source, VBE 0.625 V from the stand-in's IS,
// over 470 Ohm), and a netlist typed without a title line. Each report is a golden; the checks
// below name what each must show.
func TestDialects(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
		want []string
	}{
		{"export", []string{"check", "--notes", "testdata/dialect/export.cir"},
			[]string{`option search="models" is not used`, `"lib\Stage.inc" is read as "lib/stage.inc"`, `each '\' is taken as '/'`, "GMIN leak", "1 transistor, ", " cases judged, 0 errors"}},
		{"spice2", []string{"check", "--notes", "testdata/dialect/spice2.cir"},
			[]string{"circuit at 27.0 C (from the netlist's .temp)", "(temp 70 C)", "option ITL1=300 is not used"}},
		{"handtyped", []string{"check", "testdata/dialect/handtyped.cir"},
			[]string{"1M is 1 milliohm", "write 1MEG"}},
		{"stiff", []string{"check", "testdata/dialect/stiff.cir"},
			[]string{"not physical", "unlimited-base-drive", "3.30 V"}},
		{"sources", []string{"check", "--format", "json", "testdata/dialect/sources.cir"},
			[]string{`Rser=0.1 is ignored`, `"alert": true`, `signal from VIN`}},
		{"led", []string{"check", "testdata/dialect/led.cir"},
			[]string{"DLED: the junction is held at 5.00 V", "Q1          common-emitter  nominal  active"}},
		{"classparts", []string{"check", "testdata/dialect/classparts.cir"},
			[]string{"classparts.cir:9:12: note: model BC547B is not defined in the netlist", "BF 300, the middle of hFE 200-450",
				"model 2N3904 is not defined", "nominal  active      1.41 mA", "[floating-base]"}},
		{"classparts-op", []string{"op", "testdata/dialect/classparts.cir"},
			[]string{"model BC547B is not defined in the netlist", "BC547B npn"}},
		{"notitle", []string{"check", "testdata/dialect/notitle.cir"},
			[]string{`notitle.cir:1:1: warning: the first line, "VCC vcc 0 12", is read as the netlist's title`}},
		{"stiff-op", []string{"op", "testdata/dialect/stiff.cir"},
			[]string{"not physical at 25.0 C", "the base-emitter junction is held at 3.30 V"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			out, errs, code := runCLI(t, tc.args...)
			if code == exitBadInput {
				t.Fatalf("exit 2: %s", errs)
			}
			golden(t, "dialect-"+tc.name+".txt", out)
			for _, w := range tc.want {
				if !strings.Contains(out, w) {
					t.Errorf("report does not show %q", w)
				}
			}
			if nonFinite.MatchString(out) || strings.Contains(out, "e+2") || strings.Contains(out, "e+1") {
				t.Errorf("report prints a non-finite or absurd figure:\n%s", out)
			}
		})
	}
	// The review page of the stiff drive shows no NaN or infinite figure.
	page := t.TempDir() + "/stiff.html"
	if _, errs, code := runCLI(t, "report", "--output", page, "testdata/dialect/stiff.cir"); code == exitBadInput {
		t.Fatalf("report: %s", errs)
	}
	if b, err := os.ReadFile(page); err != nil || nonFinite.Match(b) {
		t.Errorf("review page of a point that is not physical: %v, or a non-finite figure: %s", err, nonFinite.Find(b))
	}
	// The stiff drive: the unlimited-base-drive finding comes first.
	out, _, _ := runCLI(t, "check", "testdata/dialect/stiff.cir")
	if i, j := strings.Index(out, "[unlimited-base-drive]"), strings.Index(out, "[floating-base]"); i < 0 || j < 0 || i > j {
		t.Errorf("unlimited-base-drive is not the first finding:\n%s", out)
	}
}

// Ground written as gnd!, GND and 0 in one netlist is one node. By Ohm's
// law, 9 V over 1 kOhm into two 2 kOhm resistors in parallel (one to GND,
// one to 0) gives V(a) = 9 * 1k/(1k + 1k) = 4.5 V; and the 3 V source on
// gnd! lifts b to 3 V above the same node.
func TestMixedGroundNames(t *testing.T) {
	dir := t.TempDir()
	path := dir + "/grounds.cir"
	writeFile(t, path, []byte("Ground three ways\n.global gnd!\nVCC vcc gnd! 9\nR1 vcc a 1k\nR2 a GND 2k\nR3 a 0 2k\nV2 b gnd! 3\nR4 b 0 1k\n.end\n"))
	r := opJSONOf(t, path).Results[0]
	if v := r.Nodes["a"]; math.Abs(v-4.5) > 1e-9 {
		t.Errorf("V(a) = %g V, want 4.5 V", v)
	}
	if v := r.Nodes["b"]; math.Abs(v-3) > 1e-9 {
		t.Errorf("V(b) = %g V, want 3 V", v)
	}
	for name := range r.Nodes {
		if strings.EqualFold(name, "gnd!") || strings.EqualFold(name, "gnd") {
			t.Errorf("ground alias %s solved as a node of its own", name)
		}
	}
}
