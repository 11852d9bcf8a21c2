package solve

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/netlist"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/solve")

// golden compares got with the golden file testdata/solve/name, or
// rewrites it with -update.
func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("..", "..", "testdata", "solve", name)
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if string(want) != got {
		t.Errorf("%s differs from the golden file (go test -update rewrites it):\n%s", path, got)
	}
}

// vt27 is kT/q at 27 °C = 300.15 K from the SI 2019 exact constants.
var vt27 = 1.380649e-23 * 300.15 / 1.602176634e-19

// lambertW0 is the principal branch of the Lambert W function, w·e^w = x
// for x ≥ 0, by Halley's iteration (Corless et al., "On the Lambert W
// function", Adv. Comput. Math. 5 (1996), eq. 5.9).
func lambertW0(x float64) float64 {
	w := math.Log1p(x)
	if x > 3 {
		l := math.Log(x)
		w = l - math.Log(l)
	}
	for i := 0; i < 100; i++ {
		ew := math.Exp(w)
		f := w*ew - x
		step := f / (ew*(w+1) - (w+2)*f/(2*w+2))
		w -= step
		if math.Abs(step) <= 1e-15*math.Abs(w) {
			break
		}
	}
	return w
}

func TestDiodeSeriesResistorLambertW(t *testing.T) {
	tests := []struct{ v, r, is, n float64 }{
		{5, 1e3, 1e-14, 1},
		{1, 100, 1e-12, 1.5},
		{2, 10e3, 1e-16, 2},
		{0.9, 50, 1e-9, 1.8},
		{3.3, 330, 2.5e-9, 1.75},
	}
	for _, tt := range tests {
		b := newBuilder()
		b.model("dm", netlist.Diode, map[string]float64{"IS": tt.is, "N": tt.n})
		b.V("V1", "in", "0", tt.v)
		b.R("R1", "in", "a", tt.r)
		b.D("D1", "a", "0", "dm")
		r := mustSolve(t, b.c, Options{})
		// Banwell & Jayakumar, Electronics Letters 36(4) 2000:
		// I = (n·vt/R)·W(IS·R/(n·vt)·exp((V + IS·R)/(n·vt))) − IS.
		nvt := tt.n * vt27
		want := nvt/tt.r*lambertW0(tt.is*tt.r/nvt*math.Exp((tt.v+tt.is*tt.r)/nvt)) - tt.is
		got := r.Diodes[0].I
		if e := relErr(got, want); e > 1e-6 {
			t.Errorf("V=%g R=%g IS=%g N=%g: I = %.9g, Lambert-W %.9g (rel err %.2g)", tt.v, tt.r, tt.is, tt.n, got, want, e)
		}
		if e := relErr(-r.Ival("v1"), want); e > 1e-6 {
			t.Errorf("supply current %g, want %g", -r.Ival("v1"), want)
		}
	}
}

// npnModel is a small-signal silicon NPN of typical values (IS = 1e-14 A,
// BF = 100: common practice).
func npnModel(b *builder, extra map[string]float64) {
	p := map[string]float64{"IS": 1e-14, "BF": 100}
	for k, v := range extra {
		p[k] = v
	}
	b.model("qn", netlist.NPN, p)
}

func forcedVBE(t *testing.T, vbe, vce float64, params map[string]float64) *Result {
	b := newBuilder()
	npnModel(b, params)
	b.V("VB", "b", "0", vbe)
	b.V("VC", "c", "0", vce)
	b.Q("Q1", "c", "b", "0", "qn")
	return mustSolve(t, b.c, Options{})
}

