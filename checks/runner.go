package checks

// This file holds the case runner: the specification of one case, the
// workers that solve cases on all cores, and the stages of Analyze.
//
// Every worker owns a private copy of the circuit in which each transistor
// has its own copy of its model card (so an hFE corner can set one
// transistor's BF without touching another's), and a prepared
// solve.System of it. A case changes element values on that System with
// SetValue and solves again, so the numbering and structure of the MNA
// matrix (and the linear solver's storage) are reused from case to case;
// only cases that change the structure (an opened drive, the swing view
// with capacitors held) prepare another System. Before each case the
// worker resets every value and model it changed, so a case's result
// depends only on its specification and its warm start, never on which
// worker ran it or what that worker ran before: Analyze gives the same
// bits for any number of workers.

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"
	"sync/atomic"

	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

// Case kinds (Case.Kind).
const (
	KindNominal    = "nominal"
	KindLevel      = "drive level"
	KindOpen       = "drive open"
	KindSwing      = "swing"
	KindCorner     = "corner"
	KindMonteCarlo = "monte carlo"
	KindTemp       = "temperature"
)

// setting is one element value of a case, by netlist.Key of the name.
type setting struct {
	key string
	v   float64
}

// caseSpec says how to make one case.
type caseSpec struct {
	scenario, corner, kind string
	run                    int
	// set are the element values that differ from nominal.
	set []setting
	// hfe is -1 for every transistor at its hFE min, +1 at its max, 0 for
	// the model's own BF.
	hfe int
	// ambient and temp are the case's ambient and circuit temperature, C.
	ambient, temp float64
	// open is the drive source the case opens (nil for none).
	open *netlist.Element
	// thermal iterates the electro-thermal solve; otherwise the
	// transistors sit at heldTemps (nil: the circuit temperature).
	thermal   bool
	heldTemps map[string]float64
	// guess is the index of the case whose solution warm-starts this one
	// (-1 for a cold start); group the index of the drive-level scenario's
	// nominal-corner case this case belongs to (-1 for none).
	guess, group int
	// start, when not nil, warm-starts the case instead of guess (a
	// stable state found after the nominal solve, see states.go).
	start *solve.Result
	// swing is the swept source and level its deviation (swing cases).
	swing *swingSource
	level float64
}

// caseOut is what solving one case gives.
type caseOut struct {
	res *solve.Result
	th  thermalOut
	// rth, vth and floats are the Thevenin facts recomputed in an opened
	// drive case, for the transistors in reth.
	rth, vth []float64
	reth     []bool
	err      error
}

// pool runs jobs on the workers.
type pool struct {
	a       *analyzer
	workers []*worker
	mu      sync.Mutex
	done    int
	total   int
	// order is the pivot order of the nominal case's last factorisation,
	// captured once when the nominal case is first solved (alone, on the
	// first worker, before any other case); every worker's System starts
	// its later solves from it (worker.apply). A solve keeps it only
	// where a fresh pivoting would pick the same pivots
	// (solve.SparseLU.UsePivotOrder), so it saves work without changing
	// a bit of any result, whichever worker solves a case.
	order    atomic.Pointer[solve.PivotOrder]
	captured atomic.Bool
}

// sharePivotOrder turns the pool's shared pivot order on; tests turn it
// off to compare.
var sharePivotOrder = true

// capture keeps sys's pivot order as the pool's, the first time it is
// called.
func (p *pool) capture(sys *solve.System) {
	if p.captured.CompareAndSwap(false, true) && sharePivotOrder {
		if o := sys.PivotOrder(); o != nil {
			p.order.Store(o)
		}
	}
}

func newPool(a *analyzer) *pool {
	n := a.opt.Workers
	if n <= 0 {
		n = runtime.GOMAXPROCS(0)
	}
	p := &pool{a: a}
	for i := 0; i < n; i++ {
		p.workers = append(p.workers, newWorker(a))
	}
	return p
}

// expect adds n cases to the progress total.
func (p *pool) expect(n int) {
	p.mu.Lock()
	p.total += n
	p.mu.Unlock()
}

// tick reports n more cases done.
func (p *pool) tick(n int) {
	if p.a.opt.Progress == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.done += n
	p.a.opt.Progress(p.done, p.total)
}

