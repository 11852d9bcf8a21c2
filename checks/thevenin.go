package checks

import (
	"context"
	"math"

	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

// floatingR is the Thevenin resistance, Ohm, above which a base counts as
// having no DC source at all (it is held only by the leaks).
const floatingR = 1e10

// testCurrent is the current injected into the base to measure the
// Thevenin resistance, A.
const testCurrent = 1e-6

// emitterResistance is the DC resistance from the emitter to its rail, Ohm:
// with every voltage source and inductor shorted (an ideal source holds its
// net still) and every current source, capacitor, diode and other
// transistor opened, the resistance the resistor network shows between the
// emitter and ground. It is 0 for an emitter tied straight to a rail and
// +Inf when no resistor path reaches one (a current-source tail, another
// transistor).
func (a *analyzer) emitterResistance(q *netlist.Element) float64 {
	// Supernodes: nets joined by shorts.
	parent := map[string]string{}
	find := func(x string) string { return findRoot(parent, x) }
	for _, e := range a.c.Elements {
		switch e.Kind {
		case 'V', 'L', 'E', 'H':
			if len(e.Nodes) >= 2 {
				ra, rb := find(nodeKey(e.Nodes[0])), find(nodeKey(e.Nodes[1]))
				if ra != rb {
					if rb == find(netlist.Ground) {
						ra, rb = rb, ra
					}
					parent[rb] = ra // keep ground's set rooted at ground
				}
			}
		}
	}
	gnd := find(netlist.Ground)
	emit := find(nodeKey(q.Nodes[2]))
	if emit == gnd {
		return 0
	}
	// Resistors between distinct supernodes, and the emitter's component.
	adj := map[string][]*netlist.Element{}
	for _, e := range a.c.Elements {
		if e.Kind == 'R' && len(e.Nodes) == 2 {
			x, y := find(nodeKey(e.Nodes[0])), find(nodeKey(e.Nodes[1]))
			if x != y {
				adj[x] = append(adj[x], e)
				adj[y] = append(adj[y], e)
			}
		}
	}
	seen := map[string]bool{emit: true}
	queue := []string{emit}
	var rs []*netlist.Element
	inR := map[*netlist.Element]bool{}
	for len(queue) > 0 {
		k := queue[0]
		queue = queue[1:]
		for _, e := range adj[k] {
			if !inR[e] {
				inR[e] = true
				rs = append(rs, e)
			}
			x, y := find(nodeKey(e.Nodes[0])), find(nodeKey(e.Nodes[1]))
			for _, n := range []string{x, y} {
				if !seen[n] {
					seen[n] = true
					queue = append(queue, n)
				}
			}
		}
	}
	if !seen[gnd] {
		return math.Inf(1)
	}
	name := func(k string) string {
		if k == gnd {
			return netlist.Ground
		}
		return "n:" + k
	}
	tc := &netlist.Circuit{File: a.c.File, Models: map[string]*netlist.Model{}, Options: a.c.Options}
	for _, e := range rs {
		if e.Value <= 0 {
			continue
		}
		tc.Elements = append(tc.Elements, &netlist.Element{Kind: 'R', Name: e.Name,
			Nodes: []string{name(find(nodeKey(e.Nodes[0]))), name(find(nodeKey(e.Nodes[1])))}, Value: e.Value, Pos: e.Pos})
	}
	tc.Elements = append(tc.Elements, &netlist.Element{Kind: 'I', Name: "I#test",
		Nodes: []string{netlist.Ground, name(emit)}, Source: &netlist.Source{DC: 1, HasDC: true}, Pos: q.Pos})
	res, err := solve.Solve(tc, solve.Options{Temp: solve.Temp(a.temp), Context: a.opt.Context})
	if err != nil {
		return math.NaN()
	}
	return res.Voltage[netlist.Key(name(emit))]
}

// thevenin is the Thevenin source the base of transistor name sees in
// circuit c with the transistor removed: vth the open-circuit base voltage
// forward-referenced to the emitter (V(B) - V(E) for an NPN, V(E) - V(B)
// for a PNP, sign is +1 or -1), V, and rth the resistance, Ohm, measured by
// injecting testCurrent into the base, both solved at temp (C). Both come
// from solving the whole circuit, other transistors included. A base with
// no DC source at all gives rth = +Inf and vth = NaN; a circuit that cannot
// be solved without the transistor gives NaN for both. ctx (nil for none)
// stops the solves (Options.Context).
func thevenin(ctx context.Context, c *netlist.Circuit, name string, sign, temp float64) (rth, vth float64) {
	var q *netlist.Element
	for _, e := range c.Elements {
		if e.Kind == 'Q' && netlist.Key(e.Name) == netlist.Key(name) {
			q = e
		}
	}
	if q == nil || len(q.Nodes) < 3 {
		return math.NaN(), math.NaN()
	}
	base := func(extra float64) (float64, bool) {
		var test []*netlist.Element
		if extra != 0 {
			test = append(test, &netlist.Element{Kind: 'I', Name: "I#test",
				Nodes: []string{netlist.Ground, q.Nodes[1]}, Source: &netlist.Source{DC: extra, HasDC: true}, Pos: q.Pos})
		}
		tc := solve.Without(c, q, test...)
		res, err := solve.Solve(tc, solve.Options{Temp: solve.Temp(temp), Context: ctx})
		if err != nil {
			return 0, false
		}
		return res.Voltage[nodeKey(q.Nodes[1])] - res.Voltage[nodeKey(q.Nodes[2])], true
	}
	v0, ok0 := base(0)
	v1, ok1 := base(testCurrent)
	if !ok0 || !ok1 {
		return math.NaN(), math.NaN()
	}
	rth = (v1 - v0) / testCurrent
	if rth > floatingR {
		return math.Inf(1), math.NaN()
	}
	return math.Max(rth, 0), sign * v0
}

// findRoot returns the root of x in the union-find forest parent (a net
// with no entry is its own root). The walk is bounded by the forest's size.
func findRoot(parent map[string]string, x string) string {
	for i := 0; i <= len(parent); i++ {
		p, ok := parent[x]
		if !ok || p == x {
			return x
		}
		x = p
	}
	return x
}
