package solve

import (
	"math"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// twoStage is a direct-coupled NPN-PNP pair with diode level shifting.
func twoStage() *netlist.Circuit {
	b := newBuilder()
	npnModel(b, map[string]float64{"VAF": 100, "IKF": 0.1, "RB": 50})
	b.model("qp", netlist.PNP, map[string]float64{"IS": 2e-14, "BF": 80, "VAF": 60})
	b.model("dm", netlist.Diode, map[string]float64{"IS": 1e-14, "RS": 5})
	b.V("VCC", "vcc", "0", 15)
	b.R("R1", "vcc", "b1", 120e3)
	b.R("R2", "b1", "0", 18e3)
	b.R("RC1", "vcc", "c1", 10e3)
	b.R("RE1", "e1", "0", 1e3)
	b.Q("Q1", "c1", "b1", "e1", "qn")
	b.R("RE2", "vcc", "e2", 2.2e3)
	b.Q("Q2", "c2", "c1", "e2", "qp")
	b.D("D1", "c2", "d", "dm")
	b.R("RL", "d", "0", 1.5e3)
	return b.c
}

// TestSteppingStrategies runs GMIN stepping and source stepping on their
// own and checks they reach the operating point plain Newton finds (the
// solution is unique; they differ only within the tolerances).
func TestSteppingStrategies(t *testing.T) {
	c := twoStage()
	want := mustSolve(t, c, Options{})
	if want.Method != MethodNewton {
		t.Fatalf("method %s", want.Method)
	}
	s, err := Prepare(c)
	if err != nil {
		t.Fatal(err)
	}
	for _, m := range []Method{MethodGminStepping, MethodSourceStepping} {
		w, err := s.newWork(Options{})
		if err != nil {
			t.Fatal(err)
		}
		x := make([]float64, s.n)
		var ok bool
		var msg string
		if m == MethodGminStepping {
			ok, msg = w.gminStepping(x, true)
		} else {
			ok, msg = w.sourceStepping(x)
		}
		if !ok {
			t.Fatalf("%s failed: %s", m, msg)
		}
		got := s.result(w, x, m)
		for i, nv := range got.Nodes {
			if math.Abs(nv.V-want.Nodes[i].V) > 1e-5+1e-3*math.Abs(nv.V) {
				t.Errorf("%s: V(%s) = %g, newton %g", m, nv.Name, nv.V, want.Nodes[i].V)
			}
		}
		if w.gshunt != 0 || w.lambda != 1 {
			t.Errorf("%s left gshunt %g, lambda %g", m, w.gshunt, w.lambda)
		}
	}
}

func BenchmarkSolveTwoStage(b *testing.B) {
	c := twoStage()
	s, err := Prepare(c)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := s.Solve(Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

func TestDiodeSeriesResistanceAndSubstrate(t *testing.T) {
	b := newBuilder()
	b.model("dm", netlist.Diode, map[string]float64{"IS": 1e-14, "N": 1.1, "RS": 10})
	npnModel(b, nil)
	b.V("V1", "in", "0", 5)
	b.R("R1", "in", "a", 1e3)
	b.D("D1", "a", "0", "dm")
	b.R("RB", "in", "b", 430e3)
	b.R("RC", "in", "c", 1e3)
	q := b.add('Q', "Q1", 0, "c", "b", "0", "sub") // substrate node used nowhere else
	q.Model, q.Area = "qn", 1
	r := mustSolve(t, b.c, Options{})
	d := r.Diodes[0]
	// Shockley's law plus Ohm's law across RS: V = N·vt·ln(I/IS + 1) + I·RS
	// (GMIN's 1e-12 S is negligible at milliamperes).
	want := 1.1*vt27*math.Log1p(d.I/1e-14) + d.I*10
	if math.Abs(d.V-want) > 1e-6 {
		t.Errorf("V(D1) = %.7f, Shockley + RS drop %.7f", d.V, want)
	}
	for _, nv := range r.Nodes {
		if nv.Name == "sub" {
			t.Errorf("substrate node listed: %v", r.Nodes)
		}
	}
	if r.BJTs[0].Region != "active" {
		t.Errorf("Q1 region %s", r.BJTs[0].Region)
	}
}
