package checks

import (
	"sort"

	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/netlist"
)

// graph is the circuit's connectivity as the topology facts need it: which
// elements touch each net, which nets are rails (held at a fixed potential
// by supply sources), and which nets are driven by a drive source.
//
// Supply sources are independent V sources with no waveform and no AC term,
// not annotated driver=yes. Drive sources are every other independent
// source (PULSE, PWL, SIN, EXP, AC, or annotated driver=yes), every
// independent current source, and the outputs of controlled sources.
type graph struct {
	c *netlist.Circuit
	// at lists the elements touching each net key.
	at map[string][]*netlist.Element
	// rail marks net keys joined to ground through supply sources and
	// inductors only.
	rail map[string]bool
	// drive maps a net key to the drive sources attached to it (their non-
	// ground terminals).
	drive map[string][]*netlist.Element
	// outputOf maps a net key to the transistors whose collector or
	// emitter is on it (a transistor output that can drive a base).
	outputOf map[string][]*netlist.Element
	// pin maps a net key to the plain DC source that holds it when the
	// source stands for a controller pin (see pinNet): such a net is a
	// drive, not a rail.
	pin map[string]*netlist.Element
	// comp maps each net key to its component under resistors, inductors
	// and capacitors with rails cut out; compDrive lists the drive sources
	// on each component's nets, in netlist order.
	comp      map[string]string
	compDrive map[string][]*netlist.Element
}

func nodeKey(n string) string { return netlist.Key(n) }

// isDriveSource reports whether a source element drives rather than supplies.
func isDriveSource(e *netlist.Element, b *board.Settings) bool {
	switch e.Kind {
	case 'I', 'E', 'F', 'G', 'H':
		return true
	case 'V':
		if d := b.Device(e.Name); d != nil && d.Driver {
			return true
		}
		return e.Source != nil && (e.Source.Wave != nil || e.Source.HasAC)
	}
	return false
}

func newGraph(c *netlist.Circuit, b *board.Settings) *graph {
	n := len(c.Elements) // about as many nets as elements: size the maps once
	g := &graph{
		c: c, at: make(map[string][]*netlist.Element, n), rail: map[string]bool{},
		drive: map[string][]*netlist.Element{}, outputOf: make(map[string][]*netlist.Element, n),
		pin: map[string]*netlist.Element{},
	}
	bases := map[string]bool{}
	for _, e := range c.Elements {
		for _, n := range e.Nodes {
			k := nodeKey(n)
			if l := g.at[k]; len(l) == 0 || l[len(l)-1] != e {
				g.at[k] = append(g.at[k], e)
			}
		}
		if e.Kind == 'Q' && len(e.Nodes) >= 3 {
			bases[nodeKey(e.Nodes[1])] = true
		}
	}
	isPin := map[*netlist.Element]bool{}
	supply := g.supplyNets(b)
	for _, e := range c.Elements {
		if e.Kind == 'V' && !isDriveSource(e, b) && len(e.Nodes) >= 2 {
			if k, ok := g.pinNet(e, bases, supply); ok && g.pin[k] == nil {
				g.pin[k], isPin[e] = e, true
			}
		}
	}
	// Union-find over supply sources and inductors finds the rails.
	uf := newUnionFindSized(n / 8)
	for _, e := range c.Elements {
		pin := isPin[e]
		switch {
		case e.Kind == 'L' && len(e.Nodes) >= 2, e.Kind == 'V' && !isDriveSource(e, b) && !pin && len(e.Nodes) >= 2:
			uf.union(nodeKey(e.Nodes[0]), nodeKey(e.Nodes[1]))
		}
		if (isDriveSource(e, b) || pin) && len(e.Nodes) >= 2 {
			for _, n := range e.Nodes[:2] {
				if k := nodeKey(n); k != netlist.Ground {
					g.drive[k] = append(g.drive[k], e)
				}
			}
		}
		if e.Kind == 'Q' && len(e.Nodes) >= 3 {
			for _, i := range []int{0, 2} {
				k := nodeKey(e.Nodes[i])
				g.outputOf[k] = append(g.outputOf[k], e)
			}
		}
	}
	root := uf.find(netlist.Ground)
	for k := range g.at {
		if uf.find(k) == root {
			g.rail[k] = true
		}
	}
	g.rail[netlist.Ground] = true
	g.components()
	return g
}

