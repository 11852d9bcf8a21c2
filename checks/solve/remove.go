package solve

import "github.com/biaslint/biaslint/netlist"

// LeakR is the resistance, Ohm, that holds each terminal of an element
// taken out of a circuit for a test solve (Without): 1 pS to ground, the
// size of SPICE's default GMIN, so no net floats and no
// bias network is disturbed by more than a few parts per million.
const LeakR = 1e12

// Without returns a shallow copy of c with element q removed, each of q's
// first three terminals (a transistor's collector, base and emitter; fewer
// for a smaller element) held to ground by LeakR unless it is ground, and
// the extra elements appended. c itself is not changed; the copy shares
// c's elements, models and options.
func Without(c *netlist.Circuit, q *netlist.Element, extra ...*netlist.Element) *netlist.Circuit {
	tc := *c
	tc.Elements = make([]*netlist.Element, 0, len(c.Elements)+3+len(extra))
	for _, e := range c.Elements {
		if e != q {
			tc.Elements = append(tc.Elements, e)
		}
	}
	nodes := q.Nodes
	if len(nodes) > 3 {
		nodes = nodes[:3]
	}
	for i, n := range nodes {
		if isGround(n) {
			continue
		}
		tc.Elements = append(tc.Elements, &netlist.Element{Kind: 'R', Name: "R#leak" + string("cbe"[i]),
			Nodes: []string{n, netlist.Ground}, Value: LeakR, Pos: q.Pos})
	}
	tc.Elements = append(tc.Elements, extra...)
	return &tc
}
