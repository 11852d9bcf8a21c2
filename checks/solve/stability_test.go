package solve

import (
	"math"
	"testing"

	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/netlist"
)

// latch is a cross-coupled pair of our own: each collector (1 kOhm to
// 5 V) drives the other base through 10 kOhm.
func latch() *builder {
	b := newBuilder()
	npnModel(b, nil) // IS 1e-14, BF 100
	b.V("VCC", "vcc", "0", 5)
	b.R("RC1", "vcc", "c1", 1e3)
	b.R("RC2", "vcc", "c2", 1e3)
	b.R("RB1", "c2", "b1", 10e3)
	b.R("RB2", "c1", "b2", 10e3)
	b.Q("Q1", "c1", "b1", "0", "qn")
	b.Q("Q2", "c2", "b2", "0", "qn")
	return b
}

// The symmetric latch solves to its balanced point, both transistors
// active: by hand, with VBE about 0.65 V and IB = (Vc - 0.65)/10k, Vc = 5 -
// 1k*(BF + 1)*IB gives Vc = (5 + 10.1*0.65)/11.1 = 1.04 V. That point is
// unstable; the two stable states have one transistor saturated, IC about
// (5 - 0.1)/1k = 4.9 mA, with the other's collector at 5 - 1k*(5 -
// 0.7)/11k = 4.61 V (hand estimates, Ohm's and Kirchhoff's laws).
func TestLatchStability(t *testing.T) {
	b := latch()
	s, err := Prepare(b.c)
	if err != nil {
		t.Fatal(err)
	}
	r, err := s.Solve(Options{})
	if err != nil {
		t.Fatal(err)
	}
	if vc := r.V("c1"); math.Abs(vc-1.04) > 0.05 || math.Abs(r.V("c2")-vc) > 1e-6 {
		t.Fatalf("balanced point: V(c1) %g V(c2) %g, want both about 1.04 V", vc, r.V("c2"))
	}
	st, err := s.Stability(Options{}, r)
	if err != nil {
		t.Fatal(err)
	}
	if !st.Tested || !st.Unstable || !(st.Rate > 0) {
		t.Fatalf("balanced latch: %+v, want unstable", st)
	}
	states, err := s.StableStates(Options{}, st)
	if err != nil {
		t.Fatal(err)
	}
	if len(states) != 2 {
		t.Fatalf("%d stable states, want 2", len(states))
	}
	for _, x := range states {
		on, off := x.BJTs[0], x.BJTs[1]
		if on.Region != device.Saturation {
			on, off = off, on
		}
		if on.Region != device.Saturation || off.Region != device.Cutoff {
			t.Errorf("state %v: regions %s and %s, want saturation and cutoff", x.Voltages(), on.Region, off.Region)
		}
		if math.Abs(on.IC-4.9e-3) > 0.1e-3 || math.Abs(off.VCE-4.61) > 0.05 {
			t.Errorf("state: IC(on) %g (hand 4.9 mA), VCE(off) %g (hand 4.61 V)", on.IC, off.VCE)
		}
		st2, err := s.Stability(Options{}, x)
		if err != nil || st2.Unstable {
			t.Errorf("state %v not stable: %+v %v", x.Voltages(), st2, err)
		}
	}
	if states[0].BJTs[0].Region == states[1].BJTs[0].Region {
		t.Errorf("both states have Q1 %s", states[0].BJTs[0].Region)
	}
}

func TestStableCircuitsAreStable(t *testing.T) {
	// The two-stage amplifier has no positive feedback: its only solution
	// is stable.
	c := twoStage()
	s, err := Prepare(c)
	if err != nil {
		t.Fatal(err)
	}
	st, err := s.Stability(Options{}, mustSolve(t, c, Options{}))
	if err != nil || !st.Tested || st.Unstable {
		t.Errorf("two-stage amplifier: %+v %v, want tested and stable", st, err)
	}
}

// A PNP-NPN thyristor pair of our own (the NPN collector drives the PNP
// base, the PNP collector the NPN base) from 12 V through 1 kOhm: its DC
// solutions are off (the anode node at 12 V), latched on (both saturated:
// the anode about VEB + VCE(sat) = 0.7 + 0.1 V above ground, so the current
// is about (12 - 0.8)/1k = 11.2 mA; common-practice junction voltages,
// Ohm's law), and an unstable one between, which Newton finds first.
func TestThyristorPairStates(t *testing.T) {
	b := newBuilder()
	npnModel(b, nil)
	b.model("qp", netlist.PNP, map[string]float64{"IS": 1e-14, "BF": 50})
	b.V("VCC", "vcc", "0", 12)
	b.R("RA", "vcc", "a", 1e3)
	b.Q("QP", "g", "n", "a", "qp")
	b.Q("QN", "n", "g", "0", "qn")
	b.R("RG", "g", "0", 2.2e3)
	b.R("RN", "a", "n", 4.7e3)
	s, err := Prepare(b.c)
	if err != nil {
		t.Fatal(err)
	}
	r := mustSolve(t, b.c, Options{})
	st, err := s.Stability(Options{}, r)
	if err != nil || !st.Unstable {
		t.Fatalf("first solution %v (%s, %s): %+v %v; want unstable", r.Voltages(), r.BJTs[0].Region, r.BJTs[1].Region, st, err)
	}
	states, err := s.StableStates(Options{}, st)
	if err != nil || len(states) != 2 {
		t.Fatalf("%d states (%v), want 2", len(states), err)
	}
	var on, off *Result
	for _, x := range states {
		if x.V("a") < 6 {
			on = x
		} else {
			off = x
		}
	}
	if on == nil || off == nil {
		t.Fatalf("states %v %v: want one on, one off", states[0].Voltages(), states[1].Voltages())
	}
	if i := (12 - on.V("a")) / 1e3; math.Abs(i-11.2e-3) > 0.3e-3 || on.BJTs[0].Region != device.Saturation || on.BJTs[1].Region != device.Saturation {
		t.Errorf("on state: %g A (hand 11.2 mA), %s %s", i, on.BJTs[0].Region, on.BJTs[1].Region)
	}
	if off.V("a") < 11.99 || off.BJTs[0].Region != device.Cutoff || off.BJTs[1].Region != device.Cutoff {
		t.Errorf("off state: V(a) %g, %s %s", off.V("a"), off.BJTs[0].Region, off.BJTs[1].Region)
	}
}
