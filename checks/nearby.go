package checks

// This file finds the parts around each transistor that set its bias: the
// base, divider and bleed resistors on its base, the resistors in its
// collector and emitter, and the sources that drive its base. Findings
// name them as their cause (rules' "related" key), and the computed fix
// searches their values. Only the transistor's own three nets are looked
// at (joined through inductors, which are DC shorts, and one series hop
// in the emitter), so the work per transistor is bounded by the number of
// elements on those nets.

import (
	"sort"

	"github.com/biaslint/biaslint/netlist"
)

// Nearby roles: what a part does for the transistor it is near.
const (
	// NearBaseResistor is a resistor in series with the base (or the one
	// resistor that biases it from a rail).
	NearBaseResistor = "base resistor"
	// NearDivider is one leg of a base divider: the base has resistors
	// to two different rails.
	NearDivider = "divider resistor"
	// NearBleed is a resistor from the base to the emitter's net.
	NearBleed = "bleed resistor"
	// NearCollector is a resistor between the collector and a supply or
	// another net.
	NearCollector = "collector resistor"
	// NearEmitter is a resistor in the emitter's DC path.
	NearEmitter = "emitter resistor"
	// NearDrive is a source that drives the base.
	NearDrive = "drive"
)

// NearbyRoles lists the roles in the order findings show them.
var NearbyRoles = []string{NearBaseResistor, NearDivider, NearBleed, NearCollector, NearEmitter, NearDrive}

// maxNearby bounds the parts listed per role and transistor.
const maxNearby = 8

// maxInductorJoin bounds the nets joined through inductors into one DC node.
const maxInductorJoin = 16

// Nearby is one part near a transistor.
type Nearby struct {
	Role string
	// Name is the flat element name as written; Pos its line, Chain the
	// instances that placed it.
	Name  string
	Pos   netlist.Pos
	Chain []netlist.Instance
	// Nets are the element's nets (a resistor's two ends).
	Nets []string
}

// nearbyIndex is the circuit's adjacency, built once per analysis.
type nearbyIndex struct {
	at     map[string][]*netlist.Element // net key -> R, L, V elements on it
	byName map[string]*netlist.Element
	rail   map[string]bool // ground and nets held by a voltage source to ground
}

func (a *analyzer) nearbyIndex() *nearbyIndex {
	if a.near != nil {
		return a.near
	}
	ix := &nearbyIndex{at: map[string][]*netlist.Element{}, byName: map[string]*netlist.Element{},
		rail: map[string]bool{netlist.Key(netlist.Ground): true}}
	for _, el := range a.c.Elements {
		ix.byName[netlist.Key(el.Name)] = el
		switch el.Kind {
		case 'R', 'L', 'V':
		default:
			continue
		}
		if len(el.Nodes) < 2 {
			continue
		}
		for _, n := range el.Nodes[:2] {
			ix.at[nodeKey(n)] = append(ix.at[nodeKey(n)], el)
		}
		if el.Kind == 'V' {
			p, m := nodeKey(el.Nodes[0]), nodeKey(el.Nodes[1])
			if m == netlist.Key(netlist.Ground) {
				ix.rail[p] = true
			} else if p == netlist.Key(netlist.Ground) {
				ix.rail[m] = true
			}
		}
	}
	a.near = ix
	return ix
}

// group returns the nets joined to net k through inductors (DC shorts),
// k first, at most maxInductorJoin of them.
func (ix *nearbyIndex) group(k string) []string {
	out := []string{k}
	seen := map[string]bool{k: true}
	for i := 0; i < len(out) && len(out) < maxInductorJoin; i++ {
		for _, el := range ix.at[out[i]] {
			if el.Kind != 'L' {
				continue
			}
			for _, n := range el.Nodes[:2] {
				if nk := nodeKey(n); !seen[nk] && len(out) < maxInductorJoin {
					seen[nk] = true
					out = append(out, nk)
				}
			}
		}
	}
	return out
}

