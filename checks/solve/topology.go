package solve

import (
	"fmt"
	"strings"

	"github.com/biaslint/biaslint/netlist"
)

// unionFind is a disjoint-set forest over 0..n−1 with path halving and
// union by size.
type unionFind struct{ parent, size []int }

func newUnionFind(n int) *unionFind {
	u := &unionFind{parent: make([]int, n), size: make([]int, n)}
	for i := range u.parent {
		u.parent[i], u.size[i] = i, 1
	}
	return u
}

func (u *unionFind) find(i int) int {
	for u.parent[i] != i {
		u.parent[i] = u.parent[u.parent[i]]
		i = u.parent[i]
	}
	return i
}

func (u *unionFind) union(i, j int) {
	a, b := u.find(i), u.find(j)
	if a == b {
		return
	}
	if u.size[a] < u.size[b] {
		a, b = b, a
	}
	u.parent[b] = a
	u.size[a] += u.size[b]
}

// vertex maps a node index (−1 = ground) to a union-find vertex; ground is
// vertex nExt.
func (s *System) vertex(i int) int {
	if i < 0 {
		return s.nExt
	}
	return i
}

// role describes an element for messages.
func role(el *elem) string {
	switch el.kind {
	case 'R':
		if el.short {
			return "zero-ohm resistor, a short"
		}
		return "resistor"
	case 'C':
		return "capacitor"
	case 'L':
		return "inductor, a short at DC"
	case 'V':
		return "voltage source"
	case 'I':
		return "current source"
	case 'E':
		return "voltage-controlled voltage source"
	case 'F':
		return "current-controlled current source"
	case 'G':
		return "voltage-controlled current source"
	case 'H':
		return "current-controlled voltage source"
	case 'D':
		return "diode"
	case 'Q':
		return "transistor"
	}
	return "element"
}

// dcEdges returns the node pairs through which el conducts at DC.
func dcEdges(el *elem) [][2]int {
	n := el.nodes
	switch el.kind {
	case 'R', 'V', 'L', 'D', 'E', 'H':
		return [][2]int{{n[0], n[1]}}
	case 'Q':
		return [][2]int{{n[1], n[0]}, {n[1], n[2]}}
	}
	return nil
}

// dcTerminal reports whether el's t-th node carries DC current into el:
// every terminal of R, V, L, D and Q, the outputs of E and H; not C, I,
// F, G, nor the control inputs of E and G.
func dcTerminal(el *elem, t int) bool {
	switch el.kind {
	case 'R', 'V', 'L', 'D', 'Q':
		return true
	case 'E', 'H':
		return t < 2
	}
	return false
}

// voltageEdge reports whether el fixes the voltage between its first two
// nodes (a branch unknown): V, L, E, H outputs and shorts.
func voltageEdge(el *elem) bool { return el.br >= 0 }

// checkTopology reports nodes without a DC path to ground and loops of
// voltage-fixing branches.
func (s *System) checkTopology(errs *netlist.ErrorList) {
	s.checkDCPaths(errs)
	s.checkVoltageLoops(errs)
}

