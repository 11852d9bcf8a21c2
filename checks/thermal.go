package checks

// This file holds the electro-thermal solve. Each transistor's junction
// sits above the ambient by its own dissipation times its junction-to-
// ambient thermal resistance,
//
//	Tj = Ta + P(Tj) * RthJA,
//
// where Ta is the case's circuit temperature: the ambient, or the
// netlist's .temp when it sets one (or --temp),
// and its device equations are evaluated at Tj (Nagel 1975 temperature
// scaling of IS, BF and ISE, package device). The coupled problem is solved
// by fixed-point iteration: solve the circuit with every transistor at its
// current Tj, compute the new Tj from its power, repeat until no Tj moves by
// more than thermalTol. A junction whose power falls as it heats makes the
// iteration oscillate; each sign change of a junction's step halves its
// step (under-relaxation), which converges for any negative loop gain.
//
// The thermal loop gain of a transistor at the operating point is
//
//	g = dP/dTj * RthJA,
//
// taken by a forward difference of gainStep kelvin with the other
// junctions held. Below 1 a disturbance of the junction temperature dies
// out; at or above 1 it grows (thermal runaway). When an iterate passes
// the transistor's Tj max there is no stable fixed point below it: the
// case records a runaway and the junction temperature from which the
// steps stopped shrinking (where the local loop gain reached 1), or the
// last one below Tj max when they always shrank.

import (
	"math"

	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

const (
	// thermalTol is the largest junction-temperature step, K, of a settled
	// electro-thermal iteration.
	thermalTol = 1e-3
	// thermalMaxIter bounds the electro-thermal iterations; a loop gain of
	// 0.97 still settles a 100 K rise to thermalTol within it.
	thermalMaxIter = 400
	// defaultTjMax is the Tj max assumed when the ratings give none, C: the
	// usual rating of silicon parts in plastic packages (common practice).
	defaultTjMax = 150
	// gainStep is the junction-temperature step of the loop-gain
	// difference, K.
	gainStep = 1.0
)

// tightOptions are the tolerances of the difference solves (loop gain,
// sensitivities, swing gain), far below the step they measure.
func tightOptions(o solve.Options) solve.Options {
	o.RelTol, o.VNTol = 1e-9, 1e-12
	return o
}

// thermalOut is the electro-thermal result of one case, by transistor
// index.
type thermalOut struct {
	gain, runTj []float64
	runaway     []bool
	// unsettled is true when the iteration reached thermalMaxIter.
	unsettled bool
}

// solveThermal solves one case on sys: with the electro-thermal iteration
// when sp.thermal, else once with the transistors at sp.heldTemps.
func (a *analyzer) solveThermal(sys *solve.System, lu solve.LinearSolver, sp *caseSpec, guess *solve.Result) (*solve.Result, thermalOut, error) {
	base := solve.Options{Temp: solve.Temp(sp.temp), Guess: guess, Linear: lu, Context: a.opt.Context}
	if !sp.thermal {
		base.DeviceTemp = sp.heldTemps
		res, err := sys.Solve(base)
		return res, thermalOut{}, err
	}
	n := len(a.bjts)
	out := thermalOut{gain: make([]float64, n), runTj: make([]float64, n), runaway: make([]bool, n)}
	rth := make([]float64, n)
	tjmax := make([]float64, n)
	T := make([]float64, n)
	step := make([]float64, n)
	relax := make([]float64, n)
	gainAt := make([]float64, n)
	for j := range a.bjts {
		rth[j] = a.tmpl[j].Rating.RthJA
		if math.IsNaN(rth[j]) || rth[j] < 0 {
			rth[j] = math.NaN()
		}
		tjmax[j] = a.tmpl[j].Rating.TjMax
		if math.IsNaN(tjmax[j]) {
			tjmax[j] = defaultTjMax
		}
		T[j], relax[j], gainAt[j] = sp.temp, 1, math.NaN()
	}
	temps := func(T []float64) map[string]float64 {
		m := make(map[string]float64, n)
		for j, el := range a.bjts {
			m[netlist.Key(el.Name)] = T[j]
		}
		return m
	}
	power := func(res *solve.Result) []float64 {
		p := make([]float64, n)
		for _, op := range res.BJTs {
			if j, ok := a.bjtIdx[netlist.Key(op.Name)]; ok {
				p[j] = op.Power
			}
		}
		return p
	}
	var res *solve.Result
	settled, ran := false, false
	for it := 0; it < thermalMaxIter && !settled && !ran; it++ {
		opt := base
		opt.DeviceTemp = temps(T)
		if res != nil {
			opt.Guess = res
		}
		r, err := sys.Solve(opt)
		if err != nil {
			return nil, out, err
		}
		res = r
		p := power(res)
		next := append([]float64(nil), T...)
		biggest := 0.0
		for j := range a.bjts {
			if math.IsNaN(rth[j]) {
				continue
			}
			d := sp.temp + p[j]*rth[j] - T[j]
			if it > 0 && step[j] != 0 {
				if d*step[j] < 0 {
					relax[j] /= 2
				} else if math.IsNaN(gainAt[j]) && math.Abs(d) >= math.Abs(step[j]) {
					gainAt[j] = T[j]
				}
			}
			d *= relax[j]
			step[j] = d
			next[j] = T[j] + d
			biggest = math.Max(biggest, math.Abs(d))
			if next[j] > tjmax[j] {
				out.runaway[j], ran = true, true
				out.runTj[j] = gainAt[j]
				if math.IsNaN(gainAt[j]) {
					out.runTj[j] = T[j]
				}
			}
		}
		if ran {
			break
		}
		T = next
		settled = biggest < thermalTol
	}
	out.unsettled = !settled && !ran
	// Loop gains at the final junction temperatures.
	opt := tightOptions(base)
	opt.DeviceTemp, opt.Guess = temps(T), res
	r0, err := sys.Solve(opt)
	if err != nil {
		for j := range out.gain {
			out.gain[j] = math.NaN()
		}
		return res, out, nil
	}
	p0 := power(r0)
	for j := range a.bjts {
		if math.IsNaN(rth[j]) {
			out.gain[j] = math.NaN()
			continue
		}
		if rth[j] == 0 {
			continue
		}
		Tp := append([]float64(nil), T...)
		Tp[j] += gainStep
		o := opt
		o.DeviceTemp, o.Guess = temps(Tp), r0
		r1, err := sys.Solve(o)
		if err != nil {
			out.gain[j] = math.NaN()
			continue
		}
		out.gain[j] = (power(r1)[j] - p0[j]) / gainStep * rth[j]
	}
	return res, out, nil
}
