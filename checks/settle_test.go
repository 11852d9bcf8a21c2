package checks

import (
	"testing"

	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/checks/solve"
)

// A case of a latch that lands on the balanced (unstable) solution is
// moved to a stable state, solved with the case's own values: here a case
// at supplies -5 % solved cold, which finds the balance of the symmetric
// latch (both transistors active).
func TestSettleCasesMovesAnUnstableCase(t *testing.T) {
	c := circuit(t, `latch
VCC vcc 0 5
RC1 vcc c1 1k
RC2 vcc c2 1k
RB1 c2 b1 10k
RB2 c1 b2 10k
Q1 c1 b1 0 N
Q2 c2 b2 0 N
.model N NPN (IS=1e-14 BF=100)
.end
`)
	a := &analyzer{c: c}
	a.prepare()
	sys, err := solve.Prepare(c)
	if err != nil {
		t.Fatal(err)
	}
	if err := sys.SetValue("VCC", 4.75); err != nil {
		t.Fatal(err)
	}
	cold, err := sys.Solve(solve.Options{Temp: solve.Temp(27)})
	if err != nil {
		t.Fatal(err)
	}
	if cold.BJTs[0].Region != device.Active || cold.BJTs[1].Region != device.Active {
		t.Fatalf("cold solve: %s %s, want the balance", cold.BJTs[0].Region, cold.BJTs[1].Region)
	}
	specs := []caseSpec{{scenario: "nominal"}, {scenario: "nominal", corner: "supplies -5 %", temp: 27, set: []setting{{"vcc", 4.75}}}}
	outs := []caseOut{{}, {res: cold}}
	moved, err := a.settleCases(specs, outs, []int{1})
	if err != nil || len(moved) != 1 || specs[1].start == nil {
		t.Fatalf("moved %v (%v), start %v", moved, err, specs[1].start)
	}
	st := specs[1].start
	if st.BJTs[0].Region == device.Active || st.BJTs[0].Region == st.BJTs[1].Region {
		t.Errorf("start state: %s %s, want one saturated and one cut off", st.BJTs[0].Region, st.BJTs[1].Region)
	}
	if v := st.V("vcc"); v != 4.75 {
		t.Errorf("start state solved at VCC %g, want the case's 4.75 V", v)
	}
}
