package solve

import (
	"math"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// rbStage is a common-emitter stage whose transistor has a bias-dependent
// base resistance.
func rbStage(params map[string]float64) *netlist.Circuit {
	b := newBuilder()
	npnModel(b, params)
	b.V("VCC", "vcc", "0", 12)
	b.R("RB1", "vcc", "b", 220e3)
	b.R("RC1", "vcc", "c", 2.2e3)
	b.R("RE1", "e", "0", 100)
	b.Q("Q1", "c", "b", "e", "qn")
	return b.c
}

func TestJacobianMatchesDifferences(t *testing.T) {
	// The assembled Newton matrix is ∂F/∂x: every column against central
	// differences of F, with RB/RBM (through qb) and with the IRB law, and
	// the internal collector and emitter resistances.
	for _, extra := range []map[string]float64{
		{"RB": 300, "RBM": 60, "IKF": 0.005, "VAF": 50, "RC": 5, "RE": 1},
		{"RB": 300, "RBM": 60, "IRB": 2e-5, "VAF": 50, "RC": 5, "RE": 1},
	} {
		s, err := Prepare(rbStage(extra))
		if err != nil {
			t.Fatal(err)
		}
		w, err := s.newWork(Options{})
		if err != nil {
			t.Fatal(err)
		}
		r, err := s.Solve(Options{})
		if err != nil {
			t.Fatal(err)
		}
		x, _ := s.guess(r)
		// Move off the solution a little so that no term vanishes.
		for i := range x {
			x[i] += 1e-3 * float64(i%3-1)
		}
		j := w.jacobian(x)
		const h = 1e-6
		for k := 0; k < s.n; k++ {
			xp := append([]float64(nil), x...)
			xm := append([]float64(nil), x...)
			xp[k] += h
			xm[k] -= h
			fp, fm := w.residual(xp), w.residual(xm)
			for i := 0; i < s.n; i++ {
				fd := (fp[i] - fm[i]) / (2 * h)
				if got := j.At(i, k); math.Abs(got-fd) > 1e-5*math.Abs(fd)+1e-9 {
					t.Errorf("%v: ∂F[%s]/∂x[%s] = %g, difference %g", extra, s.names[i], s.names[k], got, fd)
				}
			}
		}
	}
}

func TestVariableBaseResistanceStage(t *testing.T) {
	// At the solution the drop across the base resistance is IB·rbb, with
	// rbb from the published IRB law (SPICE2, Nagel 1975; Massobrio &
	// Antognetti, ch. 2) at the solved IB, and Kirchhoff's law holds.
	c := rbStage(map[string]float64{"RB": 300, "RBM": 60, "IRB": 2e-5, "VAF": 50})
	r := mustSolve(t, c, Options{})
	q := r.BJTs[0]
	pi2 := math.Pi * math.Pi
	x := q.IB / 2e-5
	z := (-1 + math.Sqrt(1+144*x/pi2)) / (24 / pi2 * math.Sqrt(x))
	rbb := 60 + 3*(300-60)*(math.Tan(z)-z)/(z*math.Tan(z)*math.Tan(z))
	drop := q.VBE - q.JunctionVBE // no model RE: the emitter junction is at the terminal
	if math.Abs(drop-q.IB*rbb) > 1e-9 {
		t.Errorf("drop across rbb %g V, IB·rbb = %g V (IB %g, rbb %g)", drop, q.IB*rbb, q.IB, rbb)
	}
	if !(rbb > 60 && rbb < 300) {
		t.Errorf("rbb %g outside RBM..RB", rbb)
	}
	// Against the constant RB the lower rbb raises IC (IB flows from a
	// 220 kOhm source, so the effect is small but of the right sign).
	r0 := mustSolve(t, rbStage(map[string]float64{"RB": 300, "VAF": 50}), Options{})
	if !(q.IC > r0.BJTs[0].IC) {
		t.Errorf("IC with the IRB law %g, with constant RB %g: want higher", q.IC, r0.BJTs[0].IC)
	}
}

// rbbStageByHand solves a transistor with its collector held at vc, its
// emitter grounded, and its base fed from vbb through rs, independently of
// the solver: for a junction voltage vbe the Gummel-Poon currents (Gummel &
// Poon 1970 in the SPICE2 form of Nagel 1975, GMIN inside the junction
// currents) give IB and qb, the base resistance is rbb = RBM + (RB -
// RBM)/qb (SPICE2; Massobrio & Antognetti ch. 2), and vbb = IB*(rs + rbb)
// + vbe is solved for vbe by bisection.
func rbbStageByHand(vbb, rs, vc, is, bf, ikf, rb, rbm float64) (ic, rbb float64) {
	const gmin = 1e-12
	eval := func(vbe float64) (ic, ib, rbb float64) {
		vbc := vbe - vc
		ibe := is*math.Expm1(vbe/vt27) + gmin*vbe
		ibc := is*math.Expm1(vbc/vt27) + gmin*vbc
		qb := (1 + math.Sqrt(1+4*ibe/ikf)) / 2
		ic = (ibe-ibc)/qb - ibc
		ib = ibe/bf + ibc
		return ic, ib, rbm + (rb-rbm)/qb
	}
	lo, hi := 0.0, vbb
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		_, ib, r := eval(mid)
		if ib*(rs+r)+mid < vbb {
			lo = mid
		} else {
			hi = mid
		}
	}
	ic, _, rbb = eval(lo)
	return ic, rbb
}

func TestBaseResistanceAgainstHandSolution(t *testing.T) {
	// Driven hard from a low source resistance past the IKF knee, the base
	// resistance falls well below RB and the collector current rises: by
	// the hand solution rbb is 118 Ohm at VBB 0.9 V (IC 20.6 mA, against
	// 15.1 mA with a constant 300 Ohm) and 81 Ohm at 1.2 V (42.5 mA against
	// 27.9 mA).
	for _, vbb := range []float64{0.9, 1.2} {
		b := newBuilder()
		npnModel(b, map[string]float64{"IKF": 0.01, "RB": 300, "RBM": 30})
		b.V("VBB", "in", "0", vbb)
		b.R("RS", "in", "b", 100)
		b.V("VC", "c", "0", 5)
		b.Q("Q1", "c", "b", "0", "qn")
		q := mustSolve(t, b.c, Options{}).BJTs[0]
		ic, rbb := rbbStageByHand(vbb, 100, 5, 1e-14, 100, 0.01, 300, 30)
		if relErr(q.IC, ic) > 1e-6 {
			t.Errorf("VBB %g: IC %g, by hand %g (rbb %g Ohm)", vbb, q.IC, ic, rbb)
		}
		if !(rbb < 250) {
			t.Errorf("VBB %g: rbb %g, want well below RB 300 (qb > 1)", vbb, rbb)
		}
	}
}
