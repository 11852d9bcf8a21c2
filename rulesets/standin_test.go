package rulesets_test

import (
	"math"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rulesets"
)

// TestStandIn: the stand-in model of a registered type has the BF and IS
// its doc comment defines. The check values come from the definitions and
// physics outside the code: BF is the geometric mean of the hFE group's
// range (BC547B: 200-450 in the parts library), and with VBC = 0 the
// Gummel-Poon collector current is IS·(exp(VBE/VT) − 1) (Gummel & Poon
// 1970, with qb = 1 at VBC = 0 and no high-level injection), so a solve at
// VBE = 0.68 V must give the hFE test current, 2 mA, at 27 °C, with VT =
// kT/q from the SI 2019 exact constants.
func TestStandIn(t *testing.T) {
	lib, err := rulesets.Parts()
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name   string
		typ    netlist.ModelType
		bf, ic float64
	}{
		{"BC547B", netlist.NPN, math.Sqrt(200 * 450), 2e-3},
		{"bc547c", netlist.NPN, math.Sqrt(420 * 800), 2e-3},
		{"2N3904", netlist.NPN, math.Sqrt(100 * 300), 10e-3},
		{"BC557", netlist.PNP, -1, 2e-3},
	} {
		m, note, ok := lib.StandIn(tc.name)
		if !ok {
			t.Fatalf("%s: no stand-in", tc.name)
		}
		if m.Type != tc.typ || !strings.Contains(note, "not the maker's model") {
			t.Errorf("%s: type %s, note %q", tc.name, m.Type, note)
		}
		if tc.bf > 0 && math.Abs(m.Params["BF"]-tc.bf) > 1e-9*tc.bf {
			t.Errorf("%s: BF %g, want %g", tc.name, m.Params["BF"], tc.bf)
		}
		// Solve VBE = VCE = 0.68 V (VBC = 0) and read IC.
		v := 0.68
		if tc.typ == netlist.PNP {
			v = -v
		}
		c := &netlist.Circuit{File: "t.cir", Options: netlist.DefaultOptions(), Models: map[string]*netlist.Model{"qs": m}}
		c.Options.Temp = 27
		src := func(name, n string) *netlist.Element {
			return &netlist.Element{Kind: 'V', Name: name, Nodes: []string{n, "0"}, Source: &netlist.Source{DC: v, HasDC: true}}
		}
		c.Elements = []*netlist.Element{src("VB", "b"), src("VC", "c"),
			{Kind: 'Q', Name: "Q1", Nodes: []string{"c", "b", "0"}, Model: "qs", Area: 1}}
		r, err := solve.Solve(c, solve.Options{Temp: solve.Temp(27), GMin: 1e-30})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if ic := math.Abs(r.BJTs[0].IC); math.Abs(ic-tc.ic) > 1e-6*tc.ic {
			t.Errorf("%s: IC %g A at |VBE| 0.68 V, want %g A", tc.name, ic, tc.ic)
		}
	}
	if _, _, ok := lib.StandIn("QX"); ok {
		t.Error("QX, no registered type, got a stand-in")
	}
}

// TestStandInNetlist: a Q line naming an undefined model gets the stand-in
// with an alert at the model name, once per name; without StandIn it is
// the undefined-model error.
func TestStandInNetlist(t *testing.T) {
	lib, err := rulesets.Parts()
	if err != nil {
		t.Fatal(err)
	}
	src := []byte("bench\nV1 vcc 0 9\nR1 vcc b 100k\nRC vcc c 2.2k\nQ1 c b 0 BC547B\nQ2 c b 0 BC547B 2\nQ3 c b 0 0 2N3906\n.end\n")
	c, err := netlist.ReadSource("s.cir", src, &netlist.LoadOptions{ReadFile: netlist.NoFiles, StandIn: lib.StandIn})
	if err != nil {
		t.Fatal(err)
	}
	alerts := 0
	for _, n := range c.Notes {
		if n.Alert && strings.Contains(n.Error(), "s.cir:5:10") && strings.Contains(n.Error(), "model BC547B is not defined") {
			alerts++
		}
	}
	if alerts != 1 || c.Elements[4].Area != 2 || c.Models[c.Elements[3].Model] == nil {
		t.Errorf("alerts %d, Q2 area %g, notes %v", alerts, c.Elements[4].Area, c.Notes)
	}
	// Q3 has a substrate node before the type.
	if q3 := c.Elements[5]; len(q3.Nodes) != 4 || c.Models[q3.Model] == nil || c.Models[q3.Model].Type != netlist.PNP {
		t.Errorf("Q3: nodes %v, model %q", q3.Nodes, q3.Model)
	}
	_, err = netlist.ReadSource("s.cir", src, &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err == nil || !strings.Contains(err.Error(), "s.cir:5:10") || !strings.Contains(err.Error(), "undefined model BC547B") {
		t.Errorf("without StandIn: %v", err)
	}
}
