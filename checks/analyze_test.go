package checks

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// circuit reads netlist text with includes disabled.
func circuit(t *testing.T, src string) *netlist.Circuit {
	t.Helper()
	c, err := netlist.ReadSource("t.cir", []byte(src), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err != nil {
		t.Fatalf("read: %v", err)
	}
	return c
}

func analyze(t *testing.T, src string) *Analysis {
	t.Helper()
	a, err := Analyze(circuit(t, src), Options{})
	if err != nil {
		t.Fatalf("analyze: %v", err)
	}
	return a
}

func transistor(t *testing.T, a *Analysis, name string) Transistor {
	t.Helper()
	for _, q := range a.Cases[0].Transistors {
		if netlist.Key(q.Name) == netlist.Key(name) {
			return q
		}
	}
	t.Fatalf("no transistor %s", name)
	return Transistor{}
}

func near(got, want, rel float64) bool {
	if math.IsInf(want, 0) {
		return got == want
	}
	return math.Abs(got-want) <= rel*math.Abs(want)+1e-12
}

// A divider-biased stage: the Thevenin equivalent of the divider is
// Vth = VCC*R2/(R1+R2), Rth = R1*R2/(R1+R2) (Thevenin's theorem; any
// circuits textbook, e.g. Sedra & Smith, Microelectronic Circuits, the
// classical four-resistor bias analysis); the emitter resistance to the rail
// is RE.
const dividerStage = `divider-biased stage of a bench pre-amplifier
VCC vcc 0 DC 15
R1 vcc b 68k
R2 b 0 12k
RC vcc c 5.6k
RE e 0 1.2k
Q1 c b e SMALLNPN
.model SMALLNPN NPN (IS=1e-14 BF=150 VAF=80)
.end
`

func TestThevenin(t *testing.T) {
	a := analyze(t, dividerStage)
	q := transistor(t, a, "Q1")
	vth := 15 * 12e3 / (68e3 + 12e3)   // 2.25 V
	rth := 68e3 * 12e3 / (68e3 + 12e3) // 10.2 kOhm
	if !near(q.BaseVth, vth, 1e-4) {
		t.Errorf("base_vth = %g V, want %g V (divider)", q.BaseVth, vth)
	}
	if !near(q.BaseRth, rth, 1e-4) {
		t.Errorf("base_rth = %g Ohm, want %g Ohm (R1 || R2)", q.BaseRth, rth)
	}
	if !near(q.EmitterR, 1.2e3, 1e-6) {
		t.Errorf("emitter_r = %g, want 1.2 kOhm", q.EmitterR)
	}
	if !q.Bleed || q.StiffDrive {
		t.Errorf("bleed = %v, stiff_drive = %v; want true, false", q.Bleed, q.StiffDrive)
	}
	if q.Role != RoleCommonEmitter || q.RoleFrom != "topology" || !q.Linear {
		t.Errorf("role = %s (%s), want common-emitter from the topology", q.Role, q.RoleFrom)
	}
	// Classic approximate analysis (same textbook method):
	// IE = (Vth - VBE)/(RE + Rth/(beta+1)); with VBE about 0.65 V (common
	// practice) the solved IC should be within 5 %.
	ie := (vth - 0.65) / (1.2e3 + rth/151)
	if !near(q.IC, ie*150/151, 0.05) {
		t.Errorf("ic = %g A, classic estimate %g A", q.IC, ie*150/151)
	}
}

func TestEmitterResistance(t *testing.T) {
	cases := []struct {
		name, src string
		want      float64
	}{
		{"grounded emitter", `grounded
VCC vcc 0 5
RB vcc b 470k
RC vcc c 2.2k
Q1 c b 0 N
.model N NPN
`, 0},
		{"series emitter resistors", `two emitter resistors
VCC vcc 0 9
RB vcc b 330k
RC vcc c 1k
RE1 e x 220
RE2 x 0 330
Q1 c b e N
.model N NPN
`, 550},
		{"emitter to a negative rail", `split supply
VCC vcc 0 5
VEE vee 0 -5
RB 0 b 10k
RC vcc c 4.7k
RE e vee 4.3k
Q1 c b e N
.model N NPN
`, 4300},
		{"current-source tail", `tail current source
VCC vcc 0 5
RB 0 b 10k
RC vcc c 4.7k
IT e 0 1m
Q1 c b e N
.model N NPN
`, math.Inf(1)},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			q := transistor(t, analyze(t, tc.src), "Q1")
			if !near(q.EmitterR, tc.want, 1e-6) {
				t.Errorf("emitter_r = %g, want %g (series/parallel resistance)", q.EmitterR, tc.want)
			}
		})
	}
}

