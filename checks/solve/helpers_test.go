package solve

import (
	"math"
	"testing"

	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/netlist"
)

// builder assembles a netlist.Circuit in Go, one element a line of a
// pretend file "t.cir", so tests do not depend on the parser.
type builder struct{ c *netlist.Circuit }

func newBuilder() *builder {
	return &builder{c: &netlist.Circuit{File: "t.cir", Models: map[string]*netlist.Model{}, Options: netlist.DefaultOptions()}}
}

func (b *builder) add(kind netlist.Kind, name string, value float64, nodes ...string) *netlist.Element {
	e := &netlist.Element{Kind: kind, Name: name, Nodes: nodes, Value: value,
		Pos: netlist.Pos{File: "t.cir", Line: len(b.c.Elements) + 2, Col: 1}}
	b.c.Elements = append(b.c.Elements, e)
	return e
}

func (b *builder) R(name, p, n string, ohm float64) *netlist.Element {
	return b.add('R', name, ohm, p, n)
}
func (b *builder) C(name, p, n string) *netlist.Element { return b.add('C', name, 1e-6, p, n) }
func (b *builder) L(name, p, n string) *netlist.Element { return b.add('L', name, 1e-3, p, n) }

func (b *builder) V(name, p, n string, dc float64) *netlist.Element {
	e := b.add('V', name, 0, p, n)
	e.Source = &netlist.Source{DC: dc, HasDC: true}
	return e
}

func (b *builder) I(name, p, n string, dc float64) *netlist.Element {
	e := b.add('I', name, 0, p, n)
	e.Source = &netlist.Source{DC: dc, HasDC: true}
	return e
}

func (b *builder) Q(name, c, base, e, model string) *netlist.Element {
	el := b.add('Q', name, 0, c, base, e)
	el.Model, el.Area = netlist.Key(model), 1
	return el
}

func (b *builder) D(name, a, k, model string) *netlist.Element {
	el := b.add('D', name, 0, a, k)
	el.Model, el.Area = netlist.Key(model), 1
	return el
}

func (b *builder) model(name string, typ netlist.ModelType, params map[string]float64) {
	if params == nil {
		params = map[string]float64{}
	}
	b.c.Models[netlist.Key(name)] = &netlist.Model{Name: name, Type: typ, Params: params,
		Pos: netlist.Pos{File: "models.lib", Line: len(b.c.Models) + 1, Col: 1}}
}

func mustSolve(t testing.TB, c *netlist.Circuit, opt Options) *Result {
	t.Helper()
	r, err := Solve(c, opt)
	if err != nil {
		t.Fatalf("Solve: %v", err)
	}
	return r
}

// fataler is the part of testing.TB (and rapid.T) the helpers need.
type fataler interface {
	Helper()
	Fatal(args ...any)
}

func relErr(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

// kclResiduals recomputes, independently of the solver's assembly, the
// sum of currents leaving every node of c at the solution r, from each
// element's own equation: Ohm's law, the reported branch currents, the
// source values, and the device models evaluated at the reported terminal
// voltages (devices without series resistances). It returns the residual
// and the sum of magnitudes of the terms at each node.
func kclResiduals(t fataler, c *netlist.Circuit, r *Result) (res, mag map[string]float64) {
	t.Helper()
	res, mag = map[string]float64{}, map[string]float64{}
	v := func(n string) float64 { return r.V(netlist.Key(n)) }
	leave := func(n string, i float64) {
		if isGround(n) {
			return
		}
		res[netlist.Key(n)] += i
		mag[netlist.Key(n)] += math.Abs(i)
	}
	dopt := device.Options{TNom: c.Options.TNom, GMin: c.Options.GMin}
	for _, e := range c.Elements {
		n := e.Nodes
		switch e.Kind {
		case 'R':
			if e.Value == 0 {
				i := r.Ival(netlist.Key(e.Name))
				leave(n[0], i)
				leave(n[1], -i)
				continue
			}
			i := (v(n[0]) - v(n[1])) / e.Value
			leave(n[0], i)
			leave(n[1], -i)
		case 'V', 'L', 'E', 'H':
			i := r.Ival(netlist.Key(e.Name))
			leave(n[0], i)
			leave(n[1], -i)
		case 'I':
			leave(n[0], e.Source.DC)
			leave(n[1], -e.Source.DC)
		case 'G':
			i := e.Value * (v(n[2]) - v(n[3]))
			leave(n[0], i)
			leave(n[1], -i)
		case 'F':
			i := e.Value * r.Ival(netlist.Key(e.Control))
			leave(n[0], i)
			leave(n[1], -i)
		case 'D':
			d, err := device.NewDiode(c.Models[e.Model], 1, r.Temp, dopt)
			if err != nil {
				t.Fatal(err)
			}
			i, g := d.Eval(v(n[0]) - v(n[1]))
			leave(n[0], i)
			leave(n[1], -i)
			// Rounding scale: a current this steep moves by g·|v|·ε.
			for _, nd := range n {
				if !isGround(nd) {
					mag[netlist.Key(nd)] += g * (math.Abs(v(n[0])) + math.Abs(v(n[1])))
				}
			}
		case 'Q':
			q, err := device.NewBJT(c.Models[e.Model], 1, r.Temp, dopt)
			if err != nil {
				t.Fatal(err)
			}
			ev := q.Eval(v(n[1])-v(n[2]), v(n[1])-v(n[0]))
			leave(n[0], ev.IC)
			leave(n[1], ev.IB)
			leave(n[2], ev.IE())
			// Rounding scale: the terms inside the model and g·|v|.
			g := math.Abs(ev.DICdVBE) + math.Abs(ev.DICdVBC) + math.Abs(ev.DIBdVBE) + math.Abs(ev.DIBdVBC)
			for _, nd := range n[:3] {
				if !isGround(nd) {
					mag[netlist.Key(nd)] += ev.Mag + g*(math.Abs(v(n[0]))+math.Abs(v(n[1]))+math.Abs(v(n[2])))
				}
			}
		}
	}
	return res, mag
}

// Ival is the branch current of an element, 0 when it has none.
func (r *Result) Ival(element string) float64 {
	i, _ := r.I(element)
	return i
}
