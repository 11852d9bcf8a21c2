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

// TestParts checks the embedded library for internal consistency: every
// breakdown rating VCBO >= VCEO (the collector junction with the emitter
// open holds at least what it holds with the base open, a property of
// every BJT data sheet); hFE min <= hFE max, with every hFE group inside
// the type's range; Pd at 25 C equal to (Tj,max - 25 C)/RthJA within 5 %
// (the linear derating relation, common practice; data sheets round both
// figures); and every entry saying that its values are from memory.
func TestParts(t *testing.T) {
	lib, err := Parts()
	if err != nil {
		t.Fatal(err)
	}
	g, ok := lib.Generic()
	if !ok || g.VCEO != 25 || g.Polarity != "any" {
		t.Fatalf("generic entry %+v", g)
	}
	count := map[string]int{}
	for _, e := range lib.Entries {
		if !strings.Contains(e.Origin, "from memory") {
			t.Errorf("%s: origin %q does not say where the values come from", e.Class, e.Origin)
		}
		for name, v := range map[string]float64{"vceo": e.VCEO, "vcbo": e.VCBO, "vebo": e.VEBO, "icmax": e.ICMax,
			"pd": e.Pd, "tjmax": e.TjMax, "rthja": e.RthJA, "hfemin": e.HFEMin} {
			if math.IsNaN(v) || v <= 0 {
				t.Errorf("%s: %s missing", e.Class, name)
			}
		}
		if e.VCBO < e.VCEO {
			t.Errorf("%s: VCBO %g V below VCEO %g V", e.Class, e.VCBO, e.VCEO)
		}
		if !math.IsNaN(e.HFEMax) && e.HFEMin > e.HFEMax {
			t.Errorf("%s: hFE min %g above max %g", e.Class, e.HFEMin, e.HFEMax)
		}
		if d := (e.TjMax - 25) / e.RthJA; math.Abs(d-e.Pd) > 0.05*e.Pd {
			t.Errorf("%s: Pd %g W but (Tj,max-25)/RthJA = %g W", e.Class, e.Pd, d)
		}
		for grp, r := range e.Groups {
			if r[0] < e.HFEMin || (!math.IsNaN(e.HFEMax) && r[1] > e.HFEMax) {
				t.Errorf("%s: hFE group %s %v outside the type's %g..%g", e.Class, grp, r, e.HFEMin, e.HFEMax)
			}
		}
		if e.Type {
			if e.Package == "" || !(e.HFEIC > 0) {
				t.Errorf("%s: package %q, hFE current %g: a type states both", e.Class, e.Package, e.HFEIC)
			}
			kind := "small-signal"
			switch {
			case e.ICMax >= 3:
				kind = "power"
			case e.ICMax >= 1.5:
				kind = "medium-power"
			}
			count[e.Polarity+" "+kind]++
			count["types"]++
		}
		// The generic class must be at least as conservative as any other
		// small-signal class.
		if !e.Type && e.Class != GenericClass && strings.HasPrefix(e.Class, "small") &&
			(g.VCEO > e.VCEO || g.ICMax > e.ICMax || g.Pd > e.Pd || g.HFEMin > e.HFEMin) {
			t.Errorf("generic is less conservative than %s", e.Class)
		}
	}
	if count["types"] < 30 {
		t.Errorf("%d registered types, want at least 30", count["types"])
	}
	for _, k := range []string{"npn small-signal", "pnp small-signal", "npn medium-power", "pnp medium-power", "npn power", "pnp power"} {
		if count[k] < 2 {
			t.Errorf("%d %s types, want at least 2", count[k], k)
		}
	}
	t.Logf("%d types: %v", count["types"], count)
}

// TestClassesAreTheirTypes checks the library's claim about its classes:
// each class other than generic carries exactly the ratings of the type it
// names with like.
func TestClassesAreTheirTypes(t *testing.T) {
	lib, err := Parts()
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range lib.Entries {
		if c.Type || c.Class == GenericClass {
			continue
		}
		if c.Like == "" {
			t.Errorf("class %s names no type with like", c.Class)
			continue
		}
		ty, ok := lib.LookupType(c.Like)
		if !ok || ty.Class != c.Like || ty.Polarity != c.Polarity {
			t.Errorf("class %s: like %s: %+v %v", c.Class, c.Like, ty, ok)
			continue
		}
		a := []float64{c.VCEO, c.VCBO, c.VEBO, c.ICMax, c.Pd, c.TjMax, c.RthJA, c.HFEMin, c.HFEMax}
		b := []float64{ty.VCEO, ty.VCBO, ty.VEBO, ty.ICMax, ty.Pd, ty.TjMax, ty.RthJA, ty.HFEMin, ty.HFEMax}
		for i := range a {
			if a[i] != b[i] && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) {
				t.Errorf("class %s: rating %d is %g, %s has %g", c.Class, i, a[i], ty.Class, b[i])
			}
		}
		if !strings.Contains(c.Origin, c.Like) {
			t.Errorf("class %s: origin %q does not name %s", c.Class, c.Origin, c.Like)
		}
	}
}

