package checks

// This file decides each transistor's role from the circuit's topology and
// its solved nominal behaviour, never from names. The classification runs
// in O(elements · small degree): one pass builds an index of which
// transistor terminals and resistors touch each net (nets joined by shorts
// and inductors counted as one), then each transistor is judged by looking
// only at its own three nets and their neighbours; roles that spread along
// a chain (a switch driving a switch) propagate on a work list. There is
// no walk per pair of transistors and no solve.
//
// The roles, in the order they are tried (an annotation wins over all):
//
//   - mirror-reference: diode-connected (collector on its base net), and
//     another transistor of the same polarity has its base on that net
//     with its emitter at the same rail (directly or through one resistor).
//   - mirror-output: base on a mirror reference's diode net with the
//     emitter at the same rail, or (Wilson type) emitter on a mirror
//     reference's diode net and base on a mirror output's collector.
//   - diode: diode-connected, feeding no other base (a bias diode).
//   - vbe-multiplier: resistors from collector to base and from base to
//     emitter, and other transistors' bases on both its collector and its
//     emitter (the bias spreader between the bases of an output pair).
//   - push-pull: a transistor of the other polarity whose emitter meets its
//     own at one net (directly or through one resistor each), both
//     collectors at rails.
//   - diff-pair: a transistor of the same polarity whose emitter meets its
//     own at a tail net that is not a rail, with a different collector,
//     neither one's base on the other's collector or emitter (that is a
//     limiter or a Darlington, not a pair).
//   - clamp: off in the nominal solve (IC below conductingIC), nothing
//     drives its base (no drive source, no other collector one resistor
//     away), and its collector sits on another transistor's base or its
//     base-emitter junction sits across a resistor another transistor's
//     emitter feeds: a protection or limiting transistor, normally off.
//   - switch: the base is driven by a PULSE or PWL source; or the emitter
//     is at a rail, a load sits in the collector, no signal reaches the
//     base, and the base is fed through resistors (and capacitors) from a
//     controller pin (a plain DC source that feeds only base networks,
//     see graph.pinNet) into a coil, diode or other load only a switch
//     drives, or into a resistor with the nominal solve showing it
//     saturated or off (in forward-active it is a stage biased from a DC
//     source); or through a resistor from a switch's collector; or through
//     a resistor from another drive (a controlled source standing for a
//     comparator) with the nominal solve showing it saturated or off. A
//     Darlington's driver counts its output's emitter as its own, and the
//     output (fact darlington) takes the driver's role.
//   - follower: collector at a rail, emitter not.
//   - current-source: emitter through a resistor to a rail, collector not
//     at a rail, and the collector feeds other transistors' emitters (a
//     tail) or the base is held by a diode, a diode-connected transistor,
//     a rail or a voltage source, with no signal.
//   - common-emitter: the rest with a collector load.
//
// A transistor that matches nothing is taken as common-emitter by
// default, with a note.

import (
	"fmt"
	"sort"
	"strings"

	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
)

// Role values (Transistor.Role). board.Roles lists the same names for
// annotations.
const (
	RoleSwitch        = "switch"
	RoleCommonEmitter = "common-emitter"
	RoleFollower      = "follower"
	RoleDiffPair      = "diff-pair"
	RoleMirrorRef     = "mirror-reference"
	RoleMirrorOut     = "mirror-output"
	RoleCurrentSource = "current-source"
	RolePushPull      = "push-pull"
	RoleVBEMultiplier = "vbe-multiplier"
	RoleClamp         = "clamp"
	RoleDiode         = "diode"
	// RoleLinear is accepted in annotations only: a linear stage whose
	// kind the topology decides (common-emitter when it shows none).
	RoleLinear = "linear"
)

// linearRoles are the roles whose transistor works in forward-active when
// biased as designed (Transistor.Linear). A switch, a push-pull half
// (which idles at or near cut-off), a clamp and a bias diode are not.
var linearRoles = map[string]bool{
	RoleCommonEmitter: true, RoleFollower: true, RoleDiffPair: true, RoleMirrorRef: true,
	RoleMirrorOut: true, RoleCurrentSource: true, RoleVBEMultiplier: true,
}

// roleOut is one transistor's role, where it came from ("annotation",
// "topology", "default") and the reason in plain words.
type roleOut struct {
	role, from, reason string
	// darlington is true for the output transistor of a Darlington pair.
	darlington bool
}

