package checks

// This file handles circuits with more than one DC solution. Positive
// feedback (a latch, a Schmitt trigger, a thyristor pair) gives a circuit
// several DC solutions, and Newton may land on the unstable balance point
// between its stable states. After the nominal solve the operating point
// is tested for stability (solve.System.Stability: the determinant test
// with a capacitance on every node); when it is unstable, the stable states
// on either side are found (solve.System.StableStates), the nominal case is
// solved again from the first of them, and each further state becomes a
// case of its own (kind KindState), so every rule is judged in every stable
// state. The unstable point is never reported as the operating point.

import (
	"fmt"
	"strings"

	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
)

// KindState is the kind of a case that is a further stable state of a
// circuit with several (Case.Kind).
const KindState = "stable state"

// States describes a circuit whose DC equations have an unstable solution
// between stable states.
type States struct {
	// Unstable is the unstable operating point the solver found first.
	Unstable *solve.Result
	// Cases are the indices in Analysis.Cases of the stable states found:
	// the nominal case (0) first.
	Cases []int
	// Message describes the states, as the note on the circuit says.
	Message string
}

// stableStates tests the solution of case sp for stability and returns the
// stable states to use instead, with the unstable point (both nil when the
// point is stable or cannot be tested; states nil when none was found).
func (a *analyzer) stableStates(sp *caseSpec, out *caseOut) ([]*solve.Result, *solve.Result, error) {
	if out.res == nil || !out.res.Physical() {
		return nil, nil, nil // no dynamics to speak of at a point the equations do not describe
	}
	if a.sys != nil && a.sys.Size() > solve.MaxStabilityUnknowns {
		if sp.kind == KindNominal && len(a.bjts) > 1 {
			a.notes.Notef(netlist.Pos{File: a.c.File, Line: 1, Col: 1},
				"the operating point was not tested for stability: the circuit has %d unknowns, more than the %d the test takes; if it has positive feedback, check that the point is a stable one",
				a.sys.Size(), solve.MaxStabilityUnknowns)
		}
		return nil, nil, nil
	}
	sys, err := solve.Prepare(a.c)
	if err != nil {
		return nil, nil, err
	}
	for _, x := range sp.set {
		if err := sys.SetValue(x.key, x.v); err != nil {
			return nil, nil, err
		}
	}
	temps := map[string]float64{}
	for _, op := range out.res.BJTs {
		temps[netlist.Key(op.Name)] = op.Temp
	}
	opt := solve.Options{Temp: solve.Temp(sp.temp), DeviceTemp: temps, Context: a.opt.Context}
	st, err := sys.Stability(opt, out.res)
	if err != nil || !st.Unstable {
		return nil, nil, nil // a point that cannot be tested is kept
	}
	states, err := sys.StableStates(opt, st)
	if err != nil {
		states = nil // the point is still unstable; the note says no state was found
	}
	return states, out.res, nil
}

// describeState lists the transistors' regions and collector currents.
func describeState(r *solve.Result) string {
	var parts []string
	for i, op := range r.BJTs {
		if i == 8 {
			parts = append(parts, fmt.Sprintf("%d more", len(r.BJTs)-8))
			break
		}
		parts = append(parts, fmt.Sprintf("%s %s IC %s VCE %s", op.Name, op.Region, units.Format(op.IC, "A"), units.Format(op.VCE, "V")))
	}
	return strings.Join(parts, ", ")
}

// statesNote notes the states on the circuit and returns the message.
func (a *analyzer) statesNote(unstable *solve.Result, states []*solve.Result) string {
	var b strings.Builder
	switch len(states) {
	case 0:
		fmt.Fprintf(&b, "the DC solution found (%s) is unstable: positive feedback tips it over, and no stable state was found from it; the operating point shown is that unstable balance", describeState(unstable))
	case 1:
		fmt.Fprintf(&b, "the DC solution first found (%s) is unstable (positive feedback tips it over); the circuit settles in the stable state %s, used as the nominal case; it may have other stable states that were not found", describeState(unstable), describeState(states[0]))
	default:
		word := "bistable"
		if len(states) > 2 {
			word = "multistable"
		}
		fmt.Fprintf(&b, "the circuit is %s (positive feedback): the DC solution first found (%s) is unstable; ", word, describeState(unstable))
		for i, s := range states {
			if i > 0 {
				b.WriteString("; ")
			}
			where := "the nominal case"
			if i > 0 {
				where = fmt.Sprintf("case %q", stateName(i))
			}
			fmt.Fprintf(&b, "stable state %d (%s): %s", i+1, where, describeState(s))
		}
		b.WriteString("; every rule is judged in each stable state")
	}
	pos := netlist.Pos{File: a.c.File, Line: 1, Col: 1}
	if len(a.bjts) > 0 {
		pos = a.bjts[0].Pos
	}
	a.notes.Warnf(pos, "%s", b.String())
	return b.String()
}

// stateName names the case of stable state i+1 (i ≥ 1).
func stateName(i int) string { return fmt.Sprintf("stable state %d", i+1) }

// stateRoles makes a switch of every transistor that conducts in one
// stable state and is off in another (the transistors of a latch switch
// between its states, whatever their topology says), unless an annotation
// sets its role.
func (a *analyzer) stateRoles(outs []caseOut, cases []int) {
	if len(cases) < 2 {
		return
	}
	for j, el := range a.bjts {
		t := &a.tmpl[j]
		if t.RoleFrom == "annotation" {
			continue
		}
		on, off := false, false
		for _, ci := range cases {
			if outs[ci].res == nil {
				continue // a state case that did not solve
			}
			for _, op := range outs[ci].res.BJTs {
				if netlist.Key(op.Name) != netlist.Key(el.Name) {
					continue
				}
				s := 1.0
				if op.Polarity == "pnp" {
					s = -1
				}
				if s*op.IC > conductingIC {
					on = true
				} else {
					off = true
				}
			}
		}
		if on && off {
			t.Role, t.RoleFrom, t.Linear = RoleSwitch, "states", false
			t.RoleReason = "conducts in one stable state of a circuit with several and is off in another"
		}
	}
}

// settleCases re-solves, from a stable state, every case of idx that
// landed on an unstable solution, in a circuit already found to have
// several stable states: a drive level or a corner can tip a latch to a
// balance of its own. Cases that change the circuit's structure or models
// (opened drives, swing points, hFE corners) are left as solved. It
// returns the cases it moved.
func (a *analyzer) settleCases(specs []caseSpec, outs []caseOut, idx []int) ([]int, error) {
	var moved []int
	for _, i := range idx {
		sp := &specs[i]
		if outs[i].err != nil || outs[i].res == nil || sp.open != nil || sp.swing != nil || sp.hfe != 0 || sp.kind == KindState || i == 0 {
			continue
		}
		states, unstable, err := a.stableStates(sp, &outs[i])
		if err != nil {
			return nil, err
		}
		if unstable == nil || len(states) == 0 {
			continue
		}
		sp.start = states[0]
		moved = append(moved, i)
	}
	return moved, nil
}
