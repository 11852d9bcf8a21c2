package solve

import (
	"reflect"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// biasedStage is a divider-biased NPN stage with a diode from its
// collector, built in Go (invented values).
func biasedStage() *netlist.Circuit {
	b := newBuilder()
	b.model("n1", netlist.NPN, map[string]float64{"IS": 1e-14, "BF": 150, "VAF": 60})
	b.model("d1", netlist.Diode, map[string]float64{"IS": 1e-14})
	b.V("V1", "vcc", "0", 12)
	b.R("R1", "vcc", "b", 47e3)
	b.R("R2", "b", "0", 10e3)
	b.R("RC", "vcc", "c", 4.7e3)
	b.R("RE", "e", "0", 1e3)
	b.Q("Q1", "c", "b", "e", "n1")
	b.D("D1", "c", "0", "d1")
	return b.c
}

// A System keeps each device instance of its last solve while its inputs
// stay the same; a model parameter changed in place (as an hFE corner
// does), a new area, another device temperature or GMIN makes a new one:
// every solve equals a fresh System's solve of the circuit as it then is.
func TestDevicesFollowTheirInputs(t *testing.T) {
	c := biasedStage()
	s, err := Prepare(c)
	if err != nil {
		t.Fatal(err)
	}
	q := c.Models["n1"]
	steps := []struct {
		name   string
		change func()
		opt    Options
	}{
		{"nominal", func() {}, Options{}},
		{"again", func() {}, Options{}},
		{"BF doubled in place", func() { q.Params["BF"] = 300 }, Options{}},
		{"VAF removed", func() { delete(q.Params, "VAF") }, Options{}},
		{"area 2", func() {
			if err := s.SetValue("Q1", 2); err != nil {
				t.Fatal(err)
			}
			c.Element("Q1").Area = 2
		}, Options{}},
		{"hot transistor", func() {}, Options{DeviceTemp: map[string]float64{"q1": 80}}},
		{"gmin", func() {}, Options{GMin: 1e-9}},
		{"back to nominal temperature", func() {}, Options{}},
	}
	for _, st := range steps {
		st.change()
		got, err := s.Solve(st.opt)
		if err != nil {
			t.Fatalf("%s: %v", st.name, err)
		}
		fresh, err := Prepare(c)
		if err != nil {
			t.Fatal(err)
		}
		want, err := fresh.Solve(st.opt)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s: the kept System's result differs from a fresh one's", st.name)
		}
	}
}