// each runs do(w, i) for i in [0, n) on the workers. Each i is run once;
// do writes its result into slot i of a slice the caller owns. The
// workers take the next i from a shared counter (no channel hand-off per
// item), the first of them on the calling goroutine.
func (p *pool) each(n int, do func(w *worker, i int)) {
	if n <= 0 {
		return
	}
	k := min(len(p.workers), n)
	var next atomic.Int64
	run := func(w *worker) {
		for {
			i := int(next.Add(1) - 1)
			if i >= n {
				return
			}
			do(w, i)
		}
	}
	var wg sync.WaitGroup
	for _, w := range p.workers[1:k] {
		wg.Add(1)
		go func(w *worker) {
			defer wg.Done()
			run(w)
		}(w)
	}
	run(p.workers[0])
	wg.Wait()
}

// worker is one goroutine's private circuit and systems.
type worker struct {
	a    *analyzer
	circ *netlist.Circuit
	// models are the private model cards by transistor index, bf0 their
	// BF as written (hasBF: whether the card writes one).
	models []*netlist.Model
	bf0    []float64
	hasBF  []bool
	sys    *solve.System
	swing  *solve.System
	// dirty lists the values changed on sys and swing.
	dirty, swingDirty []string
	err               error
}

func newWorker(a *analyzer) *worker {
	w := &worker{a: a}
	c := *a.c
	c.Models = make(map[string]*netlist.Model, len(a.c.Models)+len(a.bjts))
	for k, m := range a.c.Models {
		c.Models[k] = m
	}
	c.Elements = make([]*netlist.Element, len(a.c.Elements))
	copy(c.Elements, a.c.Elements)
	for i, el := range c.Elements {
		j, ok := a.bjtIdx[netlist.Key(el.Name)]
		if !ok || el.Kind != 'Q' {
			continue
		}
		m := a.c.Models[netlist.Key(el.Model)]
		if m == nil {
			m = a.c.Models[el.Model]
		}
		pm := *m
		pm.Params = make(map[string]float64, len(m.Params)+1)
		for k, v := range m.Params {
			pm.Params[k] = v
		}
		key := "#q:" + netlist.Key(el.Name)
		c.Models[key] = &pm
		q := *el
		q.Model = key
		c.Elements[i] = &q
		for len(w.models) <= j {
			w.models = append(w.models, nil)
			w.bf0 = append(w.bf0, 0)
			w.hasBF = append(w.hasBF, false)
		}
		w.models[j] = &pm
		w.bf0[j], w.hasBF[j] = m.Params["BF"], false
		if _, ok := m.Params["BF"]; ok {
			w.hasBF[j] = true
		} else {
			w.bf0[j] = a.tmpl[j].GP.BF
		}
	}
	w.circ = &c
	w.sys, w.err = solve.Prepare(w.circ)
	return w
}

// setHFE sets every private model's BF for hFE corner h (-1, 0, +1).
func (w *worker) setHFE(h int) {
	for j, m := range w.models {
		if m == nil {
			continue
		}
		f := 0.0
		switch h {
		case -1:
			f = w.a.hfeFactor[j][0]
		case 1:
			f = w.a.hfeFactor[j][1]
		}
		switch {
		case f > 0:
			m.Params["BF"] = w.bf0[j] * f
		case w.hasBF[j]:
			m.Params["BF"] = w.bf0[j]
		default:
			delete(m.Params, "BF")
		}
	}
}

// apply resets the values changed on sys and sets those of set. The
// worker's main System is given the pool's pivot order once it exists.
func (w *worker) apply(sys *solve.System, dirty *[]string, set []setting) error {
	if p := w.a.pool; sys == w.sys && p != nil && sys != nil {
		if o := p.order.Load(); o != nil {
			sys.UsePivotOrder(o)
		}
	}
	for _, k := range *dirty {
		if err := sys.SetValue(k, w.a.nominal[k]); err != nil {
			return err
		}
	}
	*dirty = (*dirty)[:0]
	for _, s := range set {
		if err := sys.SetValue(s.key, s.v); err != nil {
			return err
		}
		*dirty = append(*dirty, s.key)
	}
	return nil
}

// solveCase solves one case.
func (w *worker) solveCase(sp *caseSpec, guess *solve.Result) caseOut {
	if w.err != nil {
		return caseOut{err: w.err}
	}
	w.setHFE(sp.hfe)
	if err := w.apply(w.sys, &w.dirty, sp.set); err != nil {
		return caseOut{err: err}
	}
	var out caseOut
	out.res, out.th, out.err = w.a.solveThermal(w.sys, sp, guess)
	if sp.kind == KindNominal && out.err == nil && w.a.pool != nil {
		w.a.pool.capture(w.sys)
	}
	if sp.open != nil {
		w.openThevenin(sp, &out)
	}
	return out
}

