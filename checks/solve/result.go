package solve

import (
	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/netlist"
)

// Result is a DC operating point. Slices are in netlist order (nodes in
// order of first appearance); V and I look values up by name. The
// lookup index is the System's, shared by all its results, so a result
// stores each value once.
type Result struct {
	// Nodes are the circuit's node voltages, V; ground is not listed.
	Nodes []NodeVoltage
	// Branches are the branch currents of V, L, E, H and zero-ohm R
	// elements, positive into the first (+) terminal: a supply that
	// delivers power shows a negative current.
	Branches []BranchCurrent
	// index maps netlist.Key of node and element names to their slots in
	// Nodes and Branches.
	index *resultIndex
	// BJTs are the operating points of the transistors.
	BJTs []BJTOp
	// Diodes are the operating points of the diodes.
	Diodes []DiodeOp
	// Method is the strategy that converged.
	Method Method
	// Iterations counts every Newton iteration (linear solve) of the
	// solve, across all strategies tried.
	Iterations int
	// Temp is the circuit temperature, °C.
	Temp float64
	// Unphysical lists the devices whose operating point satisfies the
	// solver's equations only through the continuation of junction
	// exponentials: the real device law fails Kirchhoff's current law
	// there (verify.go). Empty for a physical solution (Physical).
	Unphysical []Unphysical
}

// resultIndex maps names to the slots of a System's results.
type resultIndex struct {
	node   map[string]int // netlist.Key(node) -> index in Nodes
	branch map[string]int // netlist.Key(element) -> index in Branches
}

// V returns the voltage of a node, V, by its name in any letter case;
// ground ("0", "gnd", "gnd!") and a node the circuit does not have read 0.
func (r *Result) V(node string) float64 {
	if r == nil || r.index == nil {
		return 0
	}
	if i, ok := r.index.node[netlist.Key(node)]; ok {
		return r.Nodes[i].V
	}
	return 0
}

// I returns the branch current of an element (see Branches), A, by its
// name in any letter case, and false when it has no branch.
func (r *Result) I(element string) (float64, bool) {
	if r == nil || r.index == nil {
		return 0, false
	}
	if i, ok := r.index.branch[netlist.Key(element)]; ok {
		return r.Branches[i].I, true
	}
	return 0, false
}

// Voltages returns every node voltage by netlist.Key of the node, ground
// included as 0: a copy, for printing and comparing.
func (r *Result) Voltages() map[string]float64 {
	m := map[string]float64{netlist.Ground: 0, "gnd": 0, "gnd!": 0}
	if r == nil || r.index == nil {
		return m
	}
	for k, i := range r.index.node {
		m[k] = r.Nodes[i].V
	}
	return m
}

// NodeVoltage is one node's voltage.
type NodeVoltage struct {
	Name string // as first written
	V    float64
}

// BranchCurrent is the current of one voltage-fixing element.
type BranchCurrent struct {
	Name string
	Kind netlist.Kind
	I    float64 // A, into the + terminal
	Pos  netlist.Pos
}

// BJTOp is a transistor's operating point in raw terminal quantities at its
// external terminals: VBE = V(B) − V(E), VBC = V(B) − V(C), VCE = V(C) −
// V(E), and IC, IB, IE the currents into collector, base and emitter
// (IC + IB + IE = 0; an NPN in forward-active has IE < 0).
type BJTOp struct {
	Name     string
	Model    string
	Polarity string // "npn" or "pnp"
	VBE      float64
	VBC      float64
	VCE      float64
	IC       float64
	IB       float64
	IE       float64
	// Power is the dissipation VCE·IC + VBE·IB, W, including RB, RE, RC.
	Power float64
	// JunctionVBE and JunctionVBC are the internal junction voltages
	// (inside RB, RE, RC), terminal sense.
	JunctionVBE, JunctionVBC float64
	// Region is the operating region, by device.Classify at the internal
	// junctions.
	Region device.Region
	// Temp is the device temperature, °C.
	Temp float64
	Pos  netlist.Pos
}

// DiodeOp is a diode's operating point.
type DiodeOp struct {
	Name  string
	Model string
	V     float64 // V(anode) − V(cathode), V
	I     float64 // current from anode to cathode, A
	Power float64 // V·I, W
	Temp  float64 // °C
	Pos   netlist.Pos
}

// result builds the Result from the converged x, with the devices as last
// evaluated (at x).
func (s *System) result(w *work, x []float64, m Method) *Result {
	nb := s.n - s.nNodes // branch unknowns
	if s.index == nil {
		s.index = s.newIndex()
	}
	r := w.into
	if r != nil && r.index == s.index {
		*r = Result{index: s.index, Method: m, Iterations: w.iters, Temp: w.st.temp,
			Nodes: r.Nodes[:0], Branches: r.Branches[:0], BJTs: r.BJTs[:0], Diodes: r.Diodes[:0], Unphysical: r.Unphysical[:0]}
	} else {
		r = &Result{
			index:      s.index,
			Method:     m,
			Iterations: w.iters,
			Temp:       w.st.temp,
			Nodes:      make([]NodeVoltage, 0, len(s.nodeNames)),
			Branches:   make([]BranchCurrent, 0, nb),
			BJTs:       make([]BJTOp, 0, len(s.bjts)),
		}
	}
	for i, nm := range s.nodeNames {
		r.Nodes = append(r.Nodes, NodeVoltage{Name: nm, V: x[i]})
	}
	for _, el := range s.elems {
		if el.br < 0 {
			continue
		}
		r.Branches = append(r.Branches, BranchCurrent{Name: el.e.Name, Kind: el.kind, I: x[el.br], Pos: el.e.Pos})
	}
	for j, el := range s.bjts {
		b, ev := w.bjt[j], w.evB[j]
		vc, vb, ve := volt(x, el.nodes[0]), volt(x, el.nodes[1]), volt(x, el.nodes[2])
		op := BJTOp{
			Name: el.e.Name, Model: el.model.Name, Polarity: b.Polarity.String(),
			VBE: vb - ve, VBC: vb - vc, VCE: vc - ve,
			IC: ev.IC, IB: ev.IB, IE: ev.IE(),
			JunctionVBE: w.jb[j][0], JunctionVBC: w.jb[j][1],
			Temp: b.Temp, Pos: el.e.Pos,
		}
		op.Power = op.VCE*op.IC + op.VBE*op.IB
		op.Region = b.Region(op.JunctionVBE, op.JunctionVBC, op.IC)
		r.BJTs = append(r.BJTs, op)
	}
	for j, el := range s.diodes {
		v := volt(x, el.nodes[0]) - volt(x, el.nodes[1])
		i := w.evD[j][0]
		r.Diodes = append(r.Diodes, DiodeOp{Name: el.e.Name, Model: el.model.Name, V: v, I: i, Power: v * i,
			Temp: w.dio[j].Temp, Pos: el.e.Pos})
	}
	return r
}

// newIndex builds the name index of the System's results, in the order
// result fills Nodes and Branches.
func (s *System) newIndex() *resultIndex {
	ix := &resultIndex{node: s.nodeIdx, branch: map[string]int{}} // nodeIdx is fixed once prepared
	n := 0
	for _, el := range s.elems {
		if el.br >= 0 {
			ix.branch[el.key] = n
			n++
		}
	}
	return ix
}
