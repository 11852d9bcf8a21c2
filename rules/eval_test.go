package rules

import (
	"math"
	"reflect"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
)

func mustDefault(t testing.TB, set map[string]string) *RuleSet {
	t.Helper()
	s, err := LoadDefault(LoadOptions{Set: set})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func ids(fs []Finding) []string {
	var out []string
	for _, f := range fs {
		out = append(out, f.Rule+"@"+f.Device)
	}
	return out
}

// TestDefaultRules checks that each default rule fires on facts that
// violate it, and that the healthy twins (linearQ, switchQ, okResistor,
// okNode) give no finding at all.
func TestDefaultRules(t *testing.T) {
	set := mustDefault(t, nil)
	healthy := analysis(oneCase(
		[]checks.Transistor{linearQ(), switchQ()}, []checks.Resistor{okResistor()}, []checks.Node{okNode()}))
	fs, err := Evaluate(set, healthy, EvalOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(fs) != 0 {
		t.Fatalf("healthy facts gave findings: %v", ids(fs))
	}

	lin := func(f func(*checks.Transistor)) func() checks.Case {
		return func() checks.Case {
			q := linearQ()
			f(&q)
			return oneCase([]checks.Transistor{derive(q)}, nil, nil)
		}
	}
	sw := func(f func(*checks.Transistor)) func() checks.Case {
		return func() checks.Case {
			q := switchQ()
			f(&q)
			return oneCase([]checks.Transistor{derive(q)}, nil, nil)
		}
	}
	tests := []struct {
		rule  string
		facts func() checks.Case
		// value and limit expected in the finding (SI), when the rule has them.
		value, limit float64
	}{
		// VCE(sat) of a small silicon BJT is about 0.1-0.3 V (common
		// practice); 0.15 V is below the 0.3 V parameter.
		{"saturated-linear-stage", lin(func(q *checks.Transistor) { q.VCE, q.Region = 0.15, "saturation" }), 0.15, 0.3},
		// 1 nA is below the 1 uA conduction threshold (common practice).
		{"cutoff-linear-stage", lin(func(q *checks.Transistor) { q.IC, q.IB, q.VBE, q.Region = 1e-9, 1e-12, 0.2, "cutoff" }), 1e-9, 1e-6},
		// -7 V reverse VBE beyond VEBO 6 V (small-signal class, from memory).
		{"vbe-reverse-over-rating", sw(func(q *checks.Transistor) { q.VBE, q.IC, q.IB, q.VCE, q.Region = -7, 0, 0, 12, "cutoff" }), 7, 6},
		// 45 V beyond VCEO 40 V (class value, from memory).
		{"vce-over-rating", lin(func(q *checks.Transistor) { q.VCE = 45 }), 45, 40},
		// VCB 64.35 V beyond VCBO 60 V; VCEO raised so only VCB is over.
		{"vcb-over-rating", lin(func(q *checks.Transistor) { q.VCE, q.Rating.VCEO = 65, 100 }), 64.35, 60},
		// 250 mA beyond ICmax 200 mA; VCE 1 V keeps P = 0.25 W under 0.625 W.
		{"ic-over-rating", lin(func(q *checks.Transistor) { q.IC, q.IB, q.VCE = 0.25, 1.25e-3, 1 }), 0.25, 0.2},
		// P = 10 V * 100 mA = 1 W beyond Pd(25 C) = 625 mW.
		{"power-over-rating", lin(func(q *checks.Transistor) { q.VCE, q.IC, q.IB = 10, 0.1, 0.5e-3 }), 10*0.1 + 0.65*0.5e-3, 0.625},
		{"no-emitter-degeneration", lin(func(q *checks.Transistor) { q.EmitterR = 0 }), 0, 0},
		{"floating-base", sw(func(q *checks.Transistor) { q.Bleed = false }), 0, 0},
		{"unlimited-base-drive", sw(func(q *checks.Transistor) { q.StiffDrive = true }), 0, 0},
		// Forced beta 80 beyond 50 % of hFE(min) 100.
		{"weak-switch-drive", sw(func(q *checks.Transistor) { q.IB = 0.25e-3 }), 80, 50},
		// Out of saturation while conducting.
		{"weak-switch-drive", sw(func(q *checks.Transistor) { q.VCE, q.Region = 2, "active" }), 10, 50},
		{"resistor-power-over-rating", func() checks.Case {
			r := okResistor()
			r.V, r.I, r.Power = 10, 0.1, 1 // 1 W in a 250 mW part
			return oneCase(nil, []checks.Resistor{r}, nil)
		}, 1, 0.25},
		// 120 V DC beyond 60 V DC (IEC 62368-1 ES1, from memory).
		{"hazardous-voltage", func() checks.Case {
			return oneCase(nil, nil, []checks.Node{{NodeFixed: &checks.NodeFixed{Name: "hv"}, V: 120, Peak: 120}})
		}, 120, 60},
		// A 50 V peak swing beyond 42.4 V peak (IEC 62368-1 ES1, from memory).
		{"hazardous-voltage", func() checks.Case {
			return oneCase(nil, nil, []checks.Node{{NodeFixed: &checks.NodeFixed{Name: "sig"}, V: 0, Peak: 50}})
		}, 50, 42.4},
	}
	for _, tc := range tests {
		t.Run(tc.rule, func(t *testing.T) {
			fs, err := Evaluate(set, analysis(tc.facts()), EvalOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if len(fs) != 1 || fs[0].Rule != tc.rule || fs[0].Unjudged {
				t.Fatalf("findings %v, want exactly %s", ids(fs), tc.rule)
			}
			f := fs[0]
			if f.Severity != set.Rule(tc.rule).Severity || f.Message == "" || f.Fix == "" {
				t.Errorf("finding lacks severity, message or fix: %+v", f)
			}
			if f.HasLimit && (math.Abs(f.Value-tc.value) > 1e-9*math.Abs(tc.value)+1e-15 || math.Abs(f.Limit-tc.limit) > 1e-9*tc.limit) {
				t.Errorf("value %g against %g, want %g against %g", f.Value, f.Limit, tc.value, tc.limit)
			}
		})
	}
}

// TestHazardDCBelowLimit: 50 V DC without swing is below the 60 V DC ES1
// limit (IEC 62368-1, from memory), though above the 42.4 V AC peak limit.
func TestHazardDCBelowLimit(t *testing.T) {
	fs, err := Evaluate(mustDefault(t, nil), analysis(oneCase(nil, nil, []checks.Node{{NodeFixed: &checks.NodeFixed{Name: "rail"}, V: 50, Peak: 50}})), EvalOptions{})
	if err != nil || len(fs) != 0 {
		t.Fatalf("got %v, %v; want no finding", ids(fs), err)
	}
	fs, _ = Evaluate(mustDefault(t, nil), analysis(oneCase(nil, nil, []checks.Node{{NodeFixed: &checks.NodeFixed{Name: "rail"}, V: 120, Peak: 120}})), EvalOptions{})
	if len(fs) != 1 || !strings.Contains(fs[0].Message, "hazardous voltage") || !strings.Contains(fs[0].Message, "qualified person") {
		t.Fatalf("hazard message must say it plainly: %v", fs)
	}
}

// TestDerating: 0.5 W is within Pd(25 C) = 625 mW but beyond
// Pd(75 C) = (150 - 75)/200 = 375 mW (linear derating, common practice).
func TestDerating(t *testing.T) {
	set := mustDefault(t, nil)
	for _, tc := range []struct {
		ambient float64
		fire    bool
	}{{25, false}, {75, true}} {
		q := linearQ()
		q.VCE, q.IC, q.IB, q.Ambient = 5, 0.1, 0.5e-3, tc.ambient // 0.5 W + 0.3 mW
		q = derive(q)
		fs, _ := Evaluate(set, analysis(oneCase([]checks.Transistor{q}, nil, nil)), EvalOptions{})
		got := len(fs) == 1 && fs[0].Rule == "power-over-rating"
		if got != tc.fire {
			t.Errorf("ambient %g C: findings %v, want power-over-rating %v", tc.ambient, ids(fs), tc.fire)
		}
	}
}

// TestUnjudged: a NaN rating makes the rule unjudged, naming the fact.
func TestUnjudged(t *testing.T) {
	set := mustDefault(t, nil)
	q := linearQ()
	q.Rating.VCEO = math.NaN()
	fs, err := Evaluate(set, analysis(oneCase([]checks.Transistor{q}, nil, nil)), EvalOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(fs) != 1 || fs[0].Rule != "vce-over-rating" || !fs[0].Unjudged || fs[0].Severity != SeverityNote {
		t.Fatalf("got %+v, want one unjudged vce-over-rating note", fs)
	}
	if !reflect.DeepEqual(fs[0].Missing, []string{"rating.vceo"}) || !strings.Contains(fs[0].Message, "rating.vceo not known") {
		t.Errorf("message should name the missing fact: %q %v", fs[0].Message, fs[0].Missing)
	}
	// A NaN in a fact the condition never reaches is not a problem: the
	// switch below is off, so weak-switch-drive does not apply and its NaN
	// beta is never compared.
	s := switchQ()
	s.IC, s.IB, s.VCE, s.Region = 0, 0, 12, "cutoff"
	s = derive(s)
	fs, _ = Evaluate(set, analysis(oneCase([]checks.Transistor{s}, nil, nil)), EvalOptions{})
	if len(fs) != 0 {
		t.Errorf("off switch: %v", ids(fs))
	}
}

// TestUnjudgedDivision: a division by zero is unjudged, not a pass.
func TestUnjudgedDivision(t *testing.T) {
	src := `name: div
rules:
  - id: ratio
    level: warning
    subject: transistor
    when: vce / ic > 1000
    message: "ratio {vce / ic}"
`
	set, err := Parse("div.yaml", []byte(src), LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	q := linearQ()
	q.IC = 0
	fs, _ := Evaluate(set, analysis(oneCase([]checks.Transistor{q}, nil, nil)), EvalOptions{})
	if len(fs) != 1 || !fs[0].Unjudged || !strings.Contains(fs[0].Message, "division by zero") {
		t.Fatalf("got %+v", fs)
	}
}

// TestWorstCase: three cases, two violating; the finding is at the case
// with the larger VCE/VCEO and lists the other.
func TestWorstCase(t *testing.T) {
	set := mustDefault(t, nil)
	mk := func(scn string, vce float64) checks.Case {
		q := linearQ()
		q.VCE = vce
		c := oneCase([]checks.Transistor{derive(q)}, nil, nil)
		c.Scenario = scn
		return c
	}
	a := analysis(mk("nominal", 30), mk("hot", 45), mk("high-supply", 50), mk("tie", 50))
	fs, err := Evaluate(set, a, EvalOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(fs) != 1 {
		t.Fatalf("got %v", ids(fs))
	}
	f := fs[0]
	// Worst is 50 V; "high-supply" comes before its tie "tie".
	if f.Scenario != "high-supply" || f.Value != 50 || !reflect.DeepEqual(f.AlsoIn, []string{"hot", "tie"}) {
		t.Errorf("worst case %s value %g also %v", f.Scenario, f.Value, f.AlsoIn)
	}
}

// TestDeterminism: the same analysis gives identical findings, sorted by
// position then rule id.
func TestDeterminism(t *testing.T) {
	set := mustDefault(t, nil)
	q1 := linearQ()
	q1.EmitterR, q1.VCE = 0, 45
	q2 := switchQ()
	q2.Bleed, q2.StiffDrive = false, true
	r := okResistor()
	r.Power = 1
	a := analysis(oneCase([]checks.Transistor{derive(q2), derive(q1)}, []checks.Resistor{r}, nil))
	first, _ := Evaluate(set, a, EvalOptions{})
	for i := 0; i < 5; i++ {
		again, _ := Evaluate(set, a, EvalOptions{})
		if !reflect.DeepEqual(first, again) {
			t.Fatal("evaluation is not deterministic")
		}
	}
	want := []string{"resistor-power-over-rating@R1", "no-emitter-degeneration@Q1", "vce-over-rating@Q1",
		"floating-base@Q2", "unlimited-base-drive@Q2"}
	if !reflect.DeepEqual(ids(first), want) {
		t.Errorf("order %v, want %v", ids(first), want)
	}
}

// TestSelect: only and skip, and unknown ids.
func TestSelect(t *testing.T) {
	set := mustDefault(t, nil)
	q := linearQ()
	q.EmitterR, q.VCE = 0, 45
	a := analysis(oneCase([]checks.Transistor{derive(q)}, nil, nil))
	fs, err := Evaluate(set, a, EvalOptions{Only: []string{"vce-over-rating"}})
	if err != nil || !reflect.DeepEqual(ids(fs), []string{"vce-over-rating@Q1"}) {
		t.Errorf("only: %v %v", ids(fs), err)
	}
	fs, err = Evaluate(set, a, EvalOptions{Skip: []string{"VCE-overstress"}})
	if err != nil || !reflect.DeepEqual(ids(fs), []string{"no-emitter-degeneration@Q1"}) {
		t.Errorf("skip: %v %v", ids(fs), err)
	}
	if _, err := Evaluate(set, a, EvalOptions{Only: []string{"no-such-rule"}}); err == nil || !strings.Contains(err.Error(), "no-such-rule") {
		t.Errorf("unknown id: %v", err)
	}
	sel, _ := set.Select(nil, []string{"floating-base"})
	if sel.Rule("floating-base") != nil || !sel.RuleIDs()["vce-over-rating"] || sel.RuleIDs()["floating-base"] {
		t.Error("Select should drop the rule but keep it known")
	}
}

// TestMessageUnits: placeholders print through units.Format.
func TestMessageUnits(t *testing.T) {
	set := mustDefault(t, nil)
	q := linearQ()
	q.VCE = 45
	fs, _ := Evaluate(set, analysis(oneCase([]checks.Transistor{derive(q)}, nil, nil)), EvalOptions{})
	want := "Q1 (small-signal-npn): VCE 45.0 V exceeds 40.0 V (100 % of VCEO 40.0 V)"
	if len(fs) != 1 || fs[0].Message != want {
		t.Fatalf("message %q, want %q", fs[0].Message, want)
	}
	wantQ := []Quantity{{"vce", 45, "V"}, {"param.vceo_share * rating.vceo", 40, "V"}, {"param.vceo_share", 100, "%"}, {"rating.vceo", 40, "V"}}
	if !reflect.DeepEqual(fs[0].Values, wantQ) {
		t.Errorf("values %v, want %v", fs[0].Values, wantQ)
	}
}

// Rules apply by role: each false alarm of issue 11 and its true twin, on
// hand-set facts (values below are the ones the issue quotes, or round
// numbers far from the thresholds).
func TestRulesByRole(t *testing.T) {
	set, err := LoadDefault(LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	as := func(role string, linear bool, f func(*checks.Transistor)) checks.Transistor {
		q := linearQ()
		q.Role, q.Linear = role, linear
		f(&q)
		return derive(q)
	}
	off := func(q *checks.Transistor) { q.IC, q.IB, q.VBE, q.Region = 1e-12, 1e-15, 0.1, "cutoff" }
	tests := []struct {
		name    string
		q       checks.Transistor
		must    string
		mustNot []string
	}{
		// A push-pull half idling at zero and a clamp that is off are as
		// designed; a common-emitter stage that is off is not.
		{"push-pull idling", as("push-pull", false, off), "", []string{"cutoff-linear-stage"}},
		{"clamp off", as("clamp", false, off), "", []string{"cutoff-linear-stage"}},
		{"common-emitter off", as("common-emitter", true, off), "cutoff-linear-stage", nil},
		// The cut-off transistor: VCE 783 nV, IC 2e-21 A is not
		// saturated, it carries nothing.
		{"off with VCE near zero", as("common-emitter", true, func(q *checks.Transistor) {
			q.VCE, q.IC, q.IB, q.VBE, q.Region = 783e-9, 2e-21, 1e-22, 0.05, "cutoff"
		}), "cutoff-linear-stage", []string{"saturated-linear-stage"}},
		{"conducting and saturated", as("common-emitter", true, func(q *checks.Transistor) {
			q.VCE, q.Region = 0.1, "saturation"
		}), "saturated-linear-stage", nil},
		// A diode-connected mirror reference needs no degeneration; a
		// discrete mirror output without emitter resistors gets a note.
		{"mirror reference", as("mirror-reference", true, func(q *checks.Transistor) { q.EmitterR, q.VCE = 0, 0.65 }),
			"", []string{"no-emitter-degeneration", "mirror-vbe-mismatch"}},
		{"mirror output", as("mirror-output", true, func(q *checks.Transistor) { q.EmitterR = 0 }),
			"mirror-vbe-mismatch", []string{"no-emitter-degeneration"}},
		{"common-emitter, no RE", as("common-emitter", true, func(q *checks.Transistor) { q.EmitterR = 0 }),
			"no-emitter-degeneration", []string{"mirror-vbe-mismatch"}},
		// A long-tailed pair with its base on a stiff source: the 10 kOhm
		// tail limits the current. Emitter at a rail: nothing does.
		{"long-tailed pair", as("diff-pair", true, func(q *checks.Transistor) { q.StiffDrive, q.EmitterR = true, 10e3 }),
			"", []string{"unlimited-base-drive"}},
		{"stiff base, emitter at rail", as("common-emitter", true, func(q *checks.Transistor) { q.StiffDrive, q.EmitterR = true, 0 }),
			"unlimited-base-drive", nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			fs, err := Evaluate(set, analysis(oneCase([]checks.Transistor{tc.q}, nil, nil)), EvalOptions{})
			if err != nil {
				t.Fatal(err)
			}
			got := ids(fs)
			has := func(id string) bool {
				for _, f := range fs {
					if f.Rule == id && !f.Unjudged {
						return true
					}
				}
				return false
			}
			if tc.must != "" && !has(tc.must) {
				t.Errorf("%s did not fire; got %v", tc.must, got)
			}
			for _, id := range tc.mustNot {
				if has(id) {
					t.Errorf("%s fired; got %v", id, got)
				}
			}
		})
	}
}
