package checks_test

import (
	"math"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/rules"
)

// findingsSet evaluates the default rule set with parameter overrides and
// returns the findings of rule.
func findingsSet(t *testing.T, a *checks.Analysis, rule string, set map[string]string) []rules.Finding {
	t.Helper()
	rs, err := rules.Load("default", rules.LoadOptions{Set: set})
	if err != nil {
		t.Fatal(err)
	}
	fs, err := rules.Evaluate(rs, a, rules.EvalOptions{Only: []string{rule}})
	if err != nil {
		t.Fatal(err)
	}
	var out []rules.Finding
	for _, f := range fs {
		if !f.Unjudged {
			out = append(out, f)
		}
	}
	return out
}

// heldPower is the dissipation of an ideal NPN (no leakage, no Early
// effect, GMIN inside the junctions) with its base-emitter junction held
// at vbe and VCE held at vce, at junction temperature tc (C), by the
// Gummel-Poon equations (Gummel & Poon 1970 in the SPICE2 form of Nagel
// 1975) with the Nagel 1975 scaling IS(T) = IS*(T/Tnom)^XTI*exp((T/Tnom -
// 1)*EG/vt(T)), XTI 3, EG 1.11 eV, TNOM 27 C, and vt = kT/q (SI 2019).
func heldPower(is, bf, vbe, vce, tc float64) float64 {
	T, Tn := tc+273.15, 300.15
	vt := 1.380649e-23 * T / 1.602176634e-19
	isT := is * math.Pow(T/Tn, 3) * math.Exp((T/Tn-1)*1.11/vt)
	const gmin = 1e-12
	vbc := vbe - vce
	ibe := isT*math.Expm1(vbe/vt) + gmin*vbe
	ibc := isT*math.Expm1(vbc/vt) + gmin*vbc
	ic := (ibe - ibc) - ibc/1
	ib := ibe/bf + ibc/1
	return vce*ic + vbe*ib
}

// A transistor held at VBE 0.74 V and VCE 5 V: IC about 30 mA, P about
// 0.15 W at 25 C, rising about 6 %/K (d ln IC/dT = XTI/T + (EG -
// VBE)/(vt*T) at 300 K, from the Nagel 1975 scaling). On a heat sink
// (RthJA 10 K/W) the loop gain is about 0.15*0.06*10 = 0.09: a stable
// point a couple of kelvin above the ambient. In free air (RthJA 200 K/W)
// it is about 2: the junction runs away.
func TestThermalLoopGainByHand(t *testing.T) {
	const src = `held junction
VB b 0 0.74
VC c 0 5
Q1 c b 0 HELD
*@device Q1 role=linear
*@part HELD vceo=60 vcbo=80 vebo=5 icmax=3 pd=40 tjmax=150 rthja=RTH hfemin=50 hfemax=200
.model HELD NPN (IS=1e-14 BF=100)
.end
`
	sunk := analyzeWith(t, strings.Replace(src, "RTH", "10", 1), checks.Options{Thermal: true})
	tr := q(&sunk.Cases[0], "Q1")
	// The fixed point T = 25 + P(T)*10 by iteration of the hand formula,
	// and the loop gain as the solver takes it, the derivative dP/dTj *
	// RthJA (a central difference of 1 mK of the hand formula).
	T := 25.0
	for i := 0; i < 200; i++ {
		T = 25 + heldPower(1e-14, 100, 0.74, 5, T)*10
	}
	gain := (heldPower(1e-14, 100, 0.74, 5, T+1e-3) - heldPower(1e-14, 100, 0.74, 5, T-1e-3)) / 2e-3 * 10
	if math.Abs(tr.Tj-T) > 2e-3 {
		t.Errorf("heat sink: Tj %.4f C, by hand %.4f C", tr.Tj, T)
	}
	if math.Abs(tr.ThermalGain-gain) > 1e-3*gain || tr.ThermalRunaway || tr.OverTemperature {
		t.Errorf("heat sink: loop gain %.5f (by hand %.5f), runaway %v, overtemperature %v", tr.ThermalGain, gain, tr.ThermalRunaway, tr.OverTemperature)
	}
	if fs := findings(t, sunk, "thermal-runaway"); len(fs) != 0 {
		t.Errorf("heat sink: thermal-runaway fired: %s", fs[0].Message)
	}
	// A team limit below the stable gain: the message says what was found
	// (close to runaway, the gain against that limit), not a runaway.
	fs := findingsSet(t, sunk, "thermal-runaway", map[string]string{"thermal_gain_max": "0.05"})
	if len(fs) != 1 || !strings.Contains(fs[0].Message, "is close to thermal runaway") || strings.Contains(fs[0].Message, "without bound") {
		t.Errorf("heat sink, limit 0.05: %v", fs)
	}

	free := analyzeWith(t, strings.Replace(src, "RTH", "200", 1), checks.Options{Thermal: true})
	tr = q(&free.Cases[0], "Q1")
	g25 := (heldPower(1e-14, 100, 0.74, 5, 26) - heldPower(1e-14, 100, 0.74, 5, 25)) * 200
	if !(g25 > 1) {
		t.Fatalf("hand loop gain at 25 C in free air %g: the case should run away", g25)
	}
	if !tr.ThermalRunaway || !(tr.ThermalGain >= 1) || tr.OverTemperature {
		t.Errorf("free air: runaway %v, loop gain %g, overtemperature %v; want a runaway with gain >= 1 (hand gain at 25 C: %.2f)",
			tr.ThermalRunaway, tr.ThermalGain, tr.OverTemperature, g25)
	}
	if !(tr.RunawayTj < 150) {
		t.Errorf("free air: ran away from %g C, want below Tj max", tr.RunawayTj)
	}
	fs = findings(t, free, "thermal-runaway")
	if len(fs) != 1 || !strings.Contains(fs[0].Message, "runs away thermally") || !strings.Contains(fs[0].Message, "reaches 1") {
		t.Fatalf("free air: thermal-runaway findings %v", fs)
	}
}

