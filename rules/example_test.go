package rules_test

import (
	"fmt"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/rules"
)

// A transistor at VCE = 45 V against a VCEO of 40 V (small-signal class
// of the parts library, typical of the class, from memory).
func ExampleEvaluate() {
	set, err := rules.LoadDefault(rules.LoadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fixed := &checks.TransistorFixed{Name: "Q1", Role: checks.RoleCommonEmitter, Linear: true,
		Rating: checks.Ratings{Part: "small-signal-npn", VCEO: 40, VCBO: 60, VEBO: 6, ICMax: 0.2,
			Pd: 0.625, TjMax: 150, RthJA: 200, HFEMin: 100, HFEMax: 300},
		EmitterR: 1000, Bleed: true}
	q := checks.Transistor{TransistorFixed: fixed, Region: "active",
		VBE: 0.65, VCE: 45, VCB: 44.35, IC: 1e-3, IB: 5e-6, Beta: 200, Power: 45e-3,
		Ambient: 25, PdDerated: 0.625, Tj: 34}
	a := &checks.Analysis{Cases: []checks.Case{{Scenario: "nominal", Transistors: []checks.Transistor{q}}}}
	fs, err := rules.Evaluate(set, a, rules.EvalOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, f := range fs {
		fmt.Printf("%s %s: %s\n", f.Severity, f.Rule, f.Message)
	}
	// Output:
	// error vce-over-rating: Q1 (small-signal-npn): VCE 45.0 V exceeds 40.0 V (100 % of VCEO 40.0 V)
}