// TestLookupVariants checks model-name matching with the usual variants.
// hFE group ranges are the Pro Electron groups as the BC546-series data
// sheets give them (from memory: A 110-220, B 200-450, C 420-800 for the
// NPN types; B 220-475 for the PNP types) and the BC337 "-25" group
// (160-400, from memory).
func TestLookupVariants(t *testing.T) {
	lib, err := Parts()
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		names          []string
		pol            string
		want, variant  string
		hfemin, hfemax float64
	}{
		{[]string{"2N3904"}, "npn", "2N3904", "name", 100, 300},
		{[]string{"q2n3904"}, "npn", "2N3904", "Q prefix, name", 100, 300},
		{[]string{"Q2N3906"}, "pnp", "2N3906", "Q prefix, name", 100, 300},
		{[]string{"2N3904_ON"}, "npn", "2N3904", "maker suffix _ON, name", 100, 300},
		{[]string{"BC547B"}, "npn", "BC547B", "hFE group B", 200, 450},
		{[]string{"bc547c"}, "npn", "BC547C", "hFE group C", 420, 800},
		{[]string{"BC547"}, "npn", "BC547", "name", 110, 800},
		{[]string{"QBC557B"}, "pnp", "BC557B", "Q prefix, hFE group B", 220, 475},
		{[]string{"BC337-25"}, "npn", "BC337-25", "hFE group 25", 160, 400},
		{[]string{"BD139-16"}, "npn", "BD139-16", "hFE group 16", 100, 250},
		{[]string{"BC547B/PHI"}, "npn", "BC547B", "maker suffix /PHI, hFE group B", 200, 450},
		{[]string{"2N3904-FS"}, "npn", "2N3904", "maker suffix -FS, name", 100, 300},
		{[]string{"BC547B-AP"}, "npn", "BC547B", "maker suffix -AP, hFE group B", 200, 450},
		{[]string{"2N2222"}, "npn", "2N2222", "name", 100, 300},
		{[]string{"2N2222A"}, "npn", "2N2222A", "name", 100, 300},
		{[]string{"Q2N2222A"}, "npn", "2N2222A", "Q prefix, name", 100, 300},
		{[]string{"MJE3055"}, "npn", "MJE3055T", "name", 20, 100},
		{[]string{"BD135"}, "npn", "BD135", "name", 40, 250},
		{[]string{"TIP32C"}, "pnp", "TIP32C", "name", 25, math.NaN()},
		// The model's own name first, then its flat name.
		{[]string{"BC547B", "X1.BC547B"}, "npn", "BC547B", "hFE group B", 200, 450},
		{[]string{"gen_npn_ss_led"}, "npn", "small-signal-npn", "pattern GEN_NPN_SS*", 100, 300},
	} {
		p, ok := lib.Lookup(tc.pol, tc.names...)
		if !ok || p.Name != tc.want || p.Variant != tc.variant || p.HFEMin != tc.hfemin ||
			(p.HFEMax != tc.hfemax && !(math.IsNaN(p.HFEMax) && math.IsNaN(tc.hfemax))) {
			t.Errorf("Lookup(%s, %v) = %s %q hFE %g..%g %v; want %s %q %g..%g", tc.pol, tc.names, p.Name, p.Variant,
				p.HFEMin, p.HFEMax, ok, tc.want, tc.variant, tc.hfemin, tc.hfemax)
		}
	}
	for _, tc := range []struct{ name, pol string }{
		{"2N3904", "pnp"}, // an NPN type does not serve a PNP
		{"BC547D", "npn"}, // no such group
		{"BC5470", "npn"},
		{"2N39", "npn"},
		{"XQ2N3904", "npn"},
		{"UNKNOWN_PART", "npn"},
		{"Q", "npn"},
		{"", "npn"},
	} {
		if p, ok := lib.Lookup(tc.pol, tc.name); ok {
			t.Errorf("Lookup(%s, %q) matched %s (%s)", tc.pol, tc.name, p.Name, p.Variant)
		}
	}
	if p, ok := lib.LookupType("Q2N3904"); !ok || p.Polarity != "npn" {
		t.Errorf("LookupType(Q2N3904) = %+v %v", p, ok)
	}
}

func TestCombine(t *testing.T) {
	user, err := LoadParts("mine.yaml", []byte("parts:\n  - {class: my-small, polarity: npn, like: BC547, origin: x, models: [MY*]}\n"))
	if err != nil {
		t.Fatal(err)
	}
	lib, err := Parts()
	if err != nil {
		t.Fatal(err)
	}
	all, err := Combine(user, lib)
	if err != nil {
		t.Fatal(err)
	}
	if p, ok := all.Lookup("npn", "MYQ"); !ok || p.VCEO != 45 {
		t.Errorf("user class like BC547: %+v %v", p, ok)
	}
	bad, _ := LoadParts("mine.yaml", []byte("parts:\n  - {class: c, polarity: npn, like: NOPE}\n"))
	if _, err := Combine(bad, lib); err == nil || !strings.Contains(err.Error(), "mine.yaml:2:5: error: parts library: class \"c\": like \"NOPE\" names no type") {
		t.Errorf("unresolved like: %v", err)
	}
}

func TestLoadPartsErrors(t *testing.T) {
	for _, tc := range []struct{ src, want string }{
		{"parts:\n  - class: a\n    vceoo: 3\n", "x.yaml:2:5: error: parts library: unknown key \"vceoo\" at line 3"},
		{"parts:\n  - class: a\n    polarity: nnp\n", "x.yaml:2:5: error: parts library: \"a\": polarity"},
		{"parts:\n  - class: a\n  - class: A\n", "x.yaml:3:5: error: parts library: \"A\" defined twice"},
		{"parts:\n  - class: a\n    vceo: -3\n", "x.yaml:2:5: error: parts library: \"a\": vceo must not be negative"},
		{"parts:\n  - {type: T1, class: T1}\n", "x.yaml:2:5: error: parts library: entry \"T1\" is both"},
		{"parts:\n  - {type: T1}\n", "x.yaml:2:5: error: parts library: type \"T1\" needs a polarity"},
		{"parts:\n  - {type: T1, polarity: npn, groups: {A: [3, 2]}}\n", "x.yaml:2:5: error: parts library: \"T1\": hFE group \"A\" must be"},
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
