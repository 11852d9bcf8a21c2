// Package checks turns a flat circuit into facts a rule can judge: it solves
// the DC operating point, then computes per transistor its forward-
// referenced operating point, model parameters, ratings, derated
// dissipation limit, junction temperature and topology (emitter
// resistance, the Thevenin source the base sees, bleed, stiff drive, drive
// sources, role), per resistor its power against its rating, and per net its
// voltage.
package checks

import (
	"context"
	"fmt"
	"math"
	"strings"

	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rulesets"
)

// DefaultAmbient is the ambient temperature when nothing sets one, C.
const DefaultAmbient = 25

// Where the circuit temperature of the nominal case came from
// (Analysis.TempFrom). The convention, the same for check and op: Temp
// (--temp) when given, else the netlist's .temp or .options temp=, else
// the ambient. The models' TNOM (27 C unless a card sets it) is only the
// temperature their parameters were written for.
const (
	TempFromOption  = "--temp"
	TempFromNetlist = ".temp"
	TempFromAmbient = "ambient"
)

// DefaultResistorPower is the power rating assumed for a resistor with none
// given, W: the common 1/4 W through-hole and 1206 class (common practice).
const DefaultResistorPower = 0.25

// Options control Analyze. The zero value analyses the nominal case only,
// as a plain DC operating point; the fields below the line ask for more.
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

	// Scenarios adds the scenarios derived from the netlist: each drive
	// level, each opened drive and each point of a signal swing (see
	// scenarios.go).
	Scenarios bool
	// Corners adds the worst-case corners at the nominal scenario and at
	// each drive-level scenario: hFE, ambient, supplies and resistors (see
	// corners.go).
	Corners bool
	// AmbientRange is the [min, max] ambient of the temperature corners, C;
	// nil means DefaultAmbientRange.
	AmbientRange *[2]float64
	// Tolerances are the default tolerances of resistors and supplies;
	// zero fields mean DefaultTolerance. A *@device NAME tol=... setting
	// wins for its element.
	Tolerances Tolerances
	// Thermal solves every transistor at its own junction temperature
	// Tj = Ta + P*RthJA, iterated to a fixed point (see thermal.go).
	Thermal bool
	// MonteCarlo is the number of Monte Carlo runs at the nominal scenario
	// (0 for none), drawn from Seed with Distribution (see montecarlo.go).
	MonteCarlo   int
	Seed         uint64
	Distribution Distribution
	// Workers is the number of goroutines that solve cases; 0 means
	// runtime.GOMAXPROCS(0). The result does not depend on it.
	Workers int
	// Progress, if not nil, is called after each solved case with the
	// number done and the number known so far (the total grows as stages
	// add cases). Calls are serialised.
	Progress func(done, total int)
	// Context, if not nil, bounds the analysis: once it is done every
	// solve stops at its next Newton iteration and Analyze returns an error
	// wrapping the context's (context.DeadlineExceeded for a time budget).
	Context context.Context
	// MemoryLimit, if above 0, bounds the memory the analysis holds,
	// bytes: before the workers are made and before each group of cases
	// is solved, the memory of the cases planned so far is estimated
	// (memory.go), and Analyze returns a *MemoryError instead of going past
	// the limit.
	MemoryLimit int64
}

// Tolerances are relative tolerances (0.05 for 5 %).
type Tolerances struct {
	Resistor, Supply float64
}

// DefaultTolerance is the tolerance of a resistor or supply with none
// given: 5 %, the common E24 resistor and regulator class (common
// practice).
const DefaultTolerance = 0.05

// DefaultAmbientRange is the ambient range of the temperature corners, C:
// 0 to 70 C, the commercial temperature range (common practice).
var DefaultAmbientRange = [2]float64{0, 70}

