package solve

import (
	"fmt"
	"math"
	"testing"

	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/netlist"
	"pgregory.net/rapid"
)

// randomCircuit draws a network of resistors, one supply, current sources,
// diodes and transistors (NPN and PNP) on up to seven nodes. Every node has
// a resistor to ground, so each has a DC path and the structure is valid.
func randomCircuit(t *rapid.T) *netlist.Circuit {
	b := newBuilder()
	b.model("qn", netlist.NPN, map[string]float64{"IS": 1e-14, "BF": rapid.Float64Range(20, 400).Draw(t, "bfn"), "VAF": 80, "IKF": 0.05})
	b.model("qp", netlist.PNP, map[string]float64{"IS": 2e-14, "BF": rapid.Float64Range(20, 400).Draw(t, "bfp"), "ISE": 1e-15})
	b.model("dm", netlist.Diode, map[string]float64{"IS": 1e-15, "N": 1.2, "BV": 6})
	n := rapid.IntRange(2, 7).Draw(t, "nodes")
	node := func(label string) string {
		i := rapid.IntRange(0, n).Draw(t, label)
		if i == 0 {
			return "0"
		}
		return fmt.Sprintf("n%d", i)
	}
	logR := func(label string) float64 { return math.Pow(10, rapid.Float64Range(2, 6).Draw(t, label)) }
	b.V("V1", "n1", "0", rapid.Float64Range(-15, 15).Draw(t, "vdc"))
	for i := 1; i <= n; i++ {
		b.R(fmt.Sprintf("RG%d", i), fmt.Sprintf("n%d", i), "0", logR("rg"))
	}
	for i := rapid.IntRange(0, 8).Draw(t, "nr"); i > 0; i-- {
		b.R(fmt.Sprintf("R%d", i), node("ra"), node("rb"), logR("r"))
	}
	for i := rapid.IntRange(0, 2).Draw(t, "ni"); i > 0; i-- {
		b.I(fmt.Sprintf("I%d", i), node("ia"), node("ib"), rapid.Float64Range(-1e-3, 1e-3).Draw(t, "idc"))
	}
	for i := rapid.IntRange(0, 2).Draw(t, "nd"); i > 0; i-- {
		b.D(fmt.Sprintf("D%d", i), node("da"), node("dk"), "dm")
	}
	for i := rapid.IntRange(0, 3).Draw(t, "nq"); i > 0; i-- {
		m := rapid.SampledFrom([]string{"qn", "qp"}).Draw(t, "model")
		b.Q(fmt.Sprintf("Q%d", i), node("c"), node("b"), node("e"), m)
	}
	return b.c
}

func TestPropertyKCLAndDeterminism(t *testing.T) {
	rapid.Check(t, func(t *rapid.T) {
		c := randomCircuit(t)
		r, err := Solve(c, Options{})
		if err != nil {
			t.Fatalf("Solve: %v", err)
		}
		res, mag := kclResiduals(t, c, r)
		for _, nv := range r.Nodes {
			k := netlist.Key(nv.Name)
			// ABSTOL = 1 pA, plus the rounding of this independent sum.
			if tol := DefaultAbsTol + 1e-12*mag[k]; math.Abs(res[k]) > tol {
				t.Fatalf("KCL at %s: residual %g A > %g (terms %g A)", nv.Name, res[k], tol, mag[k])
			}
			if math.IsNaN(nv.V) || math.IsInf(nv.V, 0) {
				t.Fatalf("V(%s) = %g", nv.Name, nv.V)
			}
		}
		again, err := Solve(c, Options{})
		if err != nil {
			t.Fatalf("second Solve: %v", err)
		}
		ra, rb := *r, *again
		ra.index, rb.index = nil, nil // each System's own lookup index
		if a, b := fmt.Sprintf("%#v", ra), fmt.Sprintf("%#v", rb); a != b {
			t.Fatalf("two solves differ:\n%s\n%s", a, b)
		}
	})
}

// TestExtremeCircuits keeps the circuits the property test once found
// hard: junctions driven straight from a supply, with currents of
// kiloamperes and more. They are absurd as designs but must solve, meet
// Kirchhoff's law to the rounding of their currents, and stay finite.
func TestExtremeCircuits(t *testing.T) {
	tests := []struct {
		name  string
		build func(b *builder)
	}{
		{"supply across B-E", func(b *builder) {
			b.V("V1", "n1", "0", 1.75)
			b.R("RG1", "n1", "0", 100)
			b.Q("Q1", "0", "n1", "0", "qn")
		}},
		{"PNP B-C forward 1 V", func(b *builder) {
			b.V("V1", "n1", "0", 1)
			b.R("RG1", "n1", "0", 100)
			b.R("RG2", "n2", "0", 100)
			b.Q("Q1", "n1", "0", "n2", "qp")
		}},
		{"diode and zener across supply", func(b *builder) {
			b.V("V1", "n1", "0", 9.02734375)
			b.R("RG1", "n1", "0", 100)
			b.R("RG2", "n2", "0", 100)
			b.D("D1", "n2", "0", "dm")
			b.D("D2", "n2", "n1", "dm")
		}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			b := newBuilder()
			b.model("qn", netlist.NPN, map[string]float64{"IS": 1e-14, "BF": 20, "VAF": 80, "IKF": 0.05})
			b.model("qp", netlist.PNP, map[string]float64{"IS": 2e-14, "BF": 20, "ISE": 1e-15})
			b.model("dm", netlist.Diode, map[string]float64{"IS": 1e-15, "N": 1.2, "BV": 6})
			tt.build(b)
			r := mustSolve(t, b.c, Options{})
			res, mag := kclResiduals(t, b.c, r)
			for k, v := range res {
				if tol := DefaultAbsTol + 1e-12*mag[k]; math.Abs(v) > tol || math.IsNaN(v) {
					t.Errorf("KCL at %s: residual %g > %g", k, v, tol)
				}
			}
		})
	}
}

