package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// opJSONOf runs `op --format json` and decodes it.
func opJSONOf(t *testing.T, args ...string) struct {
	Results []opFile `json:"results"`
} {
	t.Helper()
	out, errs, code := runCLI(t, append([]string{"op", "--format", "json"}, args...)...)
	if code != exitOK {
		t.Fatalf("op %v: exit %d: %s", args, code, errs)
	}
	var r struct {
		Results []opFile `json:"results"`
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatalf("not JSON: %v", err)
	}
	return r
}

// fieldAmpByHand solves the field-amplifier stage of testdata/op/field-amp.cir
// independently of the solver: the divider is replaced by its Thevenin
// source (Thevenin's theorem), the transistor by the Ebers-Moll transport
// equations in forward-active region (Ebers & Moll 1954; with VAF, IKF
// infinite the Gummel-Poon base charge is 1, Gummel & Poon 1970), and the
// one equation Vth = IB*Rth + VBE + (IB+IC)*RE is solved by bisection.
// kT/q at 27 C from the SI 2019 exact constants.
func fieldAmpByHand() (vb, ve, vc float64) {
	const (
		k, q           = 1.380649e-23, 1.602176634e-19
		vcc            = 12.0
		r1, r2, rc, re = 47e3, 10e3, 3e3, 1e3 // rc = 2*1.2k + 0.6k from the instance parameter
		is, bf         = 5e-15, 180.0
	)
	vt := k * 300.15 / q
	vth, rth := vcc*r2/(r1+r2), r1*r2/(r1+r2)
	currents := func(vbe float64) (ib, ic float64) {
		e := math.Exp(vbe/vt) - 1
		return is / bf * e, is * e
	}
	lo, hi := 0.0, vth
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		ib, ic := currents(mid)
		if vth-ib*rth-mid-(ib+ic)*re > 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	ib, ic := currents(lo)
	return vth - ib*rth, (ib + ic) * re, vcc - ic*rc
}

// The importer and solver together reproduce an independent calculation of
// a real-style exported netlist (hierarchy, a .lib section from an included
// file, parameters and an instance override, an AC-coupled SIN input, and
// E, F, G, H sources) to within 1 mV and 0.2 %.
func TestFieldAmpAgainstHandCalculation(t *testing.T) {
	// The hand calculation is at 27 C (300.15 K), the model's TNOM, where
	// IS and BF are as written; without --temp the circuit would sit at
	// the 25 C ambient.
	r := opJSONOf(t, "--temp", "27", "testdata/op/field-amp.cir")
	vb, ve, vc := fieldAmpByHand()
	want := map[string]float64{
		"X1.b": vb, "X1.e": ve, "X1.c": vc,
		"out": vc,    // EBUF: unity gain of V(X1.c)
		"mon": 1.0,   // HMON: 1 kOhm x I(VSENSE) = 1k x 12 V/12 kOhm
		"gm":  -12.0, // GMIR: 1 mS x 12 V pulled out of gm through 1 kOhm
		"fc":  -2.0,  // FCOPY: 2 x 1 mA pulled out of fc through 1 kOhm
		"sig": 0,     // SIN(0 ...) at t = 0
	}
	nodes := r.Results[0].Nodes
	for name, w := range want {
		got, ok := nodes[name]
		if !ok {
			t.Errorf("node %s missing", name)
			continue
		}
		d := math.Abs(got - w)
		t.Logf("V(%s) = %.6f V, by hand %.6f V, diff %.2g V", name, got, w, d)
		if d > 1e-3 || (w != 0 && d > 0.002*math.Abs(w)) {
			t.Errorf("V(%s) = %.6f V, independent calculation %.6f V (diff %.3g V)", name, got, w, d)
		}
	}
	if s := r.Results[0].Sources["VSENSE"]; math.Abs(s-1e-3) > 1e-9 {
		// Current into the + terminal (vcc) of VSENSE flows on into RSX.
		t.Errorf("I(VSENSE) = %g A, want +1 mA (SPICE sign convention)", s)
	}
	if s := r.Results[0].Sources["VCC"]; s >= 0 {
		t.Errorf("I(VCC) = %g A; a supply delivering power shows a negative current", s)
	}
}

// op on a latch shows a stable state, never the unstable balance, and says
// that there are others (hand estimates in testdata/op/latch.cir).
func TestOpLatchStableState(t *testing.T) {
	r := opJSONOf(t, "testdata/op/latch.cir").Results[0]
	if r.StableStates != 2 || r.States == "" {
		t.Fatalf("stable_states %d, states %q; want 2 and a description", r.StableStates, r.States)
	}
	regions := map[string]bool{}
	for _, q := range r.BJTs {
		regions[q.Region] = true
		if q.Region == "saturation" && (q.IC == nil || math.Abs(*q.IC-4.9e-3) > 0.1e-3) {
			t.Errorf("%s IC %v, want about 4.9 mA", q.Name, q.IC)
		}
	}
	if !regions["saturation"] || !regions["cutoff"] || regions["active"] {
		t.Errorf("regions %v; want one saturated and one cut off", regions)
	}
	chk, _, _ := runCLI(t, "check", "--format", "json", "testdata/op/latch.cir")
	var cr struct {
		Results []struct {
			StableStates []string `json:"stable_states"`
		} `json:"results"`
	}
	if err := json.Unmarshal([]byte(chk), &cr); err != nil || len(cr.Results) != 1 ||
		strings.Join(cr.Results[0].StableStates, ",") != "nominal,stable state 2" {
		t.Errorf("check JSON stable_states: %+v %v", cr, err)
	}
	out, _, _ := runCLI(t, "op", "testdata/op/latch.cir")
	if !strings.Contains(out, "several DC solutions") || !strings.Contains(out, "shown: stable state 1") {
		t.Errorf("op text does not say there are other states:\n%s", out)
	}
}

// op and check solve at the same circuit temperature by default (the 25 C
// ambient, not the models' TNOM of 27 C), and both say where it came from.
func TestTemperatureConvention(t *testing.T) {
	for _, tc := range []struct {
		args []string
		temp float64
		from string
	}{
		{[]string{"testdata/check/floating-base.bad.cir"}, 25, "ambient"},
		{[]string{"--temp", "40", "testdata/check/floating-base.bad.cir"}, 40, "--temp"},
		{[]string{"testdata/netlist/dialect_spice2.cir"}, 27, ".temp"}, // .TEMP 27 70
	} {
		op := opJSONOf(t, tc.args...).Results[0]
		out, errs, code := runCLI(t, append([]string{"check", "--format", "json"}, tc.args...)...)
		if code == exitBadInput {
			t.Fatalf("check %v: %s", tc.args, errs)
		}
		var chk struct {
			Results []struct {
				Temperature     float64 `json:"temperature"`
				TemperatureFrom string  `json:"temperature_from"`
			} `json:"results"`
		}
		if err := json.Unmarshal([]byte(out), &chk); err != nil {
			t.Fatal(err)
		}
		c := chk.Results[0]
		if op.Temperature != tc.temp || c.Temperature != tc.temp || op.TemperatureFrom != tc.from || c.TemperatureFrom != tc.from {
			t.Errorf("%v: op at %g C (%s), check at %g C (%s); want both %g C (%s)",
				tc.args, op.Temperature, op.TemperatureFrom, c.Temperature, c.TemperatureFrom, tc.temp, tc.from)
		}
	}
}
