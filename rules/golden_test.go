package rules

import (
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/rulesets"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/rules")

func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("..", "testdata", "rules", name)
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update)", err)
	}
	if string(want) != got {
		t.Errorf("%s differs from the golden file; got:\n%s", name, got)
	}
}

// TestListGolden prints each built-in set as a listing would: parameters
// with their values and origin, then the active rules.
func TestListGolden(t *testing.T) {
	for _, name := range rulesets.Names() {
		s, err := Load(name, LoadOptions{})
		if err != nil {
			t.Fatal(err)
		}
		var b strings.Builder
		fmt.Fprintf(&b, "%s extends %v: %s\n", s.Name, s.Extends, s.Description)
		for _, p := range s.Params {
			fmt.Fprintf(&b, "param %s = %s (%s, %s)\n", p.Name, p, p.From, p.Pos)
		}
		for _, r := range s.Rules {
			fmt.Fprintf(&b, "rule %s %s %s from %s at %s facts %v params %v\n", r.ID, r.Severity, r.Subject, r.Set, r.Pos, r.Facts, r.Params)
		}
		golden(t, "list-"+name+".golden", b.String())
	}
}

// TestFindingsGolden prints the findings of a small board with several
// problems in two cases.
func TestFindingsGolden(t *testing.T) {
	set := mustDefault(t, nil)
	mk := func(scn string, vce float64) checks.Case {
		q1 := linearQ()
		q1.VCE, q1.EmitterR = vce, 0
		q2 := switchQ()
		q2.IB, q2.Bleed = 0.25e-3, false
		q3 := linearQ()
		q3.Name, q3.Rating.VEBO, q3.VBE = "Q3", 6, -0.3
		q3.Pos.Line = 40
		q3.Rating.VCEO = math.NaN() // rating missing
		r := okResistor()
		r.V, r.I, r.Power = 10, 0.1, 1
		c := oneCase([]checks.Transistor{derive(q1), derive(q2), derive(q3)}, []checks.Resistor{r},
			[]checks.Node{{NodeFixed: &checks.NodeFixed{Name: "hv"}, V: 120, Peak: 120}})
		c.Scenario = scn
		return c
	}
	fs, err := Evaluate(set, analysis(mk("nominal", 45), mk("high-supply", 48)), EvalOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	for _, f := range fs {
		fmt.Fprintf(&b, "%s: %s: %s: %s [%s]", f.Pos, f.Severity, f.Rule, f.Message, CaseName(f.Scenario, f.Corner))
		if f.HasLimit {
			fmt.Fprintf(&b, " value %g limit %g %s", f.Value, f.Limit, f.Unit)
		}
		if len(f.AlsoIn) > 0 {
			fmt.Fprintf(&b, " also in %v", f.AlsoIn)
		}
		if len(f.UnjudgedIn) > 0 {
			fmt.Fprintf(&b, " unjudged in %v", f.UnjudgedIn)
		}
		b.WriteString("\n")
	}
	golden(t, "findings-default.golden", b.String())
}
