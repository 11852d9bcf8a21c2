package solve

import (
	"context"
	"fmt"
	"math"
)

// Default tolerances and limits (SPICE-class values).
const (
	DefaultRelTol   = 1e-3  // relative tolerance of the Newton update
	DefaultVNTol    = 1e-6  // absolute voltage tolerance, V
	DefaultAbsTol   = 1e-12 // absolute current tolerance, A (update and KCL residual)
	DefaultGMin     = 1e-12 // junction conductance, S, if neither Options nor the circuit sets one
	DefaultMaxIter  = 150   // Newton iterations per attempt
	DefaultMaxSteps = 100   // steps per GMIN- or source-stepping schedule
	// stepIter caps the Newton iterations of one stepping step.
	stepIter = 60
)

// Options control a DC solve. The zero value means "all defaults": every
// numeric field of zero takes its default, and a nil Temp takes the
// circuit's temperature.
type Options struct {
	// Temp is the circuit temperature, °C; nil means c.Options.Temp.
	Temp *float64
	// DeviceTemp overrides the temperature (°C) of single devices, keyed by
	// netlist.Key of the flat element name ("x1.q2"). Without an entry a
	// device takes its instance parameter temp, else the circuit
	// temperature plus its instance parameter dtemp.
	DeviceTemp map[string]float64
	// GMin is GMIN, S, the conductance added inside each junction current
	// (GMIN·v, the SPICE3 placement; see device.BJT.Eval); zero means
	// c.Options.GMin, or DefaultGMin if that is not positive.
	GMin float64
	// RelTol, VNTol and AbsTol are the convergence tolerances; zero means
	// DefaultRelTol, DefaultVNTol, DefaultAbsTol.
	RelTol, VNTol, AbsTol float64
	// MaxIter caps the iterations of plain Newton; zero means
	// DefaultMaxIter. Each step of a stepping schedule is capped at the
	// smaller of MaxIter and 60.
	MaxIter int
	// MaxSteps caps the steps of each stepping schedule; zero means
	// DefaultMaxSteps.
	MaxSteps int
	// Guess, if not nil, is a previous result of the same System whose node
	// voltages and branch currents start Newton (a warm start for sweeps).
	// Without it every solve starts from zero with the junctions at their
	// critical voltages, so the same input always gives the same bits.
	Guess *Result
	// Into, if not nil, is a result of the same System that the caller
	// has no more use for: a successful solve writes its result into it,
	// reusing its storage, and returns it (it may be Guess, which is read
	// before anything is written). A failed solve leaves it as it was. An
	// iteration that solves again and again (the self-heating loop) keeps
	// two results this way instead of making one per solve.
	Into *Result
	// Linear is the linear solver; nil means the System's own SparseLU,
	// kept from solve to solve so its pattern and ordering are reused
	// (BenchmarkLinear: faster than DenseLU from 5 unknowns up, since the
	// dense one estimates the condition at every factorisation).
	Linear LinearSolver
	// Context, if not nil, stops the solve when it is done: every Newton
	// iteration (of plain Newton and of each stepping step) checks it, and
	// Solve then returns its error (errors.Is(err, context.DeadlineExceeded)
	// for a deadline). A per-file time budget uses it, so a timed-out check
	// stops computing instead of running on unseen.
	Context context.Context

	// The variants below change the circuit for one solve without
	// changing the System's structure, so the matrix pattern, its ordering
	// and the numbering are reused (and Guess may be the nominal result).

	// Remove names elements (R, I, D or Q, by flat name) taken out of the
	// circuit: they carry no current, and each of their first three
	// terminals is held to ground by LeakR, as Without does.
	Remove []string
	// Open names sources opened: a voltage source is replaced by a LeakR
	// resistor across its terminals (its branch current reads zero), a
	// current source carries nothing.
	Open []string
	// Inject drives currents, A, into nodes from ground, by node name
	// (a test source; ground and unknown names are ignored).
	Inject map[string]float64
}

// Temp returns a pointer to c, for Options.Temp.
func Temp(c float64) *float64 { return &c }

// settings are Options with the defaults resolved.
type settings struct {
	temp                  float64
	gmin                  float64
	reltol, vntol, abstol float64
	maxIter, maxSteps     int
}

func positiveOr(v, def float64, name string) (float64, error) {
	switch {
	case v == 0:
		return def, nil
	case v > 0 && !math.IsInf(v, 1):
		return v, nil
	}
	return 0, fmt.Errorf("option %s = %g must be a positive finite number", name, v)
}

func (s *System) settings(opt Options) (settings, error) {
	var st settings
	st.temp = s.circuit.Options.Temp
	if opt.Temp != nil {
		st.temp = *opt.Temp
	}
	if math.IsNaN(st.temp) || math.IsInf(st.temp, 0) {
		return st, fmt.Errorf("temperature %g °C is not a finite number", st.temp)
	}
	gdef := DefaultGMin
	if g := s.circuit.Options.GMin; g > 0 && !math.IsInf(g, 1) {
		gdef = g
	}
	var err error
	if st.gmin, err = positiveOr(opt.GMin, gdef, "GMin"); err != nil {
		return st, err
	}
	if st.reltol, err = positiveOr(opt.RelTol, DefaultRelTol, "RelTol"); err != nil {
		return st, err
	}
	if st.vntol, err = positiveOr(opt.VNTol, DefaultVNTol, "VNTol"); err != nil {
		return st, err
	}
	if st.abstol, err = positiveOr(opt.AbsTol, DefaultAbsTol, "AbsTol"); err != nil {
		return st, err
	}
	st.maxIter, st.maxSteps = DefaultMaxIter, DefaultMaxSteps
	if opt.MaxIter < 0 || opt.MaxSteps < 0 {
		return st, fmt.Errorf("options MaxIter = %d and MaxSteps = %d must not be negative", opt.MaxIter, opt.MaxSteps)
	}
	if opt.MaxIter > 0 {
		st.maxIter = opt.MaxIter
	}
	if opt.MaxSteps > 0 {
		st.maxSteps = opt.MaxSteps
	}
	return st, nil
}
