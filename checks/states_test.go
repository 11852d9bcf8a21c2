package checks_test

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
)

// A set-reset latch of our own: each collector (1 kOhm to 5 V) drives the
// other base through 10 kOhm. Symmetric, it first solves to its balance
// point, both transistors active with the collectors at about (5 +
// 10.1*0.65)/11.1 = 1.04 V, which is unstable. Hand estimates of the two
// stable states (Ohm's and Kirchhoff's laws, VBE about 0.7 V, VCE(sat)
// about 0.1 V, common practice): one transistor saturated with IC about
// (5 - 0.1)/1k = 4.9 mA, the other cut off with its collector at
// 5 - 1k*(5 - 0.7)/11k = 4.61 V.
const latchNetlist = `set-reset latch
VCC vcc 0 5
RC1 vcc c1 1k
RC2 vcc c2 1k
RB1 c2 b1 10k
RB2 c1 b2 10k
Q1 c1 b1 0 LATCH
Q2 c2 b2 0 LATCH
*@device Q1 role=switch
*@device Q2 role=switch
*@part LATCH vceo=40 vcbo=60 vebo=6 icmax=200m pd=625m tjmax=150 rthja=200 hfemin=100 hfemax=300
.model LATCH NPN (IS=1e-14 BF=100)
.end
`

func TestBistableLatch(t *testing.T) {
	a := analyzeWith(t, latchNetlist, full)
	if a.States == nil || len(a.States.Cases) != 2 {
		t.Fatalf("states %+v; want the latch's two stable states", a.States)
	}
	if u := a.States.Unstable; math.Abs(u.V("c1")-1.04) > 0.05 {
		t.Errorf("unstable point V(c1) = %g, want about 1.04 V", u.V("c1"))
	}
	var on []string
	for _, ci := range a.States.Cases {
		cs := &a.Cases[ci]
		q1, q2 := q(cs, "Q1"), q(cs, "Q2")
		hi, lo := q1, q2
		if q2.Region == "saturation" {
			hi, lo = q2, q1
		}
		if hi.Region != "saturation" || lo.Region != "cutoff" {
			t.Errorf("case %s: Q1 %s, Q2 %s; want one saturated and one cut off", cs.Scenario, q1.Region, q2.Region)
		}
		if math.Abs(hi.IC-4.9e-3) > 0.1e-3 || math.Abs(lo.VCE-4.61) > 0.05 {
			t.Errorf("case %s: IC(on) %g (hand 4.9 mA), VCE(off) %g (hand 4.61 V)", cs.Scenario, hi.IC, lo.VCE)
		}
		on = append(on, hi.Name)
	}
	if on[0] == on[1] {
		t.Errorf("both stable states have %s on", on[0])
	}
	if a.Cases[0].Scenario != "nominal" || a.Cases[a.States.Cases[1]].Scenario != "stable state 2" {
		t.Errorf("state cases %q, %q", a.Cases[0].Scenario, a.Cases[a.States.Cases[1]].Scenario)
	}
	// The corners start from the nominal case, state 1: no balanced point.
	for _, cs := range a.Cases {
		if r := q(&cs, "Q1").Region; r == "active" {
			t.Errorf("case %s/%s: Q1 active (the unstable balance)", cs.Scenario, cs.Corner)
		}
	}
	var note string
	for _, n := range a.Notes {
		if strings.Contains(n.Msg, "bistable") {
			note = n.Msg
		}
	}
	if !strings.Contains(note, "stable state 1 (the nominal case)") || !strings.Contains(note, `stable state 2 (case "stable state 2")`) {
		t.Errorf("note %q", note)
	}
	// Every rule is judged in each state: the weak-drive rule sees both
	// switches conducting, one in each state (forced beta 4.9 mA / 0.39 mA
	// = 12.6, within half of hFE min 100: no finding), and each transistor
	// is judged on in one state and off in the other.
	for _, name := range []string{"Q1", "Q2"} {
		n := 0
		for _, ci := range a.States.Cases {
			if q(&a.Cases[ci], name).IC > 1e-3 {
				n++
			}
		}
		if n != 1 {
			t.Errorf("%s conducts in %d of the two states, want 1", name, n)
		}
	}
}

// A stable circuit gets no states.
func TestStableCircuitHasNoStates(t *testing.T) {
	a := analyzeWith(t, `stage
VCC vcc 0 12
R1 vcc b 47k
R2 b 0 10k
RC vcc c 4.7k
RE e 0 1k
Q1 c b e N
.model N NPN (IS=1e-14 BF=200)
.end
`, full)
	if a.States != nil {
		t.Errorf("states %+v on a common-emitter stage", a.States)
	}
}

// Without annotations the latch's transistors are switches: each conducts
// in one stable state and is off in the other.
func TestBistableRoles(t *testing.T) {
	src := strings.ReplaceAll(strings.ReplaceAll(latchNetlist, "*@device Q1 role=switch\n", ""), "*@device Q2 role=switch\n", "")
	a := analyzeWith(t, src, full)
	for _, name := range []string{"Q1", "Q2"} {
		if tr := q(&a.Cases[0], name); tr.Role != "switch" || tr.RoleFrom != "states" {
			t.Errorf("%s: role %s from %s (%s); want a switch from the states", name, tr.Role, tr.RoleFrom, tr.RoleReason)
		}
	}
	for _, rule := range []string{"saturated-linear-stage", "cutoff-linear-stage", "no-emitter-degeneration"} {
		if fs := findings(t, a, rule); len(fs) != 0 {
			t.Errorf("%s on a latch: %s", rule, fs[0].Message)
		}
	}
}

// A circuit past the stability test's size gets a note instead of a test.
func TestStabilityTooLargeIsNoted(t *testing.T) {
	var b strings.Builder
	b.WriteString("long ladder\nVCC n0 0 12\n")
	for i := 0; i < 620; i++ {
		fmt.Fprintf(&b, "R%d n%d n%d 10\n", i, i, i+1)
	}
	b.WriteString("RL n620 0 10k\nRC1 n0 c1 1k\nRC2 n0 c2 1k\nQ1 c1 n310 0 N\nQ2 c2 c1 0 N\n.model N NPN (IS=1e-14 BF=100)\n.end\n")
	a := analyzeWith(t, b.String(), checks.Options{})
	noted := false
	for _, n := range a.Notes {
		noted = noted || strings.Contains(n.Msg, "not tested for stability")
	}
	if !noted || a.States != nil {
		t.Errorf("noted %v, states %v; want the note and no states", noted, a.States)
	}
}