// checkDCPaths finds the groups of nodes that DC-conducting elements (R, V,
// L, D, Q junctions, E and H outputs) do not join to ground. Each group is
// one error, located at the first element touching it, naming its nodes
// and the elements that reach it without carrying DC (capacitors, current
// sources, controlled-source inputs).
func (s *System) checkDCPaths(errs *netlist.ErrorList) {
	uf := newUnionFind(s.nExt + 1)
	grounded := false
	for _, el := range s.elems {
		for _, nd := range el.nodes {
			grounded = grounded || nd < 0
		}
		for _, ed := range dcEdges(el) {
			uf.union(s.vertex(ed[0]), s.vertex(ed[1]))
		}
	}
	if !grounded {
		pos := netlist.Pos{File: s.circuit.File}
		if len(s.elems) > 0 {
			pos = s.elems[0].e.Pos
		}
		errs.Add(pos, "no element connects to ground (net 0 or gnd): every net voltage is undetermined")
		return
	}
	g := uf.find(s.nExt)
	type group struct {
		nodes  []string
		first  *elem
		others []*elem // non-DC elements touching the group
		inside []*elem // DC elements inside the group
	}
	groups := map[int]*group{}
	var order []int
	for i := 0; i < s.nExt; i++ {
		r := uf.find(i)
		if r == g {
			continue
		}
		gr := groups[r]
		if gr == nil {
			gr = &group{}
			groups[r] = gr
			order = append(order, r)
		}
		gr.nodes = append(gr.nodes, s.nodeNames[i])
	}
	if len(order) == 0 {
		return
	}
	for _, el := range s.elems {
		touched := map[int]bool{} // group root → touched through a DC terminal
		var roots []int
		for t, nd := range el.nodes {
			if nd < 0 || groups[uf.find(nd)] == nil {
				continue
			}
			r := uf.find(nd)
			if _, seen := touched[r]; !seen {
				roots = append(roots, r)
			}
			touched[r] = touched[r] || dcTerminal(el, t)
		}
		for _, r := range roots {
			gr := groups[r]
			if gr.first == nil {
				gr.first = el
			}
			if touched[r] {
				gr.inside = append(gr.inside, el)
			} else {
				gr.others = append(gr.others, el)
			}
		}
	}
	for _, r := range order {
		gr := groups[r]
		subject, it := "net "+gr.nodes[0]+" has", "it is"
		if len(gr.nodes) > 1 {
			subject, it = "nets "+nameList(gr.nodes)+" have", "they are"
		}
		if onlyCapacitors(gr.others) {
			// Reached only through capacitors (an open coupling
			// capacitor, a bypass to nowhere): at DC the nodes follow
			// nothing, so a GMIN leak to ground ties each, as SPICE
			// places GMIN across junctions, and the solve goes on.
			var caps []string
			for _, el := range gr.others {
				caps = append(caps, el.e.Name)
			}
			for i := 0; i < s.nExt; i++ {
				if uf.find(i) == r {
					s.leaks = append(s.leaks, i)
				}
			}
			s.notes.Notef(gr.first.e.Pos, "%s no DC path to ground: %s reached only through %s; a GMIN leak to ground ties each so that the circuit can be solved",
				subject, it, nameList(caps))
			continue
		}
		var why string
		var sources, others []string
		for _, el := range gr.others {
			desc := role(el) + " " + el.e.Name
			if (el.kind == 'E' || el.kind == 'G') && !touchesOutput(el, uf, r) {
				desc = "the control input of " + role(el) + " " + el.e.Name
			} else if el.kind == 'I' || el.kind == 'F' || el.kind == 'G' {
				sources = append(sources, desc)
				continue
			}
			others = append(others, desc)
		}
		all := append(append([]string(nil), sources...), others...)
		switch {
		case len(sources) > 0:
			why = fmt.Sprintf("%s reached only through %s, so the source current has no DC return path", it, nameList(all))
		case len(others) > 0:
			why = fmt.Sprintf("%s reached only through %s, which carries no DC current", it, nameList(all))
			if len(all) > 1 {
				why = fmt.Sprintf("%s reached only through %s, which carry no DC current", it, nameList(all))
			}
		default:
			var in []string
			for _, el := range gr.inside {
				in = append(in, el.e.Name)
			}
			verb, obj := "connect", "it"
			if len(in) == 1 {
				verb = "connects"
			}
			if len(gr.nodes) > 1 {
				obj = "them"
			}
			why = fmt.Sprintf("%s %s %s to nothing else", nameList(in), verb, obj)
		}
		errs.Addf(gr.first.e.Pos, "%s no DC path to ground: %s", subject, why)
	}
}

// onlyCapacitors reports whether els are one or more capacitors and
// nothing else.
func onlyCapacitors(els []*elem) bool {
	for _, el := range els {
		if el.kind != 'C' {
			return false
		}
	}
	return len(els) > 0
}

// touchesOutput reports whether an E or G element's output nodes are in
// the group with root r.
func touchesOutput(el *elem, uf *unionFind, r int) bool {
	for _, nd := range el.nodes[:2] {
		if nd >= 0 && uf.find(nd) == r {
			return true
		}
	}
	return false
}

// nameList joins names as "a", "a and b", "a, b and c", cutting long lists.
func nameList(names []string) string {
	const max = 8
	extra := 0
	if len(names) > max {
		extra = len(names) - max
		names = names[:max]
	}
	var s string
	switch len(names) {
	case 0:
		return ""
	case 1:
		s = names[0]
	default:
		s = strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1]
	}
	if extra > 0 {
		s = strings.Join(names, ", ") + fmt.Sprintf(" and %d more", extra)
	}
	return s
}

// checkVoltageLoops finds loops of elements that fix a voltage (V, L, E
// and H outputs, zero-ohm resistors): around such a loop the voltages are
// over-determined and the loop current is not determined. Each loop is one
// error at the element that closes it, naming every element of the loop.
func (s *System) checkVoltageLoops(errs *netlist.ErrorList) {
	nv := s.nExt + 1
	uf := newUnionFind(nv)
	type edge struct {
		to int
		el *elem
	}
	adj := make([][]edge, nv)
	for _, el := range s.elems {
		if !voltageEdge(el) {
			continue
		}
		a, b := s.vertex(el.nodes[0]), s.vertex(el.nodes[1])
		if a == b {
			errs.Addf(el.e.Pos, "%s (%s) has both terminals on net %s: its branch current is not determined",
				el.e.Name, role(el), el.e.Nodes[0])
			continue
		}
		if uf.find(a) != uf.find(b) {
			uf.union(a, b)
			adj[a] = append(adj[a], edge{b, el})
			adj[b] = append(adj[b], edge{a, el})
			continue
		}
		// Breadth-first search in the forest for the path a → b.
		prev := make([]edge, nv)
		seen := make([]bool, nv)
		queue := []int{a}
		seen[a] = true
		for len(queue) > 0 && !seen[b] {
			v := queue[0]
			queue = queue[1:]
			for _, ed := range adj[v] {
				if !seen[ed.to] {
					seen[ed.to] = true
					prev[ed.to] = edge{v, ed.el}
					queue = append(queue, ed.to)
				}
			}
		}
		var parts []string
		for v := b; v != a && seen[v]; v = prev[v].to {
			parts = append(parts, prev[v].el.e.Name+" ("+role(prev[v].el)+")")
		}
		parts = append(parts, el.e.Name+" ("+role(el)+")")
		errs.Addf(el.e.Pos, "%s form a loop of voltage sources and shorts: the voltages around it are fixed twice and the loop current is not determined",
			nameList(parts))
	}
}
