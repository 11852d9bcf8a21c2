package rules

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
)

// A minimal valid rule, indented as a list item under rules:.
const okRule = `  - id: ok
    level: note
    subject: transistor
    when: vce > 1
    message: fine
`

// TestCompileErrorsLocated: every problem is an error at file:line:col of
// the offending text. Columns are counted by hand from the source lines
// below (1-based bytes, as go/token counts).
func TestCompileErrorsLocated(t *testing.T) {
	tests := []struct {
		name, src string
		pos       string // file:line:col
		msg       string // part of the message
	}{
		{"typo'd fact", "name: t\nrules:\n  - id: a\n    level: error\n    subject: transistor\n    when: vce > vcee\n    message: m\n",
			// "    when: vce > vcee": the value starts at col 11, vcee at col 17.
			"t.yaml:6:17", "unknown name vcee"},
		{"typo'd member", "name: t\nrules:\n  - id: a\n    level: error\n    subject: transistor\n    when: vce > rating.vceoo\n    message: m\n",
			// rating.vceoo: rating at col 17, the field name vceoo at col 24.
			"t.yaml:6:24", "vceoo"},
		{"non-bool when", "name: t\nrules:\n  - id: a\n    level: error\n    subject: transistor\n    when: vce + 1\n    message: m\n",
			"t.yaml:6:11", "expected bool"},
		{"unknown param", "name: t\nparameters:\n  lim: 3 V\nrules:\n  - id: a\n    level: error\n    subject: transistor\n    when: vce > param.limm\n    message: m\n",
			// "    when: vce > param.limm": limm at col 23.
			"t.yaml:8:23", `unknown parameter "limm"`},
		{"quoted expression", "name: t\nrules:\n  - id: a\n    level: error\n    subject: transistor\n    when: \"vce > vcee\"\n    message: m\n",
			// the quote is at col 11, vcee at col 18.
			"t.yaml:6:18", "unknown name vcee"},
		{"block expression", "name: t\nrules:\n  - id: a\n    level: error\n    subject: transistor\n    when: |\n      vce > 1 &&\n      vcee > 2\n    message: m\n",
			// second line of the block, indented 6: vcee at col 7 of line 8.
			"t.yaml:8:7", "unknown name vcee"},
		{"message placeholder", "name: t\nrules:\n  - id: a\n    level: error\n    subject: transistor\n    when: vce > 1\n    message: \"VCE {vcee:V}\"\n",
			// quote at col 14, "{" at col 19, vcee at col 20.
			"t.yaml:7:20", "unknown name vcee"},
		{"range operator", "name: t\nrules:\n  - id: a\n    level: error\n    subject: transistor\n    when: all(1..100000000, {# > 0})\n    message: m\n",
			// "1..100000000" starts at col 15, the operator ".." at col 16.
			"t.yaml:6:16", "range operator"},
		{"unknown rule key", "name: t\nrules:\n  - id: a\n    level: error\n    subject: transistor\n    whne: vce > 1\n    message: m\n",
			"t.yaml:6:5", `unknown key "whne"`},
		{"unknown top key", "name: t\nrulez: []\n", "t.yaml:2:1", `unknown key "rulez"`},
		{"bad level", "name: t\nrules:\n  - id: a\n    level: fatal\n    subject: transistor\n    when: vce > 1\n    message: m\n",
			"t.yaml:4:12", "level"},
		{"bad id", "name: t\nrules:\n  - id: Bad_Id\n    level: error\n    subject: transistor\n    when: vce > 1\n    message: m\n",
			"t.yaml:3:9", "kebab-case"},
		{"wrong subject fact", "name: t\nrules:\n  - id: a\n    level: error\n    subject: net\n    when: vce > 1\n    message: m\n",
			"t.yaml:6:11", "unknown name vce"},
		{"bad parameter value", "name: t\nparameters:\n  lim: 3 A V\n", "t.yaml:3:8", "bad value"},
		// yaml.v3 reports the line of a syntax error only; the column is 1.
		{"yaml syntax", "name: t\nrules:\n\t- id: a\n", "t.yaml:3:1", "cannot start any token"},
		{"duplicate id", "name: t\nrules:\n" + okRule + okRule, "t.yaml:8:9", "defined twice"},
		{"disable unknown", "name: t\ndisable: [nope]\n", "t.yaml:2:11", `no rule "nope"`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("t.yaml", []byte(tc.src), LoadOptions{})
			if err == nil {
				t.Fatal("no error")
			}
			first := strings.SplitN(err.Error(), "\n", 2)[0]
			if !strings.HasPrefix(first, tc.pos+": ") || !strings.Contains(first, tc.msg) {
				t.Errorf("error %q, want at %s containing %q", err, tc.pos, tc.msg)
			}
		})
	}
}

