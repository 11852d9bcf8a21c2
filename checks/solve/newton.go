package solve

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/netlist"
)

// Method names the strategy that found an operating point.
type Method string

// Strategies, in the order they are tried.
const (
	MethodNewton         Method = "newton"
	MethodGminStepping   Method = "gmin-stepping"
	MethodSourceStepping Method = "source-stepping"
)

// GMIN-stepping schedule: the shunt from every node to ground starts at
// gminStart and is divided by a factor that starts at gminFactor, shrinks
// (square root) after a failed step and is never below gminMinFactor.
const (
	gminStart     = 1e-2
	gminFactor    = 10
	gminMinFactor = 1.001
)

// Source-stepping schedule: the source factor grows by a step that starts
// at srcStart, doubles after a success up to srcMaxStep and is quartered
// after a failure, giving up below srcMinStep.
const (
	srcStart   = 0.1
	srcMaxStep = 0.5
	srcMinStep = 1e-6
)

// ConvergenceError reports that no strategy found an operating point.
type ConvergenceError struct {
	// Tried says what was tried and how each attempt ended.
	Tried []string
	// Unsettled names the unknowns (V(node), I(source)) that had not met
	// the tolerances when the last attempt stopped, at most 10.
	Unsettled []string
	// Limited names the diodes and transistors whose junction voltages were
	// still being limited when the last attempt stopped, at most 10.
	Limited []string
	// Cause is a *SingularError if the equations were singular, else nil.
	Cause error
	// Pos is where the first element involved (unsettled or limited) is
	// written, else the circuit's file.
	Pos netlist.Pos
}

func (e *ConvergenceError) Error() string {
	if e.Pos.IsValid() || e.Pos.File != "" {
		return e.Pos.String() + ": error: " + e.Detail()
	}
	return e.Detail()
}

// Detail is the message of Error without the position.
func (e *ConvergenceError) Detail() string {
	var b strings.Builder
	b.WriteString("no DC operating point found: ")
	if e.Cause != nil {
		b.WriteString(e.Cause.Error())
		b.WriteString("; ")
	}
	b.WriteString("tried ")
	b.WriteString(strings.Join(e.Tried, ", then "))
	if len(e.Unsettled) > 0 {
		b.WriteString("; not settled: ")
		b.WriteString(strings.Join(e.Unsettled, ", "))
	}
	if len(e.Limited) > 0 {
		b.WriteString("; junction voltages still limited: ")
		b.WriteString(strings.Join(e.Limited, ", "))
	}
	return b.String()
}

// Unwrap returns the cause.
func (e *ConvergenceError) Unwrap() error { return e.Cause }

// work is the state of one solve.
type work struct {
	s   *System
	st  settings
	lin LinearSolver
	// into is Options.Into: storage for the result.
	into *Result
	bjt  []*device.BJT
	dio  []*device.Diode
	// Last (limited) junction voltages and the evaluations there.
	jb  [][2]float64
	evB []device.BJTEval
	jd  []float64
	evD [][2]float64
	// lambda scales the independent sources; gshunt is the GMIN-stepping
	// conductance from every node to ground.
	lambda, gshunt float64
	// pull, when not nil, makes gshunt a pseudo-transient step: each node
	// is pulled towards pull[i] rather than ground (see stability.go).
	pull      []float64
	rhs, xnew []float64
	res, mag  []float64
	iters     int
	// bad are the unknowns that failed a test in the last iteration.
	bad []int
	// limited are the devices (index into bjts, then diodes) whose
	// junctions were limited in the last evaluation.
	limited  []int
	singular *SingularError
	// ctx is Options.Context; stopped is set once it is done.
	ctx     context.Context
	stopped error
	// off marks, by element index, the elements removed (offRemoved) or
	// opened (offOpen) for this solve; offB, offD the removed devices;
	// inject the test currents by unknown.
	off        []uint8
	offB, offD []bool
	inject     map[int]float64
	// The sinks of assemble and residualOK, kept so that each iteration
	// does not make new ones.
	msink matrixSink
	rsink residualSink
	// x0 and x are solve's starting point and iterate (kept for their
	// storage; x is the solution solve returns, valid until release).
	x0, x []float64
}

// stop reports whether the solve must stop because its context is done.
func (w *work) stop() bool {
	if w.stopped == nil && w.ctx != nil {
		w.stopped = w.ctx.Err()
	}
	return w.stopped != nil
}

