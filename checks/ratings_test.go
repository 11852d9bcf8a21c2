package checks_test

import (
	"math"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
)

// A *@part that gives only pd=625m for a model the library does not know:
// the missing ratings come from the generic class (tjmax 150 C, rthja
// 250 K/W, parts.yaml), but the user's Pd is not derated along the class's
// RthJA ((150 - 25)/250 = 500 mW at 25 C): RthJA is taken as (Tj,max -
// 25 C)/Pd = 125/0.625 = 200 K/W, so the part is judged at 625 mW at 25 C
// and (150 - 70)/200 = 400 mW at 70 C (linear derating, common practice).
func TestPartialRatingsKeepTheUsersPd(t *testing.T) {
	const src = `current-set stage
VC c 0 10
IE e 0 55m
VB b 0 0
Q1 c b e ONLYPD
*@device Q1 role=linear
*@part ONLYPD pd=625m
.model ONLYPD NPN (IS=1e-14 BF=100)
.end
`
	a := analyzeWith(t, src, checks.Options{})
	tr := q(&a.Cases[0], "Q1")
	r := tr.Rating
	if r.Pd != 0.625 || r.TjMax != 150 || math.Abs(r.RthJA-200) > 1e-9 || r.VCEO != 25 {
		t.Errorf("ratings %+v; want pd 625 mW (given), tjmax 150 C and vceo 25 V (generic class), rthja 200 K/W (derived)", r)
	}
	if math.Abs(tr.PdDerated-0.625) > 1e-12 {
		t.Errorf("derated Pd at 25 C = %g W, want the 625 mW given", tr.PdDerated)
	}
	if got := checks.DeratedPower(r, 70); math.Abs(got-0.4) > 1e-12 {
		t.Errorf("derated Pd at 70 C = %g W, want (150 - 70)/200 = 400 mW", got)
	}
	// About 0.58 W (10.65 V * 54.5 mA): within 625 mW, so no finding.
	if !(tr.Power > 0.5 && tr.Power < 0.625) {
		t.Fatalf("power %g W, want between 500 and 625 mW for this test", tr.Power)
	}
	if fs := findings(t, a, "power-over-rating"); len(fs) != 0 {
		t.Errorf("power-over-rating at %g W against the user's 625 mW: %s", tr.Power, fs[0].Message)
	}
	var note string
	for _, n := range a.Notes {
		if strings.Contains(n.Msg, "ratings of ONLYPD") {
			note = n.Error()
		}
	}
	for _, want := range []string{"t.cir:7:1", "pd as given", `vceo 25.0 V`, `from the "generic" class`, "rthja 200 K/W from pd 625 mW and tjmax 150 C"} {
		if !strings.Contains(note, want) {
			t.Errorf("note %q does not say %q", note, want)
		}
	}

	// Pd and RthJA both given: both are used, Tj max from the class, and
	// the note says so.
	b := analyzeWith(t, strings.Replace(src, "pd=625m", "pd=625m rthja=100", 1), checks.Options{})
	r = q(&b.Cases[0], "Q1").Rating
	if r.Pd != 0.625 || r.RthJA != 100 || r.TjMax != 150 {
		t.Errorf("pd and rthja given: %+v", r)
	}
	// Everything given: no note.
	c := analyzeWith(t, strings.Replace(src, "pd=625m", "vceo=40 vcbo=60 vebo=6 icmax=200m pd=625m tjmax=150 rthja=200 hfemin=100 hfemax=300", 1), checks.Options{})
	for _, n := range c.Notes {
		if strings.Contains(n.Msg, "ratings of ONLYPD") {
			t.Errorf("full ratings noted: %s", n.Msg)
		}
	}
}

// A bleed resistor straight across a 12 V rail held exactly (tol=0): 600
// Ohm dissipates 12^2/600 = 240 mW, inside its 250 mW rating; at the low
// end of its own 5 % tolerance, 570 Ohm, it dissipates 12^2/570 = 252.6 mW,
// beyond it (Ohm's law). Its value does not move any transistor's current,
// so only a corner aimed at its own dissipation finds this.
func TestResistorCornerTowardsItsOwnPower(t *testing.T) {
	const src = `indicator board
VCC vcc 0 12
*@device VCC tol=0
RBLEED vcc 0 600
*@device RBLEED power_rating=250m
RB vcc b 470k
RC vcc c 4.7k
RE e 0 1k
Q1 c b e SMALL
*@device Q1 role=linear
*@part SMALL vceo=40 vcbo=60 vebo=6 icmax=200m pd=625m tjmax=150 rthja=200 hfemin=100 hfemax=300
.model SMALL NPN (IS=1e-14 BF=200)
.end
`
	a := analyzeWith(t, src, checks.Options{Corners: true})
	fs := findings(t, a, "resistor-power-over-rating")
	if len(fs) != 1 || fs[0].Device != "RBLEED" {
		t.Fatalf("resistor-power-over-rating findings %v; want RBLEED at its own -5 %% corner", fs)
	}
	f := fs[0]
	if f.Corner != "resistors worst RBLEED power" || math.Abs(f.Value-144.0/570) > 1e-6 {
		t.Errorf("RBLEED: %s/%s, %g W; want 'resistors worst RBLEED power' at 12^2/570 = %g W", f.Scenario, f.Corner, f.Value, 144.0/570)
	}
}
