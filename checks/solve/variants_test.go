package solve

import (
	"math"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// The solve variants give what rebuilding the circuit gives: Remove as
// Without (the transistor taken out, its terminals held by LeakR), Open
// as a LeakR resistor in a voltage source's place, Inject as a current
// source from ground. Checked on every transistor and source of the demo
// board, warm-started from the nominal result, to 1 uV (the solver's
// VNTOL, DefaultVNTol).
func TestVariantsMatchRebuiltCircuits(t *testing.T) {
	c, err := netlist.Read("../../rulesets/demo/bench-logger.cir", nil)
	if err != nil {
		t.Fatal(err)
	}
	s, err := Prepare(c)
	if err != nil {
		t.Fatal(err)
	}
	nom, err := s.Solve(Options{})
	if err != nil {
		t.Fatal(err)
	}
	same := func(what string, got, want *Result) {
		t.Helper()
		gotV := got.Voltages()
		for k, v := range want.Voltages() {
			if g, ok := gotV[k]; ok && math.Abs(g-v) > DefaultVNTol+1e-6*math.Abs(v) {
				t.Errorf("%s: V(%s) = %.9g, rebuilt circuit %.9g", what, k, g, v)
			}
		}
	}
	n := 0
	for _, q := range c.Elements {
		if q.Kind != 'Q' {
			continue
		}
		got, err := s.Solve(Options{Remove: []string{q.Name}, Inject: map[string]float64{q.Nodes[1]: 1e-6}, Guess: nom})
		if err != nil {
			t.Fatalf("without %s: %v", q.Name, err)
		}
		test := &netlist.Element{Kind: 'I', Name: "I#t", Nodes: []string{netlist.Ground, q.Nodes[1]}, Source: &netlist.Source{DC: 1e-6, HasDC: true}}
		want := mustSolve(t, Without(c, q, test), Options{})
		same("without "+q.Name, got, want)
		n++
	}
	for _, v := range c.Elements {
		if v.Kind != 'V' {
			continue
		}
		got, err := s.Solve(Options{Open: []string{v.Name}, Guess: nom})
		if err != nil {
			t.Fatalf("open %s: %v", v.Name, err)
		}
		oc := *c
		oc.Elements = nil
		for _, e := range c.Elements {
			if e == v {
				e = &netlist.Element{Kind: 'R', Name: e.Name, Nodes: e.Nodes[:2], Value: LeakR, Pos: e.Pos}
			}
			oc.Elements = append(oc.Elements, e)
		}
		same("open "+v.Name, got, mustSolve(t, &oc, Options{}))
		n++
	}
	if n < 8 {
		t.Fatalf("only %d variants compared", n)
	}
	// A voltage source cannot be removed, and unknown names are errors.
	for _, o := range []Options{{Remove: []string{"VCC"}}, {Remove: []string{"nosuch"}}, {Open: []string{"R1"}}} {
		if _, err := s.Solve(o); err == nil {
			t.Errorf("%+v: no error", o)
		}
	}
}