// opened lists the voltage source a case opens, for solve.Options.Open:
// the source lets go of its net and carries its current through a leak
// (solve.LeakR, the conductance SPICE places across junctions), so no net
// is left without a DC path. A current source is opened by setting it to
// zero instead.
func opened(sp *caseSpec) []string {
	if sp.open != nil && sp.open.Kind == 'V' {
		return []string{sp.open.Name}
	}
	return nil
}

// openThevenin recomputes the Thevenin facts of the transistors whose base
// the opened source drives, on the opened circuit, starting from the
// case's solution.
func (w *worker) openThevenin(sp *caseSpec, out *caseOut) {
	if out.err != nil {
		return
	}
	a := w.a
	n := len(a.bjts)
	out.rth, out.vth, out.reth = make([]float64, n), make([]float64, n), make([]bool, n)
	for j := range a.bjts {
		if !drivenBy(&a.tmpl[j], sp.open.Name) {
			continue
		}
		out.rth[j], out.vth[j] = w.thevenin(j, opened(sp), sp.temp, out.res)
		out.reth[j] = true
	}
}

// drivenBy reports whether source name drives t's base.
func drivenBy(t *Transistor, name string) bool {
	for _, d := range t.Drives {
		if netlist.Key(d) == netlist.Key(name) {
			return true
		}
	}
	return false
}

// solveSpecs solves specs[i] for every i in idx on the pool, with outs
// indexed like specs. A case that fails keeps its error in outs[i].err
// (it is reported as not judged, see caseFacts); solveSpecs returns the
// first error in spec order only for the nominal case, without which no
// other case has a meaning. When holding every case planned (specs) would
// exceed Options.MemoryLimit it solves nothing and returns a
// *MemoryError.
func (a *analyzer) solveSpecs(specs []caseSpec, outs []caseOut, idx []int) error {
	if err := a.fits(len(specs)); err != nil {
		return err
	}
	a.pool.expect(len(idx))
	a.pool.each(len(idx), func(w *worker, k int) {
		i := idx[k]
		var g *solve.Result
		if sp := &specs[i]; sp.start != nil {
			g = sp.start
		} else if sp.guess >= 0 && sp.guess < len(outs) {
			g = outs[sp.guess].res
		}
		outs[i] = w.solveCase(&specs[i], g)
		a.pool.tick(1)
	})
	for _, i := range idx {
		if i == 0 && outs[i].err != nil {
			return caseError(&specs[i], outs[i].err)
		}
	}
	if !a.multistable {
		return nil
	}
	moved, err := a.settleCases(specs, outs, idx)
	if err != nil || len(moved) == 0 {
		return err
	}
	var names []string
	for _, i := range moved {
		names = append(names, rulesCaseName(&specs[i]))
	}
	a.notes.Notef(netlist.Pos{File: a.c.File, Line: 1, Col: 1}, "%d cases first solved to an unstable balance and use a stable state instead: %s",
		len(moved), strings.Join(names, ", "))
	a.multistable = false // the re-solve is judged as it lands
	defer func() { a.multistable = true }()
	return a.solveSpecs(specs, outs, moved)
}

// caseError names the case an error came from.
func caseError(sp *caseSpec, err error) error {
	return &CaseError{Case: rulesCaseName(sp), Err: err}
}

// rulesCaseName names a case "scenario" or "scenario/corner".
func rulesCaseName(sp *caseSpec) string {
	if sp.corner != "" {
		return sp.scenario + "/" + sp.corner
	}
	return sp.scenario
}

// CaseError is a failure to solve one case other than the nominal one.
type CaseError struct {
	Case string
	Err  error
}

func (e *CaseError) Error() string { return "case " + e.Case + ": " + e.Err.Error() }

// Unwrap returns the solver's error.
func (e *CaseError) Unwrap() error { return e.Err }

