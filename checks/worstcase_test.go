package checks_test

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
)

// parse reads netlist text with includes disabled.
func parse(t testing.TB, src string) *netlist.Circuit {
	t.Helper()
	c, err := netlist.ReadSource("t.cir", []byte(src), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err != nil {
		t.Fatalf("read: %v", err)
	}
	return c
}

// full are the options the check command uses.
var full = checks.Options{Scenarios: true, Corners: true, Thermal: true}

func analyzeWith(t testing.TB, src string, opt checks.Options) *checks.Analysis {
	t.Helper()
	a, err := checks.Analyze(parse(t, src), opt)
	if err != nil {
		t.Fatalf("analyze: %v", err)
	}
	return a
}

// findings evaluates the default rule set and returns the findings of rule.
func findings(t *testing.T, a *checks.Analysis, rule string) []rules.Finding {
	t.Helper()
	return findingsSet(t, a, rule, nil)
}

func caseOf(t *testing.T, a *checks.Analysis, scenario, corner string) *checks.Case {
	t.Helper()
	for i := range a.Cases {
		if a.Cases[i].Scenario == scenario && a.Cases[i].Corner == corner {
			return &a.Cases[i]
		}
	}
	var names []string
	for _, c := range a.Cases {
		names = append(names, rules.CaseName(c.Scenario, c.Corner))
	}
	t.Fatalf("no case %q/%q; have %s", scenario, corner, strings.Join(names, ", "))
	return nil
}

func q(cs *checks.Case, name string) checks.Transistor {
	for _, t := range cs.Transistors {
		if netlist.Key(t.Name) == netlist.Key(name) {
			return t
		}
	}
	return checks.Transistor{}
}

// A relay driver whose pin idles low: with a 47 kOhm base resistor the
// base current (3.3 - 0.7)/47k = 55 uA cannot saturate a 100 mA coil
// (forced beta 10 wants 10 mA, common practice). The rule fires only in the
// PULSE's high level; at the low level (the nominal DC value) the switch is
// off and not judged.
func TestWeakSwitchOnlyAtHighLevel(t *testing.T) {
	a := analyzeWith(t, `relay driver, pin idles low
VCC vcc 0 12
VPIN pin 0 PULSE(0 3.3 1m 1u 1u 5m 10m)
RB pin b 47k
RBE b 0 100k
RCOIL vcc c 120
Q1 c b 0 GEN_NPN
.model GEN_NPN NPN (IS=1e-14 BF=200)
.end
`, full)
	fs := findings(t, a, "weak-switch-drive")
	if len(fs) != 1 {
		t.Fatalf("weak-switch-drive: %d findings, want 1", len(fs))
	}
	f := fs[0]
	if f.Scenario != "VPIN high" {
		t.Errorf("worst case %q, want VPIN high", rules.CaseName(f.Scenario, f.Corner))
	}
	for _, c := range append([]string{rules.CaseName(f.Scenario, f.Corner)}, f.AlsoIn...) {
		if !strings.HasPrefix(c, "VPIN high") {
			t.Errorf("violated in %q: want only the high level and its corners", c)
		}
	}
	if nom := q(caseOf(t, a, "nominal", ""), "Q1"); nom.IC > 1e-6 {
		t.Errorf("nominal IC = %g A, want the switch off at the low level", nom.IC)
	}
}

// A +/-10 V line (bipolar level, idling high) into a base resistor with no
// clamp: at the low level the base sits near -10*47k/57k = -8.2 V (divider,
// hand estimate), past VEBO = 6 V. The clamped twin holds it at about
// -0.7 V (a silicon diode, common practice).
func TestReverseVBEAtNegativeLevel(t *testing.T) {
	src := `line receiver
VCC vcc 0 5
VLINE line 0 PULSE(10 -10 0 1u 1u 50u 100u)
RB line b 10k
RBE b 0 47k
RC vcc c 4.7k
Q1 c b 0 LINE_NPN
%s
*@part LINE_NPN vceo=40 vcbo=60 vebo=6 icmax=200m pd=500m tjmax=150 rthja=250 hfemin=100 hfemax=300
.model LINE_NPN NPN (IS=1e-14 BF=200)
.model CLAMP D (IS=4n N=1.9)
.end
`
	a := analyzeWith(t, strings.Replace(src, "%s", "", 1), full)
	fs := findings(t, a, "vbe-reverse-over-rating")
	if len(fs) != 1 || fs[0].Scenario != "VLINE low" {
		t.Fatalf("vbe-reverse-over-rating findings %+v, want one at VLINE low", fs)
	}
	if got, want := fs[0].Value, 10*47e3/57e3; math.Abs(got-want) > 0.05*want {
		t.Errorf("reverse VBE %g V, want about %g V (divider)", got, want)
	}
	if nom := q(caseOf(t, a, "nominal", ""), "Q1"); nom.VBE < 0 {
		t.Errorf("nominal (high level) VBE %g V, want forward", nom.VBE)
	}
	a = analyzeWith(t, strings.Replace(src, "%s", "DCL 0 b CLAMP", 1), full)
	if fs := findings(t, a, "vbe-reverse-over-rating"); len(fs) != 0 {
		t.Errorf("clamped line: %d findings, want none", len(fs))
	}
}

// An AC-coupled stage with RC = 4.7k and RE = 1k has a gain of about
// -RC/RE = -4.7 (common practice). With its operating VCE as headroom, it
// clips when the input peak exceeds VCE/4.7 and not below.
func TestClippingAtHeadroomOverGain(t *testing.T) {
	stage := func(peak string) string {
		return `line driver
VCC vcc 0 12
VS sig 0 SIN(0 ` + peak + ` 1k)
CIN sig b 10u
R1 vcc b 68k
R2 b 0 12k
RC vcc c 4.7k
RE e 0 1k
Q1 c b e LNPN
*@device Q1 role=linear
.model LNPN NPN (IS=1e-14 BF=200 VAF=100)
.end
`
	}
	a := analyzeWith(t, stage("0.1"), full)
	nom := q(caseOf(t, a, "nominal", ""), "Q1")
	est := nom.VCE / 4.7 // headroom over the gain
	for _, tc := range []struct {
		factor float64
		clips  bool
	}{{0.6, false}, {1.6, true}} {
		peak := tc.factor * est
		a := analyzeWith(t, stage(strconv.FormatFloat(peak, 'g', 4, 64)), full)
		fs := findings(t, a, "signal-clipping")
		if (len(fs) > 0) != tc.clips {
			t.Errorf("peak %.3g V (%.1f x headroom/gain %.3g V): %d clipping findings, want clips=%v", peak, tc.factor, est, len(fs), tc.clips)
			continue
		}
		if !tc.clips {
			continue
		}
		f := fs[0]
		tr := q(caseOf(t, a, f.Scenario, f.Corner), "Q1")
		if lvl := math.Abs(tr.ClipLevel); lvl < 0.6*est || lvl > 1.4*est {
			t.Errorf("clip level %g V, want within 40 %% of headroom/gain %g V", lvl, est)
		}
		if g := tr.SwingGain; g > -4.7*0.85 || g < -4.7*1.05 {
			t.Errorf("small-signal gain %g, want about -RC/RE = -4.7 (a little less for re)", g)
		}
		if want := (tr.SwingPeak - math.Abs(tr.ClipLevel)) * math.Abs(tr.SwingGain); math.Abs(tr.HeadroomMissing-want) > 1e-9 || math.Abs(tr.SwingPeak-peak) > 1e-3*peak {
			t.Errorf("headroom missing %g V, want (peak - clip level)*|gain| = %g V", tr.HeadroomMissing, want)
		}
	}
}

// A fixed-bias stage's IC is hFE*IB and spreads with hFE (3:1 between the
// part's min and max here); a divider plus an emitter resistor holds it
// within a few per cent, IE = (Vth - VBE)/(RE + Rth/(hFE+1)) (classic
// divider-bias analysis, hand estimate: 1.04 to 1.11 mA, 7 %).
func TestBetaSensitiveBias(t *testing.T) {
	part := "*@part PNPN vceo=40 vcbo=60 vebo=6 icmax=200m pd=500m tjmax=150 rthja=250 hfemin=100 hfemax=300\n.model PNPN NPN (IS=1e-14 BF=200 VAF=100)\n.end\n"
	fixed := analyzeWith(t, "fixed bias\nVCC vcc 0 12\nVS sig 0 SIN(0 2m 1k)\nCIN sig b 10u\nRB vcc b 1.5MEG\nRC vcc c 2.2k\nQ1 c b 0 PNPN\n*@device Q1 role=linear\n"+part, full)
	if fs := findings(t, fixed, "beta-sensitive-bias"); len(fs) != 1 {
		t.Errorf("fixed bias: %d beta-sensitive-bias findings, want 1", len(fs))
	} else if tr := q(caseOf(t, fixed, "nominal", ""), "Q1"); tr.ICBetaSpread < 0.8 {
		t.Errorf("fixed bias spread %g, want near (300-100)/200 = 1 (IC = hFE*IB)", tr.ICBetaSpread)
	}
	div := analyzeWith(t, "divider bias\nVCC vcc 0 12\nVS sig 0 SIN(0 2m 1k)\nCIN sig b 10u\nR1 vcc b 68k\nR2 b 0 12k\nRC vcc c 4.7k\nRE e 0 1k\nQ1 c b e PNPN\n*@device Q1 role=linear\n"+part, full)
	if fs := findings(t, div, "beta-sensitive-bias"); len(fs) != 0 {
		t.Errorf("divider bias: %d findings, want none", len(fs))
	}
	tr := q(caseOf(t, div, "nominal", ""), "Q1")
	if math.Abs(tr.ICHFEMin-1.04e-3) > 0.06e-3 || math.Abs(tr.ICHFEMax-1.11e-3) > 0.06e-3 {
		t.Errorf("IC at hFE min/max = %g/%g A, want about 1.04/1.11 mA (hand estimate)", tr.ICHFEMin, tr.ICHFEMax)
	}
}

// A power transistor held at a stiff VBE with no emitter resistor heats
// itself: IC grows about 7 %/K at fixed VBE (VBE -2 mV/K at fixed current
// over a 26 mV thermal voltage, common practice). In free air (62.5 K/W,
// TO-220 class, from memory) with watts dissipated the loop gain is far
// above 1; on an ideal heat sink (1.5 K/W, junction to case) it is far
// below.
func TestThermalRunaway(t *testing.T) {
	src := `heater driver
VCC vcc 0 12
R1 vcc b 150
R2 b 0 10
RL vcc c 2
Q1 c b 0 HTR
*@device Q1 role=linear
*@part HTR vceo=60 vcbo=80 vebo=5 icmax=3 pd=40 tjmax=150 rthja=RTH hfemin=25 hfemax=100
.model HTR NPN (IS=1e-12 BF=50 VAF=100)
.end
`
	hot := analyzeWith(t, strings.Replace(src, "RTH", "62.5", 1), checks.Options{Thermal: true})
	tr := q(&hot.Cases[0], "Q1")
	if !tr.ThermalRunaway || tr.ThermalGain < 1 {
		t.Errorf("free air: runaway %v, loop gain %g; want a runaway with gain >= 1", tr.ThermalRunaway, tr.ThermalGain)
	}
	sink := analyzeWith(t, strings.Replace(src, "RTH", "1.5", 1), checks.Options{Thermal: true})
	tr = q(&sink.Cases[0], "Q1")
	if tr.ThermalRunaway || !(tr.ThermalGain < 1) {
		t.Errorf("heat sink: runaway %v, loop gain %g; want stable", tr.ThermalRunaway, tr.ThermalGain)
	}
	// At the fixed point Tj = Ta + P*RthJA.
	if want := 25 + tr.Power*1.5; math.Abs(tr.Tj-want) > 0.01 {
		t.Errorf("Tj = %g C, want Ta + P*RthJA = %g C", tr.Tj, want)
	}
}

// A diode-connected transistor on a 1 mA current source: VBE falls about
// 2 mV/K (common practice) between the ambient corners, and at each corner
// equals NF*vt*ln(I/IS(T)) with IS(T) = IS*(T/Tnom)^XTI*exp((T/Tnom-1)*EG/vt)
// (Nagel 1975), vt = kT/q with the SI 2019 constants.
func TestVBETemperatureAtCorners(t *testing.T) {
	a := analyzeWith(t, `vbe thermometer
I1 0 c 1m
VCC vcc 0 5
RX vcc x 1k
Q1 c c 0 TNPN
.model TNPN NPN (IS=1e-14 BF=200)
.end
`, checks.Options{Corners: true})
	lo, hi := q(caseOf(t, a, "nominal", "ambient 0 C"), "Q1"), q(caseOf(t, a, "nominal", "ambient 70 C"), "Q1")
	if slope := (hi.VBE - lo.VBE) / 70; slope < -2.5e-3 || slope > -1.5e-3 {
		t.Errorf("dVBE/dT = %g V/K, want about -2 mV/K (common practice)", slope)
	}
	const k, qe = 1.380649e-23, 1.602176634e-19 // SI 2019
	tnom := 27 + 273.15
	for _, tc := range []struct {
		c  float64
		tr checks.Transistor
	}{{0, lo}, {70, hi}} {
		T := tc.c + 273.15
		vt := k * T / qe
		is := 1e-14 * math.Pow(T/tnom, 3) * math.Exp((T/tnom-1)*1.11/vt)
		ic := tc.tr.IC
		want := vt * math.Log(ic/is+1)
		if math.Abs(tc.tr.VBE-want) > 1e-4 {
			t.Errorf("%g C: VBE %g V, want %g V (Nagel 1975 IS scaling)", tc.c, tc.tr.VBE, want)
		}
	}
}

const dividerStage = `divider-biased stage
VCC vcc 0 12
R1 vcc b 68k
R2 b 0 12k
RC vcc c 4.7k
RE e 0 1k
Q1 c b e MNPN
*@device Q1 role=linear
.model MNPN NPN (IS=1e-14 BF=200 VAF=100)
.end
`

// The mean IC over Monte Carlo runs converges to the nominal IC: the
// tolerances are symmetric, so the bias is second order (about t^2/3 of
// curvature terms, far below the standard error here).
func TestMonteCarloMean(t *testing.T) {
	const n = 400
	a := analyzeWith(t, dividerStage, checks.Options{MonteCarlo: n, Seed: 7})
	nom := q(&a.Cases[0], "Q1").IC
	var sum, sum2 float64
	runs := 0
	for _, c := range a.Cases {
		if c.Kind != checks.KindMonteCarlo {
			continue
		}
		ic := q(&c, "Q1").IC
		sum, sum2 = sum+ic, sum2+ic*ic
		runs++
	}
	if runs != n {
		t.Fatalf("%d runs, want %d", runs, n)
	}
	mean := sum / n
	sd := math.Sqrt(sum2/n - mean*mean)
	se := sd / math.Sqrt(n)
	if sd == 0 || math.Abs(mean-nom) > 3*se {
		t.Errorf("mean IC %g A, nominal %g A, standard error %g A: want within 3 standard errors", mean, nom, se)
	}
}

// The same seed gives the same bits with one worker or two, and another
// seed gives other draws.
func TestDeterministicAcrossWorkers(t *testing.T) {
	run := func(workers int, seed uint64) *checks.Analysis {
		o := full
		o.MonteCarlo, o.Seed, o.Workers = 20, seed, workers
		return analyzeWith(t, dividerStage, o)
	}
	a, b := run(1, 3), run(2, 3)
	if len(a.Cases) != len(b.Cases) {
		t.Fatalf("%d cases with 1 worker, %d with 2", len(a.Cases), len(b.Cases))
	}
	for i := range a.Cases {
		ca, cb := a.Cases[i], b.Cases[i]
		if ca.Scenario != cb.Scenario || ca.Corner != cb.Corner {
			t.Fatalf("case %d: %s/%s vs %s/%s", i, ca.Scenario, ca.Corner, cb.Scenario, cb.Corner)
		}
		for j := range ca.Transistors {
			x, y := ca.Transistors[j], cb.Transistors[j]
			if math.Float64bits(x.IC) != math.Float64bits(y.IC) || math.Float64bits(x.Tj) != math.Float64bits(y.Tj) {
				t.Errorf("case %s/%s: IC %v vs %v, Tj %v vs %v", ca.Scenario, ca.Corner, x.IC, y.IC, x.Tj, y.Tj)
			}
		}
	}
	c := run(2, 4)
	last := len(a.Cases) - 1
	if q(&a.Cases[last], "Q1").IC == q(&c.Cases[last], "Q1").IC {
		t.Errorf("seeds 3 and 4 gave the same last run")
	}
}