const (
	offRemoved = 1
	offOpen    = 2
)

// variants resolves Options.Remove, Open and Inject.
func (w *work) variants(opt Options) error {
	s := w.s
	if len(opt.Remove) == 0 && len(opt.Open) == 0 && len(opt.Inject) == 0 {
		return nil
	}
	w.off = make([]uint8, len(s.elems))
	w.offB, w.offD = make([]bool, len(s.bjts)), make([]bool, len(s.diodes))
	for _, name := range opt.Remove {
		el := s.byKey[netlist.Key(name)]
		if el == nil {
			return fmt.Errorf("remove: no element %s", name)
		}
		switch {
		case el.kind == 'R' && !el.short, el.kind == 'I', el.kind == 'D', el.kind == 'Q':
		default:
			return fmt.Errorf("remove: %s cannot be removed without changing the circuit's structure (open it instead)", el.e.Name)
		}
		w.off[el.idx] = offRemoved
	}
	for i, el := range s.bjts {
		w.offB[i] = w.off[el.idx] == offRemoved
	}
	for i, el := range s.diodes {
		w.offD[i] = w.off[el.idx] == offRemoved
	}
	for _, name := range opt.Open {
		el := s.byKey[netlist.Key(name)]
		if el == nil || (el.kind != 'V' && el.kind != 'I') {
			return fmt.Errorf("open: %s is not a source of the circuit", name)
		}
		w.off[el.idx] = offOpen
	}
	if len(opt.Inject) > 0 {
		w.inject = map[int]float64{}
		for name, v := range opt.Inject {
			if !finite(v) {
				return fmt.Errorf("inject: %g A into %s is not a finite current", v, name)
			}
			if i, ok := s.nodeIdx[netlist.Key(name)]; ok && !isGround(name) {
				w.inject[i] += v
			}
		}
	}
	return nil
}

// devices builds the device instances at their temperatures. An
// instance depends only on its model's type and parameters, its area, its
// temperature and the device options, and is not changed once made, so
// each element keeps the instance of its last solve (s.made) and takes it
// again while those are the same: a Monte Carlo run or a corner that
// changes resistors, and the gain solves after a solve, make no new
// devices.
// bjts and dios are the slices to fill (their storage is reused).
func (s *System) devices(opt Options, st settings, bjts []*device.BJT, dios []*device.Diode) ([]*device.BJT, []*device.Diode, error) {
	c := s.circuit
	dopt := device.Options{TNom: c.Options.TNom, GMin: st.gmin}
	var errs *netlist.ErrorList
	fail := func(el *elem, err error) {
		if errs == nil {
			errs = &netlist.ErrorList{}
		}
		errs.Addf(el.e.Pos, "%s: %v", el.e.Name, err)
	}
	temp := func(el *elem) float64 {
		if t, ok := opt.DeviceTemp[el.key]; ok {
			return t
		}
		if t, ok := el.e.Params["temp"]; ok {
			return t
		}
		return st.temp + el.e.Params["dtemp"]
	}
	if len(s.made) != len(s.bjts)+len(s.diodes) {
		s.made = make([]madeDevice, len(s.bjts)+len(s.diodes))
	}
	bjts, dios = slices.Grow(bjts[:0], len(s.bjts))[:len(s.bjts)], slices.Grow(dios[:0], len(s.diodes))[:len(s.diodes)]
	for i, el := range s.bjts {
		t, m := temp(el), &s.made[i]
		switch {
		case m.bjt == nil || !m.sameInputs(el, dopt):
			b, err := device.NewBJT(el.model, el.value, t, dopt)
			m.bjt = nil
			if err != nil {
				fail(el, err)
			} else {
				m.bjt = b
				m.record(el, t, dopt)
			}
		case !sameBits(t, m.temp):
			// Only the temperature moved (the self-heating loop): the
			// instance, which only this System holds, moves in place,
			// without reading the model again.
			if err := m.bjt.SetTemp(t); err != nil {
				m.bjt = nil
				fail(el, err)
			} else {
				m.temp = t
			}
		}
		bjts[i] = m.bjt
	}
	for i, el := range s.diodes {
		t, m := temp(el), &s.made[len(s.bjts)+i]
		if m.dio == nil || !m.same(el, t, dopt) {
			d, err := device.NewDiode(el.model, el.value, t, dopt)
			m.dio = nil
			if err != nil {
				fail(el, err)
			} else {
				m.dio = d
				m.record(el, t, dopt)
			}
		}
		dios[i] = m.dio
	}
	if errs != nil {
		return bjts, dios, errs.Err()
	}
	return bjts, dios, nil
}