// pinNet reports whether the DC voltage source e stands for a controller
// pin (a logic output written as a plain DC source) rather than a supply,
// and which net it holds. One terminal is on ground, and the region the
// other net reaches through resistors and capacitors (stopping at ground
// and at supply nets, see supplyNets) holds at least one transistor base
// and nothing else but resistors and capacitors: no collector or emitter,
// no other source, diode, inductor or controlled element. A supply feeds
// collectors and loads; a pin feeds base resistors, with pull-downs (and,
// for a PNP whose emitter is on a supply, pull-ups to that supply) and RC
// filters on the way. The walk stops at the first thing a pin cannot
// feed, and is bounded by the circuit's size.
func (g *graph) pinNet(e *netlist.Element, bases, supply map[string]bool) (string, bool) {
	a, b := nodeKey(e.Nodes[0]), nodeKey(e.Nodes[1])
	var k string
	switch {
	case b == netlist.Ground && a != netlist.Ground:
		k = a
	case a == netlist.Ground && b != netlist.Ground:
		k = b
	default:
		return "", false
	}
	if bases[k] {
		return "", false // straight on a base: a bias source, stiff_drive judges it
	}
	toBase := false
	seen := map[string]bool{k: true}
	queue := []string{k}
	for len(queue) > 0 {
		n := queue[0]
		queue = queue[1:]
		for _, x := range g.at[n] {
			switch {
			case x == e:
			case x.Kind == 'Q' && len(x.Nodes) >= 3:
				if nodeKey(x.Nodes[0]) == n || nodeKey(x.Nodes[2]) == n {
					return "", false // a collector or an emitter: a supply
				}
				toBase = true
			case (x.Kind == 'R' || x.Kind == 'C') && len(x.Nodes) == 2:
				if f := other(x, n); f != netlist.Ground && !supply[f] && !seen[f] {
					seen[f] = true
					queue = append(queue, f)
				}
			default:
				return "", false
			}
		}
	}
	return k, toBase
}

// supplyNets returns the nets a plain DC source holds against ground that
// also carry a transistor's collector or emitter: supplies, which no pin
// can be, so a pin's walk stops there as at ground.
func (g *graph) supplyNets(b *board.Settings) map[string]bool {
	out := map[string]bool{}
	for _, e := range g.c.Elements {
		if e.Kind != 'V' || isDriveSource(e, b) || len(e.Nodes) < 2 {
			continue
		}
		for i, n := range e.Nodes[:2] {
			k, o := nodeKey(n), nodeKey(e.Nodes[1-i])
			if o != netlist.Ground || k == netlist.Ground {
				continue
			}
			for _, x := range g.at[k] {
				if x.Kind == 'Q' && len(x.Nodes) >= 3 && (nodeKey(x.Nodes[0]) == k || nodeKey(x.Nodes[2]) == k) {
					out[k] = true
				}
			}
		}
	}
	return out
}