func TestForcedVBEGummelPoon(t *testing.T) {
	params := map[string]float64{"VAF": 50, "IKF": 0.02, "BR": 2, "ISE": 1e-15, "NE": 1.5}
	for _, vbe := range []float64{0.55, 0.65, 0.72} {
		r := forcedVBE(t, vbe, 5, params)
		q := r.BJTs[0]
		// Gummel & Poon (1970) in the SPICE2 form (Nagel 1975), by hand.
		vbc := vbe - 5
		// GMIN inside each ideal junction current, as SPICE3 places it
		// (T. Quarles, The SPICE3 Implementation Guide, UCB/ERL M89/44,
		// 1989; from memory).
		gmin := 1e-12
		ibe := 1e-14*(math.Exp(vbe/vt27)-1) + gmin*vbe
		ibc := 1e-14*(math.Exp(vbc/vt27)-1) + gmin*vbc
		ile := 1e-15 * (math.Exp(vbe/(1.5*vt27)) - 1)
		q1 := 1 / (1 - vbc/50)
		qb := q1 / 2 * (1 + math.Sqrt(1+4*ibe/0.02))
		ic := (ibe-ibc)/qb - ibc/2
		ib := ibe/100 + ile + ibc/2
		if relErr(q.IC, ic) > 1e-9 || relErr(q.IB, ib) > 1e-9 {
			t.Errorf("VBE %g: IC %g IB %g, by hand IC %g IB %g", vbe, q.IC, q.IB, ic, ib)
		}
		// SPICE convention: a supply delivering current shows it negative.
		if relErr(r.Ival("vc"), -q.IC) > 1e-9 {
			t.Errorf("I(VC) = %g, want -IC = %g", r.Ival("vc"), -q.IC)
		}
		if q.IE >= 0 || math.Abs(q.IC+q.IB+q.IE) > 1e-18 || q.Region != device.Active {
			t.Errorf("IE %g, IC+IB+IE = %g, region %s", q.IE, q.IC+q.IB+q.IE, q.Region)
		}
	}
}

func TestEarlyEffect(t *testing.T) {
	// Common practice: the output slope of a transistor at fixed VBE is
	// dIC/dVCE ≈ IC/(VAF + VCE); for the Gummel-Poon q1 with VAR and IKF
	// infinite it is exactly IC/(VAF + VCB) (Nagel 1975).
	const vaf, vbe, vce, h = 60, 0.65, 5.0, 0.5
	params := map[string]float64{"VAF": vaf}
	ic := forcedVBE(t, vbe, vce, params).BJTs[0].IC
	slope := (forcedVBE(t, vbe, vce+h, params).BJTs[0].IC - forcedVBE(t, vbe, vce-h, params).BJTs[0].IC) / (2 * h)
	if e := relErr(slope, ic/(vaf+vce)); e > 0.02 {
		t.Errorf("dIC/dVCE = %g, IC/(VAF+VCE) = %g (rel %g)", slope, ic/(vaf+vce), e)
	}
	if e := relErr(slope, ic/(vaf+vce-vbe)); e > 1e-5 {
		t.Errorf("dIC/dVCE = %g, IC/(VAF+VCB) = %g (rel %g)", slope, ic/(vaf+vce-vbe), e)
	}
}

func TestVBEAtOneMilliamp(t *testing.T) {
	// Common practice: VBE is about 0.6-0.7 V at ~1 mA in a small silicon
	// BJT (IS ~ 1e-14 A).
	b := newBuilder()
	npnModel(b, nil)
	b.V("VCC", "vcc", "0", 10)
	b.R("RC", "vcc", "c", 4.7e3)
	b.I("IB", "0", "b", 10e-6) // 10 µA into the base: IC ≈ 1 mA at beta 100
	b.Q("Q1", "c", "b", "0", "qn")
	q := mustSolve(t, b.c, Options{}).BJTs[0]
	if q.VBE < 0.6 || q.VBE > 0.7 || math.Abs(q.IC-1e-3) > 1e-5 {
		t.Errorf("VBE = %.4f V at IC = %.4g A; want 0.6-0.7 V at 1 mA", q.VBE, q.IC)
	}
}

func degenerated(t *testing.T, vin, rs, rc, re float64) *Result {
	b := newBuilder()
	npnModel(b, nil)
	b.V("VCC", "vcc", "0", 12)
	b.V("VIN", "in", "0", vin)
	b.R("RS", "in", "b", rs)
	b.R("RC", "vcc", "out", rc)
	b.R("RE", "e", "0", re)
	b.Q("Q1", "out", "b", "e", "qn")
	return mustSolve(t, b.c, Options{})
}

