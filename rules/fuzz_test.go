package rules

import (
	"encoding/binary"
	"math"
	"testing"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/rulesets"
)

// FuzzLoadRuleSet: no YAML input may crash the loader; a set that loads
// can be evaluated on healthy facts.
func FuzzLoadRuleSet(f *testing.F) {
	for _, n := range rulesets.Names() {
		if b, _, err := rulesets.RuleSet(n); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte("name: t\nrules:\n" + okRule))
	f.Add([]byte("name: t\nextends: default\nparameters:\n  vceo_share: 50%\nrules:\n  - id: x\n    level: note\n    subject: net\n    when: peak / v > 1\n    message: \"{peak:V} {{x}}\"\n"))
	f.Add([]byte("name: t\nrules:\n  - &a {id: q}\n  - *a\n"))
	f.Add([]byte("name: t\nextends: ../../etc/passwd.yaml\n"))
	a := analysis(oneCase([]checks.Transistor{linearQ(), switchQ()}, []checks.Resistor{okResistor()}, []checks.Node{okNode()}))
	f.Fuzz(func(t *testing.T, src []byte) {
		set, err := Parse("fuzz.yaml", src, LoadOptions{})
		if err != nil {
			return
		}
		if _, err := Evaluate(set, a, EvalOptions{}); err != nil {
			t.Fatalf("evaluate: %v", err)
		}
	})
}

// FuzzEvaluate: random facts never crash the default set, and every
// finding has a rule, a severity and a message.
func FuzzEvaluate(f *testing.F) {
	set, err := LoadDefault(LoadOptions{})
	if err != nil {
		f.Fatal(err)
	}
	f.Add(make([]byte, 8*16), uint8(0))
	seed := make([]byte, 8*16)
	for i, v := range []float64{0.65, 5, 1e-3, 5e-6, 40, 60, 6, 0.2, 0.625, 1000, 25, 120, 42, math.NaN(), math.Inf(1), -7} {
		binary.LittleEndian.PutUint64(seed[8*i:], math.Float64bits(v))
	}
	f.Add(seed, uint8(3))
	regions := []string{"active", "saturation", "cutoff", "reverse", ""}
	f.Fuzz(func(t *testing.T, raw []byte, flags uint8) {
		x := func(i int) float64 {
			if 8*i+8 > len(raw) {
				return 0
			}
			return math.Float64frombits(binary.LittleEndian.Uint64(raw[8*i:]))
		}
		q := checks.Transistor{TransistorFixed: &checks.TransistorFixed{Name: "Q1", Polarity: "npn", Rating: checks.Ratings{VCEO: x(4), VCBO: x(5), VEBO: x(6), ICMax: x(7), Pd: x(8), HFEMin: x(13)}, EmitterR: x(9), Bleed: flags&8 != 0, StiffDrive: flags&16 != 0}, VBE: x(0), VCE: x(1), IC: x(2), IB: x(3), Ambient: x(10), PdDerated: x(14), Beta: x(15), Power: x(1) * x(2), VCB: x(1) - x(0), Region: regions[int(flags)%len(regions)]}
		q.Role, q.Linear = checks.RoleCommonEmitter, true
		if flags&32 != 0 {
			q.Role, q.Linear = checks.RoleSwitch, false
		}
		r := checks.Resistor{ResistorFixed: &checks.ResistorFixed{Name: "R1", Rating: x(8)}, R: x(9), V: x(11), I: x(2), Power: x(11) * x(2)}
		n := checks.Node{NodeFixed: &checks.NodeFixed{Name: "n1"}, V: x(11), Peak: x(12)}
		fs, err := Evaluate(set, analysis(oneCase([]checks.Transistor{q}, []checks.Resistor{r}, []checks.Node{n})), EvalOptions{})
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range fs {
			if f.Rule == "" || f.Severity.Rank() > 2 || f.Message == "" {
				t.Fatalf("bad finding %+v", f)
			}
			for _, v := range append([]float64{f.Value, f.Limit}, quantities(f)...) {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("non-finite value in finding %+v", f)
				}
			}
		}
	})
}

func quantities(f Finding) []float64 {
	var out []float64
	for _, q := range f.Values {
		out = append(out, q.Value)
	}
	return out
}