// components joins the nets that resistors, inductors and capacitors
// connect, rails excepted (a rail holds its potential whatever hangs on
// it), in one union-find pass, and records for each component the drive
// sources on its nets. drives reads them, so
// finding what drives every base costs O(elements) in all, not a walk per
// transistor.
func (g *graph) components() {
	uf := newUnionFindSized(len(g.at))
	for _, e := range g.c.Elements {
		if (e.Kind != 'R' && e.Kind != 'L' && e.Kind != 'C') || len(e.Nodes) < 2 {
			continue
		}
		x, y := nodeKey(e.Nodes[0]), nodeKey(e.Nodes[1])
		if g.rail[x] || g.rail[y] {
			continue
		}
		uf.union(x, y)
	}
	// Flatten, so every later find is one step.
	keys := make([]string, 0, len(g.at))
	for k := range g.at {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	flat := make(map[string]string, len(keys))
	for _, k := range keys {
		flat[k] = uf.find(k)
	}
	g.comp = flat
	g.compDrive = map[string][]*netlist.Element{}
	isDrive := map[*netlist.Element]bool{}
	for _, l := range g.drive {
		for _, e := range l {
			isDrive[e] = true
		}
	}
	seen := map[*netlist.Element]string{}
	for _, e := range g.c.Elements {
		if len(e.Nodes) < 2 || !isDrive[e] {
			continue
		}
		for _, n := range e.Nodes[:2] {
			k := nodeKey(n)
			if g.rail[k] || k == netlist.Ground {
				continue
			}
			r := g.comp[k]
			if seen[e] != r {
				seen[e] = r
				g.compDrive[r] = append(g.compDrive[r], e)
			}
		}
	}
	for r, l := range g.compDrive {
		sort.SliceStable(l, func(i, j int) bool { return l[i].Pos.Before(l[j].Pos) })
		g.compDrive[r] = l
	}
}

// resistive reports whether e conducts DC through resistance or a short,
// the way a bleed or a bias network does: resistors and inductors.
func resistive(e *netlist.Element) bool { return e.Kind == 'R' || e.Kind == 'L' }

// other returns the far node key of a two-terminal element from net k.
func other(e *netlist.Element, k string) string {
	if nodeKey(e.Nodes[0]) == k {
		return nodeKey(e.Nodes[1])
	}
	return nodeKey(e.Nodes[0])
}

// bleed reports whether the base net has a DC path through resistors and
// inductors to the emitter net or to a rail that does not enter a net held
// by a drive source or a transistor output (the drive letting go).
func (g *graph) bleed(q *netlist.Element) bool {
	base, emit := nodeKey(q.Nodes[1]), nodeKey(q.Nodes[2])
	seen := map[string]bool{base: true}
	queue := []string{base}
	for len(queue) > 0 {
		k := queue[0]
		queue = queue[1:]
		for _, e := range g.at[k] {
			if !resistive(e) || len(e.Nodes) < 2 {
				continue
			}
			n := other(e, k)
			if seen[n] {
				continue
			}
			seen[n] = true
			if n == emit || g.rail[n] {
				return true
			}
			if len(g.drive[n]) > 0 || g.heldByOtherOutput(n, q) {
				continue // through the drive: it lets go
			}
			queue = append(queue, n)
		}
	}
	return false
}

func (g *graph) heldByOtherOutput(k string, q *netlist.Element) bool {
	for _, o := range g.outputOf[k] {
		if o != q {
			return true
		}
	}
	return false
}

// stiff reports whether the base net is held by a voltage source or a
// controlled voltage output with no resistance between (directly or through
// inductors only), or sits on a rail.
func (g *graph) stiff(q *netlist.Element) bool {
	base := nodeKey(q.Nodes[1])
	if base == netlist.Ground {
		return true
	}
	seen := map[string]bool{base: true}
	queue := []string{base}
	for len(queue) > 0 {
		k := queue[0]
		queue = queue[1:]
		if g.rail[k] {
			return true
		}
		for _, e := range g.at[k] {
			switch e.Kind {
			case 'V', 'E', 'H':
				if len(e.Nodes) >= 2 && (nodeKey(e.Nodes[0]) == k || nodeKey(e.Nodes[1]) == k) {
					return true
				}
			case 'L':
				if n := other(e, k); !seen[n] {
					seen[n] = true
					queue = append(queue, n)
				}
			}
		}
	}
	return false
}

// driveInfo is what drives a transistor's base.
type driveInfo struct {
	// sources are the drive sources reached from the base through
	// resistors, inductors and capacitors, not through rails, in netlist
	// order. The slice is shared by every base of the component: do not
	// modify it.
	sources []*netlist.Element
}

// drives lists the drive sources reached from q's base through
// resistors, inductors and capacitors (coupling capacitors included)
// without passing a rail: those of the base's component, sorted once in
// components.
func (g *graph) drives(q *netlist.Element) driveInfo {
	base := nodeKey(q.Nodes[1])
	if g.rail[base] {
		return driveInfo{}
	}
	return driveInfo{sources: g.compDrive[g.comp[base]]}
}

// unionFind is a disjoint-set forest over net keys with path compression
// and union by size, so n operations cost O(n α(n)).
type unionFind struct {
	parent map[string]string
	size   map[string]int
}

func newUnionFind() *unionFind {
	return &unionFind{parent: map[string]string{}, size: map[string]int{}}
}

// newUnionFindSized is newUnionFind with room for about n joined keys.
func newUnionFindSized(n int) *unionFind {
	return &unionFind{parent: make(map[string]string, n), size: make(map[string]int, n)}
}

// find returns x's root (x itself when it was never joined).
func (u *unionFind) find(x string) string {
	r := x
	for i := 0; i <= len(u.parent); i++ { // bounded by the forest's size
		p, ok := u.parent[r]
		if !ok || p == r {
			break
		}
		r = p
	}
	for x != r { // compress the path
		p := u.parent[x]
		u.parent[x] = r
		x = p
	}
	return r
}

// union joins the sets of x and y.
func (u *unionFind) union(x, y string) {
	rx, ry := u.find(x), u.find(y)
	if rx == ry {
		return
	}
	sx, sy := u.size[rx]+1, u.size[ry]+1
	if sx > sy {
		rx, ry = ry, rx
	}
	u.parent[rx] = ry
	u.size[ry] = sx + sy - 1
}