func TestDegeneratedCommonEmitterGain(t *testing.T) {
	const rs, rc, re, vin, h = 1e3, 10e3, 2.2e3, 2.0, 1e-3
	r := degenerated(t, vin, rs, rc, re)
	gain := (degenerated(t, vin+h, rs, rc, re).V("out") - degenerated(t, vin-h, rs, rc, re).V("out")) / (2 * h)
	// Common practice: a degenerated common-emitter stage has gain ≈ −RC/RE.
	if e := relErr(gain, -rc/re); e > 0.05 {
		t.Errorf("gain %g, -RC/RE = %g (rel %g)", gain, -rc/re, e)
	}
	// The exact small-signal gain of the ideal transistor (beta = BF,
	// r_pi = beta/gm, gm = IC/vt): −beta·RC/(RS + r_pi + (beta+1)·RE)
	// (common practice, hybrid-pi model).
	ic := r.BJTs[0].IC
	beta := 100.0
	rpi := beta / ((ic + 1e-14) / vt27)
	exact := -beta * rc / (rs + rpi + (beta+1)*re)
	if e := relErr(gain, exact); e > 2e-3 {
		t.Errorf("gain %g, small-signal formula %g (rel %g)", gain, exact, e)
	}
}

func TestVoltageDividerBiasTextbook(t *testing.T) {
	// Sedra & Smith, Microelectronic Circuits, voltage-divider bias example
	// (from memory): VCC = 15 V, R1 = 100 kΩ, R2 = 50 kΩ, RE = 3 kΩ,
	// RC = 5 kΩ, beta = 100; the book finds IE ≈ 1.29 mA, VC ≈ +8.6 V.
	const vcc, r1, r2, re, rc, beta = 15.0, 100e3, 50e3, 3e3, 5e3, 100.0
	b := newBuilder()
	npnModel(b, nil)
	b.V("VCC", "vcc", "0", vcc)
	b.R("R1", "vcc", "b", r1)
	b.R("R2", "b", "0", r2)
	b.R("RC", "vcc", "c", rc)
	b.R("RE", "e", "0", re)
	b.Q("Q1", "c", "b", "e", "qn")
	r := mustSolve(t, b.c, Options{})
	q := r.BJTs[0]
	// Classic approximate analysis: Thevenin base circuit, VBE = 0.7 V.
	vbb, rbb := vcc*r2/(r1+r2), r1*r2/(r1+r2)
	ie := (vbb - 0.7) / (re + rbb/(beta+1))
	vc := vcc - rc*ie*beta/(beta+1)
	// VBE = 0.7 V is good to a few tens of mV, i.e. about 2 % of IE here.
	if e := relErr(-q.IE, ie); e > 0.03 {
		t.Errorf("IE = %.4g, approximate analysis %.4g (rel %g)", -q.IE, ie, e)
	}
	if e := relErr(r.V("c"), vc); e > 0.03 {
		t.Errorf("VC = %.4g, approximate analysis %.4g", r.V("c"), vc)
	}
	if relErr(-q.IE, 1.29e-3) > 0.03 || relErr(r.V("c"), 8.6) > 0.03 {
		t.Errorf("IE = %.4g, VC = %.4g; the book has 1.29 mA, 8.6 V (from memory)", -q.IE, r.V("c"))
	}
	if q.Region != device.Active {
		t.Errorf("region %s, want active", q.Region)
	}
}

func TestPNPStage(t *testing.T) {
	// A PNP divider-biased stage hanging from the supply; classic approximate
	// analysis with VEB = 0.7 V (common practice).
	const vcc, r1, r2, re, rc, beta = 10.0, 33e3, 68e3, 2e3, 3e3, 100.0
	b := newBuilder()
	b.model("qp", netlist.PNP, map[string]float64{"IS": 1e-14, "BF": beta})
	b.V("VCC", "vcc", "0", vcc)
	b.R("R1", "vcc", "b", r1)
	b.R("R2", "b", "0", r2)
	b.R("RE", "vcc", "e", re)
	b.R("RC", "c", "0", rc)
	b.Q("Q1", "c", "b", "e", "qp")
	r := mustSolve(t, b.c, Options{})
	q := r.BJTs[0]
	vth, rth := vcc*r1/(r1+r2), r1*r2/(r1+r2) // base drop below VCC
	ie := (vth - 0.7) / (re + rth/(beta+1))
	if e := relErr(q.IE, ie); e > 0.03 {
		t.Errorf("IE = %.4g, approximate analysis %.4g", q.IE, ie)
	}
	if q.Polarity != "pnp" || q.VBE >= 0 || q.IC >= 0 || q.IB >= 0 || q.IE <= 0 || q.VCE >= 0 || q.Power <= 0 {
		t.Errorf("PNP signs wrong: %+v", q)
	}
	if q.Region != device.Active {
		t.Errorf("region %s, want active", q.Region)
	}
	if p := q.VCE*q.IC + q.VBE*q.IB; q.Power != p {
		t.Errorf("Power = %g, VCE·IC + VBE·IB = %g", q.Power, p)
	}
}

