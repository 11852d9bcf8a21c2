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
	// collectorOf maps a net key to the transistors whose collector or
	// emitter is on it (a transistor output that can drive a base).
	outputOf map[string][]*netlist.Element
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
	g := &graph{
		c: c, at: map[string][]*netlist.Element{}, rail: map[string]bool{},
		drive: map[string][]*netlist.Element{}, outputOf: map[string][]*netlist.Element{},
	}
	// Union-find over supply sources and inductors finds the rails.
	parent := map[string]string{}
	var find func(string) string
	find = func(x string) string {
		for i := 0; i < len(parent)+1; i++ { // bounded: a path is never longer than the set
			p, ok := parent[x]
			if !ok || p == x {
				return x
			}
			x = p
		}
		return x
	}
	union := func(a, b string) { parent[find(a)] = find(b) }
	for _, e := range c.Elements {
		for _, n := range e.Nodes {
			k := nodeKey(n)
			if l := g.at[k]; len(l) == 0 || l[len(l)-1] != e {
				g.at[k] = append(g.at[k], e)
			}
		}
		switch {
		case e.Kind == 'L' && len(e.Nodes) >= 2, e.Kind == 'V' && !isDriveSource(e, b) && len(e.Nodes) >= 2:
			union(nodeKey(e.Nodes[0]), nodeKey(e.Nodes[1]))
		}
		if isDriveSource(e, b) && len(e.Nodes) >= 2 {
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
	root := find(netlist.Ground)
	for k := range g.at {
		if find(k) == root {
			g.rail[k] = true
		}
	}
	g.rail[netlist.Ground] = true
	return g
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
	// resistors, inductors and capacitors, not through rails.
	sources []*netlist.Element
	// upstream are other transistors whose collector or emitter is reached.
	upstream []*netlist.Element
}

// drives walks from the base through R, L and C (coupling capacitors
// included), stopping at rails, and collects drive sources and upstream
// transistor outputs it reaches.
func (g *graph) drives(q *netlist.Element) driveInfo {
	var d driveInfo
	base := nodeKey(q.Nodes[1])
	seen := map[string]bool{base: true}
	seenEl := map[*netlist.Element]bool{}
	queue := []string{base}
	for len(queue) > 0 {
		k := queue[0]
		queue = queue[1:]
		for _, s := range g.drive[k] {
			if !seenEl[s] {
				seenEl[s] = true
				d.sources = append(d.sources, s)
			}
		}
		for _, o := range g.outputOf[k] {
			if o != q && !seenEl[o] {
				seenEl[o] = true
				d.upstream = append(d.upstream, o)
			}
		}
		if g.rail[k] {
			continue
		}
		for _, e := range g.at[k] {
			if e.Kind != 'R' && e.Kind != 'L' && e.Kind != 'C' || len(e.Nodes) < 2 {
				continue
			}
			if n := other(e, k); !seen[n] {
				seen[n] = true
				queue = append(queue, n)
			}
		}
	}
	sort.SliceStable(d.sources, func(i, j int) bool { return d.sources[i].Pos.Before(d.sources[j].Pos) })
	return d
}

// roleOf decides a transistor's role: an annotation wins; otherwise a base
// driven by a PULSE or PWL source means switch and one driven by a SIN,
// EXP or AC source means linear; otherwise the role of an upstream
// transistor whose output drives the base; otherwise linear ("default").
// depth bounds the walk upstream.
func (a *analyzer) roleOf(q *netlist.Element, depth int) (role, from string) {
	if d := a.board.Device(q.Name); d != nil && d.Role != "" {
		return d.Role, "annotation"
	}
	if r, ok := a.roles[nodeKey(q.Name)]; ok {
		return r[0], r[1]
	}
	di := a.g.drives(q)
	var lin string
	for _, s := range di.sources {
		if s.Source == nil {
			continue
		}
		if w := s.Source.Wave; w != nil {
			switch w.Kind {
			case netlist.WavePulse, netlist.WavePWL:
				return RoleSwitch, string(w.Kind) + " drive " + s.Name
			case netlist.WaveSin:
				lin = "sine drive " + s.Name
			case netlist.WaveExp:
				lin = "exp drive " + s.Name
			}
		} else if s.Source.HasAC && lin == "" {
			lin = "ac drive " + s.Name
		}
	}
	if lin != "" {
		return RoleLinear, lin
	}
	if depth < 32 {
		a.roles[nodeKey(q.Name)] = [2]string{RoleLinear, "default"} // breaks cycles
		for _, u := range di.upstream {
			if r, why := a.roleOf(u, depth+1); why != "default" {
				delete(a.roles, nodeKey(q.Name))
				return r, "driven by " + u.Name
			}
		}
		delete(a.roles, nodeKey(q.Name))
	}
	return RoleLinear, "default"
}
