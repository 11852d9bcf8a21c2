package solve

import (
	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/netlist"
)

// Result is a DC operating point. Slices are in netlist order (nodes in
// order of first appearance); the maps index the same values by
// netlist.Key for lookup.
type Result struct {
	// Nodes are the circuit's node voltages, V; ground is not listed.
	Nodes []NodeVoltage
	// Voltage maps netlist.Key(node) to its voltage; ground ("0", "gnd",
	// "gnd!") is included as 0.
	Voltage map[string]float64
	// Branches are the branch currents of V, L, E, H and zero-ohm R
	// elements, positive into the first (+) terminal: a supply that
	// delivers power shows a negative current.
	Branches []BranchCurrent
	// Current maps netlist.Key(element name) to its branch current.
	Current map[string]float64
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
	r := &Result{
		Voltage:    make(map[string]float64, len(s.nodeNames)+3),
		Current:    make(map[string]float64, nb),
		Method:     m,
		Iterations: w.iters,
		Temp:       w.st.temp,
		Nodes:      make([]NodeVoltage, 0, len(s.nodeNames)),
		Branches:   make([]BranchCurrent, 0, nb),
		BJTs:       make([]BJTOp, 0, len(s.bjts)),
	}
	r.Voltage[netlist.Ground], r.Voltage["gnd"], r.Voltage["gnd!"] = 0, 0, 0
	for i, nm := range s.nodeNames {
		r.Nodes = append(r.Nodes, NodeVoltage{Name: nm, V: x[i]})
		r.Voltage[s.nodeKeys[i]] = x[i]
	}
	for _, el := range s.elems {
		if el.br < 0 {
			continue
		}
		i := x[el.br]
		r.Branches = append(r.Branches, BranchCurrent{Name: el.e.Name, Kind: el.kind, I: i, Pos: el.e.Pos})
		r.Current[el.key] = i
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
