package netlist_test

import (
	"fmt"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
)

func ExampleParse() {
	src := `Photodiode bias cell
.param rb=100k
.subckt BIAS top bot
R1 top mid {rb}
R2 mid bot 4k7
.ends
VCC vcc 0 DC 5
X1 vcc 0 BIAS
`
	d, err := netlist.Parse("cell.cir", []byte(src), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	c, err := netlist.Flatten(d)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, e := range c.Elements {
		fmt.Println(e.Name, e.Nodes, units.Format(e.Value, ""), e.Pos)
	}
	for _, n := range c.Notes {
		fmt.Println(n)
	}
	// Output:
	// VCC [vcc 0] 0 cell.cir:7:1
	// X1.R1 [vcc X1.mid] 100k cell.cir:4:1
	// X1.R2 [X1.mid 0] 4.70k cell.cir:5:1
	// cell.cir:5:12: note: "4k7" is read as the IEC 60062 code for 4.70k; classic SPICE readers take it as 4.00k
}