func TestSaturatedSwitch(t *testing.T) {
	// Common practice: a switch driven at a forced beta of about 10 is hard
	// saturated, VCE a few tens of mV to ~0.2 V.
	b := newBuilder()
	npnModel(b, nil)
	b.V("VCC", "vcc", "0", 5)
	b.V("VIN", "in", "0", 5)
	b.R("RB", "in", "b", 4.3e3) // IB ≈ 1 mA
	b.R("RC", "vcc", "c", 500)  // IC ≈ 10 mA
	b.Q("Q1", "c", "b", "0", "qn")
	q := mustSolve(t, b.c, Options{}).BJTs[0]
	if q.Region != device.Saturation || q.VCE > 0.2 || q.VCE < 0 {
		t.Errorf("region %s, VCE %g; want saturation below 0.2 V", q.Region, q.VCE)
	}
}

func TestTemperature(t *testing.T) {
	build := func() *netlist.Circuit {
		b := newBuilder()
		npnModel(b, nil)
		b.I("I1", "0", "c", 1e-3)
		b.Q("Q1", "c", "c", "0", "qn") // diode-connected
		return b.c
	}
	c := build()
	vbe := func(opt Options) float64 { return mustSolve(t, c, opt).BJTs[0].VBE }
	// Common practice: VBE falls about 2 mV/K at fixed current (−1.5 to −2.5).
	slope := (vbe(Options{Temp: Temp(37)}) - vbe(Options{Temp: Temp(17)})) / 20
	if slope > -1.5e-3 || slope < -2.5e-3 {
		t.Errorf("dVBE/dT = %.3g mV/K, want -1.5 to -2.5 (common practice)", slope*1e3)
	}
	// IS(T) by hand (Nagel 1975): IS·(T/Tnom)^XTI·exp((T/Tnom − 1)·EG/vt(T)),
	// with IC = I1·BF/(BF+1) and IC = IS(T)·(exp(VBE/vt) − 1).
	for _, tc := range []float64{-20, 27, 100} {
		T, Tn := tc+273.15, 300.15
		vt := 1.380649e-23 * T / 1.602176634e-19
		is := 1e-14 * math.Pow(T/Tn, 3) * math.Exp((T/Tn-1)*1.11/vt)
		want := vt * math.Log1p(1e-3*100/101/is)
		if got := vbe(Options{Temp: Temp(tc)}); math.Abs(got-want) > 1e-6 {
			t.Errorf("%g °C: VBE = %.7f, by hand %.7f", tc, got, want)
		}
	}
	// A per-device temperature overrides the circuit's.
	if a, b := vbe(Options{DeviceTemp: map[string]float64{"q1": 60}}), vbe(Options{Temp: Temp(60)}); a != b {
		t.Errorf("DeviceTemp 60 °C gives %g, circuit at 60 °C %g", a, b)
	}
	c.Options.Temp = 60
	if a, b := vbe(Options{}), vbe(Options{Temp: Temp(60)}); a != b {
		t.Errorf("circuit .temp 60 gives %g, Options.Temp 60 gives %g", a, b)
	}
}

