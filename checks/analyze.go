// Package checks turns a flat circuit into facts a rule can judge: it solves
// the DC operating point, then computes per transistor its forward-
// referenced operating point, model parameters, ratings, derated
// dissipation limit, junction temperature and topology (emitter
// resistance, the Thevenin source the base sees, bleed, stiff drive, drive
// sources, role), per resistor its power against its rating, and per net its
// voltage.
package checks

import (
	"fmt"
	"math"

	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rulesets"
)

// DefaultAmbient is the ambient temperature when nothing sets one, C.
const DefaultAmbient = 25

// DefaultResistorPower is the power rating assumed for a resistor with none
// given, W: the common 1/4 W through-hole and 1206 class (common practice).
const DefaultResistorPower = 0.25

// Options control Analyze.
type Options struct {
	// Ambient is the ambient temperature, C; nil means the board file's
	// ambient, else DefaultAmbient.
	Ambient *float64
	// Temp is the circuit (device) temperature for the solve, C; nil means
	// the netlist's .temp or .options temp= when it sets one, else the
	// ambient.
	Temp *float64
	// Parts is the parts library; nil means the embedded one.
	Parts *rulesets.Library
	// Board is the board file's settings, laid over the netlist's
	// annotations; nil for none.
	Board *board.Settings
}

// analyzer carries the state of one Analyze call.
type analyzer struct {
	c       *netlist.Circuit
	board   *board.Settings
	parts   *rulesets.Library
	g       *graph
	ambient float64
	temp    float64
	notes   netlist.ErrorList
	roles   map[string][2]string
}

// Analyze solves c and computes every fact of its nominal case.
func Analyze(c *netlist.Circuit, opt Options) (*Analysis, error) {
	b, errs := board.FromCircuit(c)
	b.Merge(opt.Board, errs)
	a := &analyzer{c: c, board: b, parts: opt.Parts, roles: map[string][2]string{}}
	a.notes.Merge(errs)
	if a.parts == nil {
		lib, err := rulesets.Parts()
		if err != nil {
			return nil, fmt.Errorf("built-in parts library: %v", err)
		}
		a.parts = lib
	}
	a.ambient = DefaultAmbient
	if !math.IsNaN(b.Ambient) {
		a.ambient = b.Ambient
	}
	if opt.Ambient != nil {
		a.ambient = *opt.Ambient
	}
	a.temp = a.ambient
	if c.Options.TempSet {
		a.temp = c.Options.Temp
	}
	if opt.Temp != nil {
		a.temp = *opt.Temp
	}
	a.g = newGraph(c, b)

	sys, err := solve.Prepare(c)
	if err != nil {
		return nil, err
	}
	res, err := sys.Solve(solve.Options{Temp: solve.Temp(a.temp)})
	if err != nil {
		return nil, err
	}
	cs, err := a.facts("nominal", res)
	if err != nil {
		return nil, err
	}
	an := &Analysis{Circuit: c, Cases: []Case{cs}, Board: b}
	a.notes.Sort()
	an.Notes = a.notes.List
	return an, nil
}

// facts computes every fact of one solved case.
func (a *analyzer) facts(scenario string, res *solve.Result) (Case, error) {
	cs := Case{Scenario: scenario, Ambient: a.ambient, Solution: res}
	for _, op := range res.BJTs {
		el := a.c.Element(op.Name)
		if el == nil {
			continue
		}
		t, err := a.transistor(el, op, res)
		if err != nil {
			return cs, err
		}
		cs.Transistors = append(cs.Transistors, t)
	}
	for _, el := range a.c.Elements {
		if el.Kind == 'R' && len(el.Nodes) == 2 {
			cs.Resistors = append(cs.Resistors, a.resistor(el, res))
		}
	}
	first := map[string]netlist.Pos{}
	for _, el := range a.c.Elements {
		for _, n := range el.Nodes {
			if _, ok := first[nodeKey(n)]; !ok {
				first[nodeKey(n)] = el.Pos
			}
		}
	}
	for _, n := range res.Nodes {
		cs.Nodes = append(cs.Nodes, Node{Name: n.Name, V: n.V, Peak: math.Abs(n.V), Pos: first[nodeKey(n.Name)]})
	}
	return cs, nil
}

