package rulesets

import (
	"math"
	"strings"
	"testing"
)

func TestMatchName(t *testing.T) {
	for _, tc := range []struct {
		pat, name string
		want      bool
	}{
		{"2N_GEN*", "2n_gen3904", true},
		{"2N_GEN*", "2N_GEN", true},
		{"2N_GEN*", "X2N_GEN", false},
		{"X1.*", "x1.q2", true},
		{"X1.*", "X10.Q2", false},
		{"Q?", "Q7", true},
		{"Q?", "Q12", false},
		{"*a*b*", "xxaxxbxx", true},
		{"*a*b", "xxaxxbxxc", false},
		{"", "", true},
		{"*", "", true},
		{"Q1", "q1", true},
	} {
		if got := MatchName(tc.pat, tc.name); got != tc.want {
			t.Errorf("MatchName(%q, %q) = %v", tc.pat, tc.name, got)
		}
	}
}

// TestParts checks the embedded library against the class values it
// states (typical of the class, from memory) and the consistency of its
// thermal figures: Pd at 25 C equals (Tj,max - 25 C)/RthJA, the linear
// derating relation (common practice).
func TestParts(t *testing.T) {
	lib, err := Parts()
	if err != nil {
		t.Fatal(err)
	}
	g, ok := lib.Generic()
	if !ok || g.VCEO != 25 || g.Polarity != "any" {
		t.Fatalf("generic entry %+v", g)
	}
	for _, e := range lib.Entries {
		if !strings.Contains(e.Origin, "from memory") {
			t.Errorf("%s: origin %q does not say where the values come from", e.Class, e.Origin)
		}
		for name, v := range map[string]float64{"vceo": e.VCEO, "vcbo": e.VCBO, "vebo": e.VEBO, "icmax": e.ICMax,
			"pd": e.Pd, "tjmax": e.TjMax, "rthja": e.RthJA, "hfemin": e.HFEMin, "hfemax": e.HFEMax} {
			if math.IsNaN(v) {
				t.Errorf("%s: %s missing", e.Class, name)
			}
		}
		if d := (e.TjMax - 25) / e.RthJA; math.Abs(d-e.Pd) > 1e-9 {
			t.Errorf("%s: Pd %g W but (Tj,max-25)/RthJA = %g W", e.Class, e.Pd, d)
		}
		// The generic class must be at least as conservative as any other.
		if e.Class != GenericClass && e.Class[:5] == "small" && (g.VCEO > e.VCEO || g.ICMax > e.ICMax || g.Pd > e.Pd || g.HFEMin > e.HFEMin) {
			t.Errorf("generic is less conservative than %s", e.Class)
		}
	}
	p, ok := lib.Lookup("2n_gen2222", "npn")
	if !ok || p.Class != "small-signal-npn" || p.VCEO != 40 {
		t.Errorf("lookup 2n_gen2222: %+v %v", p, ok)
	}
	if _, ok := lib.Lookup("2n_gen2222", "pnp"); ok {
		t.Error("an NPN class must not serve a PNP")
	}
	if _, ok := lib.Lookup("UNKNOWN_PART", "npn"); ok {
		t.Error("unknown model matched")
	}
}

func TestLoadPartsErrors(t *testing.T) {
	for _, tc := range []struct{ src, want string }{
		{"parts:\n  - class: a\n    vceoo: 3\n", "x.yaml:2:5: error: parts library: unknown key \"vceoo\" at line 3"},
		{"parts:\n  - class: a\n    polarity: nnp\n", "x.yaml:2:5: error: parts library: class \"a\": polarity"},
		{"parts:\n  - class: a\n  - class: A\n", "x.yaml:3:5: error: parts library: class \"A\" defined twice"},
		{"parts:\n  - class: a\n    vceo: -3\n", "x.yaml:2:5: error: parts library: class \"a\": vceo must not be negative"},
		{"partz: []\n", "x.yaml:1:1: error: parts library: unknown key"},
		{"parts: [\n", "x.yaml:1:1: error: parts library: did not find expected node content"},
	} {
		_, err := LoadParts("x.yaml", []byte(tc.src))
		if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
			t.Errorf("%q: %v, want %q", tc.src, err, tc.want)
		}
	}
}

func TestNames(t *testing.T) {
	if got := strings.Join(Names(), " "); got != "default lab-course team-strict" {
		t.Errorf("Names() = %q", got)
	}
	if _, file, err := RuleSet("Default"); err != nil || file != "rulesets/default.yaml" {
		t.Errorf("RuleSet: %s %v", file, err)
	}
	if _, _, err := RuleSet("nope"); err == nil {
		t.Error("unknown set")
	}
}