// run makes and solves every case and computes the facts.
func (a *analyzer) run() (*Analysis, error) {
	o := a.opt
	nom := caseSpec{scenario: "nominal", kind: KindNominal, ambient: a.ambient, temp: a.temp,
		thermal: o.Thermal, guess: -1, group: 0}
	specs := []caseSpec{nom}
	outs := make([]caseOut, 1)
	if err := a.solveSpecs(specs, outs, []int{0}); err != nil {
		var ce *CaseError
		if asCaseError(err, &ce) {
			return nil, ce.Err
		}
		return nil, err
	}
	var multi *States
	if states, unstable, err := a.stableStates(&specs[0], &outs[0]); err != nil {
		return nil, err
	} else if unstable != nil {
		multi = &States{Unstable: unstable, Cases: []int{0}}
		multi.Message = a.statesNote(unstable, states)
		if len(states) > 0 {
			// The nominal case from the first stable state, the others
			// as cases of their own.
			specs[0].start = states[0]
			for i, st := range states[1:] {
				multi.Cases = append(multi.Cases, len(specs))
				specs = append(specs, caseSpec{scenario: stateName(i + 1), kind: KindState, ambient: a.ambient,
					temp: a.temp, thermal: o.Thermal, guess: -1, group: -1, start: st})
				outs = append(outs, caseOut{})
			}
			if err := a.solveSpecs(specs, outs, span(0, len(specs))); err != nil {
				return nil, err
			}
		}
	}
	a.theveninAll(outs[0].res)
	a.assignRoles(outs[0].res)
	if multi != nil {
		a.stateRoles(outs, multi.Cases)
	}
	a.multistable = multi != nil
	// A .temp line with several temperatures: the first is the nominal
	// case's, each other one is a case of its own (unless --temp, Temp,
	// sets the temperature for all).
	if ts := a.c.Options.Temps; o.Temp == nil && len(ts) > 1 {
		first := len(specs)
		var more []caseSpec
		for _, t := range ts[1:] {
			sp := nom
			sp.scenario, sp.kind, sp.temp, sp.guess, sp.group = fmt.Sprintf("temp %g C", t), KindTemp, t, 0, -1
			more = append(more, sp)
		}
		specs, outs = a.add(specs, outs, more)
		if err := a.solveSpecs(specs, outs, span(first, len(specs))); err != nil {
			return nil, err
		}
	}
	groups := []int{0}
	if o.Scenarios || o.Corners {
		levels := a.levelScenarios()
		first := len(specs)
		for i := range levels {
			levels[i].group = first + i
			groups = append(groups, first+i)
		}
		specs, outs = a.add(specs, outs, levels)
		if err := a.solveSpecs(specs, outs, span(first, len(specs))); err != nil {
			return nil, err
		}
	}
	var swings []*swingSource
	if o.Scenarios {
		first := len(specs)
		specs, outs = a.add(specs, outs, a.openScenarios())
		if err := a.solveSpecs(specs, outs, span(first, len(specs))); err != nil {
			return nil, err
		}
		var err error
		if specs, outs, swings, err = a.runSwings(specs, outs); err != nil {
			return nil, err
		}
	}
	if o.Corners {
		a.hfeFactors(outs[0].res)
		first := len(specs)
		corners, err := a.corners(specs, outs, groups)
		if err != nil {
			return nil, err
		}
		specs, outs = a.add(specs, outs, corners)
		if err := a.solveSpecs(specs, outs, span(first, len(specs))); err != nil {
			return nil, err
		}
	}
	if o.MonteCarlo > 0 {
		first := len(specs)
		specs, outs = a.add(specs, outs, a.monteCarlo(outs[0]))
		if err := a.solveSpecs(specs, outs, span(first, len(specs))); err != nil {
			return nil, err
		}
	}
	an := &Analysis{Circuit: a.c, States: multi}
	// Cases that were not solved, grouped by where and why.
	failed := map[string]*unjudgedCases{}
	var failOrder []string
	unphysical := map[string][]string{} // device key -> case names
	var why []solve.Unphysical
	// The facts of each case depend on that case alone: computed on the
	// workers, into their slots.
	an.Cases = make([]Case, len(specs))
	// A case keeps its whole solution only when it is a nominal one (the
	// nominal case and the stable states, which the plots and op read);
	// the others keep their facts, and their solutions go as soon as the
	// facts are taken, so a board of many devices and cases holds the
	// solutions of a few.
	a.pool.each(len(specs), func(_ *worker, i int) {
		an.Cases[i] = a.caseFacts(&specs[i], &outs[i])
		if k := specs[i].kind; k != KindNominal && k != KindState {
			an.Cases[i].Solution = nil
			outs[i].res = nil
		}
	})
	for i := range specs {
		for _, u := range an.Cases[i].Unphysical {
			k := netlist.Key(u.Device)
			if unphysical[k] == nil {
				why = append(why, u)
			}
			unphysical[k] = append(unphysical[k], rulesCaseName(&specs[i]))
		}
		if e := outs[i].err; e != nil {
			pos, msg := errorPlace(e, a.c.File)
			k := pos.String() + "\x00" + msg
			if failed[k] == nil {
				failed[k] = &unjudgedCases{pos: pos, msg: msg}
				failOrder = append(failOrder, k)
			}
			failed[k].cases = append(failed[k].cases, rulesCaseName(&specs[i]))
		}
		if outs[i].th.unsettled {
			a.notes.Notef(netlist.Pos{File: a.c.File}, "case %s: the electro-thermal iteration did not settle in %d steps; junction temperatures are the last iterate's",
				rulesCaseName(&specs[i]), thermalMaxIter)
		}
	}
	for _, k := range failOrder {
		f := failed[k]
		a.notes.Warnf(f.pos, "%s unjudged (every other case is judged): %s", caseList(f.cases), f.msg)
	}
	for _, u := range why {
		cases := unphysical[netlist.Key(u.Device)]
		in := "case " + cases[0]
		if len(cases) > 1 {
			in = fmt.Sprintf("%d cases (%s and others)", len(cases), cases[0])
		}
		a.notes.Warnf(u.Pos, "the operating point is not physical in %s: %s. Its currents, power and temperatures are not reported; give the junction a series resistance", in, u.Why)
	}
	a.crossCase(an, specs, swings)
	return an, nil
}