func (ix *nearbyIndex) anyRail(g []string) bool {
	for _, k := range g {
		if ix.rail[k] {
			return true
		}
	}
	return false
}

// resistorsAt lists the resistors with one end in the nets g and the other
// outside it, with that other end's key, in netlist order.
func (ix *nearbyIndex) resistorsAt(g []string) (rs []*netlist.Element, far []string) {
	in := map[string]bool{}
	for _, k := range g {
		in[k] = true
	}
	seen := map[*netlist.Element]bool{}
	for _, k := range g {
		for _, el := range ix.at[k] {
			if el.Kind != 'R' || seen[el] {
				continue
			}
			seen[el] = true
			a, b := nodeKey(el.Nodes[0]), nodeKey(el.Nodes[1])
			switch {
			case in[a] && !in[b]:
				rs, far = append(rs, el), append(far, b)
			case in[b] && !in[a]:
				rs, far = append(rs, el), append(far, a)
			}
		}
	}
	return rs, far
}

// nearby lists the parts around transistor q, by role (NearbyRoles order),
// each role in netlist order. drives names the sources that drive its base.
func (a *analyzer) nearby(q *netlist.Element, drives []string) []Nearby {
	ix := a.nearbyIndex()
	cg, bg, eg := ix.group(nodeKey(q.Nodes[0])), ix.group(nodeKey(q.Nodes[1])), ix.group(nodeKey(q.Nodes[2]))
	inSet := func(g []string) map[string]bool {
		m := map[string]bool{}
		for _, k := range g {
			m[k] = true
		}
		return m
	}
	cs, bs, es := inSet(cg), inSet(bg), inSet(eg)
	var out []Nearby
	taken := map[*netlist.Element]bool{}
	count := map[string]int{}
	add := func(role string, el *netlist.Element) {
		if taken[el] || count[role] >= maxNearby {
			return
		}
		taken[el] = true
		count[role]++
		out = append(out, Nearby{Role: role, Name: el.Name, Pos: el.Pos, Chain: el.Chain, Nets: el.Nodes[:2]})
	}
	// The base: bleed resistors to the emitter's net, then the others; a
	// base with resistors to two different rails has a divider.
	if !ix.anyRail(bg) {
		rs, far := ix.resistorsAt(bg)
		rails := map[string]bool{}
		for i, r := range rs {
			switch {
			case es[far[i]]:
				add(NearBleed, r)
			case ix.rail[far[i]]:
				rails[far[i]] = true
			}
		}
		for i, r := range rs {
			if es[far[i]] {
				continue
			}
			if len(rails) >= 2 && ix.rail[far[i]] {
				add(NearDivider, r)
			} else {
				add(NearBaseResistor, r)
			}
		}
	}
	if !ix.anyRail(cg) {
		rs, far := ix.resistorsAt(cg)
		for i, r := range rs {
			if !bs[far[i]] && !es[far[i]] {
				add(NearCollector, r)
			}
		}
	}
	if !ix.anyRail(eg) {
		rs, far := ix.resistorsAt(eg)
		for i, r := range rs {
			if bs[far[i]] || cs[far[i]] {
				continue
			}
			add(NearEmitter, r)
			// One series hop: RE1A to a net whose only other resistor is RE1B.
			if ix.rail[far[i]] {
				continue
			}
			next, _ := ix.resistorsAt(ix.group(far[i]))
			var others []*netlist.Element
			for _, n := range next {
				if n != r {
					others = append(others, n)
				}
			}
			if len(others) == 1 {
				add(NearEmitter, others[0])
			}
		}
	}
	for _, d := range drives {
		if el := ix.byName[netlist.Key(d)]; el != nil {
			add(NearDrive, el)
		}
	}
	rank := map[string]int{}
	for i, r := range NearbyRoles {
		rank[r] = i
	}
	sort.SliceStable(out, func(i, j int) bool { return rank[out[i].Role] < rank[out[j].Role] })
	return out
}