func TestDriveTopology(t *testing.T) {
	src := `drivers of a small relay board
VCC vcc 0 12
VIO pin 0 PULSE(0 3.3 0 1u 1u 1m 2m)
* Q1: base resistor and bleed to the emitter
RB1 pin b1 1k
RBE1 b1 0 10k
RL1 vcc c1 390
Q1 c1 b1 0 N
* Q2: base resistor only: floats when the pin lets go
RB2 pin b2 1k
RL2 vcc c2 390
Q2 c2 b2 0 N
* Q3: pin straight on the base
RL3 vcc c3 390
Q3 c3 pin 0 N
* Q4: AC-coupled sine drive, divider bias
VS sig 0 SIN(0 10m 1k)
CS sig b4 1u
R41 vcc b4 100k
R42 b4 0 10k
RC4 vcc c4 4.7k
RE4 e4 0 1k
Q4 c4 b4 e4 N
* Q5: follower driven by Q4's collector
Q5 vcc c4 e5 N
RE5 e5 0 2.2k
.model N NPN (BF=200)
`
	a := analyze(t, src)
	for _, tc := range []struct {
		name        string
		role        string
		bleed, stif bool
		drives      int
	}{
		{"Q1", RoleSwitch, true, false, 1},
		{"Q2", RoleSwitch, false, false, 1},
		// Q3's base is the pin itself; with the pin open, RB1 and RBE1
		// still bleed it to ground.
		{"Q3", RoleSwitch, true, true, 1},
		{"Q4", RoleCommonEmitter, true, false, 1},
		{"Q5", RoleFollower, true, false, 0},
	} {
		q := transistor(t, a, tc.name)
		if q.Role != tc.role || q.Bleed != tc.bleed || q.StiffDrive != tc.stif || len(q.Drives) != tc.drives {
			t.Errorf("%s: role %s (%s) bleed %v stiff %v drives %v; want %s %v %v %d drives",
				tc.name, q.Role, q.RoleFrom, q.Bleed, q.StiffDrive, q.Drives, tc.role, tc.bleed, tc.stif, tc.drives)
		}
	}
	if q := transistor(t, a, "Q5"); q.RoleReason != "collector at vcc, output at the emitter (net e5, load RE5 to ground)" {
		t.Errorf("Q5 role reason %q", q.RoleReason)
	}
	if q := transistor(t, a, "Q2"); !math.IsInf(q.BaseRth, 1) && q.BaseRth < 1e9 {
		// With the pin at 0 V the base sees RB2 to the pin: 1 kOhm.
		if !near(q.BaseRth, 1e3, 1e-3) {
			t.Errorf("Q2 base_rth = %g, want 1 kOhm", q.BaseRth)
		}
	}
}

// Linear derating: Pd(Ta) = (Tj,max - Ta)/RthJA, capped at the 25 C rating
// (common practice). A 625 mW, 150 C, 200 K/W part: 625 mW at 25 C,
// (150-70)/200 = 400 mW at 70 C, 0 at 150 C.
func TestDeratedPower(t *testing.T) {
	r := Ratings{Pd: 0.625, TjMax: 150, RthJA: 200}
	for _, tc := range []struct{ ta, want float64 }{{25, 0.625}, {70, 0.4}, {150, 0}, {-20, 0.625}} {
		if got := DeratedPower(r, tc.ta); !near(got, tc.want, 1e-12) {
			t.Errorf("Pd(%g C) = %g W, want %g W", tc.ta, got, tc.want)
		}
	}
	if got := DeratedPower(Ratings{Pd: math.NaN(), TjMax: 150, RthJA: 200}, 25); !math.IsNaN(got) {
		t.Errorf("missing Pd gave %g, want NaN", got)
	}
}

// PNP facts are forward-referenced: a conducting PNP shows positive vbe,
// vce, ic and ib, like an NPN.
func TestPNPForwardReferenced(t *testing.T) {
	a := analyze(t, `high-side PNP of a sensor supply
VCC vcc 0 12
RB b 0 470k
RBE vcc b 100k
RL c 0 1k
Q1 c b vcc P
.model P PNP (BF=150)
`)
	q := transistor(t, a, "Q1")
	if q.VBE < 0.5 || q.VBE > 0.8 || q.IC <= 0 || q.IB <= 0 || q.IE >= 0 || q.VCE <= 0 {
		t.Errorf("PNP facts not forward-referenced: vbe %g vce %g ic %g ib %g ie %g", q.VBE, q.VCE, q.IC, q.IB, q.IE)
	}
	if q.EmitterR != 0 {
		t.Errorf("emitter on the rail: emitter_r = %g, want 0", q.EmitterR)
	}
	// Thevenin of the base network, forward-referenced to the emitter:
	// VCC - VCC*470k/570k = 12*100/570 V.
	if want := 12 * 100e3 / 570e3; !near(q.BaseVth, want, 1e-4) {
		t.Errorf("base_vth = %g, want %g", q.BaseVth, want)
	}
}

// A board with more resistors than the extreme-value analysis moves keeps
// the nearest ones and says how many stayed at nominal.
func TestResistorCornersBounded(t *testing.T) {
	var b strings.Builder
	b.WriteString("long attenuator chain behind a follower\nVCC vcc 0 12\nR1 vcc b 47k\nR2 b 0 10k\nQ1 vcc b e N\nRE e n0 1k\n")
	for i := 0; i < MaxSensitivityResistors+20; i++ {
		fmt.Fprintf(&b, "RA%d n%d n%d 10\n", i, i, i+1)
	}
	fmt.Fprintf(&b, "RL n%d 0 1k\n.model N NPN\n", MaxSensitivityResistors+20)
	a, err := Analyze(circuit(t, b.String()), Options{Corners: true})
	if err != nil {
		t.Fatal(err)
	}
	want := fmt.Sprintf("move the %d resistors nearest the transistors; %d more stay", MaxSensitivityResistors, 24)
	found := false
	for _, n := range a.Notes {
		found = found || strings.Contains(n.Msg, want)
	}
	if !found {
		t.Errorf("no note %q in %v", want, a.Notes)
	}
}