// A reported operating point is physical only if it satisfies Kirchhoff's
// current law with the device equations as they are. The circuits here
// add what makes the continued exponentials matter: stiff sources straight
// across junctions, up to 5 V, with and without series resistances in the
// models. Every point reported physical must have every junction in the
// exact range of its exponential and every transistor junction below the
// band gap, and meet KCL (an independent sum from the element equations,
// kclResiduals); every point marked not physical must have a junction
// that is not.
func TestPropertyReportedPointsMeetKCL(t *testing.T) {
	rapid.Check(t, func(t *rapid.T) {
		b := newBuilder()
		series := rapid.Bool().Draw(t, "series")
		qp := map[string]float64{"IS": 1e-14, "BF": rapid.Float64Range(20, 400).Draw(t, "bf")}
		if series {
			qp["RB"], qp["RE"] = rapid.Float64Range(1, 100).Draw(t, "rb"), rapid.Float64Range(0.1, 5).Draw(t, "re")
		}
		b.model("qn", netlist.NPN, qp)
		b.model("dm", netlist.Diode, map[string]float64{"IS": 1e-15, "N": 1})
		n := rapid.IntRange(2, 5).Draw(t, "nodes")
		node := func(label string) string {
			if i := rapid.IntRange(0, n).Draw(t, label); i > 0 {
				return fmt.Sprintf("n%d", i)
			}
			return "0"
		}
		b.V("V1", "n1", "0", rapid.Float64Range(-12, 12).Draw(t, "vcc"))
		for i := 2; i <= n; i++ {
			b.R(fmt.Sprintf("RG%d", i), fmt.Sprintf("n%d", i), "0", math.Pow(10, rapid.Float64Range(2, 5).Draw(t, "rg")))
		}
		for i := rapid.IntRange(0, 4).Draw(t, "nr"); i > 0; i-- {
			b.R(fmt.Sprintf("R%d", i), node("ra"), node("rb"), math.Pow(10, rapid.Float64Range(1, 5).Draw(t, "r")))
		}
		// A stiff source on a transistor's base, or a diode across a
		// supply: the junction's current is limited by nothing else.
		b.V("VD", "drv", "0", rapid.Float64Range(0, 5).Draw(t, "vdrv"))
		if rapid.Bool().Draw(t, "diode") {
			b.D("D1", "drv", "0", "dm")
		} else {
			b.Q("Q1", node("c"), "drv", "0", "qn")
		}
		for i := rapid.IntRange(0, 2).Draw(t, "nq"); i > 0; i-- {
			b.Q(fmt.Sprintf("Q%d", i+1), node("qc"), node("qb"), node("qe"), "qn")
		}
		s, err := Prepare(b.c)
		if err != nil {
			t.Skip("structurally invalid draw:", err)
		}
		r, err := s.Solve(Options{})
		if err != nil {
			return // no point reported: nothing to check
		}
		dopt := device.Options{TNom: b.c.Options.TNom, GMin: DefaultGMin}
		exact, inGap := true, true
		for j, el := range s.bjts {
			q, _ := device.NewBJT(el.model, 1, r.Temp, dopt)
			vbe, vbc := r.BJTs[j].JunctionVBE, r.BJTs[j].JunctionVBC
			exact = exact && q.Exact(vbe, vbc)
			// Below the band gap (EG 1.11 V by default, NF = NR = 1 here).
			inGap = inGap && vbe <= q.Scaled.EG && vbc <= q.Scaled.EG
		}
		for _, d := range r.Diodes {
			dd, _ := device.NewDiode(b.c.Models["dm"], 1, r.Temp, dopt)
			exact = exact && dd.Exact(d.V)
		}
		if !r.Physical() {
			if exact && inGap {
				t.Fatalf("marked not physical (%v) though every junction is in the exact range and below the band gap", r.Unphysical)
			}
			return
		}
		if !exact || !inGap {
			t.Fatalf("reported physical, but a junction is beyond the exact range of its exponential or the band gap: %+v", r.BJTs)
		}
		if series {
			return // kclResiduals evaluates the devices at their terminals: no series resistances
		}
		res, mag := kclResiduals(t, b.c, r)
		for _, nv := range r.Nodes {
			k := netlist.Key(nv.Name)
			if tol := DefaultAbsTol + 1e-12*mag[k]; math.Abs(res[k]) > tol || math.IsNaN(res[k]) {
				t.Fatalf("reported physical, but KCL at %s fails: residual %g A > %g (terms %g A)", nv.Name, res[k], tol, mag[k])
			}
		}
	})
}