func TestLinearElements(t *testing.T) {
	type check struct {
		what      string
		got, want float64
	}
	tests := []struct {
		name  string
		build func(b *builder)
		want  func(r *Result) []check
	}{
		{"E", func(b *builder) {
			b.V("V1", "in", "0", 1)
			b.R("RIN", "in", "0", 1e3)
			e := b.add('E', "E1", 3, "out", "0", "in", "0")
			_ = e
			b.R("RL", "out", "0", 1e3)
		}, func(r *Result) []check {
			// V(out) = 3·V(in); the source delivers 3 mA out of its + terminal.
			return []check{{"V(out)", r.V("out"), 3}, {"I(E1)", r.Ival("e1"), -3e-3}}
		}},
		{"G", func(b *builder) {
			b.V("V1", "in", "0", 1)
			b.add('G', "G1", 2e-3, "0", "out", "in", "0") // 2 mA from 0 through G1 into out
			b.R("RL", "out", "0", 1e3)
		}, func(r *Result) []check { return []check{{"V(out)", r.V("out"), 2}} }},
		{"F", func(b *builder) {
			b.V("V1", "a", "0", 5)
			b.R("R1", "a", "b", 1e3)
			b.V("VS", "b", "0", 0) // ammeter: 5 mA into its + terminal
			f := b.add('F', "F1", 2, "0", "out")
			f.Control = "VS"
			b.R("RL", "out", "0", 100)
		}, func(r *Result) []check {
			return []check{{"I(VS)", r.Ival("vs"), 5e-3}, {"V(out)", r.V("out"), 1}}
		}},
		{"H", func(b *builder) {
			b.V("V1", "a", "0", 5)
			b.R("R1", "a", "b", 1e3)
			b.V("VS", "b", "0", 0)
			h := b.add('H', "H1", 100, "out", "0")
			h.Control = "vs" // case-insensitive
			b.R("RL", "out", "0", 1e3)
		}, func(r *Result) []check {
			return []check{{"V(out)", r.V("out"), 0.5}, {"I(H1)", r.Ival("h1"), -0.5e-3}}
		}},
		{"L short", func(b *builder) {
			b.V("V1", "a", "0", 10)
			b.R("R1", "a", "b", 1e3)
			b.L("L1", "b", "c")
			b.R("R2", "c", "0", 1e3)
		}, func(r *Result) []check {
			return []check{{"V(b)", r.V("b"), 5}, {"V(c)", r.V("c"), 5}, {"I(L1)", r.Ival("l1"), 5e-3},
				{"I(V1)", r.Ival("v1"), -5e-3}}
		}},
		{"C open", func(b *builder) {
			b.V("V1", "a", "0", 10)
			b.R("R1", "a", "b", 1e3)
			b.C("C1", "b", "0")
			b.R("R2", "b", "0", 3e3)
		}, func(r *Result) []check { return []check{{"V(b)", r.V("b"), 7.5}} }},
		{"zero-ohm R short", func(b *builder) {
			b.V("V1", "a", "0", 10)
			b.R("R1", "a", "b", 1e3)
			b.R("R0", "b", "c", 0)
			b.R("R2", "c", "0", 1e3)
		}, func(r *Result) []check {
			return []check{{"V(c)", r.V("c"), 5}, {"I(R0)", r.Ival("r0"), 5e-3}}
		}},
		{"I source", func(b *builder) {
			b.I("I1", "0", "a", 2e-3) // 2 mA from 0 through I1 into a
			b.R("R1", "a", "0", 1e3)
			b.V("VX", "x", "GND", 1) // gnd alias
			b.R("RX", "x", "0", 1)
		}, func(r *Result) []check { return []check{{"V(a)", r.V("a"), 2}, {"I(VX)", r.Ival("vx"), -1}} }},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			b := newBuilder()
			tt.build(b)
			r := mustSolve(t, b.c, Options{})
			// Expected values by Ohm's and Kirchhoff's laws, by hand.
			for _, c := range tt.want(r) {
				if math.Abs(c.got-c.want) > 1e-9*math.Max(1, math.Abs(c.want)) {
					t.Errorf("%s = %g, want %g", c.what, c.got, c.want)
				}
			}
			if r.Method != MethodNewton {
				t.Errorf("method %s", r.Method)
			}
		})
	}
}

func TestInternalResistances(t *testing.T) {
	// RB, RE, RC add internal nodes: the terminal voltages differ from the
	// junction voltages by the ohmic drops (Ohm's law).
	b := newBuilder()
	npnModel(b, map[string]float64{"RB": 200, "RE": 2, "RC": 20})
	b.V("VCC", "vcc", "0", 10)
	b.R("RC1", "vcc", "c", 2e3)
	b.I("IB", "0", "b", 20e-6)
	b.Q("Q1", "c", "b", "0", "qn")
	b.c.Elements[len(b.c.Elements)-1].Area = 2 // RB 100, RE 1, RC 10
	q := mustSolve(t, b.c, Options{}).BJTs[0]
	wantVBE := q.JunctionVBE + q.IB*100 - q.IE*1
	wantVBC := q.JunctionVBC + q.IB*100 - q.IC*10
	if math.Abs(q.VBE-wantVBE) > 1e-9 || math.Abs(q.VBC-wantVBC) > 1e-9 {
		t.Errorf("VBE %g VBC %g, from junctions and drops %g %g", q.VBE, q.VBC, wantVBE, wantVBC)
	}
	if math.Abs(q.IB-20e-6) > 1e-15 {
		t.Errorf("IB = %g, want the 20 µA forced", q.IB)
	}
}