// analyzer carries the state of one Analyze call.
type analyzer struct {
	c        *netlist.Circuit
	opt      Options
	board    *board.Settings
	parts    *rulesets.Library
	g        *graph
	ambient  float64
	temp     float64
	tempFrom string
	notes    netlist.ErrorList

	// bjts are the circuit's transistors in netlist order and tmpl their
	// facts that do not depend on the case (computed once).
	bjts []*netlist.Element
	tmpl []Transistor
	// resFixed holds the case-independent facts of each two-node resistor
	// by element index (nil for other elements), and nodeFixed those of
	// each net by key; both are built before the cases fan out.
	resFixed  []*ResistorFixed
	nres      int
	nodeFixed map[string]*NodeFixed
	// workers is the number of workers the analysis makes besides sys
	// (0 for OperatingPoint, which solves on sys alone), for the memory
	// estimate (memory.go).
	workers int
	// bjtIdx maps netlist.Key of a transistor's name to its index, and
	// bjtKey is that key by index.
	bjtIdx map[string]int
	bjtKey []string
	// nominal holds the nominal value of every R, V and I element by key.
	nominal map[string]float64
	// firstPos is the first element line naming each net key.
	firstPos map[string]netlist.Pos
	// swingElems, when not nil, replaces each capacitor by a voltage
	// source at its operating-point voltage (the swing view), by element
	// index; nil entries keep the element.
	swingElems []*netlist.Element
	// hfeFactor holds, per transistor, the BF multipliers of the "hfe
	// min" and "hfe max" corners (0 where the corner does not apply).
	hfeFactor [][2]float64
	pool      *pool
	// near is the adjacency the nearby parts are found from (nearby.go).
	near *nearbyIndex
	// enet is the resistor network of the emitter resistances, rnet the
	// nets held by ideal sources.
	enet *emitterNetwork
	rnet *Localizer
	// sys is the nominal circuit prepared once (structure checked).
	sys *solve.System
	// multistable is set once the nominal solution was found unstable:
	// later cases are then tested too (see settleCases).
	multistable bool
	// ratingNoted marks the models (by key) whose combined ratings have
	// been noted.
	ratingNoted map[string]bool
}

// Analyze solves c and computes every fact of its nominal case, then of
// every scenario, corner and Monte Carlo run opt asks for. Cases[0] is the
// nominal case; the order of the others is fixed by the circuit and the
// options, never by the scheduling of the workers.
func Analyze(c *netlist.Circuit, opt Options) (*Analysis, error) {
	a, err := newAnalyzer(c, opt)
	if err != nil {
		return nil, err
	}
	a.g = newGraph(c, a.board)
	if err := a.templates(); err != nil {
		return nil, err
	}
	a.workers = workerCount(opt) // for the estimate before they are made
	if err := a.fits(1); err != nil {
		return nil, err
	}
	a.pool = newPool(a)
	an, err := a.run()
	if ctx := a.opt.Context; ctx != nil && ctx.Err() != nil {
		// Stopped: the cases solved after the stop are not results.
		return nil, fmt.Errorf("analysis stopped: %w", ctx.Err())
	}
	if err != nil {
		return nil, err
	}
	an.Board = a.board
	an.Temp, an.TempFrom = a.temp, a.tempFrom
	a.notes.Sort()
	an.Notes = a.notes.List
	return an, nil
}

// newAnalyzer checks the options and the circuit's structure and sets up
// what every analysis needs: board settings, parts, temperatures, nominal
// values and the transistor list.
func newAnalyzer(c *netlist.Circuit, opt Options) (*analyzer, error) {
	if c == nil {
		return nil, fmt.Errorf("no circuit to analyse")
	}
	b, errs := board.FromCircuit(c)
	b.Merge(opt.Board, errs)
	a := &analyzer{c: c, opt: opt, board: b, parts: opt.Parts}
	a.notes.Merge(errs)
	for _, p := range b.UnmatchedParts(c) {
		a.notes.Warnf(p.Pos, "ratings for %s match no model in the circuit (%s); they are not used", p.Model, modelList(c))
	}
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
	a.temp, a.tempFrom = a.ambient, TempFromAmbient
	if c.Options.TempSet {
		a.temp, a.tempFrom = c.Options.Temp, TempFromNetlist
	}
	if opt.Temp != nil {
		a.temp, a.tempFrom = *opt.Temp, TempFromOption
	}
	if opt.MonteCarlo < 0 || opt.MonteCarlo > MaxMonteCarlo {
		return nil, fmt.Errorf("Monte Carlo runs %d: want 0 to %d", opt.MonteCarlo, MaxMonteCarlo)
	}
	if r := opt.AmbientRange; r != nil && (!(r[0] <= r[1]) || r[0] < -273.15 || math.IsInf(r[1], 0)) {
		return nil, fmt.Errorf("ambient range %g:%g C is not a range of temperatures", r[0], r[1])
	}
	// Structural problems are reported once, against the circuit as given.
	sys, err := solve.Prepare(c)
	if err != nil {
		return nil, err
	}
	for _, n := range sys.Notes() {
		a.notes.Notef(n.Pos, "%s", n.Msg)
	}
	a.sys = sys
	a.prepare()
	return a, nil
}

