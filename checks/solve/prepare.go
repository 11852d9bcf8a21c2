package solve

import (
	"fmt"
	"math"

	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/netlist"
)

// elem is one element of a System, with its unknowns numbered.
type elem struct {
	e *netlist.Element
	// key is netlist.Key(e.Name).
	key string
	// idx is the element's index in System.elems.
	idx  int
	kind netlist.Kind
	// nodes are the unknown indices of the element's nodes, −1 for ground
	// (Q: c, b, e; the substrate node is not used at DC).
	nodes []int
	// br is the branch-current unknown of V, L, E, H and zero-ohm R, else −1.
	br int
	// ctl is the branch unknown of the controlling element of F and H.
	ctl int
	// value is the element's current value: R in ohm, L and C, the gain
	// of E F G H, the DC value of V and I, the area factor of D and Q.
	value float64
	// short marks a zero-ohm resistor.
	short bool
	model *netlist.Model
	// inner are the internal nodes: D: anode (after RS); Q: c, b, e
	// (after RC, RB, RE). Equal to the external node without resistance.
	inner []int
	// poly is the polynomial of a POLY(n) controlled source, else nil.
	poly *polySource
}

// System is a circuit prepared for solving: checked, with its nodes and
// branches numbered. Solve can be called any number of times, with other
// options or after SetValue, reusing the numbering. A System is not safe
// for concurrent use.
type System struct {
	circuit *netlist.Circuit
	elems   []*elem
	byKey   map[string]*elem
	bjts    []*elem
	diodes  []*elem
	polys   []*elem
	// nodeNames are the circuit's nodes in order of first appearance, as
	// first written; nodeIdx maps netlist.Key to the index.
	nodeNames []string
	nodeIdx   map[string]int
	// nodeKeys are the netlist.Key of each of nodeNames, for the Result's
	// lookup maps (computed once, not per solve).
	nodeKeys []string
	// index is the name index of the results (result.go), built at the
	// first result.
	index *resultIndex
	// names names every unknown: V(node), V(Q1:b'), I(V1).
	names  []string
	nExt   int // circuit nodes
	nNodes int // circuit and internal nodes
	n      int // all unknowns
	// leaks are the nodes reached only through capacitors, tied to
	// ground by GMIN; notes says so.
	leaks []int
	notes netlist.ErrorList
	// lin is the System's own linear solver, used when Options.Linear is
	// nil: its pattern and ordering are the System's, whatever else ran.
	lin *SparseLU
	// spare is the work space of the last solve, reused by the next.
	spare *work
	// made are the device instances of the last solve, the transistors
	// then the diodes (see devices).
	made []madeDevice
}

// Notes returns the notes Prepare made about the circuit (nodes tied to
// ground by a GMIN leak).
func (s *System) Notes() []*netlist.Error { return s.notes.Notes() }

// Solve prepares c and solves it once; see Prepare and System.Solve.
func Solve(c *netlist.Circuit, opt Options) (*Result, error) {
	s, err := Prepare(c)
	if err != nil {
		return nil, err
	}
	return s.Solve(opt)
}

// isGround reports whether a node name is the reference node
// (netlist.IsGround: 0, gnd, gnd!).
func isGround(name string) bool { return netlist.IsGround(name) }

