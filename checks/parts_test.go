package checks

import (
	"fmt"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/netlist"
)

// A relay driver drawn with a registered type's model name: the 2N2222A's
// ratings (VCEO 40 V, IC 800 mA, from memory of its data sheets) are used,
// not the generic class's 100 mA, so a 155 mA coil is within rating.
func TestRegisteredTypeRatings(t *testing.T) {
	a := analyze(t, `relay driver
VCC vcc 0 12
VIN in 0 5
RB in b 1k
RCOIL vcc c 75
Q1 c b 0 Q2N2222A
.model Q2N2222A NPN (IS=1e-14 BF=200)
.end
`)
	q := transistor(t, a, "Q1")
	if q.Rating.Generic || q.Rating.Part != "2N2222A" || q.Rating.ICMax != 0.8 || q.Rating.VCEO != 40 {
		t.Fatalf("rating %+v", q.Rating)
	}
	if !strings.Contains(q.Rating.Origin, "from memory") {
		t.Errorf("origin %q", q.Rating.Origin)
	}
	if !(q.IC > 0.14 && q.IC < q.Rating.ICMax) {
		t.Errorf("IC %g A", q.IC)
	}
}

// Ratings in hierarchy: a model defined inside a subcircuit is flattened
// to X1.MYSW; *@part MYSW (at top level or inside the body) and a board
// file entry for MYSW match it by its own name, and one for X2.MYSW by
// its full name (which wins for that instance). An annotation that matches
// no model is a located warning.
func TestPartsInHierarchy(t *testing.T) {
	src := `drivers with a local model
VCC vcc 0 12
VIN in 0 3.3
X1 in vcc drv
X2 in vcc drv
.subckt drv ctl sup
*@part MYSW vceo=60 icmax=500m
RB ctl b 2.2k
RC sup c 1k
Q1 c b 0 MYSW
.model MYSW NPN (IS=1e-14 BF=150)
.ends
*@part X2.MYSW vceo=80
*@part NOSUCH vceo=10
.end
`
	c := circuit(t, src)
	a, err := Analyze(c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	q1, q2 := transistor(t, a, "X1.Q1"), transistor(t, a, "X2.Q1")
	if q1.Rating.Generic || q1.Rating.VCEO != 60 || q1.Rating.ICMax != 0.5 {
		t.Errorf("X1.Q1 rating %+v", q1.Rating)
	}
	// X2.MYSW's entry wins over MYSW's, value by value.
	if q2.Rating.VCEO != 80 || q2.Rating.ICMax != 0.5 {
		t.Errorf("X2.Q1 rating %+v", q2.Rating)
	}
	var warned bool
	for _, n := range a.Notes {
		if n.Severity == netlist.SevWarning && strings.Contains(n.Msg, "NOSUCH match no model") {
			warned = true
			if n.Pos.Line != 14 {
				t.Errorf("warning at %s, want line 14", n.Pos)
			}
		}
		if strings.Contains(n.Msg, "MYSW match no model") {
			t.Errorf("matched part reported unmatched: %s", n)
		}
	}
	if !warned {
		t.Errorf("no warning for *@part NOSUCH: %v", a.Notes)
	}

	// A board file names the model by its own name too.
	b, err := board.Parse("b.yaml", []byte("parts:\n  MYSW: {vceo: 45}\n  GHOST: {vceo: 5}\n"), c)
	if err != nil {
		t.Fatal(err)
	}
	a, err = Analyze(circuit(t, strings.Replace(src, "*@part MYSW vceo=60 icmax=500m\n", "", 1)), Options{Board: b})
	if err != nil {
		t.Fatal(err)
	}
	if q := transistor(t, a, "X1.Q1"); q.Rating.VCEO != 45 || q.Rating.Generic {
		t.Errorf("board file MYSW: %+v", q.Rating)
	}
	found := false
	for _, n := range a.Notes {
		if strings.Contains(n.Msg, "GHOST match no model") && n.Pos.File == "b.yaml" && n.Pos.Line == 3 {
			found = true
		}
	}
	if !found {
		t.Errorf("no located warning for the board file's GHOST: %v", a.Notes)
	}
}

// A model named for an NPN type but declared PNP does not take the type's
// ratings, and a note says why.
func TestTypeOfOtherPolarity(t *testing.T) {
	a := analyze(t, `wrong polarity
VCC vcc 0 -12
RB vcc b 100k
RC vcc c 1k
Q1 c b 0 2N3904
.model 2N3904 PNP (IS=1e-14 BF=150)
.end
`)
	q := transistor(t, a, "Q1")
	if !q.Rating.Generic {
		t.Errorf("rating %+v", q.Rating)
	}
	found := false
	for _, n := range a.Notes {
		found = found || strings.Contains(n.Msg, "is PNP, but 2N3904 is an NPN type")
	}
	if !found {
		t.Errorf("no polarity note: %v", a.Notes)
	}
}

// Model names as vendor libraries and schematic editors write them: each
// takes its registered type's ratings (from memory of the data sheets),
// the hFE group's range where the name carries one.
func TestVendorModelNames(t *testing.T) {
	var b strings.Builder
	b.WriteString("vendor model names\nVCC vcc 0 12\n")
	models := []struct{ model, pol, part string }{
		{"Q2N2222", "NPN", "2N2222"}, {"Q2N3904", "NPN", "2N3904"}, {"BC547B", "NPN", "BC547B"},
		{"BC557B", "PNP", "BC557B"}, {"BD135", "NPN", "BD135"}, {"Q2N2907A", "PNP", "2N2907A"},
		{"bc337-40", "NPN", "BC337-40"}, {"TIP31C", "NPN", "TIP31C"}, {"2N3055_ST", "NPN", "2N3055"},
	}
	for i, m := range models {
		fmt.Fprintf(&b, "R%d vcc b%d 100k\nQ%d c%d b%d 0 %s\nRC%d vcc c%d 1k\n.model %s %s (IS=1e-14 BF=200)\n", i, i, i, i, i, m.model, i, i, m.model, m.pol)
	}
	a := analyze(t, b.String()+".end\n")
	for i, m := range models {
		q := transistor(t, a, fmt.Sprintf("Q%d", i))
		if q.Rating.Generic || q.Rating.Part != m.part {
			t.Errorf("%s: part %q generic %v, want %s", m.model, q.Rating.Part, q.Rating.Generic, m.part)
		}
	}
	if q := transistor(t, a, "Q2"); q.Rating.HFEMin != 200 || q.Rating.HFEMax != 450 {
		t.Errorf("BC547B hFE %g..%g, want group B 200..450 (from memory)", q.Rating.HFEMin, q.Rating.HFEMax)
	}
}