// A transistor whose current is set by a current source: IE = 100 mA with
// VCE about 10 V, so P is about 1 W whatever the temperature (loop gain
// near zero, slightly negative as VBE falls). With RthJA 200 K/W the
// junction settles at a stable 25 + 1*200 = 225 C, above its Tj max of
// 150 C: an overtemperature, not a runaway. The dissipation rule reports it
// (1 W against (150 - 25)/200 = 625 mW, common practice derating) with
// the same junction temperature, and the overtemperature rule stays silent
// unless the dissipation rule is relaxed. At 2 W the point (about 425 C)
// lies past Tj max + 150 K and is estimated.
func TestStableAboveTjMax(t *testing.T) {
	const src = `current-set heater
VC c 0 10
IE e 0 IE_VALUE
VB b 0 0
Q1 c b e HOT
*@device Q1 role=linear
*@part HOT vceo=60 vcbo=80 vebo=5 icmax=3 pd=625m tjmax=150 rthja=200 hfemin=50 hfemax=200
.model HOT NPN (IS=1e-14 BF=100)
.end
`
	for _, tc := range []struct {
		ie   string
		watt float64
	}{{"100m", 1}, {"200m", 2}} {
		a := analyzeWith(t, strings.Replace(src, "IE_VALUE", tc.ie, 1), checks.Options{Thermal: true})
		tr := q(&a.Cases[0], "Q1")
		// By hand: P = VCE*IC + VBE*IB with VCE = 10 V + VBE, IC =
		// IE*BF/(BF+1), and VBE between 0 and 0.7 V at any of these
		// temperatures, so Tj = 25 + P*200 lies between these bounds.
		ie := tc.watt / 10
		lo, hi := 25+10*ie*100/101*200, 25+10.7*ie*200
		if tr.ThermalRunaway || !tr.OverTemperature || tr.Tj < lo || tr.Tj > hi {
			t.Errorf("IE %s: runaway %v overtemperature %v, Tj %.2f C, want %.1f to %.1f C (P %.3f W, gain %g)",
				tc.ie, tr.ThermalRunaway, tr.OverTemperature, tr.Tj, lo, hi, tr.Power, tr.ThermalGain)
		}
		// Where it was solved (1 W, below Tj max + 150 K) the point is the
		// fixed point Tj = Ta + P*RthJA itself.
		if want := 25 + tr.Power*200; tc.watt == 1 && math.Abs(tr.Tj-want) > 0.01 {
			t.Errorf("IE %s: Tj %.3f C, Ta + P*RthJA = %.3f C", tc.ie, tr.Tj, want)
		}
		if fs := findings(t, a, "thermal-runaway"); len(fs) != 0 {
			t.Errorf("IE %s: false runaway: %s", tc.ie, fs[0].Message)
		}
		od := findings(t, a, "power-over-rating")
		if len(od) != 1 || !strings.Contains(od[0].Message, "junction at about") {
			t.Errorf("IE %s: power-over-rating findings %v", tc.ie, od)
		}
		if fs := findings(t, a, "tj-over-rating"); len(fs) != 0 {
			t.Errorf("IE %s: overtemperature reported a second time: %s", tc.ie, fs[0].Message)
		}
		relaxed := map[string]string{"pd_share": "1000%"}
		ot := findingsSet(t, a, "tj-over-rating", relaxed)
		if len(ot) != 1 || !strings.Contains(ot[0].Message, "settles at about") {
			t.Errorf("IE %s, power-over-rating relaxed: overtemperature findings %v", tc.ie, ot)
		}
	}
}
