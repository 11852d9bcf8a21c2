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
	files = append(files, "../rulesets/demo/bench-logger.cir")
	defer func() { sharePivotOrder = true }()
	compared := 0
	for _, f := range files {
		c, err := netlist.Read(f, nil)
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
