package checks

import (
	"fmt"
	"path/filepath"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// fingerprint prints every value of an analysis that a report can show,
// floats in full (%v prints the shortest form that reads back to the same
// bits).
func fingerprint(an *Analysis) string {
	var b strings.Builder
	for _, cs := range an.Cases {
		fmt.Fprintf(&b, "%s/%s %s %q\n", cs.Scenario, cs.Corner, cs.Kind, cs.Unjudged)
		if r := cs.Solution; r != nil {
			fmt.Fprintf(&b, " %v\n %v\n %v\n %v %v %d\n", r.Nodes, r.Branches, r.BJTs, r.Method, r.Unphysical, r.Iterations)
		}
		for _, t := range cs.Transistors {
			// The shared records by value, not by address.
			fx, cl := *t.TransistorFixed, Clipping{}
			if t.Clipping != nil {
				cl = *t.Clipping
			}
			t.TransistorFixed, t.Clipping = nil, nil
			fmt.Fprintf(&b, " %+v %+v %+v\n", fx, cl, t)
		}
		for _, r := range cs.Resistors {
			fx := *r.ResistorFixed
			r.ResistorFixed = nil
			fmt.Fprintf(&b, " %+v %+v\n", fx, r)
		}
		for _, n := range cs.Nodes {
			fx := *n.NodeFixed
			n.NodeFixed = nil
			fmt.Fprintf(&b, " %+v %+v\n", fx, n)
		}
	}
	return b.String()
}

// Sharing the nominal case's pivot order between the workers changes no
// bit of any case (solutions, iteration counts, facts), with one worker or
// several: on the demo board with Monte Carlo runs and on every netlist of
// testdata/check, against a run without the shared order.
func TestSharedPivotOrderSameBits(t *testing.T) {
	files, _ := filepath.Glob("../testdata/check/*.cir")
	files = append(files, "../rulesets/demo/bench-logger.cir", "stages")
	defer func() { sharePivotOrder = true }()
	compared := 0
	for _, f := range files {
		c, err := netlist.Read(f, nil)
		if f == "stages" {
			// Twelve stages of one shape, with values that differ from
			// stage to stage: the local circuits of the Thevenin facts
			// share one pivot order (theveninAll).
			var b strings.Builder
			b.WriteString("stages of one shape\nVCC vcc 0 DC 15\n.model SN NPN(IS=8f BF=150 VAF=90)\n")
			for i := 1; i <= 12; i++ {
				fmt.Fprintf(&b, "R1_%d vcc b%d %dk\nR2_%d b%d 0 %dk\nRC%d vcc c%d 3.3k\nRE%d e%d 0 %d\nQ%d c%d b%d e%d SN\n",
					i, i, 33+4*i, i, i, 6+i, i, i, i, i, 200*i, i, i, i, i)
			}
			c, err = netlist.ReadSource("stages.cir", []byte(b.String()+".end\n"), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
		}
		if err != nil {
			continue
		}
		opt := Options{Scenarios: true, Corners: true, Thermal: true, MonteCarlo: 20, Seed: 3, Workers: 1}
		sharePivotOrder = false
		an, err := Analyze(c, opt)
		if err != nil {
			continue
		}
		want := fingerprint(an)
		sharePivotOrder = true
		for _, workers := range []int{1, 2, 3} {
			opt.Workers = workers
			an, err := Analyze(c, opt)
			if err != nil {
				t.Fatalf("%s, %d workers: %v", f, workers, err)
			}
			if got := fingerprint(an); got != want {
				t.Fatalf("%s, %d workers: the shared pivot order changed the results", f, workers)
			}
		}
		compared++
	}
	if compared < 20 {
		t.Errorf("only %d netlists compared", compared)
	}
	t.Logf("%d netlists compared", compared)
}
