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
		ts = append(ts, checks.Transistor{TransistorFixed: &checks.TransistorFixed{Name: fmt.Sprintf("Q%d", i), Model: model, Rating: checks.Ratings{Generic: true}}})
	}
	ts = append(ts, checks.Transistor{TransistorFixed: &checks.TransistorFixed{Name: "Q11", Model: "BC547B", Rating: checks.Ratings{Part: "BC547B"}}})
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

// The library-ratings line names the devices whose ratings come from the
// parts library, with the caution that they are recalled.
func TestLibraryLine(t *testing.T) {
	ts := []checks.Transistor{
		{TransistorFixed: &checks.TransistorFixed{Name: "Q1", Rating: checks.Ratings{Part: "2N3904", Origin: "parts library: from memory"}}},
		{TransistorFixed: &checks.TransistorFixed{Name: "Q2", Rating: checks.Ratings{Part: "2N3904", Origin: "parts library: from memory"}}},
		{TransistorFixed: &checks.TransistorFixed{Name: "Q3", Rating: checks.Ratings{Part: "BC547B", Origin: "parts library: from memory"}}},
		{TransistorFixed: &checks.TransistorFixed{Name: "Q4", Rating: checks.Ratings{Part: "MYNPN", Origin: "annotation at t.cir:9:1"}}},
		{TransistorFixed: &checks.TransistorFixed{Name: "Q5", Rating: checks.Ratings{Part: "generic", Origin: "parts library: x", Generic: true}}},
	}
	f := &File{Analysis: &checks.Analysis{Cases: []checks.Case{{Transistors: ts}}}}
	want := "library ratings: Q1, Q2 (2N3904), Q3 (BC547B), from memory of data sheets; check the data sheet of the part you use"
	if got := libraryLine(f); got != want {
		t.Errorf("got %q\nwant %q", got, want)
	}
}