// writeSets writes rule-set files into a temporary directory.
func writeSets(t *testing.T, files map[string]string) string {
	t.Helper()
	dir := t.TempDir()
	for name, src := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

func TestExtendsAndOverrides(t *testing.T) {
	dir := writeSets(t, map[string]string{
		"base.yaml": `name: base
extends: default
parameters:
  vceo_share: 90%
  extra: {value: 2.5 V, doc: a new one}
disable: [floating-base]
rules:
  - id: vce-over-rating
    level: warning
    subject: transistor
    when: vce > param.vceo_share * rating.vceo
    message: "replaced {vce:V}"
  - id: low-vce
    level: note
    subject: transistor
    when: vce < param.extra
    message: "low {vce:V}"
`,
		"child.yaml": `name: child
extends: base.yaml
parameters:
  extra: 1 V
levels:
  low-vce: error
`,
		"cycle-a.yaml": "name: a\nextends: cycle-b.yaml\n",
		"cycle-b.yaml": "name: b\nextends: cycle-a.yaml\n",
		"badunit.yaml": "name: u\nextends: default\nparameters:\n  vceo_share: {value: 3, unit: V}\n",
	})
	child, err := Load(filepath.Join(dir, "child.yaml"), LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(child.Extends, ","); got != "base.yaml,default" {
		t.Errorf("extends chain %q", got)
	}
	p, _ := child.Param("vceo_share")
	if p.Value != 0.9 || p.Unit != "%" || p.From != "base" {
		t.Errorf("vceo_share %+v", p)
	}
	if p, _ := child.Param("extra"); p.Value != 1 || p.Unit != "V" || p.Doc != "a new one" || p.From != "child" {
		t.Errorf("extra %+v", p)
	}
	r := child.Rule("vce-over-rating")
	if r == nil || r.Severity != SeverityWarning || r.Set != "base" {
		t.Errorf("replaced rule %+v", r)
	}
	// The replacement keeps the parent's place: vce-over-rating stays
	// between vcb... in default order, after vbe-reverse-over-rating.
	var order []string
	for _, r := range child.Rules {
		order = append(order, r.ID)
	}
	if !strings.Contains(strings.Join(order, " "), "vbe-reverse-over-rating vce-over-rating vcb-over-rating") || order[len(order)-1] != "low-vce" {
		t.Errorf("rule order %v", order)
	}
	if child.Rule("floating-base") != nil || child.RuleIDs()["floating-base"] {
		t.Error("floating-base should be disabled")
	}
	if _, known := child.RuleIDs()["floating-base"]; !known {
		t.Error("a disabled rule stays known")
	}
	if child.Rule("low-vce").Severity != SeverityError {
		t.Error("severities override")
	}

	// 0.9 * 40 V = 36 V: VCE 37 V now violates; 35 V does not.
	for _, tc := range []struct {
		vce  float64
		set  map[string]string
		fire bool
	}{{37, nil, true}, {35, nil, false}, {35, map[string]string{"vceo_share": "0.8"}, true}, {37, map[string]string{"vceo_share": "95 %"}, false}} {
		s, err := Load(filepath.Join(dir, "child.yaml"), LoadOptions{Set: tc.set})
		if err != nil {
			t.Fatal(err)
		}
		q := linearQ()
		q.VCE = tc.vce
		fs, _ := Evaluate(s, analysis(oneCase([]checks.Transistor{derive(q)}, nil, nil)), EvalOptions{Only: []string{"vce-over-rating"}})
		if (len(fs) == 1) != tc.fire {
			t.Errorf("VCE %g with %v: %v", tc.vce, tc.set, ids(fs))
		}
	}

	if _, err := Load(filepath.Join(dir, "cycle-a.yaml"), LoadOptions{}); err == nil || !strings.Contains(err.Error(), "cycle") {
		t.Errorf("cycle: %v", err)
	}
	if _, err := Load(filepath.Join(dir, "badunit.yaml"), LoadOptions{}); err == nil || !strings.Contains(err.Error(), "badunit.yaml:4:") {
		t.Errorf("unit change: %v", err)
	}
	for _, set := range []map[string]string{{"nope": "1"}, {"vceo_share": "2.5 V"}, {"vceo_share": "lots"}} {
		if _, err := Load(filepath.Join(dir, "child.yaml"), LoadOptions{Set: set}); err == nil || !strings.HasPrefix(err.Error(), "--set: ") {
			t.Errorf("--set %v: %v", set, err)
		}
	}
}

// TestTeamStrict: 35 V passes the default VCEO limit (40 V, class value
// from memory) and fails the 80 % derating (32 V, common practice).
func TestTeamStrict(t *testing.T) {
	q := linearQ()
	q.VCE = 35
	a := analysis(oneCase([]checks.Transistor{derive(q)}, nil, nil))
	for _, tc := range []struct {
		set  string
		want []string
	}{{"default", nil}, {"team-strict", []string{"vce-over-rating@Q1"}}} {
		s, err := Load(tc.set, LoadOptions{})
		if err != nil {
			t.Fatal(err)
		}
		fs, _ := Evaluate(s, a, EvalOptions{})
		if strings.Join(ids(fs), " ") != strings.Join(tc.want, " ") {
			t.Errorf("%s: %v, want %v", tc.set, ids(fs), tc.want)
		}
	}
	s, _ := Load("team-strict", LoadOptions{})
	if s.Rule("floating-base").Severity != SeverityError || s.Rule("tj-over-limit") == nil {
		t.Error("team-strict severities or rules")
	}
}

// TestLabCourse: IC 1.2 mA is 20 % off a 1 mA target (10 % allowed), VCE
// 1.5 V outside a 2-8 V window; the twin at 1.05 mA and 5 V passes.
func TestLabCourse(t *testing.T) {
	s, err := Load("lab-course", LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	good := linearQ()
	good.IC = 1.05e-3
	bad := linearQ()
	bad.Name, bad.IC, bad.VCE = "Q9", 1.2e-3, 1.5
	fs, _ := Evaluate(s, analysis(oneCase([]checks.Transistor{derive(good), derive(bad)}, nil, nil)), EvalOptions{})
	if got := strings.Join(ids(fs), " "); got != "ic-off-target@Q9 vce-outside-window@Q9" {
		t.Errorf("got %s", got)
	}
	s2, _ := Load("lab-course", LoadOptions{Set: map[string]string{"ic_target": "1.2mA", "vce_min": "1 V"}})
	fs, _ = Evaluate(s2, analysis(oneCase([]checks.Transistor{derive(bad)}, nil, nil)), EvalOptions{})
	if len(fs) != 0 {
		t.Errorf("retargeted: %v", ids(fs))
	}
}

func TestFacts(t *testing.T) {
	have := map[string]string{}
	for _, f := range Facts(SubjectTransistor) {
		have[f.Name] = f.Type
	}
	for name, typ := range map[string]string{"vce": "float", "rating.vceo": "float", "gp.vaf": "float",
		"role": "string", "bleed": "bool", "drives": "list", "scenario": "string"} {
		if have[name] != typ {
			t.Errorf("fact %s: %q, want %q", name, have[name], typ)
		}
	}
	if _, ok := have["pos"]; ok {
		t.Error("pos is not a fact")
	}
}

// The older spellings are still read, each with a located note: the rule
// key "severity" (now "level"), the section "severities" (now "levels"),
// subject "node" (now "net") and a renamed rule id.
func TestOldSpellingsRead(t *testing.T) {
	src := "name: t\nextends: default\nseverities:\n  overdissipation: warning\nrules:\n  - id: a\n    severity: note\n    subject: node\n    when: v > 100\n    message: m\n"
	rs, err := Parse("t.yaml", []byte(src), LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var notes []string
	for _, n := range rs.Notes {
		notes = append(notes, n.Error())
	}
	for _, want := range []string{
		`t.yaml:3:1: note: the section "severities" is now called "levels"`,
		`t.yaml:4:3: note: rule "overdissipation" is now called "power-over-rating"`,
		`t.yaml:7:5: note: the rule key "severity" is now called "level"`,
		`t.yaml:8:14: note: subject "node" is now called "net"`,
	} {
		found := false
		for _, n := range notes {
			found = found || strings.HasPrefix(n, want)
		}
		if !found {
			t.Errorf("no note %q in %q", want, notes)
		}
	}
	if r := rs.Rule("power-over-rating"); r == nil || r.Severity != SeverityWarning {
		t.Errorf("levels under the old name did not reach power-over-rating: %+v", r)
	}
	if r := rs.Rule("overdissipation"); r == nil || r.ID != "power-over-rating" {
		t.Errorf("the old id does not find the renamed rule")
	}
	if r := rs.Rule("a"); r == nil || r.Subject != SubjectNet || r.Severity != SeverityNote {
		t.Errorf("rule a: %+v", r)
	}
}

// --set values are checked against the parameter's unit and range: a
// share written as a plain number above 1 (80 for 80 %) would be 8000 %
// and switch the rule off, so it is refused with the percentage meant.
func TestSetRange(t *testing.T) {
	for _, tc := range []struct {
		name, value string
		want        float64 // the parameter's value when accepted
		err         string  // else text the error names
	}{
		{"vceo_share", "80%", 0.8, ""},
		{"vceo_share", "0.8", 0.8, ""},
		{"vceo_share", "1", 1, ""},
		{"vceo_share", "80", 0, "write 80%"},
		{"vceo_share", "-5%", 0, "cannot be negative"},
		{"linear_ic_min", "-1uA", 0, "cannot be negative"},
		{"linear_ic_min", "10u", 10e-6, ""},
	} {
		s, err := Load("default", LoadOptions{Set: map[string]string{tc.name: tc.value}})
		switch {
		case tc.err != "":
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("--set %s=%s: err %v, want one naming %q", tc.name, tc.value, err, tc.err)
			}
		case err != nil:
			t.Errorf("--set %s=%s: %v", tc.name, tc.value, err)
		default:
			if p, _ := s.Param(tc.name); math.Abs(p.Value-tc.want) > 1e-15 {
				t.Errorf("--set %s=%s: value %g, want %g", tc.name, tc.value, p.Value, tc.want)
			}
		}
	}
}
