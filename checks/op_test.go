package checks_test

import (
	"math"
	"testing"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
)

// OperatingPoint, the op command's light path, gives the same nominal
// solution and junction temperatures as a full Analyze, bit for bit, with
// and without the electro-thermal solve.
func TestOperatingPointMatchesAnalyze(t *testing.T) {
	c, err := netlist.Read("../rulesets/demo/bench-logger.cir", nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, thermal := range []bool{false, true} {
		opt := checks.Options{Thermal: thermal}
		an, err := checks.Analyze(c, opt)
		if err != nil {
			t.Fatal(err)
		}
		op, err := checks.OperatingPoint(c, opt)
		if err != nil {
			t.Fatal(err)
		}
		res, tj := op.Solution, op.Tj
		if op.TempFrom != an.TempFrom || op.Temp != an.Temp {
			t.Errorf("temperature %g (%s), Analyze %g (%s)", op.Temp, op.TempFrom, an.Temp, an.TempFrom)
		}
		want := an.Cases[0].Solution
		for k, v := range want.Voltages() {
			if res.V(k) != v {
				t.Errorf("thermal %v: V(%s) = %v, Analyze %v", thermal, k, res.V(k), v)
			}
		}
		for _, q := range an.Cases[0].Transistors {
			if g := tj[q.Name]; g != q.Tj && !(math.IsNaN(g) && math.IsNaN(q.Tj)) {
				t.Errorf("thermal %v: Tj(%s) = %v, Analyze %v", thermal, q.Name, g, q.Tj)
			}
		}
	}
}