// OpPoint is the nominal operating point of a circuit, as op prints it.
type OpPoint struct {
	// Solution is the nominal case's solution.
	Solution *solve.Result
	// Tj is each transistor's junction temperature Ta + P·RthJA by flat
	// name, C (NaN where RthJA is not known).
	Tj map[string]float64
	// Temp and TempFrom are the circuit temperature, C, and where it came
	// from (as Analysis.Temp, Analysis.TempFrom).
	Temp     float64
	TempFrom string
	// NotPhysical holds the flat names of the transistors whose point is
	// not physical (every one when the node voltages ran away): their
	// currents, power and temperature have no meaning.
	NotPhysical map[string]bool
	// States is not nil when the first DC solution found was unstable (as
	// Analysis.States): Solution is then the first stable state, and
	// States.Cases counts the stable states found.
	States *States
}

// OperatingPoint solves only the nominal case of c, as Analyze would
// (opt.Thermal: each transistor at its junction temperature). It computes
// no topology, role or Thevenin facts and no other case: what the op
// command prints.
func OperatingPoint(c *netlist.Circuit, opt Options) (*OpPoint, error) {
	a, err := newAnalyzer(c, opt)
	if err != nil {
		return nil, err
	}
	if err := a.fits(1); err != nil {
		return nil, err
	}
	a.tmpl = make([]Transistor, len(a.bjts))
	for i, el := range a.bjts {
		a.tmpl[i] = Transistor{TransistorFixed: &TransistorFixed{Name: el.Name, Polarity: a.polarity(el)}}
		a.tmpl[i].Rating = a.ratings(el, a.model(el), a.tmpl[i].Polarity)
	}
	sp := caseSpec{scenario: "nominal", kind: KindNominal, ambient: a.ambient, temp: a.temp, thermal: opt.Thermal, guess: -1}
	res, th, err := a.solveThermal(a.sys, &sp, nil)
	if err != nil {
		return nil, err
	}
	// An unstable root is never the operating point: start again from the
	// first stable state, as Analyze does.
	var multi *States
	if states, unstable, err := a.stableStates(&sp, &caseOut{res: res, th: th}); err != nil {
		return nil, err
	} else if unstable != nil {
		multi = &States{Unstable: unstable, Cases: []int{0}, Message: a.statesNote(unstable, states)}
		for i := 1; i < len(states); i++ {
			multi.Cases = append(multi.Cases, i)
		}
		if len(states) > 0 {
			sp.start = states[0]
			if res, th, err = a.solveThermal(a.sys, &sp, states[0]); err != nil {
				return nil, err
			}
		}
	}
	tj, notPhys := map[string]float64{}, map[string]bool{}
	bad, whole := unphysicalDevices(c, res)
	for _, op := range res.BJTs {
		j, ok := a.bjtIdx[netlist.Key(op.Name)]
		if !ok {
			continue
		}
		if whole || bad[netlist.Key(op.Name)] {
			notPhys[op.Name] = true
		}
		r := a.tmpl[j].Rating
		t := sp.ambient + op.Power*r.RthJA
		if sp.thermal && !math.IsNaN(r.RthJA) && !th.runaway[j] {
			t = op.Temp
		}
		tj[op.Name] = t
	}
	return &OpPoint{Solution: res, Tj: tj, Temp: a.temp, TempFrom: a.tempFrom, NotPhysical: notPhys, States: multi}, nil
}

// modelList names a circuit's BJT models for a message, at most a few.
func modelList(c *netlist.Circuit) string {
	var names []string
	for _, k := range c.SortedModelKeys() {
		if m := c.Models[k]; m.Type == netlist.NPN || m.Type == netlist.PNP {
			names = append(names, m.Name)
		}
	}
	switch {
	case len(names) == 0:
		return "it has no transistor models"
	case len(names) > 6:
		return fmt.Sprintf("its transistor models are %s and %d more", strings.Join(names[:6], ", "), len(names)-6)
	}
	return "its transistor models are " + strings.Join(names, ", ")
}