// nominalOp is the part of the nominal solve the classification reads,
// forward-referenced; known is false when no solve is given.
type nominalOp struct {
	known  bool
	ic     float64
	vbe    float64
	region string
}

// roleIndex is the circuit seen by the classification: nets joined by
// shorts (inductors, zero-ohm resistors) are one node, and for each node
// the transistor terminals and resistors on it.
type roleIndex struct {
	g    *graph
	bjts []*netlist.Element
	pol  []string
	// node maps a net key to its node (the short-joined set's root).
	node map[string]string
	// name is a printable net name per node (the first written).
	name map[string]string
	rail map[string]bool
	// c, b, e are each transistor's nodes.
	c, b, e []string
	// baseAt, collAt, emitAt list transistor indexes per node.
	baseAt, collAt, emitAt map[string][]int
	// res lists the resistors (R > 0 between two different nodes) per node;
	// elems every element touching the node, in netlist order.
	res   map[string][]*netlist.Element
	elems map[string][]*netlist.Element
	// near lists, per node, the transistors whose emitter is on it or one
	// resistor away from it (emitters meeting at an output or tail node).
	near map[string][]int
}

// maxEmitterResistors bounds how many resistors of one emitter the
// meeting-point index follows, so a star node cannot make the index
// quadratic.
const maxEmitterResistors = 4

func newRoleIndex(g *graph, bjts []*netlist.Element, pol []string) *roleIndex {
	m, n := len(g.at), len(bjts)
	x := &roleIndex{g: g, bjts: bjts, pol: pol, node: make(map[string]string, m), name: make(map[string]string, m),
		rail: map[string]bool{}, baseAt: make(map[string][]int, n), collAt: make(map[string][]int, n), emitAt: make(map[string][]int, n),
		res: make(map[string][]*netlist.Element, m), elems: make(map[string][]*netlist.Element, m), near: make(map[string][]int, n)}
	uf := newUnionFind()
	for _, e := range g.c.Elements {
		if len(e.Nodes) >= 2 && (e.Kind == 'L' || e.Kind == 'R' && e.Value == 0) {
			uf.union(nodeKey(e.Nodes[0]), nodeKey(e.Nodes[1]))
		}
	}
	keys := make([]string, 0, len(g.at))
	for k := range g.at {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		r := uf.find(k)
		x.node[k] = r
		if g.rail[k] {
			x.rail[r] = true
		}
	}
	for _, e := range g.c.Elements {
		for _, n := range e.Nodes {
			k := x.nodeOf(n)
			if _, ok := x.name[k]; !ok {
				x.name[k] = n
			}
			if l := x.elems[k]; len(l) == 0 || l[len(l)-1] != e {
				x.elems[k] = append(x.elems[k], e)
			}
		}
		if e.Kind == 'R' && len(e.Nodes) == 2 && e.Value > 0 {
			a, b := x.nodeOf(e.Nodes[0]), x.nodeOf(e.Nodes[1])
			if a != b {
				x.res[a] = append(x.res[a], e)
				x.res[b] = append(x.res[b], e)
			}
		}
	}
	x.c, x.b, x.e = make([]string, n), make([]string, n), make([]string, n)
	for j, q := range bjts {
		x.c[j], x.b[j], x.e[j] = x.nodeOf(q.Nodes[0]), x.nodeOf(q.Nodes[1]), x.nodeOf(q.Nodes[2])
		x.collAt[x.c[j]] = append(x.collAt[x.c[j]], j)
		x.baseAt[x.b[j]] = append(x.baseAt[x.b[j]], j)
		x.emitAt[x.e[j]] = append(x.emitAt[x.e[j]], j)
		if x.rail[x.e[j]] {
			continue
		}
		x.near[x.e[j]] = append(x.near[x.e[j]], j)
		for i, r := range x.res[x.e[j]] {
			if i == maxEmitterResistors {
				break
			}
			if far := x.far(r, x.e[j]); !x.rail[far] {
				x.near[far] = append(x.near[far], j)
			}
		}
	}
	return x
}

func (x *roleIndex) nodeOf(n string) string {
	k := nodeKey(n)
	if r, ok := x.node[k]; ok {
		return r
	}
	return k
}

