package fix

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"pgregory.net/rapid"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
	"github.com/biaslint/biaslint/rules"
)

func TestValueText(t *testing.T) {
	for _, tc := range []struct {
		v         float64
		old, want string
	}{
		{2200, "10k", "2.2k"},
		{2200, "10K", "2.2K"},
		{1000, "47k", "1k"},
		{470, "4.7k", "470"},
		{1.2e6, "1MEG", "1.2MEG"},
		{1.2e6, "1Meg", "1.2Meg"},
		{820e3, "1meg", "820k"},
		{8200, "100", "8.2k"},
		{150, "100", "150"},
		{2.2, "10", "2.2"},
		// IEC 60062 RKM codes stay codes.
		{2200, "4k7", "2k2"},
		{2200, "4K7", "2K2"},
		{47, "4k7", "47R"},
		{1.5e6, "4k7", "1M5"},
		{1e6, "4k7", "1M0"}, // "1M" alone is SPICE milli
		{0.47, "2R2", "R47"},
		{10e3, "4k7", "10k"},
		// A trailing unit is kept.
		{2200, "10kOhm", "2.2kOhm"},
		{2200, "10kohm", "2.2kohm"},
	} {
		got, ok := ValueText(tc.v, tc.old)
		if !ok || got != tc.want {
			t.Errorf("ValueText(%g, %q) = %q %v, want %q", tc.v, tc.old, got, ok, tc.want)
		}
	}
}

// The ladder holds the IEC 60063 E12 values (1.0 1.2 1.5 1.8 2.2 2.7 3.3
// 3.9 4.7 5.6 6.8 8.2 per decade) nearest first.
func TestLadder(t *testing.T) {
	s := &searcher{opt: Options{Decades: 1}}
	down := s.ladder(4700, E12, -1)
	if got := fmtFloats(down); got != "3900 3300 2700 2200 1800 1500 1200 1000 820 680 560 470" {
		t.Errorf("down %s", got)
	}
	up := s.ladder(4700, E12, +1)
	if len(up) != 12 || up[0] != 5600 || up[len(up)-1] != 47000 {
		t.Errorf("up %v", up)
	}
	// A value between series values is not skipped over: 5000 goes up to 5600.
	if up := s.ladder(5000, E12, +1); up[0] != 5600 {
		t.Errorf("5000 up %v", up)
	}
	if e24 := s.ladder(1000, E24, +1); e24[0] != 1100 || len(e24) != 24 {
		t.Errorf("E24 up %v", e24)
	}
}

func fmtFloats(v []float64) string {
	var parts []string
	for _, x := range v {
		parts = append(parts, strconv.FormatFloat(x, 'f', -1, 64))
	}
	return strings.Join(parts, " ")
}

func TestApply(t *testing.T) {
	src := "\xef\xbb\xbftitle\r\nRB in b 47k ; base\r\nRC vcc c 1k\r\n"
	out, err := Apply([]byte(src), []Edit{
		{Pos: netlist.Pos{Line: 2, Col: 9}, Old: "47k", New: "1k"},
		{Pos: netlist.Pos{Line: 3, Col: 10}, Old: "1k", New: "820"},
	})
	if err != nil {
		t.Fatal(err)
	}
	if want := "\xef\xbb\xbftitle\r\nRB in b 1k ; base\r\nRC vcc c 820\r\n"; string(out) != want {
		t.Errorf("got %q", out)
	}
	for _, tc := range []struct {
		edits []Edit
		want  string
	}{
		{[]Edit{{Pos: netlist.Pos{File: "f", Line: 2, Col: 9}, Old: "48k", New: "1k"}}, `f:2:9: expected "48k" there`},
		{[]Edit{{Pos: netlist.Pos{File: "f", Line: 9, Col: 1}, Old: "x", New: "y"}}, "f:9:1: no such place"},
		{[]Edit{{Pos: netlist.Pos{File: "f", Line: 2, Col: 9}, Old: "47k", New: "1k"},
			{Pos: netlist.Pos{File: "f", Line: 2, Col: 10}, Old: "7k", New: "1k"}}, "two changes of the same value"},
	} {
		if _, err := Apply([]byte(src), tc.edits); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("Apply: %v, want %q", err, tc.want)
		}
	}
}

// TestSearchBounded: a Judge that never clears the finding is called no
// more than the solve budget allows, and nothing is proposed.
func TestSearchBounded(t *testing.T) {
	c := &netlist.Circuit{Elements: []*netlist.Element{
		{Kind: 'R', Name: "RB", Nodes: []string{"in", "b"}, Value: 47e3, ValueText: "47k", ValuePos: netlist.Pos{File: "f", Line: 2, Col: 9}},
	}}
	f := rules.Finding{Rule: "weak-switch-drive", Severity: rules.SeverityWarning, Device: "Q1",
		Related: []rules.Related{{Role: "base resistor", Name: "RB"}}}
	calls := 0
	judge := func(*netlist.Circuit, bool) (Verdict, error) {
		calls++
		return Verdict{Findings: []rules.Finding{f}, Applied: map[string]bool{rules.AppliedKey(f.Rule, f.Device): true}}, nil
	}
	out := Search(c, []rules.Finding{f}, judge, Options{MaxSolves: 7})
	if out[0].Change != nil || calls > 7 {
		t.Errorf("change %+v after %d solves", out[0].Change, calls)
	}
	// The judge that clears the finding below 2 kOhm: the nearest E12
	// value under it is 1.8k.
	judge = func(cc *netlist.Circuit, quick bool) (Verdict, error) {
		v := Verdict{Applied: map[string]bool{rules.AppliedKey(f.Rule, f.Device): true}}
		if cc.Elements[0].Value >= 2000 {
			v.Findings = []rules.Finding{f}
		}
		return v, nil
	}
	out = Search(c, []rules.Finding{f}, judge, Options{})
	if ch := out[0].Change; ch == nil || ch.New != "1.8k" || ch.Series != "E12" {
		t.Errorf("change %+v", ch)
	}
}

// TestValueTextReadsBack: every E24 value from 0.1 Ohm to 910 MOhm,
// written in each style a netlist may use, reads back as the same value
// through the parser the netlist reader uses (units.Parse).
func TestValueTextReadsBack(t *testing.T) {
	rapid.Check(t, func(t *rapid.T) {
		m := rapid.SampledFrom(E24).Draw(t, "mantissa")
		d := rapid.IntRange(-1, 8).Draw(t, "decade")
		v := roundSig(m*math.Pow(10, float64(d)), 3)
		old := rapid.SampledFrom([]string{"10k", "10K", "4k7", "4K7", "2R2", "1MEG", "1Meg", "1meg", "100", "10kOhm", "2.2e3"}).Draw(t, "style")
		text, ok := ValueText(v, old)
		if !ok {
			t.Fatalf("ValueText(%g, %q) not ok", v, old)
		}
		got, err := units.Parse(text)
		if err != nil || math.Abs(got-v) > 1e-9*v {
			t.Fatalf("ValueText(%g, %q) = %q reads back as %g (%v)", v, old, text, got, err)
		}
	})
}
