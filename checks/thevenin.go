package checks

import (
	"math"

	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

// floatingR is the Thevenin resistance, Ohm, above which a base counts as
// having no DC source at all (it is held only by the leaks).
const floatingR = 1e10

// emitterResistance is the DC resistance from the emitter to its rail, Ohm:
// with every voltage source and inductor shorted (an ideal source holds its
// net still) and every current source, capacitor, diode and other
// transistor opened, the resistance the resistor network shows between the
// emitter and ground. It is 0 for an emitter tied straight to a rail and
// +Inf when no resistor path reaches one (a current-source tail, another
// transistor).
//
// The network is searched from the emitter without passing through the
// rail (ground and the nets sources tie to it): resistors beyond the rail
// do not change the resistance between the emitter and the rail, so each
// transistor costs the size of its own emitter network, not the board's.
func (a *analyzer) emitterResistance(q *netlist.Element) float64 {
	en := a.emitterNet()
	find := func(x string) string { return findRoot(en.parent, x) }
	gnd := find(netlist.Ground)
	emit := find(nodeKey(q.Nodes[2]))
	if emit == gnd {
		return 0
	}
	seen := map[string]bool{emit: true}
	queue := []string{emit}
	var rs []*netlist.Element
	inR := map[*netlist.Element]bool{}
	reached := false
	for len(queue) > 0 {
		k := queue[0]
		queue = queue[1:]
		for _, e := range en.adj[k] {
			if !inR[e] {
				inR[e] = true
				rs = append(rs, e)
			}
			x, y := find(nodeKey(e.Nodes[0])), find(nodeKey(e.Nodes[1]))
			for _, n := range []string{x, y} {
				if n == gnd {
					reached = true
					continue
				}
				if !seen[n] {
					seen[n] = true
					queue = append(queue, n)
				}
			}
		}
	}
	if !reached {
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
	res, err := solve.Solve(tc, solve.Options{Temp: solve.Temp(a.temp)})
	if err != nil {
		return math.NaN()
	}
	return res.Voltage[netlist.Key(name(emit))]
}

// emitterNetwork is the resistor network of emitterResistance: nets
// joined into supernodes by shorts (voltage sources, inductors, E and H
// sources), and the resistors between distinct supernodes by supernode.
type emitterNetwork struct {
	parent map[string]string
	adj    map[string][]*netlist.Element
}

// emitterNet builds the emitter network once per analysis.
func (a *analyzer) emitterNet() *emitterNetwork {
	if a.enet != nil {
		return a.enet
	}
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
	// Path compression, so that every later find is one step.
	for k := range parent {
		parent[k] = find(k)
	}
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
	a.enet = &emitterNetwork{parent: parent, adj: adj}
	return a.enet
}

// thevenin is the Thevenin source the base of transistor j sees on the
// worker's System with the transistor removed (solve.Options.Remove: its
// terminals held by solve.LeakR) and the sources in open opened: vth the
// open-circuit base voltage forward-referenced to the emitter (V(B) - V(E)
// for an NPN, V(E) - V(B) for a PNP), V, and rth the resistance, Ohm, the
// small-signal response of V(B) - V(E) to a current into the base
// (solve.System.SolveResponse), both at temp (C). Both come from solving
// the whole circuit, other transistors included, with one solve that
// starts from guess (the case's own solution) on the System's matrix
// pattern and ordering: no new System. A base with no DC source at all
// gives rth = +Inf and vth = NaN; a circuit that cannot be solved without
// the transistor gives NaN for both.
func (w *worker) thevenin(j int, open []string, temp float64, guess *solve.Result) (rth, vth float64) {
	q := w.a.bjts[j]
	if w.err != nil || len(q.Nodes) < 3 {
		return math.NaN(), math.NaN()
	}
	sign := 1.0
	if w.a.tmpl[j].Polarity == "pnp" {
		sign = -1
	}
	o := tightOptions(solve.Options{Temp: solve.Temp(temp), Remove: []string{q.Name}, Open: open, Guess: guess})
	vbe := func(r *solve.Result) float64 {
		return r.Voltage[nodeKey(q.Nodes[1])] - r.Voltage[nodeKey(q.Nodes[2])]
	}
	r0, dv, err := w.sys.SolveResponse(o, map[string]float64{q.Nodes[1]: 1})
	if err != nil {
		return math.NaN(), math.NaN()
	}
	v0 := vbe(r0)
	rth = dv[nodeKey(q.Nodes[1])] - dv[nodeKey(q.Nodes[2])]
	if rth > floatingR {
		return math.Inf(1), math.NaN()
	}
	return math.Max(rth, 0), sign * v0
}

// theveninAll computes every transistor's base Thevenin source on the
// nominal circuit, starting from the nominal solution, on the workers.
func (a *analyzer) theveninAll(nominal *solve.Result) {
	a.pool.each(len(a.bjts), func(w *worker, j int) {
		w.setHFE(0)
		if err := w.apply(w.sys, &w.dirty, nil); err != nil {
			a.tmpl[j].BaseRth, a.tmpl[j].BaseVth = math.NaN(), math.NaN()
			return
		}
		a.tmpl[j].BaseRth, a.tmpl[j].BaseVth = w.thevenin(j, nil, a.temp, nominal)
	})
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