// far is the node at the other end of resistor r from node k.
func (x *roleIndex) far(r *netlist.Element, k string) string {
	if a := x.nodeOf(r.Nodes[0]); a != k {
		return a
	}
	return x.nodeOf(r.Nodes[1])
}

// netName prints a node: "ground" for the ground net, else its first
// written name.
func (x *roleIndex) netName(k string) string {
	if k == x.nodeOf(netlist.Ground) {
		return "ground"
	}
	return x.name[k]
}

// between returns the first resistor joining nodes a and b, or nil.
func (x *roleIndex) between(a, b string) *netlist.Element {
	if len(x.res[b]) < len(x.res[a]) {
		a, b = b, a // walk the shorter list: a rail has every supply resistor
	}
	for _, r := range x.res[a] {
		if x.far(r, a) == b {
			return r
		}
	}
	return nil
}

// toRail returns the first resistor from node k to a rail and that rail.
func (x *roleIndex) toRail(k string) (*netlist.Element, string) {
	for _, r := range x.res[k] {
		if f := x.far(r, k); x.rail[f] {
			return r, f
		}
	}
	return nil, ""
}

// emitterRail is the rail transistor j's emitter sits at, directly or
// through one resistor ("" for none), and that resistor.
func (x *roleIndex) emitterRail(j int) (string, *netlist.Element) {
	if x.rail[x.e[j]] {
		return x.e[j], nil
	}
	r, rail := x.toRail(x.e[j])
	return rail, r
}

// atRail reports whether node k is a rail or one resistor from one.
func (x *roleIndex) atRail(k string) bool {
	if x.rail[k] {
		return true
	}
	r, _ := x.toRail(k)
	return r != nil
}

// others lists the transistors in l other than j.
func others(l []int, j int) []int {
	var out []int
	for _, i := range l {
		if i != j {
			out = append(out, i)
		}
	}
	return out
}

// load returns the first element on transistor j's collector node other
// than transistors, or nil.
func (x *roleIndex) load(j int) *netlist.Element {
	for _, e := range x.elems[x.c[j]] {
		if e.Kind != 'Q' && e.Kind != 'C' {
			return e
		}
	}
	return nil
}

// switchedLoad returns an element on j's collector node that only a
// switch drives (a coil, a diode or LED, anything but a resistor, a
// capacitor or a transistor), or nil: a stage from a DC source into a
// plain resistor may be a textbook amplifier biased from a VBB source.
func (x *roleIndex) switchedLoad(j int) *netlist.Element {
	for _, e := range x.elems[x.c[j]] {
		if e.Kind != 'R' && e.Kind != 'C' && e.Kind != 'Q' {
			return e
		}
	}
	return nil
}

// names joins transistor names.
func (x *roleIndex) names(l []int) string {
	var s []string
	for _, i := range l {
		s = append(s, x.bjts[i].Name)
	}
	return strings.Join(s, ", ")
}

