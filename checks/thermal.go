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
// Tj max does not stop the iteration: a junction may settle above it.
//
// The thermal loop gain of a transistor at the operating point is
//
//	g = dP/dTj * RthJA,
//
// taken over a step of gainStep kelvin with the other junctions held, to
// first order about the operating point (solve.System.SolveGains: one
// factorisation for all transistors, not a solve per transistor). Below 1 a disturbance of the junction temperature dies
// out and the fixed point is stable; at or above 1 it grows. The
// judgement, per transistor:
//
//   - runaway: the loop gain at the fixed point is at or above 1, or the
//     iteration passes Tj max + thermalCapMargin (or stops solving past
//     Tj max) with a loop gain there at or above 1 (no fixed point below
//     it: the power rises faster than the heat can leave). RunawayTj is
//     the junction temperature from which the steps stopped shrinking
//     (where the local loop gain reached 1), else the last iterate. The
//     case's operating point is then solved with that junction at its Tj
//     max (the power it dissipates when it reaches its rating).
//   - stable: otherwise. When the iteration was stopped at the cap with a
//     loop gain g < 1 there, the fixed point lies beyond it and is
//     estimated by one Newton step on Tj − Ta − P·RthJA,
//     T* = T + d/(1 − g), d the unrelaxed step at T. A stable point above
//     Tj max is an overtemperature (fact over_temperature), not a runaway.

import (
	"math"

	"github.com/biaslint/biaslint/checks/solve"
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
	// gainStep is the junction-temperature step, K, of the first-order
	// loop gain: small enough that it gives the derivative dP/dTj.
	gainStep = 1e-2
	// thermalCapMargin is how far past its Tj max a junction is followed,
	// K; beyond it the fixed point (if any) is estimated, not solved, since
	// the device equations are far outside any data sheet there.
	thermalCapMargin = 150.0
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
	// tj is the stable junction temperature, C, where it differs from
	// the last solved one (estimated beyond the cap); NaN elsewhere.
	tj []float64
	// unsettled is true when the iteration reached thermalMaxIter.
	unsettled bool
}