func TestStructuralErrors(t *testing.T) {
	tests := []struct {
		name  string
		build func(b *builder)
		want  []string // substrings of the error text
	}{
		{"V loop", func(b *builder) {
			b.V("V1", "a", "0", 1)
			b.V("V2", "a", "0", 2)
		}, []string{"t.cir:3:1: error: V1 (voltage source) and V2 (voltage source) form a loop"}},
		{"L-V loop", func(b *builder) {
			b.V("V1", "a", "0", 1)
			b.R("R1", "a", "b", 1)
			b.L("L1", "a", "c")
			b.L("L2", "c", "0")
		}, []string{"t.cir:5:1:", "L2 (inductor, a short at DC)", "L1 (inductor", "V1 (voltage source)", "loop"}},
		{"I in series with C", func(b *builder) {
			b.V("V1", "a", "0", 1)
			b.R("R1", "a", "b", 1e3)
			b.I("I1", "b", "c", 1e-3)
			b.C("C1", "c", "0")
		}, []string{"t.cir:4:1: error: net c has no DC path to ground", "current source I1 and capacitor C1", "no DC return path"}},
		{"I in series with I", func(b *builder) {
			b.V("V1", "a", "0", 1)
			b.I("I1", "a", "b", 1e-3)
			b.I("I2", "b", "0", 1e-3)
		}, []string{"t.cir:3:1: error: net b has no DC path", "current source I1 and current source I2"}},
		{"zero ohm across source", func(b *builder) {
			b.V("V1", "a", "0", 5)
			b.R("R1", "a", "0", 0)
		}, []string{"t.cir:3:1: error: V1 (voltage source) and R1 (zero-ohm resistor, a short) form a loop"}},
		{"self loop", func(b *builder) {
			b.R("R1", "a", "0", 1)
			b.V("V1", "a", "A", 5)
		}, []string{"t.cir:3:1: error: V1 (voltage source) has both terminals on net a"}},
		{"island", func(b *builder) {
			b.V("V1", "a", "0", 1)
			b.R("R1", "x", "y", 1e3)
		}, []string{"t.cir:3:1: error: nets x and y have no DC path to ground: R1 connects them to nothing else"}},
		{"control input only", func(b *builder) {
			b.V("V1", "a", "0", 1)
			b.add('E', "E1", 2, "a2", "0", "s", "0")
			b.R("R1", "a2", "0", 1)
		}, []string{"t.cir:3:1: error: net s has no DC path", "the control input of voltage-controlled voltage source E1"}},
		{"no ground", func(b *builder) {
			b.V("V1", "a", "b", 1)
			b.R("R1", "a", "b", 1)
		}, []string{"t.cir:2:1: error: no element connects to ground"}},
		{"bad values", func(b *builder) {
			b.V("V1", "a", "0", math.Inf(1))
			b.R("R1", "a", "0", math.NaN())
			b.add('R', "R2", 1, "a")
			b.add('M', "M1", 0, "a", "b", "c", "d")
			b.Q("Q1", "a", "b", "0", "nomodel")
			f := b.add('F', "F1", 1, "a", "0")
			f.Control = "VZ"
		}, []string{"t.cir:2:1: error: V1: DC value +Inf is not a finite number", "t.cir:3:1: error: R1: value NaN",
			"t.cir:4:1: error: R2: has 1 net, want 2", `t.cir:5:1: error: M1: element kind "M" is not solved`,
			`t.cir:6:1: error: Q1: model "nomodel" is not defined`, "t.cir:7:1: error: F1: controlling voltage source VZ is not in the circuit"}},
		{"bad control", func(b *builder) {
			b.V("V1", "a", "0", 1)
			b.R("R1", "a", "0", 1)
			f := b.add('F', "F1", 1, "a", "0")
			f.Control = "VZ"
			h := b.add('H', "H1", 1, "b", "0")
			h.Control = "R1"
		}, []string{"t.cir:4:1: error: F1: controlling voltage source VZ is not in the circuit",
			"t.cir:5:1: error: H1: controlling element R1 carries no branch current"}},
		{"bad model", func(b *builder) {
			b.model("qbad", netlist.NPN, map[string]float64{"BF": -5})
			b.model("dm", netlist.Diode, nil)
			b.V("V1", "a", "0", 1)
			b.Q("Q1", "a", "a", "0", "qbad")
			b.Q("Q2", "a", "a", "0", "dm")
		}, []string{"models.lib:1:1: error: model qbad: BF = -5 must be positive (used by Q1)",
			`t.cir:4:1: error: Q2: model dm is of type "d", want npn or pnp`}},
	}
	var all strings.Builder
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			b := newBuilder()
			tt.build(b)
			_, err := Prepare(b.c)
			if err == nil {
				t.Fatal("Prepare accepted the circuit")
			}
			fmt.Fprintf(&all, "== %s\n%s\n", tt.name, err)
			for _, w := range tt.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q\n  does not contain %q", err, w)
				}
			}
		})
	}
	golden(t, "structural.golden", all.String())
}

