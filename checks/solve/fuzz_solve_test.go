package solve

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// fuzzBytes reads a fuzz input as a stream of small choices; past the end
// every choice is 0, so every input is a complete program.
type fuzzBytes struct {
	b []byte
	i int
}

func (f *fuzzBytes) next() byte {
	if f.i >= len(f.b) {
		return 0
	}
	f.i++
	return f.b[f.i-1]
}

// pick returns a choice in [0, n).
func (f *fuzzBytes) pick(n int) int { return int(f.next()) % n }

// magnitude returns a value spread evenly in decade over 1e-15..1e15.
func (f *fuzzBytes) magnitude() float64 {
	u := float64(uint16(f.next())<<8|uint16(f.next())) / 65535
	return math.Pow(10, -15+30*u)
}

// signed is magnitude with a random sign, or zero one time in 16.
func (f *fuzzBytes) signed() float64 {
	c := f.next()
	if c%16 == 0 {
		return 0
	}
	v := f.magnitude()
	if c&0x80 != 0 {
		v = -v
	}
	return v
}

// fuzzCircuit builds a small circuit from the grammar
//
//	circuit  = nodes(2..7) element{1..14} models
//	element  = R | C | L | V | I | D | Q | E | G | F | H, nodes picked
//	           among ground and the circuit's nodes, values over 1e-15..1e15
//
// with Gummel-Poon and diode parameters also drawn over wide ranges, and
// returns it with a one-line description of each element for failure
// messages.
func fuzzCircuit(data []byte) (*netlist.Circuit, string) {
	f := &fuzzBytes{b: data}
	b := newBuilder()
	nodes := 2 + f.pick(6)
	node := func() string {
		k := f.pick(nodes + 1)
		if k == 0 {
			return "0"
		}
		return fmt.Sprintf("n%d", k)
	}
	var vsrc []string
	var desc strings.Builder
	n := 1 + f.pick(14)
	for i := 0; i < n; i++ {
		name := func(k byte) string { return fmt.Sprintf("%c%d", k, i) }
		var e *netlist.Element
		switch f.pick(11) {
		case 0:
			e = b.R(name('R'), node(), node(), f.magnitude())
		case 1:
			e = b.C(name('C'), node(), node())
		case 2:
			e = b.L(name('L'), node(), node())
		case 3:
			e = b.V(name('V'), node(), node(), f.signed())
			vsrc = append(vsrc, e.Name)
		case 4:
			e = b.I(name('I'), node(), node(), f.signed())
		case 5:
			e = b.D(name('D'), node(), node(), "dm")
			e.Area = f.magnitude()
		case 6:
			model := "qn"
			if f.pick(2) == 1 {
				model = "qp"
			}
			e = b.Q(name('Q'), node(), node(), node(), model)
			if f.pick(4) == 0 {
				e.Area = f.magnitude()
			}
		case 7:
			e = b.add('E', name('E'), f.signed(), node(), node(), node(), node())
			if f.pick(3) == 0 {
				// A SPICE2 polynomial of one or two control voltages.
				e.PolyN = 1 + f.pick(2)
				if e.PolyN == 2 {
					e.Nodes = append(e.Nodes, node(), node())
				}
				for k := 1 + f.pick(6); k > 0; k-- {
					e.Poly = append(e.Poly, f.signed())
				}
			}
		case 8:
			e = b.add('G', name('G'), f.signed(), node(), node(), node(), node())
		case 9, 10:
			kind := netlist.Kind('F')
			if f.pick(2) == 1 {
				kind = 'H'
			}
			e = b.add(kind, name(byte(kind)), f.signed(), node(), node())
			if len(vsrc) > 0 {
				e.Control = vsrc[f.pick(len(vsrc))]
			} else {
				e.Control = "Vnone"
			}
		}
		fmt.Fprintf(&desc, "%c %s %v %g %s\n", e.Kind, e.Name, e.Nodes, e.Value, e.Control)
	}
	// Model parameters: each one either absent (the default) or drawn from
	// a range wider than any real part (IS 1e-15..1e15 scaled down, BF up
	// to 1e15, ohmic resistances 0..1e15).
	bjt := func() map[string]float64 {
		p := map[string]float64{}
		for _, k := range []string{"IS", "BF", "BR", "VAF", "VAR", "IKF", "IKR", "ISE", "ISC", "RB", "RE", "RC", "NF", "NE", "RBM", "IRB"} {
			if f.pick(3) == 0 {
				v := f.magnitude()
				switch k {
				case "IS", "ISE", "ISC":
					v *= 1e-15
				case "NF", "NE":
					v = 0.5 + 4*v/1e15
				}
				p[k] = v
			}
		}
		return p
	}
	b.model("qn", netlist.NPN, bjt())
	b.model("qp", netlist.PNP, bjt())
	dp := map[string]float64{}
	if f.pick(2) == 0 {
		dp["IS"] = f.magnitude() * 1e-15
	}
	if f.pick(2) == 0 {
		dp["RS"] = f.magnitude()
	}
	b.model("dm", netlist.Diode, dp)
	return b.c, desc.String()
}

