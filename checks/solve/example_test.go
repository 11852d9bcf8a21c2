package solve_test

import (
	"fmt"

	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

// A common-emitter stage with voltage-divider bias, built directly as a
// flat circuit.
func ExampleSolve() {
	c := &netlist.Circuit{
		File:    "stage.cir",
		Options: netlist.DefaultOptions(),
		Models: map[string]*netlist.Model{
			"qn": {Name: "QN", Type: netlist.NPN, Params: map[string]float64{"IS": 1e-14, "BF": 100}},
		},
	}
	add := func(kind netlist.Kind, name string, value float64, nodes ...string) *netlist.Element {
		e := &netlist.Element{Kind: kind, Name: name, Value: value, Nodes: nodes}
		c.Elements = append(c.Elements, e)
		return e
	}
	add('V', "VCC", 0, "vcc", "0").Source = &netlist.Source{DC: 15}
	add('R', "R1", 100e3, "vcc", "b")
	add('R', "R2", 50e3, "b", "0")
	add('R', "RC", 5e3, "vcc", "c")
	add('R', "RE", 3e3, "e", "0")
	q := add('Q', "Q1", 0, "c", "b", "e")
	q.Model, q.Area = "qn", 1

	r, err := solve.Solve(c, solve.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	op := r.BJTs[0]
	fmt.Printf("%s %s: VBE %.3f V, IC %.4g A, VCE %.3g V, %s\n", op.Name, op.Polarity, op.VBE, op.IC, op.VCE, op.Region)
	isupply, _ := r.I("VCC")
	fmt.Printf("supply current %.4g A (%s)\n", isupply, r.Method)
	// Output:
	// Q1 npn: VBE 0.662 V, IC 0.00129 A, VCE 4.64 V, active
	// supply current -0.001394 A (newton)
}