func TestSingularControlledSource(t *testing.T) {
	// E1 forces V(x) = 1·V(x): structurally fine, numerically singular.
	b := newBuilder()
	b.add('E', "E1", 1, "x", "0", "x", "0")
	b.R("R1", "x", "0", 1e3)
	_, err := Solve(b.c, Options{})
	var ce *ConvergenceError
	var se *SingularError
	if !errors.As(err, &ce) || !errors.As(err, &se) {
		t.Fatalf("err = %v, want a ConvergenceError caused by a SingularError", err)
	}
	if !strings.Contains(err.Error(), "singular") {
		t.Errorf("message %q does not say singular", err)
	}
}

func TestConvergenceFailureIsReported(t *testing.T) {
	// One iteration and one step cannot settle a transistor circuit: the
	// solver must give up with a clear error, not hang or return NaN.
	b := newBuilder()
	npnModel(b, nil)
	b.V("VCC", "vcc", "0", 10)
	b.R("R1", "vcc", "b", 100e3)
	b.R("RC", "vcc", "c", 1e3)
	b.Q("Q1", "c", "b", "0", "qn")
	_, err := Solve(b.c, Options{MaxIter: 1, MaxSteps: 1})
	var ce *ConvergenceError
	if !errors.As(err, &ce) {
		t.Fatalf("err = %v, want *ConvergenceError", err)
	}
	msg := err.Error()
	for _, w := range []string{"newton (1 iterations)", "gmin stepping", "source stepping", "not settled: V("} {
		if !strings.Contains(msg, w) {
			t.Errorf("%q does not mention %q", msg, w)
		}
	}
}

// dividerStage builds a divider-biased common-emitter stage on 12 V (R1
// 100k, R2 22k, RC 4.7k, RE 1k, Q1 of model qn); RE is element 4.
func dividerStage() *builder {
	b := newBuilder()
	npnModel(b, nil)
	b.V("VCC", "vcc", "0", 12)
	b.R("R1", "vcc", "b", 100e3)
	b.R("R2", "b", "0", 22e3)
	b.R("RC", "vcc", "c", 4.7e3)
	b.R("RE", "e", "0", 1e3)
	b.Q("Q1", "c", "b", "e", "qn")
	return b
}