// bjtAt returns the index of the transistor named name, which a result
// lists at slot i: i itself when the analysis's transistor i has that
// name (a result of the whole circuit lists them in the same order), else
// by the name's key.
func (a *analyzer) bjtAt(name string, i int) (int, bool) {
	if i >= 0 && i < len(a.bjts) && a.bjts[i].Name == name {
		return i, true
	}
	j, ok := a.bjtIdx[netlist.Key(name)]
	return j, ok
}

// prepare records the nominal values and the nets' first positions.
func (a *analyzer) prepare() {
	a.nominal = map[string]float64{}
	a.firstPos = map[string]netlist.Pos{}
	a.bjtIdx = map[string]int{}
	for _, el := range a.c.Elements {
		switch el.Kind {
		case 'R':
			a.nominal[netlist.Key(el.Name)] = el.Value
		case 'V', 'I':
			if el.Source != nil {
				a.nominal[netlist.Key(el.Name)] = el.Source.DC
			} else {
				a.nominal[netlist.Key(el.Name)] = 0
			}
		case 'Q':
			if len(el.Nodes) >= 3 {
				k := netlist.Key(el.Name)
				a.bjtIdx[k] = len(a.bjts)
				a.bjts, a.bjtKey = append(a.bjts, el), append(a.bjtKey, k)
			}
		}
		for _, n := range el.Nodes {
			if _, ok := a.firstPos[nodeKey(n)]; !ok {
				a.firstPos[nodeKey(n)] = el.Pos
			}
		}
	}
}

// templates computes the case-independent facts of every transistor:
// names, role, model parameters, ratings and topology (the Thevenin and
// emitter-resistance solves are made here, once, on the nominal circuit).
func (a *analyzer) templates() error {
	a.tmpl = make([]Transistor, len(a.bjts))
	for i, el := range a.bjts {
		a.tmpl[i] = a.template(el)
	}
	a.resFixed = make([]*ResistorFixed, len(a.c.Elements))
	a.nodeFixed = map[string]*NodeFixed{}
	for i, el := range a.c.Elements {
		if el.Kind == 'R' && len(el.Nodes) == 2 {
			a.resFixed[i] = a.resistorFixed(el)
			a.nres++
		}
		for _, n := range el.Nodes {
			if k := nodeKey(n); a.nodeFixed[k] == nil {
				a.nodeFixed[k] = &NodeFixed{Name: n, Pos: a.firstPos[k]}
			}
		}
	}
	return nil
}

// template computes one BJT's case-independent facts.
func (a *analyzer) template(el *netlist.Element) Transistor {
	pol := a.polarity(el)
	m := a.model(el)
	t := Transistor{TransistorFixed: &TransistorFixed{
		Name: el.Name, Polarity: pol,
		Collector: el.Nodes[0], Base: el.Nodes[1], Emitter: el.Nodes[2],
		Pos: el.Pos, Chain: el.Chain,
	}}
	if m != nil {
		t.Model = m.Name
		if p, err := device.BJTParamsOf(m, a.c.Options.TNom); err == nil {
			t.GP = ModelFacts{IS: p.IS, BF: p.BF, NF: p.NF, VAF: p.VAF, IKF: p.IKF, ISE: p.ISE, NE: p.NE,
				BR: p.BR, NR: p.NR, VAR: p.VAR, IKR: p.IKR, ISC: p.ISC, NC: p.NC, RB: p.RB, RBM: p.RBM, IRB: p.IRB, RE: p.RE, RC: p.RC,
				EG: p.EG, XTI: p.XTI, XTB: p.XTB}
		}
	}
	t.Rating = a.ratings(el, m, t.Polarity)
	t.Bleed = a.g.bleed(el)
	t.StiffDrive = a.g.stiff(el)
	for _, d := range a.g.drives(el).sources {
		t.Drives = append(t.Drives, d.Name)
	}
	t.Nearby = a.nearby(el, t.Drives)
	t.EmitterR = a.emitterResistance(el)
	// BaseRth and BaseVth are solved after the nominal case (theveninAll).
	t.BaseRth, t.BaseVth = math.NaN(), math.NaN()
	return t
}

// model returns a transistor's model card, or nil.
func (a *analyzer) model(el *netlist.Element) *netlist.Model {
	m := a.c.Models[netlist.Key(el.Model)]
	if m == nil {
		m = a.c.Models[el.Model]
	}
	return m
}

