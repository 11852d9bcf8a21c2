package board

import (
	"math"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

func circuit(t *testing.T, src string) *netlist.Circuit {
	t.Helper()
	c, err := netlist.ReadSource("b.cir", []byte(src), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err != nil {
		t.Fatal(err)
	}
	return c
}

const annotated = `pump controller
.subckt drv in sup gnd
RB in b 1k
Q1 sup b gnd N
*@device RB power_rating=0.125
*@waive floating-base Q1 the driver IC holds its output low in reset
.ends
V1 a 0 PULSE(0 5 0 1u 1u 1m 2m)
*@device V1 driver=yes tol=2%
X1 a vcc 0 drv
X2 a vcc 0 drv
VCC vcc 0 12
.model N NPN
*@part N vceo=45 icmax=100m hfemin=110
*@device Q7 role=switch
*@device X1.Q1 role=sometimes
*@part N vceo=50 colour=blue
*@waive no-emitter-degeneration X1.Q1
*@lamp X1
`

func TestFromCircuit(t *testing.T) {
	s, errs := FromCircuit(circuit(t, annotated))
	// The annotation inside the subcircuit body applies to each instance.
	for _, name := range []string{"X1.RB", "X2.RB"} {
		if d := s.Device(name); d == nil || d.Power != 0.125 {
			t.Errorf("%s: %+v, want power 0.125 W", name, d)
		}
	}
	if d := s.Device("v1"); d == nil || !d.Driver || math.Abs(d.Tol-0.02) > 1e-15 {
		t.Errorf("V1: %+v, want driver, tol 0.02", d)
	}
	p := s.Part("n")
	if p == nil || p.VCEO != 50 || p.ICMax != 0.1 || p.HFEMin != 110 || !math.IsNaN(p.Pd) {
		t.Errorf("part N: %+v, want vceo 50 (second annotation wins), icmax 0.1, hfemin 110, pd unknown", p)
	}
	if len(s.Waivers) != 2 || s.Waivers[0].Device != "X1.Q1" || s.Waivers[1].Device != "X2.Q1" ||
		s.Waivers[0].Reason != "the driver IC holds its output low in reset" {
		t.Errorf("waivers: %+v", s.Waivers)
	}
	var msgs []string
	for _, e := range errs.List {
		msgs = append(msgs, e.Error())
	}
	all := strings.Join(msgs, "\n")
	for _, want := range []string{
		"b.cir:15:10: warning: *@device names Q7, which is not in the circuit",
		"role=sometimes must be one of switch, common-emitter",
		`unknown key "colour"`,
		"gives no reason",
		"unknown annotation *@lamp",
		"vceo=50 replaces 45",
	} {
		if !strings.Contains(all, want) {
			t.Errorf("diagnostics lack %q:\n%s", want, all)
		}
	}
}

func TestBoardFile(t *testing.T) {
	c := circuit(t, annotated)
	s, err := Parse("board.yaml", []byte(`
ambient: 40
parts:
  N: {vceo: 60, pd: 625m}
devices:
  X1.RB: {power_rating: 1/4}
  VCC: {tol: 1%}
waivers:
  - {rule: floating-base, device: X2.Q1, reason: "same driver as X1"}
`), c)
	if err == nil {
		t.Fatal("power: 1/4 accepted")
	}
	if !strings.Contains(err.Error(), "board.yaml:6:11:") {
		t.Errorf("error not located at the value: %v", err)
	}
	s, err = Parse("board.yaml", []byte(`
ambient: 40
parts:
  N: {vceo: 60, pd: 625m}
devices:
  X1.RB: {power_rating: 0.25}
  VCC: {tol: 1%}
waivers:
  - {rule: floating-base, device: X2.Q1, reason: "same driver as X1"}
`), c)
	if err != nil {
		t.Fatal(err)
	}
	base, errs := FromCircuit(c)
	base.Merge(s, errs)
	if base.Ambient != 40 || base.Part("N").VCEO != 60 || base.Part("N").Pd != 0.625 || base.Part("N").ICMax != 0.1 {
		t.Errorf("merged part: %+v ambient %g", base.Part("N"), base.Ambient)
	}
	if base.Device("X1.RB").Power != 0.25 || base.Device("X2.RB").Power != 0.125 {
		t.Errorf("board file should set X1.RB only")
	}
	if len(base.Waivers) != 3 {
		t.Errorf("waivers: %d, want 3", len(base.Waivers))
	}
}

func TestBoardFileErrors(t *testing.T) {
	c := circuit(t, annotated)
	for _, tc := range []struct{ src, want string }{
		{"ambient: [1]\n", "b.yaml:1:10: error: ambient"},
		{"parts:\n  N: {vceo: -3}\n", "b.yaml:2:13: error: part N: vceo"},
		{"parts:\n  N: {volts: 3}\n", `b.yaml:2:7: error: part N: unknown key "volts"`},
		{"devices:\n  Q9: {role: switch}\n", "b.yaml:2:3: error: devices: Q9 is not in the circuit"},
		{"waivers:\n  - {rule: floating-base, device: X1.Q1}\n", "b.yaml:2:5: error: waiver of floating-base on X1.Q1 gives no reason"},
		{"colour: blue\n", `b.yaml:1:1: error: unknown key "colour"`},
		{"parts: {N: [\n", "b.yaml:"},
		{"- 1\n- 2\n", "b.yaml:1:1: error: a board file is a mapping"},
	} {
		_, err := Parse("b.yaml", []byte(tc.src), c)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: error %v, want %q", tc.src, err, tc.want)
		}
	}
}

// A waiver's reason is kept as written, key=value words and quotes included.
func TestWaiverReasonAsWritten(t *testing.T) {
	s, _ := FromCircuit(circuit(t, `reason text
V1 a 0 5
R1 a 0 1k
*@waive resistor-power-over-rating R1 rated "2 W" part, R=1k  in the BOM
*@waive resistor-power-over-rating "
`))
	if len(s.Waivers) != 1 || s.Waivers[0].Reason != `rated "2 W" part, R=1k  in the BOM` {
		t.Errorf("waivers %+v", s.Waivers)
	}
}
