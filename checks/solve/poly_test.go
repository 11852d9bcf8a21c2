package solve

import (
	"math"
	"reflect"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// The term order of the SPICE2 polynomial, as published in the SPICE2
// user's guide (Nagel 1975, and the SPICE2G user's guide's description of
// POLY): for two dimensions fa, fb
// p0 + p1·fa + p2·fb + p3·fa² + p4·fa·fb + p5·fb² + p6·fa³ + p7·fa²·fb +
// p8·fa·fb² + p9·fb³, and for three p4..p9 = fa², fa·fb, fa·fc, fb², fb·fc,
// fc² (from memory of the published guide).
func TestPolyTermsOrder(t *testing.T) {
	two := [][]int{{}, {0}, {1}, {0, 0}, {0, 1}, {1, 1}, {0, 0, 0}, {0, 0, 1}, {0, 1, 1}, {1, 1, 1}}
	if got := netlist.PolyTerms(2, 10); !reflect.DeepEqual(got, two) {
		t.Errorf("POLY(2) terms %v, want %v", got, two)
	}
	three := [][]int{{}, {0}, {1}, {2}, {0, 0}, {0, 1}, {0, 2}, {1, 1}, {1, 2}, {2, 2}, {0, 0, 0}}
	if got := netlist.PolyTerms(3, 11); !reflect.DeepEqual(got, three) {
		t.Errorf("POLY(3) terms %v, want %v", got, three)
	}
	one := [][]int{{}, {0}, {0, 0}, {0, 0, 0}}
	if got := netlist.PolyTerms(1, 4); !reflect.DeepEqual(got, one) {
		t.Errorf("POLY(1) terms %v, want %v", got, one)
	}
}

// Polynomial sources of every kind solved against hand values. V(a) = 2 V
// and V(b) = 4 V; I(VA) = 2 mA and I(VB) = 4 mA (each source feeds 1 kOhm).
func TestPolySources(t *testing.T) {
	src := `Polynomial controlled sources
VA1 a 0 2
VB1 b 0 4
* the issue's line: V(s) = 0.5*2 + 0.5*4 = 3 V
E1 s 0 POLY(2) (a,0) (b,0) 0 0.5 0.5
* p0 + p3*fa^2 + p4*fa*fb + p5*fb^2 = 1 + 0.25*4 + 0.5*8 + 0.125*16 = 8 V
E2 t 0 POLY(2) a 0 b 0 1 0 0 0.25 0.5 0.125
* one coefficient of POLY(1) is the gain p1: V(g) = 3*2 = 6 V
E3 g 0 POLY(1) a 0 3
* current 1m*2 + 1m*4 = 6 mA from 0 through G1 into u, 1 kOhm to ground: 6 V
G1 0 u POLY(2) a 0 b 0 0 1m 1m
RU u 0 1k
VA a ax 0
RA ax 0 1k
VB b bx 0
RB bx 0 1k
* 1k*IA + 5e5*IA*IB = 2 + 4 = 6 V
H1 h 0 POLY(2) VA VB 0 1k 0 0 5e5
* current 2*IB = 8 mA into f, 1 kOhm: 8 V
F1 0 f POLY(1) VB 0 2
RF f 0 1k
.end
`
	c, err := netlist.ReadSource("poly.cir", []byte(src), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err != nil {
		t.Fatal(err)
	}
	r, err := Solve(c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for node, want := range map[string]float64{"s": 3, "t": 8, "g": 6, "u": 6, "h": 6, "f": 8} {
		if got := r.V(node); math.Abs(got-want) > 1e-6*want {
			t.Errorf("V(%s) = %.9g, want %g (hand value)", node, got, want)
		}
	}
}

// The polynomial's Jacobian against central differences of its value.
func TestPolyJacobian(t *testing.T) {
	e := &netlist.Element{Kind: 'E', PolyN: 3, Poly: []float64{0.3, -1, 2, 0.5, 0.7, -0.2, 1.1, 0.4, -0.9, 0.25, 0.6, -0.35}}
	p := newPolySource(e)
	x := []float64{0.7, -1.3, 2.1}
	copy(p.x, x)
	_, _ = p.eval()
	df := append([]float64(nil), p.df...)
	for i := range x {
		h := 1e-6
		copy(p.x, x)
		p.x[i] += h
		fp, _ := p.eval()
		copy(p.x, x)
		p.x[i] -= h
		fm, _ := p.eval()
		if num := (fp - fm) / (2 * h); math.Abs(num-df[i]) > 1e-6*(1+math.Abs(num)) {
			t.Errorf("df/dx%d = %g, central difference %g", i, df[i], num)
		}
	}
}

// A stiff 3.3 V source straight on a base whose model has RB = 100 Ohm:
// the series resistance limits the junction current, so the point is
// physical and finite. By hand (Ebers-Moll base current IS/BF·exp(v/vt),
// the collector on a 12 V rail so the B-C junction is off): the internal
// junction voltage v solves (3.3 − v)/RB = IS/BF·(exp(v/vt) − 1).
func TestStiffBaseLimitedBySeriesResistance(t *testing.T) {
	const is, bf, rb, vs = 1e-14, 100.0, 100.0, 3.3
	b := newBuilder()
	b.model("qn", netlist.NPN, map[string]float64{"IS": is, "BF": bf, "RB": rb})
	b.V("VCC", "vcc", "0", 12)
	b.V("VMCU", "b", "0", vs)
	b.Q("Q1", "vcc", "b", "0", "qn")
	r := mustSolve(t, b.c, Options{})
	if !r.Physical() {
		t.Fatalf("not physical: %v", r.Unphysical)
	}
	vt := 1.380649e-23 * (r.Temp + 273.15) / 1.602176634e-19 // SI 2019 exact k and q
	lo, hi := 0.0, vs
	for i := 0; i < 200; i++ {
		v := (lo + hi) / 2
		if (vs-v)/rb > is/bf*(math.Exp(v/vt)-1) {
			lo = v
		} else {
			hi = v
		}
	}
	ib := (vs - lo) / rb
	if got := r.BJTs[0].IB; relErr(got, ib) > 1e-4 {
		t.Errorf("IB = %g A, by hand %g A", got, ib)
	}
	if got := r.BJTs[0].JunctionVBE; math.Abs(got-lo) > 1e-5 {
		t.Errorf("internal VBE = %g V, by hand %g V", got, lo)
	}
}