// polarity returns "pnp" for a transistor with a PNP model, else "npn".
func (a *analyzer) polarity(el *netlist.Element) string {
	if m := a.model(el); m != nil && m.Type == netlist.PNP {
		return "pnp"
	}
	return "npn"
}

// transistor fills one BJT's case facts: the template's, with the
// operating point of op at ambient ta.
func (a *analyzer) transistor(j int, op solve.BJTOp, ta float64) Transistor {
	t := a.tmpl[j]
	s := 1.0
	if op.Polarity == "pnp" {
		s = -1
	}
	t.VBE, t.VCE, t.VCB = s*op.VBE, s*op.VCE, -s*op.VBC
	t.IC, t.IB, t.IE = s*op.IC, s*op.IB, s*op.IE
	t.Power, t.Region = op.Power, string(op.Region)
	t.Beta = math.NaN()
	if t.IB != 0 {
		t.Beta = t.IC / t.IB
	}
	t.Ambient = ta
	t.PdDerated = DeratedPower(t.Rating, ta)
	t.Tj = ta + t.Power*t.Rating.RthJA
	t.DeviceTemp = op.Temp
	return t
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

// ratings merges a device's ratings: the library entry its model matches
// (see partEntry; else the generic class, with a note), overlaid by *@part
// values (see combineRatings, which also notes, once per model, which
// values came from where when the user gave only some).
func (a *analyzer) ratings(el *netlist.Element, m *netlist.Model, polarity string) Ratings {
	model := el.Model
	if m != nil {
		model = m.Name
	}
	lib, ok := a.partEntry(el, m, polarity)
	part := a.board.PartFor(m)
	if !ok {
		lib, _ = a.parts.Generic()
	}
	r, note := combineRatings(lib, part)
	if part != nil {
		if note != "" && !a.ratingNoted[netlist.Key(model)] {
			if a.ratingNoted == nil {
				a.ratingNoted = map[string]bool{}
			}
			a.ratingNoted[netlist.Key(model)] = true
			a.notes.Warnf(part.Pos, "%s", note)
		}
		return r
	}
	if !ok {
		r.Generic = true
		a.notes.Notef(el.Pos, "%s: model %s has no ratings in the parts library or a *@part annotation; checked against the conservative %q class", el.Name, model, lib.Class)
	}
	return r
}

// partEntry finds the parts-library entry of a transistor's model: by the
// model's own name (a model defined inside a subcircuit keeps it), then by
// its flat name. A model named for a registered type of the other polarity
// is not given that type's ratings, and a note says so.
func (a *analyzer) partEntry(el *netlist.Element, m *netlist.Model, polarity string) (rulesets.PartRatings, bool) {
	if m == nil {
		return rulesets.PartRatings{}, false
	}
	names := []string{m.Local, m.Name}
	if p, ok := a.parts.Lookup(polarity, names...); ok {
		return p, true
	}
	if p, ok := a.parts.LookupType(names...); ok {
		a.notes.Notef(el.Pos, "%s: model %s is %s, but %s is an %s type; its ratings are not used", el.Name, m.Name,
			strings.ToUpper(polarity), p.Name, strings.ToUpper(p.Polarity))
	}
	return rulesets.PartRatings{}, false
}

// resistor computes one resistor's facts with resistance r, Ohm.
func (a *analyzer) resistor(fx *ResistorFixed, r float64, res *solve.Result) Resistor {
	va, vb := res.V(nodeKey(fx.NodeA)), res.V(nodeKey(fx.NodeB))
	f := Resistor{ResistorFixed: fx, R: r, V: va - vb}
	if r != 0 {
		f.I = f.V / r
	} else if i, ok := res.I(fx.Name); ok {
		f.I = i
	}
	f.Power = f.V * f.I
	return f
}

// resistorFixed computes one resistor's case-independent facts: names,
// nets, position and power rating.
func (a *analyzer) resistorFixed(el *netlist.Element) *ResistorFixed {
	f := &ResistorFixed{Name: el.Name, NodeA: el.Nodes[0], NodeB: el.Nodes[1],
		Rating: DefaultResistorPower, RatingFrom: "default", Pos: el.Pos, Chain: el.Chain}
	if d := a.board.Device(el.Name); d != nil && !math.IsNaN(d.Power) {
		f.Rating, f.RatingFrom = d.Power, "annotation at "+d.Pos.String()
	}
	return f
}