// classify assigns every transistor its role. ops holds the nominal solve
// per transistor (entries with known false when there is none); b the
// annotations and board file.
func classify(g *graph, bjts []*netlist.Element, pol []string, ops []nominalOp, b *board.Settings) []roleOut {
	x := newRoleIndex(g, bjts, pol)
	n := len(bjts)
	out := make([]roleOut, n)
	set := make([]bool, n)
	mark := func(j int, role, reason string) {
		if !set[j] {
			out[j], set[j] = roleOut{role: role, from: "topology", reason: reason}, true
		}
	}
	annotated := make([]string, n)
	for j, q := range bjts {
		if d := b.Device(q.Name); d != nil && d.Role != "" {
			annotated[j] = d.Role
		}
	}
	// Mirrors first: a reference names its outputs.
	for j := range bjts {
		if x.c[j] != x.b[j] || x.rail[x.b[j]] {
			continue
		}
		rail, _ := x.emitterRail(j)
		var outs []int
		for _, o := range others(x.baseAt[x.b[j]], j) {
			if r, _ := x.emitterRail(o); pol[o] == pol[j] && x.c[o] != x.b[o] && r != "" && r == rail {
				outs = append(outs, o)
			}
		}
		if len(outs) == 0 {
			continue
		}
		mark(j, RoleMirrorRef, fmt.Sprintf("collector tied to base (diode-connected), sets the base of %s; emitters at %s", x.names(outs), x.netName(rail)))
		for _, o := range outs {
			mark(o, RoleMirrorOut, fmt.Sprintf("base on the diode net %s of mirror reference %s, emitter at %s", x.netName(x.b[j]), bjts[j].Name, x.netName(rail)))
		}
	}
	for j := range bjts { // Wilson type: emitter on a reference's diode net
		if set[j] || x.rail[x.e[j]] || x.rail[x.b[j]] {
			continue
		}
		for _, r := range x.collAt[x.e[j]] {
			if out[r].role != RoleMirrorRef || x.b[r] != x.e[j] || pol[r] != pol[j] {
				continue
			}
			for _, m := range x.collAt[x.b[j]] {
				if out[m].role == RoleMirrorOut {
					mark(j, RoleMirrorOut, fmt.Sprintf("emitter on the diode net %s of mirror reference %s, base on the collector of %s (Wilson type)",
						x.netName(x.e[j]), bjts[r].Name, bjts[m].Name))
				}
			}
		}
	}
	for j := range bjts {
		if !set[j] && x.c[j] == x.b[j] {
			mark(j, RoleDiode, "collector tied to base (diode-connected), feeding no other base")
		}
	}
	for j := range bjts {
		if set[j] {
			continue
		}
		if x.rail[x.c[j]] || x.rail[x.e[j]] {
			continue // a multiplier floats between the bases it spreads
		}
		rcb, rbe := x.between(x.c[j], x.b[j]), x.between(x.b[j], x.e[j])
		oc, oe := others(x.baseAt[x.c[j]], j), others(x.baseAt[x.e[j]], j)
		if rcb != nil && rbe != nil && len(oc) > 0 && len(oe) > 0 {
			mark(j, RoleVBEMultiplier, fmt.Sprintf("base on divider %s/%s across its own collector-emitter, between the bases of %s and %s",
				rcb.Name, rbe.Name, x.names(oc), x.names(oe)))
		}
	}
	// Emitters that meet: push-pull (other polarity) and differential pairs.
	for j := range bjts {
		if set[j] || x.rail[x.e[j]] {
			continue
		}
		meet := []string{x.e[j]}
		for i, r := range x.res[x.e[j]] {
			if i == maxEmitterResistors {
				break
			}
			if f := x.far(r, x.e[j]); !x.rail[f] {
				meet = append(meet, f)
			}
		}
		for _, k := range meet {
			if set[j] {
				break
			}
			for _, o := range others(x.near[k], j) {
				if pol[o] != pol[j] && x.atRail(x.c[j]) && x.atRail(x.c[o]) && x.c[j] != x.c[o] {
					mark(j, RolePushPull, fmt.Sprintf("emitter meets complementary %s at net %s, collectors at %s and %s",
						bjts[o].Name, x.netName(k), x.netName(x.c[j]), x.netName(x.c[o])))
					break
				}
				if pol[o] == pol[j] && x.c[o] != x.c[j] && !x.coupled(j, o) {
					mark(j, RoleDiffPair, fmt.Sprintf("emitter shares tail net %s with %s; %s", x.netName(k), bjts[o].Name, x.tail(k, j, o)))
					break
				}
			}
		}
	}
	// Clamps: off at nominal, nothing drives the base, and the collector
	// steals another transistor's base current or the base-emitter junction
	// senses another's emitter current.
	for j, q := range bjts {
		if set[j] || !ops[j].known || !(ops[j].ic < conductingIC) || len(g.drives(q).sources) > 0 || x.fedByCollector(j) >= 0 {
			continue
		}
		why := ""
		if oc := others(x.baseAt[x.c[j]], j); len(oc) > 0 && !x.rail[x.c[j]] {
			why = "collector on the base of " + x.names(oc)
		} else if r := x.between(x.b[j], x.e[j]); r != nil {
			var oe []int // emitters feeding the resistor, at a rail they feed nothing in particular
			for _, k := range []string{x.b[j], x.e[j]} {
				if !x.rail[k] {
					oe = append(oe, others(x.emitAt[k], j)...)
				}
			}
			if len(oe) > 0 {
				why = fmt.Sprintf("base-emitter across %s in the emitter path of %s", r.Name, x.names(oe))
			}
		}
		if why != "" {
			mark(j, RoleClamp, fmt.Sprintf("off at nominal (VBE %s, IC %s), %s", units.Format(ops[j].vbe, "V"), units.Format(ops[j].ic, "A"), why))
		}
	}
	// Switches driven by a PULSE or PWL source, or from a controller pin,
	// or (by the nominal solve) hard on or off from another drive. A
	// Darlington's driver counts its output's emitter as its own.
	var work []int
	markSwitch := func(j int, reason string) {
		if set[j] {
			return
		}
		mark(j, RoleSwitch, reason)
		work = append(work, j)
		if o := x.darlington(j); o >= 0 && !set[o] {
			mark(o, RoleSwitch, fmt.Sprintf("Darlington output of switch %s (base on its emitter, collectors joined), emitter at %s", bjts[j].Name, x.netName(x.e[o])))
			work = append(work, o)
		}
	}
	for j, q := range bjts {
		if set[j] {
			continue
		}
		if w := x.steppedDrive(q); w != "" {
			markSwitch(j, w)
			continue
		}
		e := x.e[j]
		em := "emitter at " + x.netName(e)
		if o := x.darlington(j); o >= 0 {
			e = x.e[o]
			em = fmt.Sprintf("emitter on the base of Darlington output %s (its emitter at %s)", bjts[o].Name, x.netName(e))
		}
		if !x.rail[e] || x.rail[x.c[j]] || x.load(j) == nil || x.signal(q) {
			continue
		}
		if p, r := x.pinDrive(q, j); p != nil && (x.switchedLoad(j) != nil || ops[j].known && ops[j].region != "active") {
			ld := x.switchedLoad(j)
			if ld == nil {
				ld = x.load(j)
			}
			markSwitch(j, fmt.Sprintf("%s, base fed by %s from %s (DC %s), collector load %s",
				em, r.Name, p.Name, units.Format(p.Source.DC, "V"), ld.Name))
		} else if d, r := x.otherDrive(q, j); d != nil && ops[j].known && ops[j].region != "active" {
			markSwitch(j, fmt.Sprintf("%s, base fed by %s from %s, collector load %s, %s at nominal",
				em, r.Name, d.Name, x.load(j).Name, ops[j].region))
		}
	}
	// Switch chains: a base fed from a switch's collector, on a work list.
	for j := range bjts {
		if annotated[j] == RoleSwitch && !set[j] {
			work = append(work, j)
		}
	}
	for steps := 0; len(work) > 0 && steps <= 2*n; steps++ {
		s := work[0]
		work = work[1:]
		if x.rail[x.c[s]] {
			continue // a collector on a rail feeds no base through its resistors
		}
		for _, r := range x.res[x.c[s]] {
			far := x.far(r, x.c[s])
			for _, j := range x.baseAt[far] {
				if set[j] || !x.rail[x.e[j]] || x.rail[x.c[j]] || x.load(j) == nil {
					continue
				}
				markSwitch(j, fmt.Sprintf("emitter at %s, base fed by %s from the collector of switch %s, collector load %s",
					x.netName(x.e[j]), r.Name, bjts[s].Name, x.load(j).Name))
			}
		}
	}
	for j, q := range bjts {
		if set[j] {
			continue
		}
		switch {
		case x.rail[x.c[j]] && !x.rail[x.e[j]]:
			ld := ""
			if r, rail := x.toRail(x.e[j]); r != nil {
				ld = fmt.Sprintf(", load %s to %s", r.Name, x.netName(rail))
			}
			mark(j, RoleFollower, fmt.Sprintf("collector at %s, output at the emitter (net %s%s)", x.netName(x.c[j]), x.netName(x.e[j]), ld))
		case !x.rail[x.c[j]] && !x.rail[x.e[j]] && x.currentSource(j, q) != "":
			mark(j, RoleCurrentSource, x.currentSource(j, q))
		case !x.rail[x.c[j]] && x.c[j] != x.e[j]:
			em := "emitter at " + x.netName(x.e[j])
			if !x.rail[x.e[j]] {
				if r, rail := x.toRail(x.e[j]); r != nil {
					em = fmt.Sprintf("emitter through %s to %s", r.Name, x.netName(rail))
				} else if rs := x.res[x.e[j]]; len(rs) > 0 {
					em = fmt.Sprintf("emitter through %s (to net %s)", rs[0].Name, x.netName(x.far(rs[0], x.e[j])))
				} else {
					em = "emitter on net " + x.netName(x.e[j])
				}
			}
			ld := "no collector load"
			if l := x.load(j); l != nil {
				ld = "collector load " + l.Name
			}
			if s := x.signalName(q); s != "" {
				ld += ", signal from " + s
			}
			mark(j, RoleCommonEmitter, em+", "+ld)
		}
	}
	for j := range bjts {
		if !set[j] {
			out[j] = roleOut{role: RoleCommonEmitter, from: "default", reason: "no known topology: collector and emitter both at rails or on one net"}
		}
	}
	for j := range bjts {
		if o := x.darlington(j); o >= 0 {
			out[o].darlington = true
		}
	}
	// An annotation wins; "linear" keeps a linear role the topology found.
	for j, q := range bjts {
		r := annotated[j]
		if r == "" {
			continue
		}
		d := b.Device(q.Name)
		found := out[j]
		if r == RoleLinear {
			r = RoleCommonEmitter
			if linearRoles[found.role] {
				r = found.role
			}
		}
		why := "annotation at " + d.Pos.String()
		if r == found.role {
			why += "; topology agrees: " + found.reason
		}
		out[j] = roleOut{r, "annotation", why, found.darlington}
	}
	return out
}