func asCaseError(err error, target **CaseError) bool {
	ce, ok := err.(*CaseError)
	if ok {
		*target = ce
	}
	return ok
}

// add appends specs to the list and room for their results.
func (a *analyzer) add(specs []caseSpec, outs []caseOut, more []caseSpec) ([]caseSpec, []caseOut) {
	specs = append(specs, more...)
	outs = append(outs, make([]caseOut, len(more))...)
	return specs, outs
}

func span(from, to int) []int {
	idx := make([]int, 0, to-from)
	for i := from; i < to; i++ {
		idx = append(idx, i)
	}
	return idx
}

// valueOf returns an element's value in a case.
func valueOf(sp *caseSpec, key string, nominal float64) float64 {
	for _, s := range sp.set {
		if s.key == key {
			return s.v
		}
	}
	return nominal
}

// unjudgedCases are the cases that failed at one place for one reason.
type unjudgedCases struct {
	pos   netlist.Pos
	msg   string
	cases []string
}

// caseList names cases for a message: "case A is", "cases A and B are",
// "cases A, B, C, D and 5 more are".
func caseList(cases []string) string {
	if len(cases) == 1 {
		return "case " + cases[0] + " is"
	}
	const shown = 4
	if len(cases) <= shown {
		return "cases " + strings.Join(cases[:len(cases)-1], ", ") + " and " + cases[len(cases)-1] + " are"
	}
	return fmt.Sprintf("cases %s and %d more are", strings.Join(cases[:shown], ", "), len(cases)-shown)
}

// voltagesRunAway reports whether a node of res lies a million times
// beyond the largest source voltage of c (at least 1 V): a point that is
// not physical has spread through the circuit.
func voltagesRunAway(c *netlist.Circuit, res *solve.Result) bool {
	top := 1.0
	for _, el := range c.Elements {
		if el.Kind == 'V' && el.Source != nil {
			top = math.Max(top, math.Abs(el.Source.DC))
		}
	}
	for _, n := range res.Nodes {
		if !(math.Abs(n.V) <= 1e6*top) {
			return true
		}
	}
	return false
}

// RegionNotPhysical is the region of a transistor whose operating point
// in a case is not physical (Case.Unphysical).
const RegionNotPhysical = "not physical"

// unphysicalDevices returns the keys of the devices whose operating point
// in res is not physical, and whole = true when the node voltages ran
// away so that no device of the case has a meaningful point.
func unphysicalDevices(c *netlist.Circuit, res *solve.Result) (bad map[string]bool, whole bool) {
	bad = map[string]bool{}
	if res.Physical() {
		return bad, false
	}
	for _, u := range res.Unphysical {
		bad[netlist.Key(u.Device)] = true
	}
	return bad, voltagesRunAway(c, res)
}

