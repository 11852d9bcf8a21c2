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