// maxIterations bounds the Newton iterations of one solve with default
// options: plain Newton, then at most DefaultMaxSteps steps of GMIN
// stepping and of source stepping, each step capped at stepIter.
const maxIterations = DefaultMaxIter + 2*DefaultMaxSteps*stepIter

// FuzzSolve: a random small circuit ends in an operating point with every
// value finite, or in an error that says what is wrong and where; never a
// panic, never more than maxIterations Newton iterations.
func FuzzSolve(f *testing.F) {
	f.Add([]byte{})
	f.Add([]byte{2, 4, 3, 1, 0, 0x90, 0, 0, 0, 1, 2, 0x80, 0, 6, 1, 2, 0, 0})
	f.Add([]byte("\x05\x03\x03\x01\x00\x81\x00\x00\x00\x02\x01\x40\x00\x06\x03\x02\x00\x00\x05\x02\x00"))
	f.Add([]byte("singular: two sources in parallel and a diode across them"))
	f.Fuzz(func(t *testing.T, data []byte) {
		c, desc := fuzzCircuit(data)
		r, err := Solve(c, Options{})
		if err != nil {
			checkSolveError(t, err, desc)
			return
		}
		if r.Iterations > maxIterations {
			t.Errorf("%d iterations, over the bound %d\n%s", r.Iterations, maxIterations, desc)
		}
		check := func(what string, v float64) {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Errorf("%s = %g in a returned solution\n%s", what, v, desc)
			}
		}
		for _, nv := range r.Nodes {
			check("V("+nv.Name+")", nv.V)
		}
		for _, br := range r.Branches {
			check("I("+br.Name+")", br.I)
		}
		for _, q := range r.BJTs {
			for _, v := range []float64{q.VBE, q.VBC, q.VCE, q.IC, q.IB, q.IE, q.Power} {
				check(q.Name, v)
			}
		}
		for _, d := range r.Diodes {
			check(d.Name, d.V)
			check(d.Name, d.I)
		}
	})
}

// checkSolveError tests that err is located and readable: a structural
// ErrorList with every entry in t.cir, or a ConvergenceError that names
// what did not settle, located in t.cir, or an option or model error with
// a message.
func checkSolveError(t *testing.T, err error, desc string) {
	t.Helper()
	msg := err.Error()
	if msg == "" {
		t.Fatalf("empty error\n%s", desc)
	}
	if strings.Contains(msg, "NaN") {
		t.Errorf("error prints NaN: %s\n%s", msg, desc)
	}
	if l := netlist.AsErrorList(err); l != nil {
		for _, e := range l.List {
			if e.Pos.File != "t.cir" || !e.Pos.IsValid() {
				t.Errorf("unlocated error %q\n%s", e, desc)
			}
		}
		return
	}
	var ce *ConvergenceError
	if errors.As(err, &ce) {
		if ce.Pos.File != "t.cir" || len(ce.Tried) == 0 {
			t.Errorf("convergence error without place or attempts: %q\n%s", msg, desc)
		}
		return
	}
	t.Errorf("error of type %T is neither located nor a convergence error: %v\n%s", err, err, desc)
}