// madeDevice is the device instance an element's last solve made and what
// it was made from: the model (pointer, type, name and every parameter,
// which a caller may change in place between solves), the area, the
// temperature and the options.
type madeDevice struct {
	bjt        *device.BJT
	dio        *device.Diode
	model      *netlist.Model
	typ        netlist.ModelType
	name       string
	params     []modelParam
	area, temp float64
	opt        device.Options
}

type modelParam struct {
	key string
	v   float64
}

// same reports whether el at temperature t with options opt would make
// the recorded instance: the same inputs, compared bit for bit.
func (m *madeDevice) same(el *elem, t float64, opt device.Options) bool {
	return sameBits(t, m.temp) && m.sameInputs(el, opt)
}

// sameInputs is same but for the temperature: the model, area and
// options are the recorded ones.
func (m *madeDevice) sameInputs(el *elem, opt device.Options) bool {
	md := el.model
	if md != m.model || md.Type != m.typ || md.Name != m.name || len(md.Params) != len(m.params) ||
		!sameBits(el.value, m.area) || !sameBits(opt.TNom, m.opt.TNom) || !sameBits(opt.GMin, m.opt.GMin) {
		return false
	}
	for _, p := range m.params {
		if v, ok := md.Params[p.key]; !ok || !sameBits(v, p.v) {
			return false
		}
	}
	return true
}

// record notes the inputs of an instance just made.
func (m *madeDevice) record(el *elem, t float64, opt device.Options) {
	md := el.model
	m.model, m.typ, m.name, m.area, m.temp, m.opt = md, md.Type, md.Name, el.value, t, opt
	m.params = m.params[:0]
	for k, v := range md.Params {
		m.params = append(m.params, modelParam{k, v})
	}
}