// transistor computes one BJT's facts.
func (a *analyzer) transistor(el *netlist.Element, op solve.BJTOp, res *solve.Result) (Transistor, error) {
	s := 1.0
	if op.Polarity == "pnp" {
		s = -1
	}
	t := Transistor{
		Name: el.Name, Polarity: op.Polarity,
		Collector: el.Nodes[0], Base: el.Nodes[1], Emitter: el.Nodes[2],
		VBE: s * op.VBE, VCE: s * op.VCE, VCB: -s * op.VBC,
		IC: s * op.IC, IB: s * op.IB, IE: s * op.IE,
		Power: op.Power, Region: string(op.Region),
		Ambient: a.ambient, Pos: el.Pos, Chain: el.Chain,
	}
	t.Beta = math.NaN()
	if t.IB != 0 {
		t.Beta = t.IC / t.IB
	}
	m := a.c.Models[el.Model]
	if m != nil {
		t.Model = m.Name
		if p, err := device.BJTParamsOf(m, a.c.Options.TNom); err == nil {
			t.GP = ModelFacts{IS: p.IS, BF: p.BF, NF: p.NF, VAF: p.VAF, IKF: p.IKF, ISE: p.ISE, NE: p.NE,
				BR: p.BR, NR: p.NR, VAR: p.VAR, IKR: p.IKR, ISC: p.ISC, NC: p.NC, RB: p.RB, RE: p.RE, RC: p.RC,
				EG: p.EG, XTI: p.XTI, XTB: p.XTB}
		}
	}
	t.Rating = a.ratings(el, t.Model, t.Polarity)
	t.PdDerated = DeratedPower(t.Rating, a.ambient)
	t.Tj = a.ambient + t.Power*t.Rating.RthJA

	t.Role, t.RoleFrom = a.roleOf(el, 0)
	if t.RoleFrom == "default" {
		a.notes.Notef(el.Pos, "%s: role taken as linear (no annotation and no PULSE, PWL or SIN drive found); write *@device %s role=switch if it switches", el.Name, el.Name)
	}
	t.Bleed = a.g.bleed(el)
	t.StiffDrive = a.g.stiff(el)
	for _, d := range a.g.drives(el).sources {
		t.Drives = append(t.Drives, d.Name)
	}
	t.EmitterR = a.emitterResistance(el)
	rth, vth := a.thevenin(el, s)
	t.BaseRth, t.BaseVth = rth, vth
	return t, nil
}

// DeratedPower is the dissipation limit at ambient ta, W: the 25 C rating
// derated linearly to zero at TjMax, Pd(Ta) = min(Pd, (TjMax - Ta)/RthJA)
// (linear derating above 25 C, common practice). Missing ratings give NaN.
func DeratedPower(r Ratings, ta float64) float64 {
	if math.IsNaN(r.Pd) {
		return math.NaN()
	}
	if math.IsNaN(r.TjMax) || math.IsNaN(r.RthJA) || r.RthJA <= 0 {
		if ta <= 25 {
			return r.Pd
		}
		return math.NaN()
	}
	return math.Max(0, math.Min(r.Pd, (r.TjMax-ta)/r.RthJA))
}

// ratings merges a device's ratings: the library class its model matches
// (else the generic class, with a note), overlaid by *@part values.
func (a *analyzer) ratings(el *netlist.Element, model, polarity string) Ratings {
	lib, ok := a.parts.Lookup(model, polarity)
	part := a.board.Part(model)
	if !ok {
		lib, _ = a.parts.Generic()
	}
	r := Ratings{Part: lib.Class, Origin: "parts library: " + lib.Origin,
		VCEO: lib.VCEO, VCBO: lib.VCBO, VEBO: lib.VEBO, ICMax: lib.ICMax, Pd: lib.Pd,
		TjMax: lib.TjMax, RthJA: lib.RthJA, HFEMin: lib.HFEMin, HFEMax: lib.HFEMax}
	if lib.Class == "" {
		n := math.NaN()
		r = Ratings{VCEO: n, VCBO: n, VEBO: n, ICMax: n, Pd: n, TjMax: n, RthJA: n, HFEMin: n, HFEMax: n}
	}
	if part != nil {
		r.Part, r.Origin = part.Model, "annotation at "+part.Pos.String()
		over := func(dst *float64, v float64) {
			if !math.IsNaN(v) {
				*dst = v
			}
		}
		over(&r.VCEO, part.VCEO)
		over(&r.VCBO, part.VCBO)
		over(&r.VEBO, part.VEBO)
		over(&r.ICMax, part.ICMax)
		over(&r.Pd, part.Pd)
		over(&r.TjMax, part.TjMax)
		over(&r.RthJA, part.RthJA)
		over(&r.HFEMin, part.HFEMin)
		over(&r.HFEMax, part.HFEMax)
		return r
	}
	if !ok {
		r.Generic = true
		a.notes.Notef(el.Pos, "%s: model %s has no ratings in the parts library or a *@part annotation; checked against the conservative %q class", el.Name, model, lib.Class)
	}
	return r
}

// resistor computes one resistor's facts.
func (a *analyzer) resistor(el *netlist.Element, res *solve.Result) Resistor {
	va, vb := res.Voltage[nodeKey(el.Nodes[0])], res.Voltage[nodeKey(el.Nodes[1])]
	r := Resistor{Name: el.Name, NodeA: el.Nodes[0], NodeB: el.Nodes[1], R: el.Value, V: va - vb,
		Rating: DefaultResistorPower, RatingFrom: "default", Pos: el.Pos, Chain: el.Chain}
	if el.Value != 0 {
		r.I = r.V / el.Value
	} else if i, ok := res.Current[netlist.Key(el.Name)]; ok {
		r.I = i
	}
	r.Power = r.V * r.I
	if d := a.board.Device(el.Name); d != nil && !math.IsNaN(d.Power) {
		r.Rating, r.RatingFrom = d.Power, "annotation at "+d.Pos.String()
	}
	return r
}