// coupled reports whether one of j, o has its base on the other's
// emitter or collector: a transistor that senses or drives the other (a
// current limiter on a follower, a Darlington) is not its pair partner.
func (x *roleIndex) coupled(j, o int) bool {
	return x.b[o] == x.e[j] || x.b[j] == x.e[o] || x.b[o] == x.c[j] || x.b[j] == x.c[o]
}

// tail describes what feeds the tail node k of a pair j, o.
func (x *roleIndex) tail(k string, j, o int) string {
	if r, rail := x.toRail(k); r != nil {
		return fmt.Sprintf("tail through %s to %s", r.Name, x.netName(rail))
	}
	if cs := others(others(x.collAt[k], j), o); len(cs) > 0 {
		return "tail fed by the collector of " + x.names(cs)
	}
	for _, e := range x.elems[k] {
		if e.Kind == 'I' {
			return "tail fed by current source " + e.Name
		}
	}
	return "tail net " + x.netName(k)
}

// fedByCollector returns a transistor whose collector is one resistor (or
// nothing) away from j's base, or -1.
func (x *roleIndex) fedByCollector(j int) int {
	if x.rail[x.b[j]] {
		return -1
	}
	if cs := others(x.collAt[x.b[j]], j); len(cs) > 0 {
		return cs[0]
	}
	for _, r := range x.res[x.b[j]] {
		if cs := others(x.collAt[x.far(r, x.b[j])], j); len(cs) > 0 {
			return cs[0]
		}
	}
	return -1
}