// solveThermal solves one case on sys: with the electro-thermal iteration
// when sp.thermal, else once with the transistors at sp.heldTemps.
func (a *analyzer) solveThermal(sys *solve.System, sp *caseSpec, guess *solve.Result) (*solve.Result, thermalOut, error) {
	base := solve.Options{Temp: solve.Temp(sp.temp), Guess: guess, Open: opened(sp), Context: a.opt.Context}
	if !sp.thermal {
		base.DeviceTemp = sp.heldTemps
		res, err := sys.Solve(base)
		return res, thermalOut{}, err
	}
	n := len(a.bjts)
	out := thermalOut{gain: make([]float64, n), runTj: make([]float64, n), runaway: make([]bool, n), tj: make([]float64, n)}
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
		T[j], relax[j], gainAt[j], out.tj[j] = sp.temp, 1, math.NaN(), math.NaN()
	}
	// One map of junction temperatures, rewritten for each solve (a solve
	// reads it and keeps nothing of it), and one slice of powers.
	tmap := make(map[string]float64, n)
	temps := func(T []float64) map[string]float64 {
		for j := range a.bjts {
			tmap[a.bjtKey[j]] = T[j]
		}
		return tmap
	}
	pw := make([]float64, n)
	power := func(res *solve.Result) []float64 {
		clear(pw)
		for i := range res.BJTs {
			if j, ok := a.bjtAt(res.BJTs[i].Name, i); ok {
				pw[j] = res.BJTs[i].Power
			}
		}
		return pw
	}
	var res *solve.Result
	// capped marks the junctions whose next iterate passed the cap; d
	// holds their unrelaxed step there.
	capped := make([]bool, n)
	d := make([]float64, n)
	// tAt is the temperature d was taken at; d1, t1 the evaluation before
	// (for a secant loop gain where the measured one fails).
	tAt, d1, t1 := make([]float64, n), make([]float64, n), make([]float64, n)
	settled, stopped := false, false
	var prevT []float64
	// spare is the result of the iteration before last, which the next
	// solve writes into (solve.Options.Into): the loop holds two results,
	// not one per step. Only results this loop made go there, never guess.
	var spare *solve.Result
	for it := 0; it < thermalMaxIter && !settled && !stopped; it++ {
		opt := base
		opt.DeviceTemp, opt.Into = temps(T), spare
		if res != nil {
			opt.Guess = res
		}
		r, err := sys.Solve(opt)
		if err != nil {
			hot := false
			for j := range T {
				hot = hot || T[j] > tjmax[j]
			}
			if res == nil || !hot {
				return nil, out, err
			}
			// Past Tj max the circuit no longer solves: the junctions stay
			// at the last temperatures that did.
			for j := range T {
				capped[j] = capped[j] || T[j] > tjmax[j]
			}
			T, stopped = prevT, true
			break
		}
		spare, res = res, r
		p := power(res)
		next := append([]float64(nil), T...)
		biggest := 0.0
		for j := range a.bjts {
			if math.IsNaN(rth[j]) {
				continue
			}
			if it > 0 {
				d1[j], t1[j] = d[j], tAt[j]
			}
			d[j], tAt[j] = sp.temp+p[j]*rth[j]-T[j], T[j]
			dj := d[j]
			if it > 0 && step[j] != 0 {
				if dj*step[j] < 0 {
					relax[j] /= 2
				} else if math.IsNaN(gainAt[j]) && math.Abs(dj) >= math.Abs(step[j]) {
					gainAt[j] = T[j]
				}
			}
			dj *= relax[j]
			step[j] = dj
			next[j] = T[j] + dj
			biggest = math.Max(biggest, math.Abs(dj))
			if next[j] > tjmax[j]+thermalCapMargin {
				capped[j], stopped = true, true
			}
		}
		if stopped {
			break
		}
		prevT, T = T, next
		settled = biggest < thermalTol
	}
	out.unsettled = !settled && !stopped
	a.loopGains(sys, base, T, res, rth, out.gain, temps, power)
	for j := range a.bjts {
		if math.IsNaN(out.gain[j]) && capped[j] && tAt[j] != t1[j] {
			// The circuit no longer solves at the last temperatures: the
			// secant of the last two steps, g = 1 + Δd/ΔT.
			out.gain[j] = 1 + (d[j]-d1[j])/(tAt[j]-t1[j])
		}
		g := out.gain[j]
		switch {
		case math.IsNaN(rth[j]) || rth[j] == 0:
		case capped[j] && !(g < 1), !capped[j] && g >= 1:
			out.runaway[j] = true
			out.runTj[j] = gainAt[j]
			if math.IsNaN(gainAt[j]) {
				out.runTj[j] = T[j]
			}
		case capped[j]:
			// Stable beyond the cap: one Newton step on the fixed point.
			out.tj[j] = T[j] + d[j]/(1-g)
		}
	}
	// A junction that runs away has no operating temperature: its facts
	// are taken where it reaches its Tj max (the others where they are).
	Th := append([]float64(nil), T...)
	hot := false
	for j := range a.bjts {
		if out.runaway[j] && T[j] > tjmax[j] {
			Th[j], hot = tjmax[j], true
		}
	}
	if hot {
		opt := base
		opt.DeviceTemp, opt.Guess = temps(Th), res
		if r, err := sys.Solve(opt); err == nil {
			res = r
		}
	}
	return res, out, nil
}

// loopGains sets gain[j] to the thermal loop gain dP/dTj * RthJA of every
// transistor at junction temperatures T (res solved there), by a forward
// difference of gainStep with the other junctions held; NaN where RthJA
// is unknown or a solve fails, 0 where RthJA is 0.
func (a *analyzer) loopGains(sys *solve.System, base solve.Options, T []float64, res *solve.Result, rth, gain []float64,
	temps func([]float64) map[string]float64, power func(*solve.Result) []float64) {
	// Loop gains at the final junction temperatures.
	opt := tightOptions(base)
	opt.DeviceTemp, opt.Guess = temps(T), res
	r0, dp, err := sys.SolveGains(opt, gainStep)
	if err != nil {
		for j := range gain {
			gain[j] = math.NaN()
		}
		return
	}
	// dp is in the order of the result's transistors.
	for k := range r0.BJTs {
		j, ok := a.bjtAt(r0.BJTs[k].Name, k)
		if !ok || k >= len(dp) {
			continue
		}
		switch {
		case math.IsNaN(rth[j]):
			gain[j] = math.NaN()
		case rth[j] != 0:
			gain[j] = dp[k] * rth[j]
		}
	}
}
