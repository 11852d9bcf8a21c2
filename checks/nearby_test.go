package checks

import (
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rulesets/demo"
)

// TestNearby checks the parts found around each transistor of the demo
// board against the board's schematic as drawn (rulesets/demo): a
// divider-biased, degenerated stage, a follower whose collector is on the
// supply, two coil drivers whose coil is reached through the inductor, and
// a PNP high-side switch with its NPN level shifter, and an LED current
// sink. The corrected revision B is read.
func TestNearby(t *testing.T) {
	rev, err := demo.Lookup("B")
	if err != nil {
		t.Fatal(err)
	}
	c, err := netlist.ReadSource(rev.Name, rev.Netlist, &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err != nil {
		t.Fatal(err)
	}
	a, err := Analyze(c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]string{
		"Q1":    "divider resistor R1, divider resistor R2, collector resistor RC1, emitter resistor RE1A, emitter resistor RE1B, drive VSIG",
		"Q2":    "base resistor RC1, emitter resistor RE2",
		"X1.Q1": "base resistor X1.RB, bleed resistor X1.RBE, collector resistor X1.RCOIL, drive VRELAY",
		"X2.Q1": "base resistor X2.RB, bleed resistor X2.RBE, collector resistor X2.RCOIL, drive VBUZ",
		"Q5":    "base resistor R5, bleed resistor R6, collector resistor R4, drive VEN",
		"Q4":    "base resistor R4, bleed resistor R7, collector resistor RLOAD",
		"Q6":    "divider resistor R8, divider resistor R9, collector resistor RDROP, emitter resistor RE6",
	}
	for _, q := range a.Cases[0].Transistors {
		var got []string
		for _, n := range q.Nearby {
			got = append(got, n.Role+" "+n.Name)
			if !n.Pos.IsValid() {
				t.Errorf("%s: %s has no position", q.Name, n.Name)
			}
		}
		g := strings.Join(got, ", ")
		if g != want[q.Name] {
			t.Errorf("%s: nearby %q, want %q", q.Name, g, want[q.Name])
		}
	}
}