// darlington returns the output transistor of a Darlington pair that j
// drives (same polarity, its base on j's emitter, collectors joined), or
// -1.
func (x *roleIndex) darlington(j int) int {
	if x.rail[x.e[j]] {
		return -1
	}
	for _, o := range others(x.baseAt[x.e[j]], j) {
		if x.pol[o] == x.pol[j] && x.c[o] == x.c[j] {
			return o
		}
	}
	return -1
}

// otherDrive returns a drive other than a stepped source or a pin (a
// controlled source's output, a current source, a driver=yes source)
// that reaches q's base through resistors, and the base resistor, or nil.
func (x *roleIndex) otherDrive(q *netlist.Element, j int) (*netlist.Element, *netlist.Element) {
	rb := x.baseResistor(j)
	if rb == nil {
		return nil, nil
	}
	if ds := x.g.drives(q).sources; len(ds) > 0 {
		return ds[0], rb
	}
	return nil, nil
}

// baseResistor is the first resistor on j's base whose far end is not a
// rail (the resistor a drive comes through), or nil.
func (x *roleIndex) baseResistor(j int) *netlist.Element {
	for _, r := range x.res[x.b[j]] {
		if !x.rail[x.far(r, x.b[j])] {
			return r
		}
	}
	return nil
}

// pinDrive returns the controller pin (see graph.pinNet) that drives q's
// base through resistors and capacitors, and the base resistor on the way
// (the first one on the base that does not go to a rail), or nil.
func (x *roleIndex) pinDrive(q *netlist.Element, j int) (*netlist.Element, *netlist.Element) {
	rb := x.baseResistor(j)
	if rb == nil {
		return nil, nil
	}
	for _, s := range x.g.drives(q).sources {
		if len(s.Nodes) >= 2 && s.Source != nil && (x.g.pin[nodeKey(s.Nodes[0])] == s || x.g.pin[nodeKey(s.Nodes[1])] == s) {
			return s, rb
		}
	}
	return nil, nil
}