// nodeCount returns the allowed numbers of nodes of a kind, or false for a
// kind that is not solved.
func nodeCount(k netlist.Kind) (lo, hi int, ok bool) {
	switch k {
	case 'R', 'C', 'L', 'V', 'I', 'D', 'F', 'H':
		return 2, 2, true
	case 'E', 'G':
		return 4, 4, true
	case 'Q':
		return 3, 4, true
	}
	return 0, 0, false
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// MaxUnknowns bounds the size of the system Prepare accepts. The sparse
// LU needs memory in proportion to the entries of the matrix and its
// factors (a few hundred bytes an unknown on circuit matrices), so the
// bound keeps one netlist's solve within a few hundred megabytes.
const MaxUnknowns = 250000

// Prepare checks the structure of c and numbers its unknowns. Every
// problem found is reported, located at its element, in a netlist.ErrorList
// (returned through its Err method): unsolvable element kinds, wrong node
// counts, non-finite values, missing or mistyped models and controlling
// sources, invalid model parameters, nodes with no DC path to ground, and
// loops of voltage sources and shorts.
func Prepare(c *netlist.Circuit) (*System, error) {
	var errs netlist.ErrorList
	if c == nil {
		errs.Add(netlist.Pos{}, "no circuit to solve")
		return nil, errs.Err()
	}
	s := &System{circuit: c, byKey: map[string]*elem{}, nodeIdx: map[string]int{}}
	if len(c.Elements) == 0 {
		errs.Add(netlist.Pos{File: c.File}, "the circuit has no elements to solve")
		return nil, errs.Err()
	}
	s.collect(&errs)
	s.checkControls(&errs)
	if errs.Err() != nil {
		errs.Sort()
		return nil, errs.Err()
	}
	s.number()
	if s.n > MaxUnknowns {
		errs.Addf(netlist.Pos{File: c.File, Line: 1, Col: 1},
			"the circuit has %d unknowns (net voltages and branch currents), more than the %d the linear solver takes; split the netlist into smaller blocks",
			s.n, MaxUnknowns)
		return nil, errs.Err()
	}
	s.checkTopology(&errs)
	if errs.Err() != nil {
		errs.Sort()
		return nil, errs.Err()
	}
	return s, nil
}

// collect validates each element and builds the elem list and the nodes.
func (s *System) collect(errs *netlist.ErrorList) {
	c := s.circuit
	badModel := map[string]bool{}
	for _, e := range c.Elements {
		if e == nil {
			continue
		}
		lo, hi, ok := nodeCount(e.Kind)
		if e.Poly != nil && (e.Kind == 'E' || e.Kind == 'G') {
			lo, hi = 2+2*e.PolyN, 2+2*e.PolyN
		}
		if !ok {
			if e.Kind == 'K' {
				continue // inductor coupling: no effect at DC
			}
			errs.Addf(e.Pos, "%s: element kind %q is not solved at DC by biaslint", e.Name, string(e.Kind))
			continue
		}
		if n := len(e.Nodes); n < lo || n > hi {
			want := fmt.Sprint(lo)
			if hi != lo {
				want = fmt.Sprintf("%d or %d", lo, hi)
			}
			noun := "nets"
			if n == 1 {
				noun = "net"
			}
			errs.Addf(e.Pos, "%s: has %d %s, want %s", e.Name, n, noun, want)
			continue
		}
		bad := false
		for i, nd := range e.Nodes {
			if nd == "" {
				errs.Addf(e.Pos, "%s: net %d has no name", e.Name, i+1)
				bad = true
			}
		}
		if bad {
			continue
		}
		k := netlist.Key(e.Name)
		if prev, dup := s.byKey[k]; dup {
			errs.Addf(e.Pos, "%s: element name used twice (first at %s)", e.Name, prev.e.Pos)
			continue
		}
		el := &elem{e: e, key: k, kind: e.Kind, br: -1, ctl: -1}
		if !s.value(el, errs, badModel) {
			continue
		}
		s.byKey[k] = el
		el.idx = len(s.elems)
		s.elems = append(s.elems, el)
	}
}

// value validates and records the value, model and area of el.
func (s *System) value(el *elem, errs *netlist.ErrorList, badModel map[string]bool) bool {
	e := el.e
	switch e.Kind {
	case 'V', 'I':
		if e.Source != nil {
			el.value = e.Source.DC
		}
		if !finite(el.value) {
			errs.Addf(e.Pos, "%s: DC value %g is not a finite number", e.Name, el.value)
			return false
		}
	case 'E', 'F', 'G', 'H':
		if e.Poly != nil {
			if e.PolyN < 1 {
				errs.Addf(e.Pos, "%s: POLY dimension %d must be at least 1", e.Name, e.PolyN)
				return false
			}
			for i, c := range e.Poly {
				if !finite(c) {
					errs.Addf(e.Pos, "%s: polynomial coefficient p%d = %g is not a finite number", e.Name, i, c)
					return false
				}
			}
			el.poly = newPolySource(e)
			return true
		}
		fallthrough
	case 'R', 'C', 'L':
		el.value = e.Value
		if !finite(el.value) {
			errs.Addf(e.Pos, "%s: value %g is not a finite number", e.Name, el.value)
			return false
		}
		el.short = e.Kind == 'R' && el.value == 0
	case 'D', 'Q':
		el.value = e.Area
		if el.value == 0 {
			el.value = 1
		}
		if !(el.value > 0) || math.IsInf(el.value, 0) {
			errs.Addf(e.Pos, "%s: area factor %g must be a positive finite number", e.Name, e.Area)
			return false
		}
		return s.bindModel(el, errs, badModel)
	}
	return true
}

// bindModel finds and checks the model of a D or Q element.
func (s *System) bindModel(el *elem, errs *netlist.ErrorList, badModel map[string]bool) bool {
	e, c := el.e, s.circuit
	key := netlist.Key(e.Model)
	m := c.Models[key]
	if m == nil {
		m = c.Models[e.Model]
	}
	if m == nil {
		errs.Addf(e.Pos, "%s: model %q is not defined", e.Name, e.Model)
		return false
	}
	want := "d"
	if e.Kind == 'Q' {
		want = "npn or pnp"
	}
	if (e.Kind == 'D') != (m.Type == netlist.Diode) || (e.Kind == 'Q' && m.Type != netlist.NPN && m.Type != netlist.PNP) {
		errs.Addf(e.Pos, "%s: model %s is of type %q, want %s", e.Name, m.Name, string(m.Type), want)
		return false
	}
	if badModel[key] {
		return false
	}
	// Validate the parameters once per model, at the nominal temperature.
	opt := device.Options{TNom: c.Options.TNom}
	var err error
	if e.Kind == 'Q' {
		_, err = device.NewBJT(m, 1, c.Options.TNom, opt)
	} else {
		_, err = device.NewDiode(m, 1, c.Options.TNom, opt)
	}
	if err != nil {
		badModel[key] = true
		pos := m.Pos
		if !pos.IsValid() {
			pos = e.Pos
		}
		errs.Addf(pos, "%s (used by %s)", err, e.Name)
		return false
	}
	el.model = m
	return true
}

// node returns the index of a circuit node, creating it.
func (s *System) node(name string) int {
	if isGround(name) {
		return -1
	}
	k := netlist.Key(name)
	if i, ok := s.nodeIdx[k]; ok {
		return i
	}
	i := len(s.nodeNames)
	s.nodeIdx[k] = i
	s.nodeNames = append(s.nodeNames, name)
	s.nodeKeys = append(s.nodeKeys, k)
	return i
}

// number assigns unknowns: circuit nodes, then internal nodes, then
// branches, each in netlist order. The controls must have been checked.
func (s *System) number() {
	for _, el := range s.elems {
		nodes := el.e.Nodes
		if el.kind == 'Q' {
			nodes = nodes[:3]
		}
		el.nodes = make([]int, len(nodes))
		for i, nd := range nodes {
			el.nodes[i] = s.node(nd)
		}
	}
	s.nExt = len(s.nodeNames)
	for _, nm := range s.nodeNames {
		s.names = append(s.names, "V("+nm+")")
	}
	next := s.nExt
	internal := func(el *elem, ext int, r float64, suffix string) int {
		if r == 0 {
			return ext
		}
		s.names = append(s.names, "V("+el.e.Name+":"+suffix+")")
		next++
		return next - 1
	}
	for _, el := range s.elems {
		switch el.kind {
		case 'D':
			p, _ := device.DiodeParamsOf(el.model, s.circuit.Options.TNom)
			el.inner = []int{internal(el, el.nodes[0], p.RS, "a'")}
			s.diodes = append(s.diodes, el)
		case 'Q':
			p, _ := device.BJTParamsOf(el.model, s.circuit.Options.TNom)
			el.inner = []int{
				internal(el, el.nodes[0], p.RC, "c'"),
				internal(el, el.nodes[1], p.RB, "b'"),
				internal(el, el.nodes[2], p.RE, "e'"),
			}
			s.bjts = append(s.bjts, el)
		}
	}
	s.nNodes = next
	for _, el := range s.elems {
		if hasBranch(el) {
			el.br = next
			s.names = append(s.names, "I("+el.e.Name+")")
			next++
		}
	}
	s.n = next
	for _, el := range s.elems {
		if el.kind == 'F' || el.kind == 'H' {
			el.ctl = s.byKey[netlist.Key(el.e.Control)].br
		}
		if el.poly == nil {
			continue
		}
		s.polys = append(s.polys, el)
		if el.kind == 'E' || el.kind == 'G' {
			el.poly.ctl = el.nodes[2:]
		} else {
			for _, c := range el.e.Controls {
				el.poly.ctl = append(el.poly.ctl, s.byKey[netlist.Key(c)].br)
			}
		}
	}
}

// hasBranch reports whether el will carry a branch-current unknown.
func hasBranch(el *elem) bool {
	return el.kind == 'V' || el.kind == 'L' || el.kind == 'E' || el.kind == 'H' || el.short
}

// checkControls checks that every F and H names an element with a branch
// current.
func (s *System) checkControls(errs *netlist.ErrorList) {
	for _, el := range s.elems {
		if el.kind != 'F' && el.kind != 'H' {
			continue
		}
		names := []string{el.e.Control}
		if el.poly != nil {
			names = el.e.Controls
			if len(names) != el.e.PolyN {
				errs.Addf(el.e.Pos, "%s: POLY(%d) names %d controlling sources", el.e.Name, el.e.PolyN, len(names))
				continue
			}
		}
		for _, name := range names {
			ctl := s.byKey[netlist.Key(name)]
			switch {
			case name == "":
				errs.Addf(el.e.Pos, "%s: no controlling voltage source named", el.e.Name)
			case ctl == nil:
				errs.Addf(el.e.Pos, "%s: controlling voltage source %s is not in the circuit", el.e.Name, name)
			case !hasBranch(ctl):
				errs.Addf(el.e.Pos, "%s: controlling element %s carries no branch current (want a voltage source)", el.e.Name, ctl.e.Name)
			}
		}
	}
}

// Nodes returns the circuit's node names (ground excluded) in order of
// first appearance, as first written.
func (s *System) Nodes() []string { return append([]string(nil), s.nodeNames...) }

// Size returns the number of unknowns of the MNA system.
func (s *System) Size() int { return s.n }

// SetValue changes the value of the element with flat name name
// (case-insensitive) for later solves: the resistance of R, the gain of
// E F G H, the DC value of V and I, the inductance or capacitance of L and
// C (no effect at DC), the area factor of D and Q. A resistor cannot be
// changed to or from zero ohm, since that changes the system's structure.
func (s *System) SetValue(name string, v float64) error {
	el := s.byKey[netlist.Key(name)]
	if el == nil {
		return fmt.Errorf("set value: no element %s", name)
	}
	if !finite(v) {
		return fmt.Errorf("set value: %s = %g is not a finite number", el.e.Name, v)
	}
	switch {
	case el.kind == 'R' && (v == 0) != el.short:
		return fmt.Errorf("set value: %s cannot change to or from zero ohm (a short); prepare the circuit again", el.e.Name)
	case (el.kind == 'D' || el.kind == 'Q') && !(v > 0):
		return fmt.Errorf("set value: area factor of %s must be positive, not %g", el.e.Name, v)
	}
	el.value = v
	return nil
}