// errorPlace splits a solver error into its position (the circuit's file
// when it has none) and its message without the position.
func errorPlace(err error, file string) (netlist.Pos, string) {
	var ce *solve.ConvergenceError
	if errors.As(err, &ce) {
		pos := ce.Pos
		if !pos.IsValid() {
			pos = netlist.Pos{File: file, Line: 1, Col: 1}
		}
		return pos, ce.Detail()
	}
	return netlist.Pos{File: file, Line: 1, Col: 1}, err.Error()
}

// caseFacts computes every fact of one solved case that does not need the
// other cases. A case that was not solved gets no subjects, only its
// names and the reason in Unjudged.
func (a *analyzer) caseFacts(sp *caseSpec, o *caseOut) Case {
	res := o.res
	cs := Case{Scenario: sp.scenario, Corner: sp.corner, Ambient: sp.ambient, Solution: res, Kind: sp.kind, Run: sp.run}
	if o.err != nil || res == nil {
		cs.Solution = nil
		cs.Unjudged = "not solved"
		if o.err != nil {
			_, cs.Unjudged = errorPlace(o.err, a.c.File)
		}
		return cs
	}
	cs.Transistors = make([]Transistor, 0, len(res.BJTs))
	for _, op := range res.BJTs {
		j, ok := a.bjtIdx[netlist.Key(op.Name)]
		if !ok {
			continue
		}
		t := a.transistor(j, op, sp.ambient)
		t.Thermal = sp.thermal
		if sp.thermal && !math.IsNaN(t.Rating.RthJA) && !o.th.runaway[j] {
			t.Tj = op.Temp // the fixed point: Ta + P*RthJA
			if !math.IsNaN(o.th.tj[j]) {
				t.Tj = o.th.tj[j] // beyond the followed range, estimated
			}
		}
		t.RunawayTj = t.Tj
		if sp.thermal {
			t.ThermalGain = o.th.gain[j]
			t.ThermalRunaway = o.th.runaway[j]
			if t.ThermalRunaway {
				t.RunawayTj = o.th.runTj[j]
			}
			t.OverTemperature = !t.ThermalRunaway && t.Tj > t.Rating.TjMax
		}
		if sp.swing != nil {
			t.Swing, t.SwingLevel = true, sp.level
		}
		if sp.open != nil && drivenBy(&t, sp.open.Name) {
			t.DriveOpen = true
			if o.reth != nil && o.reth[j] {
				t.BaseRth, t.BaseVth = o.rth[j], o.vth[j]
			}
			t.BaseFloats = math.IsInf(t.BaseRth, 1)
		}
		cs.Transistors = append(cs.Transistors, t)
	}
	if !res.Physical() {
		// Not physical (solve/verify.go): the currents of the devices named
		// have no meaning, and with them their power and temperature. Their
		// region says so (a rule on the drive, such as unlimited-base-drive,
		// still says what to fix). The rest of the circuit keeps its facts
		// while its node voltages stay within reach of its sources (an
		// ideal source holds its node whatever the junction draws); when
		// they do not, nothing in the case is reported: every transistor is
		// marked, and resistors and nets are left out.
		bad, whole := unphysicalDevices(a.c, res)
		for k := range cs.Transistors {
			t := &cs.Transistors[k]
			if !whole && !bad[netlist.Key(t.Name)] {
				continue
			}
			n := math.NaN()
			t.VBE, t.VCE, t.VCB, t.IC, t.IB, t.IE, t.Beta, t.Power = n, n, n, n, n, n, n, n
			t.Tj, t.RunawayTj, t.ThermalGain, t.ThermalRunaway = n, n, n, false
			t.Region = RegionNotPhysical
		}
		cs.Unphysical = res.Unphysical
		if whole {
			return cs
		}
	}
	cs.Resistors = make([]Resistor, 0, a.nres)
	for i, el := range a.c.Elements {
		if fx := a.resFixed[i]; fx != nil {
			cs.Resistors = append(cs.Resistors, a.resistor(fx, valueOf(sp, netlist.Key(el.Name), el.Value), res))
		}
	}
	cs.Nodes = make([]Node, 0, len(res.Nodes))
	for _, n := range res.Nodes {
		fx := a.nodeFixed[nodeKey(n.Name)]
		if fx == nil {
			// A net only the solver names (none today): its own facts.
			fx = &NodeFixed{Name: n.Name, Pos: a.firstPos[nodeKey(n.Name)]}
		}
		cs.Nodes = append(cs.Nodes, Node{NodeFixed: fx, V: n.V, Peak: math.Abs(n.V)})
	}
	return cs
}
