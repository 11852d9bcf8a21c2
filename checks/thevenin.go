package checks

import (
	"context"
	"math"
	"sort"
	"strconv"
	"sync"

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
	res, err := solve.Solve(tc, solve.Options{Temp: solve.Temp(a.temp), Context: a.opt.Context})
	if err != nil {
		return math.NaN()
	}
	return res.V(netlist.Key(name(emit)))
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
	if w.err != nil {
		return math.NaN(), math.NaN()
	}
	return theveninOn(w.a.opt.Context, w.sys, w.a.bjts[j], w.a.tmpl[j].Polarity, open, temp, guess)
}

// theveninOn is thevenin on System sys, for transistor q of polarity pol;
// ctx (nil for none) stops its solve (solve.Options.Context).
func theveninOn(ctx context.Context, sys *solve.System, q *netlist.Element, pol string, open []string, temp float64, guess *solve.Result) (rth, vth float64) {
	if len(q.Nodes) < 3 {
		return math.NaN(), math.NaN()
	}
	sign := 1.0
	if pol == "pnp" {
		sign = -1
	}
	o := tightOptions(solve.Options{Temp: solve.Temp(temp), Remove: []string{q.Name}, Open: open, Guess: guess, Context: ctx})
	vbe := func(r *solve.Result) float64 {
		return r.V(nodeKey(q.Nodes[1])) - r.V(nodeKey(q.Nodes[2]))
	}
	r0, dv, err := sys.SolveResponse(o, map[string]float64{q.Nodes[1]: 1})
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
// Where the part of the board that removing the transistor can change is
// small (localCircuit: up to the rails), only that part is solved, so
// the facts of a board of many stages cost in proportion to the board,
// not to its square.
//
// The local parts of a board of repeated stages have one shape: the
// pivot order of the first is shared with the others of its shape
// (localOrders), so each skips the ordering and symbolic analysis and
// gets the same bits as a fresh pivoting (solve.SparseLU.UsePivotOrder).
func (a *analyzer) theveninAll(nominal *solve.Result) {
	a.rails().index(nil) // built once, before the workers read it
	orders := &localOrders{m: map[string]*solve.PivotOrder{}}
	a.pool.each(len(a.bjts), func(w *worker, j int) {
		t := &a.tmpl[j]
		if lc := a.localCircuit(a.bjts[j], nominal); lc != nil {
			if sys, err := solve.Prepare(lc); err == nil {
				shape := shapeKey(lc)
				o := orders.get(shape)
				if o != nil {
					sys.UsePivotOrder(o)
				}
				t.BaseRth, t.BaseVth = theveninOn(a.opt.Context, sys, a.bjts[j], t.Polarity, nil, a.temp, nominal)
				if o == nil {
					orders.put(shape, sys.PivotOrder())
				}
				return
			}
		}
		w.setHFE(0)
		if err := w.apply(w.sys, &w.dirty, nil); err != nil || w.err != nil {
			t.BaseRth, t.BaseVth = math.NaN(), math.NaN()
			return
		}
		t.BaseRth, t.BaseVth = theveninOn(a.opt.Context, w.sys, a.bjts[j], t.Polarity, nil, a.temp, nominal)
	})
}

// localOrders holds the pivot orders of the local circuits solved so far,
// by shape (shapeKey), for the workers of theveninAll.
type localOrders struct {
	mu sync.Mutex
	m  map[string]*solve.PivotOrder
}

// get returns the order of a shape, nil for none (or when sharing pivot
// orders is off).
func (l *localOrders) get(shape string) *solve.PivotOrder {
	if !sharePivotOrder {
		return nil
	}
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.m[shape]
}

// put records the order of a shape, unless one is recorded already.
func (l *localOrders) put(shape string, o *solve.PivotOrder) {
	if o == nil || !sharePivotOrder {
		return
	}
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.m[shape] == nil {
		l.m[shape] = o
	}
}

// shapeKey describes circuit c's structure: each element's kind, model
// and nets, the nets numbered in order of first appearance (ground -1).
// Circuits with equal keys number their unknowns alike and stamp the same
// matrix pattern, unless their values differ where the pattern depends on
// them (a zero-ohm resistor, a model's series resistances): the pivot
// order of one then suits the other, and where it does not, the solver
// finds out and pivots afresh (solve.SparseLU.UsePivotOrder compares the
// patterns exactly).
func shapeKey(c *netlist.Circuit) string {
	num := make(map[string]int, 2*len(c.Elements))
	b := make([]byte, 0, 16*len(c.Elements))
	for _, e := range c.Elements {
		b = append(b, byte(e.Kind))
		b = append(b, e.Model...)
		for _, n := range e.Nodes {
			k := nodeKey(n)
			i, ok := num[k]
			switch {
			case isGroundKey(k):
				i = -1
			case !ok:
				i = len(num)
				num[k] = i
			}
			b = append(b, ' ')
			b = strconv.AppendInt(b, int64(i), 10)
		}
		if e.Kind == 'R' && e.Value == 0 {
			b = append(b, '!')
		}
		b = append(b, ';')
	}
	return string(b)
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

// Localizer finds, for a transistor, the part of a circuit that taking
// the transistor out can change: the nets reached from its terminals
// without passing through a rail (ground and every net tied to it through
// voltage sources, inductors and zero-ohm resistors, which no change
// elsewhere can move). Build it once per circuit (NewLocalizer, linear in
// the circuit); each Part then costs the size of that part.
type Localizer struct {
	c      *netlist.Circuit
	parent map[string]string
	// at lists the elements on each net (by key), for the searches.
	at map[string][]*netlist.Element
	// controlled is set when the circuit has E, F, G or H sources, whose
	// controls can couple nets that share no element.
	controlled bool
	// idx is each element's position in the circuit.
	idx map[*netlist.Element]int
}

// NewLocalizer indexes circuit c.
func NewLocalizer(c *netlist.Circuit) *Localizer {
	r := &Localizer{c: c, parent: map[string]string{}, at: map[string][]*netlist.Element{}}
	find := func(x string) string { return findRoot(r.parent, x) }
	for _, e := range c.Elements {
		switch e.Kind {
		case 'E', 'F', 'G', 'H':
			r.controlled = true
		}
		hold := e.Kind == 'V' || e.Kind == 'L' || (e.Kind == 'R' && e.Value == 0)
		if hold && len(e.Nodes) >= 2 {
			ra, rb := find(nodeKey(e.Nodes[0])), find(nodeKey(e.Nodes[1]))
			if ra != rb {
				if rb == find(netlist.Ground) {
					ra, rb = rb, ra
				}
				r.parent[rb] = ra
			}
		}
		for _, n := range e.Nodes {
			k := nodeKey(n)
			if l := r.at[k]; len(l) == 0 || l[len(l)-1] != e {
				r.at[k] = append(r.at[k], e)
			}
		}
	}
	for k := range r.parent {
		r.parent[k] = find(k)
	}
	return r
}

// rails returns the analysis's Localizer, built once.
func (a *analyzer) rails() *Localizer {
	if a.rnet == nil {
		a.rnet = NewLocalizer(a.c)
	}
	return a.rnet
}

// isRail reports whether net key k is held by an ideal source.
func (r *Localizer) isRail(k string) bool {
	return findRoot(r.parent, k) == findRoot(r.parent, netlist.Ground)
}

// Part returns the part of the circuit that taking transistor q out can
// change, as a circuit of its own: the elements reached from q's
// terminals without passing through a rail, in netlist order, with every
// rail net they touch held at its voltage in nominal by a source of its
// own. Solving it gives what solving the whole circuit gives for those
// nets, since the rails do not move. It returns nil when the circuit has
// controlled sources (their controls can reach past the search), when
// nominal is nil, or when the part is more than half of the circuit
// anyway (then solve the whole).
func (r *Localizer) Part(q *netlist.Element, nominal *solve.Result) *netlist.Circuit {
	if r.controlled || nominal == nil || q == nil || len(q.Nodes) < 3 {
		return nil
	}
	seen := map[string]bool{}
	inEl := map[*netlist.Element]bool{}
	var els []*netlist.Element
	var queue []string
	for _, n := range q.Nodes[:3] {
		if k := nodeKey(n); !r.isRail(k) && !seen[k] {
			seen[k] = true
			queue = append(queue, k)
		}
	}
	for len(queue) > 0 {
		k := queue[0]
		queue = queue[1:]
		for _, e := range r.at[k] {
			if inEl[e] {
				continue
			}
			inEl[e] = true
			els = append(els, e)
			for _, n := range e.Nodes {
				if m := nodeKey(n); !r.isRail(m) && !seen[m] {
					seen[m] = true
					queue = append(queue, m)
				}
			}
		}
		if 2*len(els) > len(r.c.Elements) {
			return nil
		}
	}
	sort.Slice(els, func(i, j int) bool { return r.index(els[i]) < r.index(els[j]) })
	tc := *r.c
	tc.Elements = make([]*netlist.Element, 0, len(els)+8)
	held := map[string]bool{}
	for _, e := range els {
		tc.Elements = append(tc.Elements, e)
		for _, n := range e.Nodes {
			k := nodeKey(n)
			if r.isRail(k) && !isGroundKey(k) && !held[k] {
				held[k] = true
				tc.Elements = append(tc.Elements, &netlist.Element{Kind: 'V', Name: "V#rail:" + k, Nodes: []string{n, netlist.Ground},
					Source: &netlist.Source{DC: nominal.V(k), HasDC: true}, Pos: e.Pos})
			}
		}
	}
	return &tc
}

// index returns an element's position in the circuit (built on first use).
func (r *Localizer) index(e *netlist.Element) int {
	if r.idx == nil {
		r.idx = make(map[*netlist.Element]int, len(r.c.Elements))
		for i, x := range r.c.Elements {
			r.idx[x] = i
		}
	}
	return r.idx[e]
}

// localCircuit is the analysis's Localizer's Part.
func (a *analyzer) localCircuit(q *netlist.Element, nominal *solve.Result) *netlist.Circuit {
	return a.rails().Part(q, nominal)
}

// isGroundKey reports whether a net key is ground.
func isGroundKey(k string) bool { return k == netlist.Ground || k == "gnd" }