func sameBits(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

// newWork resolves the options and builds the devices and workspace of
// one solve.
func (s *System) newWork(opt Options) (*work, error) {
	st, err := s.settings(opt)
	if err != nil {
		return nil, err
	}
	w := s.spare
	if w != nil {
		// The work space of the last solve: every buffer is written before
		// it is read (evaluate, assemble, residualOK, the linear solve), and
		// every other field starts as in a new one.
		s.spare = nil
		*w = work{s: s, st: st, lin: opt.Linear, lambda: 1, ctx: opt.Context, into: opt.Into,
			jb: w.jb, evB: w.evB, jd: w.jd, evD: w.evD,
			rhs: w.rhs, xnew: w.xnew, res: w.res, mag: w.mag,
			bad: w.bad[:0], limited: w.limited[:0], bjt: w.bjt, dio: w.dio, x0: w.x0, x: w.x}
	} else {
		w = &work{s: s, st: st, lin: opt.Linear, lambda: 1, ctx: opt.Context, into: opt.Into}
		nb, nd := len(s.bjts), len(s.diodes)
		w.jb, w.evB = make([][2]float64, nb), make([]device.BJTEval, nb)
		w.jd, w.evD = make([]float64, nd), make([][2]float64, nd)
		w.rhs, w.xnew = make([]float64, s.n), make([]float64, s.n)
		w.res, w.mag = make([]float64, s.n), make([]float64, s.n)
	}
	if w.lin == nil {
		if s.lin == nil {
			s.lin = NewSparseLU()
		}
		w.lin = s.lin
	}
	if r, ok := w.lin.(interface{ Repivot() }); ok {
		r.Repivot()
	}
	if w.bjt, w.dio, err = s.devices(opt, st, w.bjt, w.dio); err != nil {
		return nil, err
	}
	if err := w.variants(opt); err != nil {
		return nil, err
	}
	return w, nil
}

// release keeps a finished solve's buffers for the next one (a System is
// not used concurrently, so one spare set is enough).
func (s *System) release(w *work) {
	if w != nil {
		s.spare = w
	}
}

// PivotOrder returns the symbolic analysis and pivot order of the last
// factorisation of the System's own linear solver (nil if it has none),
// to share with the Systems of other goroutines (UsePivotOrder).
func (s *System) PivotOrder() *PivotOrder {
	if s.lin == nil {
		return nil
	}
	return s.lin.PivotOrder()
}

// UsePivotOrder makes every later solve with the System's own linear
// solver start from o where o's pattern is the System's (see
// SparseLU.UsePivotOrder); nil stops it. The solutions are the same bits
// as without it: only the work of pivoting is saved.
func (s *System) UsePivotOrder(o *PivotOrder) {
	if s.lin == nil {
		s.lin = NewSparseLU()
	}
	s.lin.UsePivotOrder(o)
}

// Solve finds the DC operating point: plain Newton first, then GMIN
// stepping, then source stepping. It returns a *ConvergenceError if all
// fail, and never returns a result with a non-finite value.
func (s *System) Solve(opt Options) (*Result, error) {
	r, w, _, err := s.solve(opt)
	s.release(w)
	return r, err
}

// solve is Solve, also returning the work space and the solution vector.
func (s *System) solve(opt Options) (*Result, *work, []float64, error) {
	w, err := s.newWork(opt)
	if err != nil {
		return nil, nil, nil, err
	}
	st := w.st
	x0, warm := s.guessInto(w.x0, opt.Guess)
	x := append(w.x[:0], x0...)
	w.x0, w.x = x0, x
	var tried []string
	if w.newton(x, !warm, st.maxIter) {
		return s.verified(w, x, MethodNewton), w, x, nil
	}
	if w.stop() {
		return nil, nil, nil, fmt.Errorf("solve stopped: %w", w.stopped)
	}
	tried = append(tried, fmt.Sprintf("newton (%d iterations)", w.iters))

	copy(x, x0)
	ok, msg := w.gminStepping(x, !warm)
	if ok {
		return s.verified(w, x, MethodGminStepping), w, x, nil
	}
	if w.stop() {
		return nil, nil, nil, fmt.Errorf("solve stopped: %w", w.stopped)
	}
	tried = append(tried, msg)

	copy(x, x0)
	ok, msg = w.sourceStepping(x)
	if ok {
		return s.verified(w, x, MethodSourceStepping), w, x, nil
	}
	if w.stop() {
		return nil, nil, nil, fmt.Errorf("solve stopped: %w", w.stopped)
	}
	tried = append(tried, msg)

	ce := &ConvergenceError{Tried: tried}
	if w.singular != nil {
		w.singular.Name = s.unknownName(w.singular.Index)
		ce.Cause = w.singular
	}
	for i, u := range w.bad {
		if i == 10 {
			break
		}
		ce.Unsettled = append(ce.Unsettled, s.unknownName(u))
	}
	var involved []*elem
	for i, d := range w.limited {
		if i == 10 {
			break
		}
		el := s.deviceElem(d)
		ce.Limited = append(ce.Limited, el.e.Name)
		involved = append(involved, el)
	}
	ce.Pos = s.firstInvolved(involved, w.bad)
	return nil, nil, nil, ce
}

// verified builds the result of a converged x and checks it against the
// device equations as they are (verify.go): a point that satisfies only
// the continued exponentials is returned marked not physical.
func (s *System) verified(w *work, x []float64, m Method) *Result {
	r := s.result(w, x, m)
	s.verify(w, x, r)
	return r
}

// deviceElem returns device d of the work's device list: the transistors,
// then the diodes.
func (s *System) deviceElem(d int) *elem {
	if d < len(s.bjts) {
		return s.bjts[d]
	}
	return s.diodes[d-len(s.bjts)]
}

// firstInvolved returns the position of the element written first among
// devs and the elements touching the unknowns bad; the circuit's file when
// there are none.
func (s *System) firstInvolved(devs []*elem, bad []int) netlist.Pos {
	want := map[int]bool{}
	for _, u := range bad {
		want[u] = true
	}
	var best netlist.Pos
	take := func(p netlist.Pos) {
		if p.IsValid() && (!best.IsValid() || p.Before(best)) {
			best = p
		}
	}
	for _, el := range devs {
		take(el.e.Pos)
	}
	for _, el := range s.elems {
		hit := el.br >= 0 && want[el.br]
		for _, n := range append(append([]int(nil), el.nodes...), el.inner...) {
			hit = hit || (n >= 0 && want[n])
		}
		if hit {
			take(el.e.Pos)
		}
	}
	if !best.IsValid() {
		best = netlist.Pos{File: s.circuit.File}
	}
	return best
}

func (s *System) unknownName(i int) string {
	if i < 0 || i >= len(s.names) {
		return ""
	}
	return s.names[i]
}

// guess returns the starting vector: zero, or the values of a previous
// result matched by node and element name.
func (s *System) guess(g *Result) ([]float64, bool) { return s.guessInto(nil, g) }

// guessInto is guess, into buf's storage when it is large enough.
func (s *System) guessInto(buf []float64, g *Result) ([]float64, bool) {
	x := slices.Grow(buf[:0], s.n)[:s.n]
	clear(x)
	if g == nil {
		return x, false
	}
	same := g.index != nil && g.index == s.index // a result of this System: slot by slot
	for i := range s.nodeNames {
		if same {
			x[i] = g.Nodes[i].V
		} else {
			x[i] = g.V(s.nodeKeys[i])
		}
	}
	br := 0
	for _, el := range s.elems {
		for t, in := range el.inner {
			if in >= s.nExt {
				x[in] = volt(x, el.nodes[t])
			}
		}
		if el.br >= 0 {
			if same {
				x[el.br] = g.Branches[br].I
			} else {
				x[el.br], _ = g.I(el.key)
			}
			br++
		}
	}
	for _, v := range x {
		if !finite(v) {
			clear(x)
			return x, false
		}
	}
	return x, true
}

// evaluate sets the junction voltages of every device from x, limited
// against the previous ones unless first, and evaluates the devices there.
// On the first iteration of a cold start the junctions are placed at their
// initial voltages instead. It reports whether any junction was limited or
// placed.
func (w *work) evaluate(x []float64, first, cold bool) bool {
	limited := false
	w.limited = w.limited[:0]
	for j, b := range w.bjt {
		if w.offB != nil && w.offB[j] {
			w.jb[j], w.evB[j] = [2]float64{}, device.BJTEval{}
			continue
		}
		vbe, vbc := w.junctions(j, x)
		switch {
		case first && cold:
			vbe, vbc = b.Initial()
			limited = true
		case !first:
			var l bool
			vbe, vbc, l = b.Limit(vbe, vbc, w.jb[j][0], w.jb[j][1])
			limited = limited || l
			if l {
				w.limited = append(w.limited, j)
			}
		}
		w.jb[j] = [2]float64{vbe, vbc}
		w.evB[j] = b.Eval(vbe, vbc)
	}
	for j, d := range w.dio {
		if w.offD != nil && w.offD[j] {
			w.jd[j], w.evD[j] = 0, [2]float64{}
			continue
		}
		vd := w.diodeV(j, x)
		switch {
		case first && cold:
			vd = d.Initial()
			limited = true
		case !first:
			var l bool
			vd, l = d.Limit(vd, w.jd[j])
			limited = limited || l
			if l {
				w.limited = append(w.limited, len(w.bjt)+j)
			}
		}
		w.jd[j] = vd
		i, g := d.Eval(vd)
		w.evD[j] = [2]float64{i, g}
	}
	return limited
}

// newton runs Newton-Raphson from x for at most maxIter linear solves,
// leaving the solution in x. cold places the junctions at their initial
// voltages for the first linearisation. It reports convergence; on failure
// w.bad holds the unknowns that had not settled.
func (w *work) newton(x []float64, cold bool, maxIter int) bool {
	settled := false
	for k := 0; ; k++ {
		limited := w.evaluate(x, k == 0, cold)
		if k > 0 && settled && !limited && w.residualOK(x) {
			w.bad = w.bad[:0]
			return true
		}
		if k == maxIter || w.stop() {
			return false
		}
		w.iters++
		if err := w.assemble(x); err != nil {
			var se *SingularError
			if errors.As(err, &se) && w.singular == nil {
				w.singular = se
			}
			w.bad = w.bad[:0]
			return false
		}
		if err := w.lin.Solve(w.xnew, w.rhs); err != nil {
			return false
		}
		for i, v := range w.xnew {
			if !finite(v) {
				w.bad = append(w.bad[:0], i)
				return false
			}
		}
		settled = w.updateOK(w.xnew, x)
		copy(x, w.xnew)
	}
}

// assemble stamps the system linearised at the last evaluation (at x)
// into the linear solver and w.rhs, and factors it.
func (w *work) assemble(x []float64) error {
	w.lin.Clear(w.s.n)
	for i := range w.rhs {
		w.rhs[i] = 0
	}
	m := &w.msink
	m.lin, m.rhs = w.lin, w.rhs
	w.stampLinear(m)
	w.stampDevices(m, x, true)
	w.stampPoly(m, x, true)
	return w.lin.Factor()
}

// updateOK tests the update from x to xn against the tolerances, noting
// the unknowns that fail in w.bad.
func (w *work) updateOK(xn, x []float64) bool {
	w.bad = w.bad[:0]
	for i := range xn {
		tol := w.st.abstol
		if i < w.s.nNodes {
			tol = w.st.vntol
		}
		tol += w.st.reltol * math.Max(math.Abs(xn[i]), math.Abs(x[i]))
		if math.Abs(xn[i]-x[i]) > tol {
			w.bad = append(w.bad, i)
		}
	}
	return len(w.bad) == 0
}

// residualOK evaluates F(x) = A·x − b + i(x) with the devices as last
// evaluated (at x, when no junction was limited) and tests Kirchhoff's law
// at every node, |F_i| ≤ ABSTOL + 64·ε·Σ|terms|, and every branch equation
// against VNTOL likewise. The terms include each device's rounding scale
// (see stampDevices). Failing unknowns go to w.bad.
func (w *work) residualOK(x []float64) bool {
	for i := range w.res {
		w.res[i], w.mag[i] = 0, 0
	}
	r := &w.rsink
	r.x, r.r, r.m = x, w.res, w.mag
	w.stampLinear(r)
	w.stampDevices(r, x, false)
	w.stampPoly(r, x, false)
	w.bad = w.bad[:0]
	const floor = 64 * 0x1p-52
	for i, v := range w.res {
		tol := w.st.abstol
		if i >= w.s.nNodes {
			tol = w.st.vntol
		}
		if math.Abs(v) > tol+floor*w.mag[i] {
			w.bad = append(w.bad, i)
		}
	}
	return len(w.bad) == 0
}

// gminStepping solves with a conductance from every node to ground that
// starts at gminStart and is reduced to zero step by step, each step
// starting from the last solution. It reports success, or a description
// of where it stalled.
func (w *work) gminStepping(x []float64, cold bool) (bool, string) {
	defer func() { w.gshunt = 0 }()
	prev := make([]float64, len(x))
	g, good, factor := gminStart, 0.0, float64(gminFactor)
	maxIter := min(w.st.maxIter, stepIter)
	for step := 1; step <= w.st.maxSteps && !w.stop(); step++ {
		w.gshunt = g
		if w.newton(x, cold, maxIter) {
			cold = false
			copy(prev, x)
			if g == 0 {
				return true, ""
			}
			good = g
			g /= factor
			if g <= w.st.gmin {
				g = 0
			}
			continue
		}
		if good == 0 {
			return false, fmt.Sprintf("gmin stepping (no solution even with %.3g S from every net to ground)", g)
		}
		copy(x, prev)
		factor = math.Sqrt(factor)
		if factor < gminMinFactor {
			return false, fmt.Sprintf("gmin stepping (stalled at %.3g S after %d steps)", good, step)
		}
		g = good / factor
	}
	return false, fmt.Sprintf("gmin stepping (step limit %d reached at %.3g S)", w.st.maxSteps, good)
}

// sourceStepping ramps every independent source from zero, where the
// solution is all zeros, to its full value, each step starting from the
// last solution. It reports success, or a description of where it stalled.
func (w *work) sourceStepping(x []float64) (bool, string) {
	defer func() { w.lambda = 1 }()
	for i := range x {
		x[i] = 0
	}
	// At zero sources the solution is all zeros: every device is unbiased.
	prev := make([]float64, len(x))
	good, step := 0.0, srcStart
	maxIter := min(w.st.maxIter, stepIter)
	for n := 1; n <= w.st.maxSteps && !w.stop(); n++ {
		w.lambda = math.Min(1, good+step)
		if w.newton(x, false, maxIter) {
			copy(prev, x)
			good = w.lambda
			if good == 1 {
				return true, ""
			}
			step = math.Min(2*step, srcMaxStep)
			continue
		}
		copy(x, prev)
		step /= 4
		if step < srcMinStep {
			return false, fmt.Sprintf("source stepping (stalled at %.4g%% of the source values after %d steps)", 100*good, n)
		}
	}
	return false, fmt.Sprintf("source stepping (step limit %d reached at %.4g%% of the source values)", w.st.maxSteps, 100*good)
}
