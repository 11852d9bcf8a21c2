package plane

import (
	"math"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

// circuit reads netlist text with includes disabled.
func circuit(t *testing.T, src string) *netlist.Circuit {
	t.Helper()
	c, err := netlist.ReadSource("t.cir", []byte(src), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err != nil {
		t.Fatalf("read: %v", err)
	}
	return c
}

// near reports whether got is within rel of want (relative) or 1e-15
// absolute.
func near(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Abs(want)+1e-15
}

const models = `
.model N NPN (IS=1e-14 BF=150)
.model P PNP (IS=1e-14 BF=150)
`

// The load line of a single stage, against the textbook construction
// (common practice): with the transistor removed the collector-emitter loop
// is the Thevenin source VOpen behind R = Rc,th + Re,th, so the line runs
// from VCE = VOpen at IC = 0 to IC = VOpen/R at VCE = 0. The values are by
// hand from Thevenin's theorem for each network.
func TestLoadLineEndPoints(t *testing.T) {
	for _, tc := range []struct {
		name, src, q string
		vopen, r     float64
	}{
		{
			// VCE = VCC - IC*(RC+RE): ends VCC and VCC/(RC+RE).
			name: "divider-biased stage",
			src:  "V1 vcc 0 12\nR1 vcc b 82k\nR2 b 0 15k\nRC vcc c 4.7k\nRE e 0 1k\nQ1 c b e N\n",
			q:    "Q1", vopen: 12, r: 4700 + 1000,
		},
		{
			// The collector sees VCC*RL/(RC+RL) behind RC||RL.
			name: "loaded collector",
			src:  "V1 vcc 0 10\nRB vcc b 470k\nRC vcc c 2k\nRL c 0 8k\nRE e 0 500\nQ1 c b e N\n",
			q:    "Q1", vopen: 10 * 8000 / 10000.0, r: 2000*8000/10000.0 + 500,
		},
		{
			// Split supplies: the emitter returns to -5 V, so the loop
			// spans 15 V.
			name: "split supply",
			src:  "VP vcc 0 10\nVN vee 0 -5\nRB b 0 10k\nRC vcc c 3k\nRE e vee 2k\nQ1 c b e N\n",
			q:    "Q1", vopen: 15, r: 5000,
		},
		{
			// A PNP from the positive rail, mirrored: VEC = VCC at IC = 0.
			name: "pnp stage",
			src:  "V1 vcc 0 9\nRB b 0 100k\nRE vcc e 1.5k\nRC c 0 3k\nQ1 c b e P\n",
			q:    "Q1", vopen: 9, r: 4500,
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := circuit(t, "t\n"+tc.src+models+".end\n")
			ll, err := LoadLineOf(c, tc.q, solve.Options{})
			if err != nil {
				t.Fatal(err)
			}
			// 1e-6: the 1 TOhm leaks disturb the network by parts per million at most.
			if !near(ll.VOpen, tc.vopen, 1e-6) {
				t.Errorf("VOpen = %g V, want %g V", ll.VOpen, tc.vopen)
			}
			if !near(ll.IShort, tc.vopen/tc.r, 1e-6) {
				t.Errorf("IShort = %g A, want %g A", ll.IShort, tc.vopen/tc.r)
			}
			if !near(ll.R, tc.r, 1e-6) {
				t.Errorf("R = %g Ohm, want %g Ohm", ll.R, tc.r)
			}
			first, last := ll.Curve[0], ll.Curve[len(ll.Curve)-1]
			if !near(first.VCE, tc.vopen, 1e-6) || math.Abs(first.IC) > 1e-9 {
				t.Errorf("curve starts at %+v, want (%g V, 0 A)", first, tc.vopen)
			}
			if last.VCE != 0 || !near(last.IC, tc.vopen/tc.r, 1e-6) {
				t.Errorf("curve ends at %+v, want (0 V, %g A)", last, tc.vopen/tc.r)
			}
			// A linear network gives a straight line: IC = (VOpen - VCE)/R.
			for _, p := range ll.Curve {
				if want := (tc.vopen - p.VCE) / tc.r; math.Abs(p.IC-want) > 1e-6*tc.vopen/tc.r {
					t.Errorf("curve point %+v off the line (IC should be %g A)", p, want)
				}
			}
		})
	}
}

// A network that is not linear bends the load line: here a diode clamps the
// collector at one diode drop above a 5 V rail, so the sampled curve leaves
// the chord between its intercepts, while the intercepts stay right: at
// VCE = 0 no diode conducts and IC = 12 V/(RC+RE); at IC = 0 the diode
// holds the collector near 5 V plus a forward drop of 0.5-0.8 V (common
// practice).
func TestLoadLineBendsWithNonlinearLoad(t *testing.T) {
	c := circuit(t, "t\nV1 vcc 0 12\nV2 clamp 0 5\nRC vcc c 10k\nD1 c clamp DX\nRE e 0 1k\nRB vcc b 1MEG\nQ1 c b e N\n"+
		".model DX D (IS=1e-14)\n"+models+".end\n")
	ll, err := LoadLineOf(c, "Q1", solve.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if ll.VOpen < 5.5 || ll.VOpen > 5.8 {
		t.Errorf("VOpen = %g V, want 5 V plus a diode drop", ll.VOpen)
	}
	if !near(ll.IShort, 12/11e3, 1e-4) {
		t.Errorf("IShort = %g A, want 12 V / 11 kOhm", ll.IShort)
	}
	bent := false
	for _, p := range ll.Curve {
		chord := ll.IShort * (1 - p.VCE/ll.VOpen)
		if math.Abs(p.IC-chord) > 0.05*ll.IShort {
			bent = true
		}
	}
	if !bent {
		t.Error("the curve lies on the chord; the diode should bend it")
	}
}

func TestLoadLineSpecialLoops(t *testing.T) {
	// Collector on the rail and emitter grounded: no resistance in the
	// loop, a vertical line at VCC.
	c := circuit(t, "t\nV1 vcc 0 5\nRB vcc b 100k\nQ1 vcc b 0 N\n"+models+".end\n")
	ll, err := LoadLineOf(c, "Q1", solve.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if ll.R != 0 || !math.IsInf(ll.IShort, 1) || !near(ll.VOpen, 5, 1e-9) {
		t.Errorf("rail-to-rail loop: %+v, want VOpen 5 V, R 0, IShort +Inf", ll)
	}

	// A current-source tail sets the current: no load line.
	c = circuit(t, "t\nV1 vcc 0 5\nRB vcc b 100k\nRC vcc c 1k\nI1 e 0 1m\nQ1 c b e N\n"+models+".end\n")
	if _, err := LoadLineOf(c, "Q1", solve.Options{}); err == nil || !strings.Contains(err.Error(), "no resistive path") {
		t.Errorf("current-source tail: err = %v, want no resistive path", err)
	}

	// A supply that reverse-biases the loop.
	c = circuit(t, "t\nV1 vcc 0 -5\nRB vcc b 100k\nRC vcc c 1k\nQ1 c b 0 N\n"+models+".end\n")
	if _, err := LoadLineOf(c, "Q1", solve.Options{}); err == nil || !strings.Contains(err.Error(), "no forward voltage") {
		t.Errorf("reversed supply: err = %v, want no forward voltage", err)
	}

	if _, err := LoadLineOf(c, "RB", solve.Options{}); err == nil {
		t.Error("a resistor is not a transistor")
	}
}

// The power hyperbola passes through Pd/VCE at each VCE, and the outline
// meets the current and voltage limits at their knees (the SOA
// construction of common practice).
func TestBoundary(t *testing.T) {
	const icmax, vceo, pd = 0.2, 40, 0.5
	segs := Boundary(icmax, vceo, pd, 44, 0.22)
	if len(segs) != 3 || segs[0].Limit != "icmax" || segs[1].Limit != "power" || segs[2].Limit != "vceo" {
		t.Fatalf("segments %+v, want icmax, power, vceo", segs)
	}
	for _, p := range segs[1].Points {
		if !near(p.IC, pd/p.VCE, 1e-12) {
			t.Errorf("hyperbola point %+v: IC should be Pd/VCE = %g A", p, pd/p.VCE)
		}
	}
	pw := segs[1].Points
	if !near(pw[0].VCE, pd/icmax, 1e-12) || !near(pw[0].IC, icmax, 1e-12) {
		t.Errorf("hyperbola starts at %+v, want the knee (Pd/ICmax = 2.5 V, ICmax)", pw[0])
	}
	if pw[len(pw)-1].VCE != vceo || !near(pw[len(pw)-1].IC, pd/vceo, 1e-12) {
		t.Errorf("hyperbola ends at %+v, want (VCEO, Pd/VCEO = 12.5 mA)", pw[len(pw)-1])
	}
	for i := 1; i < len(pw); i++ {
		if !(pw[i].VCE > pw[i-1].VCE) {
			t.Fatalf("hyperbola VCE not increasing at %d", i)
		}
	}
	if p := segs[0].Points; p[0] != (Point{0, icmax}) || p[1].IC != icmax {
		t.Errorf("current limit %+v, want IC = ICmax", p)
	}
	if p := segs[2].Points; p[0].VCE != vceo || p[1] != (Point{vceo, 0}) {
		t.Errorf("voltage limit %+v, want VCE = VCEO down to 0", p)
	}

	// A power rating that never binds gives the rectangle ICmax by VCEO.
	segs = Boundary(0.1, 30, 10, 33, 0.11)
	if len(segs) != 2 || segs[0].Points[1] != (Point{30, 0.1}) || segs[1].Points[1] != (Point{30, 0}) {
		t.Errorf("non-binding power: %+v, want the rectangle", segs)
	}

	// Unknown ICmax: the hyperbola starts at the top of the plotted area.
	segs = Boundary(math.NaN(), 40, 0.5, 44, 0.05)
	if len(segs) != 2 || segs[0].Limit != "power" || !near(segs[0].Points[0].VCE, 0.5/0.05, 1e-12) {
		t.Errorf("unknown ICmax: %+v", segs)
	}
	// Nothing known: no outline.
	if segs := Boundary(math.NaN(), math.NaN(), math.NaN(), 10, 1); len(segs) != 0 {
		t.Errorf("no ratings: %+v, want none", segs)
	}
	// Derated to zero (ambient at Tj,max): nothing is allowed.
	segs = Boundary(0.2, 40, 0, 44, 0.22)
	if len(segs) != 1 || segs[0].Limit != "power" || segs[0].Points[1] != (Point{40, 0}) {
		t.Errorf("zero power: %+v", segs)
	}
}

// The saturation edge against the ideal diode law: IS = 1e-14 A, NF = 1 at
// 27 C (the default TNOM, so no scaling), vt = k*T/q with the SI 2019
// constants at 300.15 K = 25.865 mV; at IC = 1 mA VBE = vt*ln(1 + 1e11) =
// 0.65512 V, so the collector-base junction reaches device.OnVoltage at
// VCE = VBE - 0.4 V = 0.25512 V. At small IC the edge is device.SatVCE.
func TestSaturationEdge(t *testing.T) {
	c := circuit(t, "t\nV1 vcc 0 5\nRB vcc b 100k\nQ1 vcc b 0 N\n"+models+".end\n")
	b, err := device.NewBJT(c.Models[c.Element("Q1").Model], 1, 27, device.Options{TNom: 27, GMin: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	pts := SaturationEdge(b, 2e-3)
	if len(pts) != edgePoints+1 || pts[0] != (Point{device.SatVCE, 0}) {
		t.Fatalf("edge starts %+v", pts[0])
	}
	var at1m Point
	for _, p := range pts {
		if p.IC == 1e-3 {
			at1m = p
		}
	}
	vt := 1.380649e-23 * 300.15 / 1.602176634e-19
	want := vt*math.Log1p(1e-3/1e-14) - 0.4
	if !near(at1m.VCE, want, 1e-12) || math.Abs(want-0.25512) > 1e-5 {
		t.Errorf("edge at 1 mA: %g V, want %g V (0.25512 V)", at1m.VCE, want)
	}
	// The edge agrees with device.Classify: just right of it active, just
	// left of it saturated (VBC = VBE - VCE).
	vbe := want + 0.4
	if r := device.Classify(device.NPN, vbe, vbe-(want+1e-3), 1e-3); r != device.Active {
		t.Errorf("1 mV right of the edge: %s, want active", r)
	}
	if r := device.Classify(device.NPN, vbe, vbe-(want-1e-3), 1e-3); r != device.Saturation {
		t.Errorf("1 mV left of the edge: %s, want saturation", r)
	}
	if SaturationEdge(nil, 1) != nil || SaturationEdge(b, 0) != nil {
		t.Error("no device or no range should give no edge")
	}
}

func TestKindOf(t *testing.T) {
	for _, tc := range []struct {
		i    int
		c    checks.Case
		want Kind
	}{
		{0, checks.Case{Scenario: "nominal", Kind: checks.KindNominal}, Nominal},
		{1, checks.Case{Scenario: "VRELAY high", Kind: checks.KindLevel}, Scenario},
		{2, checks.Case{Scenario: "VRELAY open", Kind: checks.KindOpen}, Scenario},
		{3, checks.Case{Scenario: "nominal", Corner: "hfe min", Kind: checks.KindCorner}, Corner},
		{4, checks.Case{Scenario: "VSIG +peak", Kind: checks.KindSwing}, Swing},
		{5, checks.Case{Scenario: "monte carlo 3", Kind: checks.KindMonteCarlo}, MonteCarlo},
		// Without a kind: by position and corner.
		{0, checks.Case{Scenario: "anything"}, Nominal},
		{6, checks.Case{Scenario: "nominal", Corner: "hot"}, Corner},
		{7, checks.Case{Scenario: "other"}, Scenario},
	} {
		if got := KindOf(tc.i, tc.c); got != tc.want {
			t.Errorf("KindOf(%d, %+v) = %s, want %s", tc.i, tc.c, got, tc.want)
		}
	}
}

// Swing points form one trajectory per source, ordered by the source's
// level and passing through the nominal point.
func TestTrajectories(t *testing.T) {
	pts := []OpPoint{
		{Point: Point{5, 1e-3}, Kind: Nominal, Case: "nominal"},
		{Point: Point{2, 2e-3}, Kind: Swing, Case: "VSIG +peak", Level: 0.02},
		{Point: Point{8, 0.4e-3}, Kind: Swing, Case: "VSIG -peak", Level: -0.02},
		{Point: Point{4, 1.2e-3}, Kind: Corner, Case: "nominal/hfe max"},
		{Point: Point{3.5, 1.5e-3}, Kind: Swing, Case: "VSIG at +10.0 mV", Level: 0.01},
		{Point: Point{6, 0.8e-3}, Kind: Swing, Case: "VAUX +peak", Level: 0.1},
	}
	tr := trajectories(pts)
	if len(tr) != 2 || tr[0].Source != "VSIG" || tr[1].Source != "VAUX" {
		t.Fatalf("trajectories %+v", tr)
	}
	want := []Point{{8, 0.4e-3}, {5, 1e-3}, {3.5, 1.5e-3}, {2, 2e-3}}
	if len(tr[0].Points) != len(want) {
		t.Fatalf("VSIG path %+v, want %+v", tr[0].Points, want)
	}
	for i := range want {
		if tr[0].Points[i] != want[i] {
			t.Errorf("VSIG point %d = %+v, want %+v", i, tr[0].Points[i], want[i])
		}
	}
	if len(tr[1].Points) != 2 || tr[1].Points[0] != (Point{5, 1e-3}) {
		t.Errorf("VAUX path %+v", tr[1].Points)
	}
}

func TestView(t *testing.T) {
	ll := &LoadLine{VOpen: 12, IShort: 2e-3}
	// VCEO 40 V is within 4 x 12 V and is taken in; ICmax 200 mA is 100
	// times the bias and is left out.
	x, y := View(ll, []OpPoint{{Point: Point{6, 1e-3}}}, 0.2, 40)
	if !near(x, 44, 1e-12) || !near(y, 2.2e-3, 1e-12) {
		t.Errorf("View = %g V, %g A; want 44 V, 2.2 mA", x, y)
	}
	x, y = View(nil, nil, math.NaN(), math.NaN())
	if !near(x, 1.1, 1e-12) || !near(y, 1.1e-3, 1e-12) {
		t.Errorf("empty View = %g, %g", x, y)
	}
}

// Of gathers a transistor's points from every case and its limits from the
// nominal facts.
func TestOf(t *testing.T) {
	c := circuit(t, "t\nV1 vcc 0 12\nR1 vcc b 82k\nR2 b 0 15k\nRC vcc c 4.7k\nRE e 0 1k\nQ1 c b e N\n"+models+
		"*@part N vceo=40 icmax=100m pd=300m tjmax=150 rthja=400\n.end\n")
	an, err := checks.Analyze(c, checks.Options{})
	if err != nil {
		t.Fatal(err)
	}
	// Two cases more, of the kinds the worst-case analysis adds.
	hot := an.Cases[0]
	hot.Corner, hot.Kind = "hot", checks.KindCorner
	sw := an.Cases[0]
	sw.Scenario, sw.Kind = "VSIG +peak", checks.KindSwing
	an.Cases = append(an.Cases, hot, sw)

	pl, err := Of(an, "q1")
	if err != nil {
		t.Fatal(err)
	}
	q := an.Cases[0].Transistors[0]
	if len(pl.Points) != 3 || pl.Points[0].Point != (Point{q.VCE, q.IC}) || pl.Points[0].Kind != Nominal ||
		pl.Points[1].Kind != Corner || pl.Points[1].Case != "nominal/hot" || pl.Points[2].Kind != Swing {
		t.Errorf("points %+v", pl.Points)
	}
	if len(pl.Swings) != 1 || pl.Swings[0].Source != "VSIG" || len(pl.Swings[0].Points) != 2 {
		t.Errorf("swing trajectories %+v, want VSIG through two points", pl.Swings)
	}
	if pl.Load == nil || !near(pl.Load.VOpen, 12, 1e-6) || !near(pl.Load.IShort, 12/5700.0, 1e-6) {
		t.Errorf("load line %+v (%s)", pl.Load, pl.LoadNote)
	}
	// Pd(25 C) = min(300 mW, (150-25)/400 = 312.5 mW) = 300 mW (linear
	// derating, common practice).
	if pl.SOA.Pd != 0.3 || pl.SOA.ICMax != 0.1 || pl.SOA.VCEO != 40 {
		t.Errorf("SOA ratings %+v", pl.SOA)
	}
	// The Q point lies on the load line (KVL around the loop with IE = IC
	// + IB: the line neglects IB, so it is within IB*RE).
	if want := (12 - q.VCE) / 5700; math.Abs(q.IC-want) > q.IB*1000/5700+1e-9 {
		t.Errorf("Q point %g A off the load line (%g A)", q.IC, want)
	}
	if len(pl.Saturation) == 0 || len(pl.SOA.Segments) == 0 {
		t.Error("no saturation edge or SOA outline")
	}
	if _, err := Of(an, "Q9"); err == nil {
		t.Error("Of of a missing transistor should fail")
	}
	if all := All(an); len(all) != 1 || all[0].Device != "Q1" {
		t.Errorf("All = %+v", all)
	}
}

// The load line Of solves on the local part of a board (up to the rails)
// is the one solved on the whole board: same end points and curve to
// 1e-9 relative, for every transistor of three stages on one rail with a
// follower, and of the demo board.
func TestLocalLoadLineMatchesWholeBoard(t *testing.T) {
	src := "stages\nVCC vcc 0 12\n.model N NPN(IS=5f BF=180 VAF=80)\n"
	for _, i := range []string{"1", "2", "3"} {
		src += "R1_" + i + " vcc b" + i + " 47k\nR2_" + i + " b" + i + " 0 10k\nRC" + i + " vcc c" + i + " 4.7k\nRE" + i + " e" + i + " 0 1k\nQ" + i + " c" + i + " b" + i + " e" + i + " N\n"
	}
	src += "QF c1 c2 f N\nRF f 0 3.3k\n.end\n"
	demo, err := netlist.Read("../../rulesets/demo/bench-logger.cir", nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []*netlist.Circuit{circuit(t, src), demo} {
		an, err := checks.Analyze(c, checks.Options{})
		if err != nil {
			t.Fatal(err)
		}
		for _, tr := range an.Cases[0].Transistors {
			pl, err := Of(an, tr.Name)
			if err != nil {
				t.Fatal(err)
			}
			opt := solve.Options{Temp: solve.Temp(an.Cases[0].Solution.Temp)}
			whole, err := LoadLineOf(c, tr.Name, opt)
			if (err != nil) != (pl.Load == nil) {
				t.Fatalf("%s: whole-board load line error %v, local %v", tr.Name, err, pl.LoadNote)
			}
			if err != nil {
				continue
			}
			ll := pl.Load
			if !near(ll.VOpen, whole.VOpen, 1e-9) || !near(ll.IShort, whole.IShort, 1e-9) || len(ll.Curve) != len(whole.Curve) {
				t.Errorf("%s: local load line %g V, %g A (%d points), whole board %g V, %g A (%d)",
					tr.Name, ll.VOpen, ll.IShort, len(ll.Curve), whole.VOpen, whole.IShort, len(whole.Curve))
				continue
			}
			for k := range ll.Curve {
				if !near(ll.Curve[k].IC, whole.Curve[k].IC, 1e-9) && math.Abs(ll.Curve[k].IC-whole.Curve[k].IC) > 1e-15 {
					t.Errorf("%s: point %d: %g A, whole board %g A", tr.Name, k, ll.Curve[k].IC, whole.Curve[k].IC)
				}
			}
		}
	}
}