func TestReuseAndSetValue(t *testing.T) {
	b := dividerStage()
	s, err := Prepare(b.c)
	if err != nil {
		t.Fatal(err)
	}
	r1, err := s.Solve(Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.SetValue("re", 2e3); err != nil {
		t.Fatal(err)
	}
	r2, err := s.Solve(Options{Guess: r1})
	if err != nil {
		t.Fatal(err)
	}
	b.c.Elements[4].Value = 2e3
	fresh := mustSolve(t, b.c, Options{})
	if relErr(r2.BJTs[0].IC, fresh.BJTs[0].IC) > 1e-6 || r2.BJTs[0].IC >= r1.BJTs[0].IC {
		t.Errorf("after SetValue IC = %g, fresh solve %g, before %g", r2.BJTs[0].IC, fresh.BJTs[0].IC, r1.BJTs[0].IC)
	}
	if r2.Iterations >= fresh.Iterations {
		t.Errorf("warm start took %d iterations, cold %d", r2.Iterations, fresh.Iterations)
	}
	for _, bad := range []struct {
		name string
		v    float64
	}{{"nosuch", 1}, {"R1", 0}, {"Q1", -1}, {"VCC", math.NaN()}} {
		if err := s.SetValue(bad.name, bad.v); err == nil {
			t.Errorf("SetValue(%s, %g) accepted", bad.name, bad.v)
		}
	}
	if got := fmt.Sprint(s.Nodes()); got != "[vcc b c e]" {
		t.Errorf("Nodes = %s", got)
	}
}

// TestInto: a solve with Options.Into writes into that result the same
// bits a solve without it returns, at a changed device temperature; Into
// of another System is not touched, and neither is Into when the solve
// fails (here: stopped by its context before the first iteration).
func TestInto(t *testing.T) {
	b := dividerStage()
	s, err := Prepare(b.c)
	if err != nil {
		t.Fatal(err)
	}
	solve := func(s *System, opt Options) *Result {
		t.Helper()
		r, err := s.Solve(opt)
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	r1 := solve(s, Options{})
	hot := Options{Guess: r1, DeviceTemp: map[string]float64{"q1": 75}}
	want := solve(s, hot)
	spare := solve(s, Options{})
	into := hot
	into.Into = spare
	got := solve(s, into)
	if got != spare {
		t.Error("the solve did not write into Options.Into")
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("solved into a result: %+v\nwithout Into: %+v", got, want)
	}
	cold := solve(s, Options{}) // the same bits as r1
	self := hot
	self.Guess, self.Into = cold, cold
	if r := solve(s, self); !reflect.DeepEqual(r, want) {
		t.Errorf("Into = Guess: %+v, want %+v", r, want)
	}

	s2, err := Prepare(b.c)
	if err != nil {
		t.Fatal(err)
	}
	other := solve(s2, Options{})
	keep := *other
	alien := hot
	alien.Into = other
	if r := solve(s, alien); r == other || !reflect.DeepEqual(*other, keep) {
		t.Error("a result of another System was written into")
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	stopped := hot
	stopped.Into, stopped.Context = r1, ctx
	before := *r1
	before.Nodes = append([]NodeVoltage(nil), r1.Nodes...)
	if _, err := s.Solve(stopped); err == nil {
		t.Fatal("a stopped solve returned no error")
	}
	if !reflect.DeepEqual(r1.Nodes, before.Nodes) || r1.Temp != before.Temp {
		t.Error("a failed solve changed Options.Into")
	}
}

func TestOptionsErrors(t *testing.T) {
	b := newBuilder()
	b.V("V1", "a", "0", 1)
	b.R("R1", "a", "b", 1)
	b.model("dm", netlist.Diode, nil)
	b.D("D1", "b", "0", "dm")
	for _, opt := range []Options{{RelTol: -1}, {MaxIter: -3}, {Temp: Temp(math.NaN())}, {Temp: Temp(-300)}, {GMin: math.Inf(1)}} {
		if _, err := Solve(b.c, opt); err == nil {
			t.Errorf("Solve accepted %+v", opt)
		}
	}
	if _, err := Solve(&netlist.Circuit{File: "e.cir"}, Options{}); err == nil || !strings.Contains(err.Error(), "e.cir: error: the circuit has no elements") {
		t.Errorf("empty circuit: %v", err)
	}
}

// Nodes reached only through capacitors are tied to ground by a GMIN leak
// each, with a note, instead of an error. A floating 5 V source between
// two such nodes then sits symmetrically: the two equal leaks carry the
// same current, so V(b) = +2.5 V and V(c) = -2.5 V (Kirchhoff's current
// law at b and c with equal conductances to ground).
func TestCapacitorOnlyNodesLeak(t *testing.T) {
	b := newBuilder()
	b.V("V1", "a", "0", 1)
	b.C("C1", "a", "b")
	b.V("V2", "b", "c", 5)
	b.C("C2", "c", "0")
	s, err := Prepare(b.c)
	if err != nil {
		t.Fatalf("Prepare: %v", err)
	}
	notes := s.Notes()
	if len(notes) != 1 || !strings.Contains(notes[0].Msg, "nets b and c have no DC path to ground") ||
		!strings.Contains(notes[0].Msg, "C1 and C2") || !strings.Contains(notes[0].Msg, "GMIN") {
		t.Fatalf("notes %v; want one naming b, c, C1, C2 and the GMIN leak", notes)
	}
	r, err := s.Solve(Options{})
	if err != nil {
		t.Fatal(err)
	}
	if vb, vc := r.V("b"), r.V("c"); math.Abs(vb-2.5) > 1e-6 || math.Abs(vc+2.5) > 1e-6 {
		t.Errorf("V(b) = %g, V(c) = %g; want +2.5 and -2.5 V", vb, vc)
	}
}