// steppedDrive describes a PULSE or PWL source that drives q's base, or "".
func (x *roleIndex) steppedDrive(q *netlist.Element) string {
	for _, s := range x.g.drives(q).sources {
		if s.Source == nil || s.Source.Wave == nil {
			continue
		}
		if w := s.Source.Wave; w.Kind == netlist.WavePulse || w.Kind == netlist.WavePWL {
			lo, hi, _ := levelsOf(w)
			return fmt.Sprintf("base driven by %s (%s %s to %s)", s.Name, w.Kind, units.Format(lo, "V"), units.Format(hi, "V"))
		}
	}
	return ""
}

// signalName names a SIN, EXP or AC source that reaches q's base, or "".
func (x *roleIndex) signalName(q *netlist.Element) string {
	for _, s := range x.g.drives(q).sources {
		if s.Source == nil {
			continue
		}
		if w := s.Source.Wave; w != nil && (w.Kind == netlist.WaveSin || w.Kind == netlist.WaveExp) || s.Source.HasAC {
			return s.Name
		}
	}
	return ""
}

func (x *roleIndex) signal(q *netlist.Element) bool { return x.signalName(q) != "" }

// currentSource describes j as a current source, or "": the emitter
// through a resistor to a rail, and the collector feeding a tail or the
// base held by a diode or a plain voltage source with no signal.
func (x *roleIndex) currentSource(j int, q *netlist.Element) string {
	re, rail := x.toRail(x.e[j])
	if re == nil || x.signal(q) {
		return ""
	}
	if es := others(x.emitAt[x.c[j]], j); len(es) > 0 {
		return fmt.Sprintf("collector feeds the emitters of %s (a tail), emitter through %s to %s", x.names(es), re.Name, x.netName(rail))
	}
	if x.rail[x.b[j]] {
		return fmt.Sprintf("base at %s, emitter through %s to %s", x.netName(x.b[j]), re.Name, x.netName(rail))
	}
	for _, e := range x.elems[x.b[j]] {
		switch {
		case e.Kind == 'D', e.Kind == 'Q' && e != q && x.nodeOf(e.Nodes[0]) == x.nodeOf(e.Nodes[1]):
			return fmt.Sprintf("base held by %s, emitter through %s to %s", e.Name, re.Name, x.netName(rail))
		case e.Kind == 'V':
			return fmt.Sprintf("base held by source %s, emitter through %s to %s", e.Name, re.Name, x.netName(rail))
		}
	}
	return ""
}

// assignRoles classifies every transistor from the topology and the
// nominal solve and writes role, reason and the linear flag into the
// templates, with a note for each taken by default.
func (a *analyzer) assignRoles(nom *solve.Result) {
	ops := make([]nominalOp, len(a.bjts))
	pol := make([]string, len(a.bjts))
	for j := range a.bjts {
		pol[j] = a.tmpl[j].Polarity
	}
	if nom != nil {
		for _, op := range nom.BJTs {
			j, ok := a.bjtIdx[netlist.Key(op.Name)]
			if !ok {
				continue
			}
			s := 1.0
			if op.Polarity == "pnp" {
				s = -1
			}
			ops[j] = nominalOp{known: true, ic: s * op.IC, vbe: s * op.VBE, region: string(op.Region)}
		}
	}
	roles := classify(a.g, a.bjts, pol, ops, a.board)
	for j, r := range roles {
		t := &a.tmpl[j]
		t.Role, t.RoleFrom, t.RoleReason = r.role, r.from, r.reason
		t.Linear = linearRoles[r.role]
		t.Darlington = r.darlington
		if r.from == "default" {
			a.notes.Notef(a.bjts[j].Pos, "%s: role taken as common-emitter (%s); write *@device %s role=... to set it", a.bjts[j].Name, r.reason, a.bjts[j].Name)
		}
	}
}
