package units_test

import (
	"fmt"

	"github.com/biaslint/biaslint/netlist/units"
)

func ExampleParse() {
	for _, s := range []string{"4.7k", "10MEG", "1M", "100nF", "2.5e-3"} {
		v, err := units.Parse(s)
		fmt.Println(s, v, err)
	}
	// Output:
	// 4.7k 4700 <nil>
	// 10MEG 1e+07 <nil>
	// 1M 0.001 <nil>
	// 100nF 1e-07 <nil>
	// 2.5e-3 0.0025 <nil>
}

func ExampleParseValue() {
	v, rkm, _ := units.ParseValue("4k7")
	fmt.Println(v, rkm)
	_, _, err := units.ParseValue("1.2.3k")
	fmt.Println(err)
	// Output:
	// 4700 true
	// bad value "1.2.3k": unexpected '.' after the number
}

func ExampleFormat() {
	fmt.Println(units.Format(1.02e-3, "A"))
	fmt.Println(units.Format(4700, "Ohm"))
	fmt.Println(units.Format(0, "V"))
	fmt.Println(units.Format(-2.2e-6, "F"))
	// Output:
	// 1.02 mA
	// 4.70 kOhm
	// 0 V
	// -2.20 uF
}
