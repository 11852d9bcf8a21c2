package report

import (
	"fmt"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
)

// The generic-ratings line names the devices judged against the generic
// class, grouped by model, in one line however many there are.
func TestGenericLine(t *testing.T) {
	var ts []checks.Transistor
	for i := 1; i <= 10; i++ {
		model := "MYNPN"
		if i > 8 {
			model = "OTHER"
		}
		ts = append(ts, checks.Transistor{Name: fmt.Sprintf("Q%d", i), Model: model, Rating: checks.Ratings{Generic: true}})
	}
	ts = append(ts, checks.Transistor{Name: "Q11", Model: "BC547B", Rating: checks.Ratings{Part: "BC547B"}})
	f := &File{Analysis: &checks.Analysis{Cases: []checks.Case{{Transistors: ts}}}}
	got := genericLine(f)
	want := "generic ratings: Q1, Q2, Q3, Q4, Q5, Q6, Q7, Q8 (model MYNPN) and 2 more judged against the conservative generic class"
	if !strings.HasPrefix(got, want) || strings.Contains(got, "Q11") || strings.Contains(got, "\n") {
		t.Errorf("got %q", got)
	}
	f.Analysis.Cases[0].Transistors = ts[10:]
	if got := genericLine(f); got != "" {
		t.Errorf("no generic device, got %q", got)
	}
}
