package device

import (
	"math"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

func model(typ netlist.ModelType, kv ...float64) *netlist.Model {
	return &netlist.Model{Name: "m", Type: typ, Params: map[string]float64{}}
}

func with(m *netlist.Model, name string, v float64) *netlist.Model {
	m.Params[name] = v
	return m
}

func near(a, b, rel float64) bool { return math.Abs(a-b) <= rel*math.Max(math.Abs(a), math.Abs(b)) }

func TestThermalVoltage(t *testing.T) {
	// SI 2019 exact constants (CODATA 2018): k = 1.380649e-23 J/K,
	// q = 1.602176634e-19 C; kT/q at 300.15 K = 0.0258649... V.
	want := 1.380649e-23 * 300.15 / 1.602176634e-19
	if got := ThermalVoltage(300.15); !near(got, want, 1e-15) {
		t.Errorf("ThermalVoltage(300.15) = %.10g, want %.10g", got, want)
	}
	if got := ThermalVoltage(Kelvin(27)); math.Abs(got-0.025864) > 1e-6 {
		t.Errorf("vt(27 °C) = %.7g, want 0.025864 to 1 µV (SI 2019 constants)", got)
	}
}

func TestLimExpFinite(t *testing.T) {
	for _, x := range []float64{-1e308, -800, 0, 79, 80, 81, 1e6, 1e300} {
		e, de := limExp(x)
		if math.IsNaN(e) || math.IsInf(e, 0) || math.IsNaN(de) || math.IsInf(de, 0) {
			t.Errorf("limExp(%g) = %g, %g: not finite", x, e, de)
		}
	}
	// Continuity at the knee.
	a, _ := limExp(maxExpArg)
	b, _ := limExp(maxExpArg + 1e-9)
	if !near(a, b, 1e-8) {
		t.Errorf("limExp not continuous at the knee: %g vs %g", a, b)
	}
}

func TestPNJLim(t *testing.T) {
	nvt := ThermalVoltage(300.15)
	vcrit := Vcrit(nvt, 1e-14)
	// vcrit = n·vt·ln(n·vt/(√2·IS)) (Nagel 1975).
	if want := nvt * math.Log(nvt/(math.Sqrt2*1e-14)); vcrit != want {
		t.Fatalf("Vcrit = %g, want %g", vcrit, want)
	}
	tests := []struct {
		vnew, vold float64
		want       float64
		lim        bool
	}{
		{0.5, 0.4, 0.5, false},                            // below vcrit: unchanged
		{0.71, 0.70, 0.71, false},                         // small step: unchanged
		{5, 0.7, 0.7 + nvt*math.Log(1+(5-0.7)/nvt), true}, // vold > 0 branch (Nagel 1975)
		{5, 0, nvt * math.Log(5/nvt), true},               // vold ≤ 0 branch (Nagel 1975)
		{-3, 0.7, -3, false},                              // reverse: never limited
	}
	for _, tt := range tests {
		got, lim := PNJLim(tt.vnew, tt.vold, nvt, vcrit)
		if got != tt.want || lim != tt.lim {
			t.Errorf("PNJLim(%g, %g) = %g, %v; want %g, %v", tt.vnew, tt.vold, got, lim, tt.want, tt.lim)
		}
	}
}

// gp evaluates the Gummel-Poon DC equations by hand (Gummel & Poon 1970 in
// the SPICE2 form of Nagel 1975) for an NPN without leakage terms.
func gp(is, bf, br, vaf, ikf, vt, vbe, vbc float64) (ic, ib float64) {
	ibe := is * (math.Exp(vbe/vt) - 1)
	ibc := is * (math.Exp(vbc/vt) - 1)
	q1 := 1 / (1 - vbc/vaf)
	q2 := ibe / ikf
	qb := q1 / 2 * (1 + math.Sqrt(1+4*q2))
	return (ibe-ibc)/qb - ibc/br, ibe/bf + ibc/br
}

func TestBJTEvalMatchesGummelPoon(t *testing.T) {
	m := model(netlist.NPN)
	with(m, "IS", 1e-14)
	with(m, "BF", 150)
	with(m, "BR", 2)
	with(m, "VAF", 80)
	with(m, "IKF", 0.05)
	b, err := NewBJT(m, 1, 27, Options{TNom: 27})
	if err != nil {
		t.Fatal(err)
	}
	vt := ThermalVoltage(300.15)
	for _, v := range [][2]float64{{0.65, -4.35}, {0.75, 0.1}, {0.8, 0.7}, {-0.3, 0.6}, {0.2, -10}} {
		ev := b.Eval(v[0], v[1])
		ic, ib := gp(1e-14, 150, 2, 80, 0.05, vt, v[0], v[1])
		if !near(ev.IC, ic, 1e-12) || !near(ev.IB, ib, 1e-12) {
			t.Errorf("Eval(%g, %g) = IC %g IB %g; Gummel-Poon by hand IC %g IB %g", v[0], v[1], ev.IC, ev.IB, ic, ib)
		}
	}
}

func TestBJTJacobian(t *testing.T) {
	// The Jacobian must be the derivative of the currents (central differences).
	m := model(netlist.PNP)
	for k, v := range map[string]float64{"IS": 2e-15, "BF": 80, "VAF": 40, "VAR": 10, "IKF": 0.01, "IKR": 0.002,
		"ISE": 1e-13, "NE": 1.6, "ISC": 1e-12, "NC": 1.9, "NF": 1.02, "NR": 1.05, "BR": 3} {
		with(m, k, v)
	}
	b, err := NewBJT(m, 2, 60, Options{TNom: 27, GMin: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	const h = 1e-7
	for _, v := range [][2]float64{{-0.65, 3}, {-0.7, -0.6}, {0.3, -0.5}, {-0.8, 0.2}} {
		ev := b.Eval(v[0], v[1])
		p, q := b.Eval(v[0]+h, v[1]), b.Eval(v[0]-h, v[1])
		r, s := b.Eval(v[0], v[1]+h), b.Eval(v[0], v[1]-h)
		checks := []struct {
			name      string
			got, want float64
		}{
			{"dIC/dVBE", ev.DICdVBE, (p.IC - q.IC) / (2 * h)},
			{"dIB/dVBE", ev.DIBdVBE, (p.IB - q.IB) / (2 * h)},
			{"dIC/dVBC", ev.DICdVBC, (r.IC - s.IC) / (2 * h)},
			{"dIB/dVBC", ev.DIBdVBC, (r.IB - s.IB) / (2 * h)},
		}
		for _, c := range checks {
			if math.Abs(c.got-c.want) > 1e-5*math.Abs(c.want)+1e-11 {
				t.Errorf("at %v: %s = %g, finite difference %g", v, c.name, c.got, c.want)
			}
		}
	}
}

func TestBJTPolarity(t *testing.T) {
	// A PNP at mirrored voltages carries the mirrored currents.
	n, _ := NewBJT(with(model(netlist.NPN), "VAF", 50), 1, 27, DefaultOptions())
	p, _ := NewBJT(with(model(netlist.PNP), "VAF", 50), 1, 27, DefaultOptions())
	a, b := n.Eval(0.7, -3), p.Eval(-0.7, 3)
	if a.IC != -b.IC || a.IB != -b.IB || a.DICdVBE != b.DICdVBE || a.DIBdVBC != b.DIBdVBC {
		t.Errorf("NPN %+v vs PNP %+v: not mirrored", a, b)
	}
	if a.IC <= 0 || b.IC >= 0 {
		t.Errorf("active NPN IC = %g (want > 0), PNP IC = %g (want < 0)", a.IC, b.IC)
	}
}

func TestBJTDefaultsAndArea(t *testing.T) {
	b, err := NewBJT(model(netlist.NPN), 1, 27, DefaultOptions())
	if err != nil {
		t.Fatal(err)
	}
	// SPICE-class defaults (Nagel 1975, SPICE2 model parameter table).
	d := b.Params
	if d.IS != 1e-16 || d.BF != 100 || d.NF != 1 || !math.IsInf(d.VAF, 1) || !math.IsInf(d.IKF, 1) ||
		d.ISE != 0 || d.NE != 1.5 || d.BR != 1 || d.NR != 1 || d.NC != 2 || d.EG != 1.11 || d.XTI != 3 || d.TNOM != 27 {
		t.Errorf("defaults = %+v", d)
	}
	m := model(netlist.NPN)
	for k, v := range map[string]float64{"IS": 1e-15, "ISE": 1e-14, "ISC": 1e-13, "IKF": 0.1, "IKR": 0.01, "RB": 100, "RE": 2, "RC": 10} {
		with(m, k, v)
	}
	a, err := NewBJT(m, 4, 27, DefaultOptions())
	if err != nil {
		t.Fatal(err)
	}
	s := a.Scaled
	if s.IS != 4e-15 || s.ISE != 4e-14 || s.ISC != 4e-13 || s.IKF != 0.4 || s.IKR != 0.04 || s.RB != 25 || s.RE != 0.5 || s.RC != 2.5 {
		t.Errorf("area 4 scaled = %+v", s)
	}
}

func TestBJTTemperatureScaling(t *testing.T) {
	m := model(netlist.NPN)
	for k, v := range map[string]float64{"IS": 1e-14, "ISE": 1e-13, "NE": 1.5, "ISC": 1e-12, "NC": 2, "XTB": 1.5, "BF": 100, "BR": 2} {
		with(m, k, v)
	}
	for _, tc := range []float64{-40, 0, 27, 85, 125} {
		b, err := NewBJT(m, 1, tc, Options{TNom: 27})
		if err != nil {
			t.Fatal(err)
		}
		// Nagel 1975: IS(T) = IS·(T/Tnom)^XTI·exp((T/Tnom − 1)·EG/vt(T)),
		// ISE(T) = ISE·(IS(T)/IS)^(1/NE)·(T/Tnom)^(−XTB), BF(T) = BF·(T/Tnom)^XTB.
		T, Tn := tc+273.15, 300.15
		vt := 1.380649e-23 * T / 1.602176634e-19
		ratio := math.Pow(T/Tn, 3) * math.Exp((T/Tn-1)*1.11/vt)
		checks := []struct {
			name      string
			got, want float64
		}{
			{"IS", b.Scaled.IS, 1e-14 * ratio},
			{"ISE", b.Scaled.ISE, 1e-13 * math.Pow(ratio, 1/1.5) * math.Pow(T/Tn, -1.5)},
			{"ISC", b.Scaled.ISC, 1e-12 * math.Pow(ratio, 1/2.0) * math.Pow(T/Tn, -1.5)},
			{"BF", b.Scaled.BF, 100 * math.Pow(T/Tn, 1.5)},
			{"BR", b.Scaled.BR, 2 * math.Pow(T/Tn, 1.5)},
		}
		for _, c := range checks {
			if !near(c.got, c.want, 1e-12) {
				t.Errorf("%g °C: %s = %g, Nagel 1975 formula gives %g", tc, c.name, c.got, c.want)
			}
		}
	}
}

// TestBJTAtTemp: AtTemp and SetTemp remake a transistor at another
// temperature with the same bits as NewBJT of its model there (the Nagel 1975 scaling of
// TestBJTTemperatureScaling), for a model with its own TNOM, an area
// factor and GMIN, and it refuses the temperatures NewBJT refuses.
func TestBJTAtTemp(t *testing.T) {
	m := model(netlist.PNP)
	for k, v := range map[string]float64{"IS": 2e-14, "ISE": 5e-14, "NE": 1.4, "XTB": 1.7, "XTI": 3.5, "EG": 1.12, "BF": 220, "RB": 40, "IRB": 1e-4, "TNOM": 25} {
		with(m, k, v)
	}
	opt := Options{TNom: 27, GMin: 1e-12}
	b0, err := NewBJT(m, 2.5, 27, opt)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []float64{-55, 0, 27, 27.000001, 85, 150} {
		want, err := NewBJT(m, 2.5, tc, opt)
		if err != nil {
			t.Fatal(err)
		}
		got, err := b0.AtTemp(tc)
		if err != nil {
			t.Fatal(err)
		}
		if *got != *want {
			t.Errorf("%g °C: AtTemp gives %+v, NewBJT %+v", tc, *got, *want)
		}
		moved := *b0
		if err := moved.SetTemp(tc); err != nil || moved != *want {
			t.Errorf("%g °C: SetTemp gives %+v (%v), NewBJT %+v", tc, moved, err, *want)
		}
	}
	if _, err := b0.AtTemp(-300); err == nil {
		t.Error("AtTemp(-300 °C) accepted a temperature below absolute zero")
	}
	kept := *b0
	if err := kept.SetTemp(-300); err == nil || kept != *b0 {
		t.Errorf("SetTemp(-300 °C): error %v, and the transistor is %+v, want it unchanged", err, kept)
	}
}

func TestVBETemperatureCoefficient(t *testing.T) {
	// Common practice: at fixed collector current VBE falls about 2 mV/K
	// (between −1.5 and −2.5 mV/K) in a small silicon transistor.
	m := with(model(netlist.NPN), "IS", 1e-14)
	vbeAt := func(tc float64) float64 {
		b, _ := NewBJT(m, 1, tc, Options{TNom: 27})
		// Ideal transistor, VBC = 0: IC = IS(T)·(exp(VBE/vt) − 1).
		return b.VT * math.Log(1e-3/b.Scaled.IS+1)
	}
	slope := (vbeAt(37) - vbeAt(17)) / 20
	if slope > -1.5e-3 || slope < -2.5e-3 {
		t.Errorf("dVBE/dT at 1 mA = %.3g V/K, want -1.5 to -2.5 mV/K (common practice)", slope)
	}
}

func TestDiode(t *testing.T) {
	m := model(netlist.Diode)
	with(m, "IS", 2e-14)
	with(m, "N", 1.5)
	with(m, "BV", 5.1)
	with(m, "IBV", 1e-3)
	d, err := NewDiode(m, 1, 27, Options{TNom: 27})
	if err != nil {
		t.Fatal(err)
	}
	nvt := 1.5 * ThermalVoltage(300.15)
	if i, _ := d.Eval(0); i != 0 {
		t.Errorf("I(0) = %g, want 0", i)
	}
	// Shockley forward law I = IS·(exp(V/(N·vt)) − 1) (Nagel 1975).
	if i, _ := d.Eval(0.6); !near(i, 2e-14*(math.Exp(0.6/nvt)-1), 1e-9) {
		t.Errorf("I(0.6) = %g", i)
	}
	// IBV flows at VD = −BV (the model's definition of BV, IBV).
	if i, _ := d.Eval(-5.1); !near(i, -1e-3, 1e-6) {
		t.Errorf("I(-BV) = %g, want -IBV = -1e-3", i)
	}
	// Temperature: IS(T) = IS·exp(((T/Tnom − 1)·EG/vt + XTI·ln(T/Tnom))/N) (Nagel 1975).
	h, _ := NewDiode(m, 1, 100, Options{TNom: 27})
	T := 373.15
	want := 2e-14 * math.Exp(((T/300.15-1)*1.11/ThermalVoltage(T)+3*math.Log(T/300.15))/1.5)
	if !near(h.Scaled.IS, want, 1e-12) {
		t.Errorf("IS(100 °C) = %g, want %g", h.Scaled.IS, want)
	}
	// Limiting in breakdown keeps the step bounded.
	v, lim := d.Limit(-20, -5.0)
	if !lim || v < -6 || v > -5 {
		t.Errorf("Limit(-20, -5) = %g, %v; want a limited step near -BV", v, lim)
	}
	for _, x := range []float64{-1e6, -50, 50, 1e6} {
		i, g := d.Eval(x)
		if math.IsNaN(i) || math.IsInf(i, 0) || math.IsNaN(g) || math.IsInf(g, 0) {
			t.Errorf("Eval(%g) = %g, %g: not finite", x, i, g)
		}
	}
}

func TestBadParams(t *testing.T) {
	tests := []struct {
		m    *netlist.Model
		area float64
		temp float64
	}{
		{with(model(netlist.NPN), "IS", -1), 1, 27},
		{with(model(netlist.NPN), "BF", 0), 1, 27},
		{with(model(netlist.NPN), "VAF", -10), 1, 27},
		{with(model(netlist.NPN), "IS", math.NaN()), 1, 27},
		{model(netlist.NPN), 0, 27},
		{model(netlist.NPN), 1, -300},
		{model(netlist.Diode), 1, 27}, // wrong type for NewBJT
	}
	for i, tt := range tests {
		if _, err := NewBJT(tt.m, tt.area, tt.temp, DefaultOptions()); err == nil {
			t.Errorf("%d: NewBJT accepted %+v area %g temp %g", i, tt.m.Params, tt.area, tt.temp)
		}
	}
	if _, err := NewDiode(with(model(netlist.Diode), "N", -1), 1, 27, DefaultOptions()); err == nil {
		t.Error("NewDiode accepted N = -1")
	}
}

func TestClassify(t *testing.T) {
	// Thresholds as documented on Classify (OnVoltage 0.4 V, SatVCE 0.2 V).
	tests := []struct {
		p            Polarity
		vbe, vbc, ic float64
		want         Region
	}{
		{NPN, 0.65, -4, 1e-3, Active},
		{NPN, 0.75, 0.6, 1e-2, Saturation},
		{NPN, 0.65, 0.3, 1e-3, Active},      // VCE 0.35 V: still active
		{NPN, 0.6, 0.45, 1e-3, Saturation},  // B-C forward beyond 0.4 V
		{NPN, 0.55, 0.38, 1e-4, Saturation}, // VCE 0.17 V ≤ SatVCE
		{NPN, 0.1, -5, 1e-12, Cutoff},
		{NPN, 0.45, -5, 1e-10, Cutoff}, // IC below 1 nA
		{NPN, -2, 0.65, -1e-4, Reverse},
		{PNP, -0.65, 4, -1e-3, Active},
		{PNP, -0.75, -0.6, -1e-2, Saturation},
		{PNP, 0.2, 5, 0, Cutoff},
		{PNP, 1, -0.7, 1e-4, Reverse},
	}
	for _, tt := range tests {
		if got := Classify(tt.p, tt.vbe, tt.vbc, tt.ic); got != tt.want {
			t.Errorf("Classify(%v, %g, %g, %g) = %s, want %s", tt.p, tt.vbe, tt.vbc, tt.ic, got, tt.want)
		}
	}
}

// qbHand is the normalised base charge of the Gummel-Poon model (Gummel &
// Poon 1970 in the SPICE2 form of Nagel 1975), by hand, for an NPN with
// GMIN placed inside the junction currents as SPICE3 does.
func qbHand(is, vaf, var_, ikf, ikr, gmin, vt, vbe, vbc float64) float64 {
	ibe := is*(math.Exp(vbe/vt)-1) + gmin*vbe
	ibc := is*(math.Exp(vbc/vt)-1) + gmin*vbc
	q1 := 1 / (1 - vbc/vaf - vbe/var_)
	q2 := ibe/ikf + ibc/ikr
	return q1 / 2 * (1 + math.Sqrt(1+4*q2))
}

func TestBaseResistanceFromQB(t *testing.T) {
	// Without IRB, rbb = RBM + (RB − RBM)/qb (SPICE2, Nagel 1975;
	// Massobrio & Antognetti, Semiconductor Device Modeling with SPICE,
	// ch. 2). Two bias points: low injection (qb near q1) and past the
	// IKF knee, where qb is large and rbb approaches RBM.
	m := model(netlist.NPN)
	for k, v := range map[string]float64{"IS": 1e-14, "BF": 100, "VAF": 60, "VAR": 20, "IKF": 0.01, "IKR": 0.005, "RB": 300, "RBM": 40} {
		with(m, k, v)
	}
	b, err := NewBJT(m, 1, 27, Options{TNom: 27, GMin: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	vt := 1.380649e-23 * 300.15 / 1.602176634e-19 // SI 2019 constants
	for _, v := range [][2]float64{{0.60, -4.4}, {0.80, -2.2}} {
		qb := qbHand(1e-14, 60, 20, 0.01, 0.005, 1e-12, vt, v[0], v[1])
		want := 40 + (300-40)/qb
		ev := b.Eval(v[0], v[1])
		if !near(ev.RBB, want, 1e-12) || !near(ev.QB, qb, 1e-12) {
			t.Errorf("at VBE %g VBC %g: rbb %g qb %g; by hand rbb %g qb %g", v[0], v[1], ev.RBB, ev.QB, want, qb)
		}
	}
	// RBM defaults to RB: a constant base resistance.
	c, _ := NewBJT(with(with(model(netlist.NPN), "RB", 300), "IKF", 0.01), 1, 27, DefaultOptions())
	if ev := c.Eval(0.8, -2); ev.RBB != 300 || ev.DRBBdVBE != 0 || c.Params.VariableRB() {
		t.Errorf("RB 300 without RBM or IRB: rbb %g, slope %g; want a constant 300", ev.RBB, ev.DRBBdVBE)
	}
}

// irbHand is the IRB law of the base resistance exactly as published
// (SPICE2, Nagel 1975; Massobrio & Antognetti, ch. 2):
//
//	z = (−1 + √(1 + 144·IB/(π²·IRB))) / ((24/π²)·√(IB/IRB))
//	rbb = RBM + 3·(RB − RBM)·(tan z − z)/(z·tan² z)
func irbHand(rb, rbm, irb, ib float64) float64 {
	pi2 := math.Pi * math.Pi
	z := (-1 + math.Sqrt(1+144*ib/(pi2*irb))) / (24 / pi2 * math.Sqrt(ib/irb))
	return rbm + 3*(rb-rbm)*(math.Tan(z)-z)/(z*math.Tan(z)*math.Tan(z))
}

func TestBaseResistanceIRBLaw(t *testing.T) {
	m := model(netlist.NPN)
	for k, v := range map[string]float64{"IS": 1e-14, "BF": 100, "VAF": 60, "RB": 300, "RBM": 40, "IRB": 50e-6} {
		with(m, k, v)
	}
	b, err := NewBJT(m, 1, 27, Options{TNom: 27, GMin: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	// IB about 4 µA (below IRB) and about 350 µA (far above it).
	for _, v := range [][2]float64{{0.65, -4}, {0.78, -3}} {
		ev := b.Eval(v[0], v[1])
		want := irbHand(300, 40, 50e-6, ev.IB)
		if !near(ev.RBB, want, 1e-9) {
			t.Errorf("at VBE %g (IB %g): rbb %g, published IRB law %g", v[0], ev.IB, ev.RBB, want)
		}
	}
	// At IB = IRB the resistance is halfway between RB and RBM (the
	// definition of IRB): 3·(tan z − z)/(z·tan² z) = 1/2 there.
	if got := irbHand(300, 40, 50e-6, 50e-6); math.Abs(got-170) > 2 {
		t.Errorf("rbb at IB = IRB = %g, want about (300+40)/2 = 170", got)
	}
	f, _ := irbLaw(1)
	if got := 40 + 3*260*f; !near(got, irbHand(300, 40, 1, 1), 1e-12) {
		t.Errorf("irbLaw(1) gives %g, published form %g", got, irbHand(300, 40, 1, 1))
	}
	// Small IB: rbb → RB; the series branch agrees with the published form.
	for _, x := range []float64{1e-9, 1e-7, 1e-6, 1.2e-7} {
		f, _ := irbLaw(x)
		if !near(40+3*260*f, irbHand(300, 40, 1, x), 1e-8) {
			t.Errorf("irbLaw(%g) = %g, published form %g", x, 40+3*260*f, irbHand(300, 40, 1, x))
		}
	}
}

func TestBaseResistanceJacobian(t *testing.T) {
	// ∂rbb/∂vbe and ∂rbb/∂vbc against central differences, with qb (no
	// IRB) and with the IRB law, NPN and PNP.
	for _, typ := range []netlist.ModelType{netlist.NPN, netlist.PNP} {
		for _, irb := range []float64{0, 2e-5} {
			m := model(typ)
			for k, v := range map[string]float64{"IS": 1e-14, "BF": 80, "VAF": 40, "VAR": 10, "IKF": 0.01, "IKR": 0.002,
				"ISE": 1e-13, "NE": 1.6, "RB": 500, "RBM": 25, "IRB": irb} {
				with(m, k, v)
			}
			b, err := NewBJT(m, 1, 40, Options{TNom: 27, GMin: 1e-12})
			if err != nil {
				t.Fatal(err)
			}
			s := b.Polarity.Sign()
			const h = 1e-7
			for _, v := range [][2]float64{{0.6, -3}, {0.72, -0.5}, {0.8, 0.6}} {
				vbe, vbc := s*v[0], s*v[1]
				ev := b.Eval(vbe, vbc)
				dbe := (b.Eval(vbe+h, vbc).RBB - b.Eval(vbe-h, vbc).RBB) / (2 * h)
				dbc := (b.Eval(vbe, vbc+h).RBB - b.Eval(vbe, vbc-h).RBB) / (2 * h)
				if math.Abs(ev.DRBBdVBE-dbe) > 1e-5*math.Abs(dbe)+1e-4 || math.Abs(ev.DRBBdVBC-dbc) > 1e-5*math.Abs(dbc)+1e-4 {
					t.Errorf("%s IRB %g at %v: ∂rbb/∂vbe %g ∂rbb/∂vbc %g; differences %g %g", typ, irb, v, ev.DRBBdVBE, ev.DRBBdVBC, dbe, dbc)
				}
			}
		}
	}
}

func TestGMINInsideJunctions(t *testing.T) {
	// Cut-off leakage at VBE = 0, VCB = 10 V with GMIN inside each junction
	// current (SPICE3 placement; T. Quarles, The SPICE3 Implementation
	// Guide, UCB/ERL M89/44, 1989, from memory): Ibc = −IS − GMIN·10 V,
	// Ibe = 0, q1 = 1/(1 + VCB/VAF), so
	//   IC = (IS + GMIN·VCB)·(1/qb + 1/BR) = (1e-15 + 1e-11)·(1.2 + 1) = 22.0022 pA
	//   IB = −(IS + GMIN·VCB)/BR = −10.001 pA
	// with IS = 1e-15 A, GMIN = 1e-12 S, VAF = 50 V, BR = 1.
	m := model(netlist.NPN)
	for k, v := range map[string]float64{"IS": 1e-15, "BF": 100, "BR": 1, "VAF": 50} {
		with(m, k, v)
	}
	b, err := NewBJT(m, 1, 27, Options{TNom: 27, GMin: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	ev := b.Eval(0, -10)
	is := 1e-15 * (1 - math.Exp(-10/b.VT)) // IS·(1 − exp(−10/vt)), equal to IS in float64
	wantIC := (is + 1e-12*10) * (1.2 + 1)
	if !near(ev.IC, wantIC, 1e-12) || math.Abs(ev.IC-22.0022e-12) > 1e-17 {
		t.Errorf("cut-off IC at VCB 10 V = %g, want %g (22.0022 pA)", ev.IC, wantIC)
	}
	if want := -(is + 1e-11); !near(ev.IB, want, 1e-12) {
		t.Errorf("cut-off IB = %g, want %g", ev.IB, want)
	}
}

func TestDiodeRecombinationAndHighInjection(t *testing.T) {
	// The extended junction-diode DC equations (SPICE-class, from memory):
	// I = Inrm·Kinj + Irec·Kgen + GMIN·vd with Inrm = IS·(exp(vd/(N·vt)) − 1),
	// Kinj = √(IKF/(IKF + Inrm)), Irec = ISR·(exp(vd/(NR·vt)) − 1),
	// Kgen = ((1 − vd/VJ)² + 0.005)^(M/2).
	m := model(netlist.Diode)
	for k, v := range map[string]float64{"IS": 1e-14, "N": 1, "ISR": 1e-10, "NR": 2, "IKF": 0.01, "VJ": 0.7, "M": 0.4} {
		with(m, k, v)
	}
	d, err := NewDiode(m, 1, 27, Options{TNom: 27, GMin: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	vt := 1.380649e-23 * 300.15 / 1.602176634e-19
	hand := func(v float64) float64 {
		inrm := 1e-14 * (math.Exp(v/vt) - 1)
		irec := 1e-10 * (math.Exp(v/(2*vt)) - 1)
		kgen := math.Pow((1-v/0.7)*(1-v/0.7)+0.005, 0.4/2)
		return inrm*math.Sqrt(0.01/(0.01+inrm)) + irec*kgen + 1e-12*v
	}
	// 0.3 V: recombination dominates; 0.8 V: past the IKF knee.
	for _, v := range []float64{0.3, 0.8, -2} {
		i, g := d.Eval(v)
		if !near(i, hand(v), 1e-10) {
			t.Errorf("I(%g) = %g, by hand %g", v, i, hand(v))
		}
		const h = 1e-7
		if fd := (hand(v+h) - hand(v-h)) / (2 * h); math.Abs(g-fd) > 1e-5*math.Abs(fd)+1e-12 {
			t.Errorf("g(%g) = %g, difference %g", v, g, fd)
		}
	}
	// High injection: well above IKF the current doubles per 2·N·vt·ln 2,
	// i.e. grows as √(IKF·IS)·exp(vd/(2·N·vt)).
	i1, _ := d.Eval(0.9)
	i2, _ := d.Eval(0.9 + 2*vt*math.Log(2))
	if r := i2 / i1; math.Abs(r-2) > 0.02 {
		t.Errorf("current ratio over 2·vt·ln2 above IKF = %g, want about 2", r)
	}
}
