package rules

import (
	"reflect"
	"testing"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
)

func TestWaivers(t *testing.T) {
	set := mustDefault(t, nil)
	q1 := linearQ()
	q1.Name, q1.EmitterR = "X1.Q1", 0
	q2 := switchQ()
	q2.Name, q2.Bleed = "X1.Q2", false
	q3 := switchQ()
	q3.Name, q3.Bleed = "Q3", false
	q3.Pos.Line = 30
	fs, err := Evaluate(set, analysis(oneCase([]checks.Transistor{q1, q2, q3}, nil, nil)), EvalOptions{})
	if err != nil {
		t.Fatal(err)
	}
	set2, _ := set.Select(nil, []string{"unlimited-base-drive"})
	wpos := func(line int) netlist.Pos { return netlist.Pos{File: "amp.cir", Line: line, Col: 1} }
	ws := []Waiver{
		{Rule: "no-emitter-degeneration", Device: "x1.q1", Reason: "bias set by a servo loop", Pos: wpos(2)},
		{Rule: "floating-base", Device: "X1.*", Reason: "driver has a pull-down", Pos: wpos(3)},
		{Rule: "vce-over-rating", Device: "Q1", Reason: "stale", Pos: wpos(4)},
		{Rule: "floating-bsae", Device: "Q3", Reason: "typo", Pos: wpos(5)},
		{Rule: "unlimited-base-drive", Device: "Q3", Reason: "skipped rule", Pos: wpos(6)},
	}
	out := ApplyWaivers(fs, ws, set2.RuleIDs())
	type row struct {
		rule, dev string
		sev       Severity
		waived    bool
		reason    string
	}
	var got []row
	for _, f := range out {
		got = append(got, row{f.Rule, f.Device, f.Severity, f.Waived, f.WaiverReason})
	}
	want := []row{
		{RuleUnusedWaiver, "Q1", SeverityWarning, false, ""},
		{RuleUnknownWaiverRule, "Q3", SeverityWarning, false, ""},
		{RuleUnusedWaiver, "Q3", SeverityNote, false, ""},
		{"no-emitter-degeneration", "X1.Q1", SeverityWarning, true, "bias set by a servo loop"},
		{"floating-base", "X1.Q2", SeverityWarning, true, "driver has a pull-down"},
		{"floating-base", "Q3", SeverityWarning, false, ""},
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("got\n%v\nwant\n%v", got, want)
	}
	if fs[0].Waived {
		t.Error("ApplyWaivers must not modify its input")
	}
}
