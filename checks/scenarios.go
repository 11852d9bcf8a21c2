package checks

// This file derives the scenarios from the netlist; no extra input is
// needed.
//
//   - Drive levels: every PULSE and EXP source at both of its levels, every
//     PWL source at its lowest and highest value ("VRELAY high", "VRELAY
//     low"), one source at a time, the others at their DC values; with two
//     or more such sources also all of them high and all low together. A
//     level equal to the source's DC value is the nominal case itself and
//     is not repeated. Drive levels are DC states: capacitors are open, so
//     a DC- and a capacitor-coupled drive are judged alike.
//   - Opened drives: every PULSE, PWL or EXP source, every source
//     annotated driver=yes (a controller pin that floats at reset), and
//     every plain DC source that stands for a controller pin driving a
//     switch (see graph.pinNet), that drives a base is opened ("VRELAY open"): a voltage source is replaced
//     by a 1 TOhm leak, a current source set to zero. floating-base is then
//     judged by solving: the Thevenin resistance the base sees.
//   - Signal swing: every SIN source, and every AC source with an
//     amplitude annotation, is swept quasi-statically over one period in
//     the mid-band large-signal view, in which every capacitor holds its
//     operating-point voltage (it is replaced by a voltage source at that
//     voltage) and every junction its operating-point temperature (a
//     signal period is far shorter than any thermal time constant). The
//     period is sampled at swingPoints phases; equal levels are solved
//     once, and the zero crossings, where the view is the nominal
//     circuit, are the nominal case. Cases are "VSIG +peak", "VSIG -peak"
//     and "VSIG at +14.1 mV".
//
// Scenarios are solved at the nominal corner only; the corners (corners.go)
// are applied to the nominal case and to each drive-level scenario, not to
// opened drives and swing points. This keeps the case count linear in the
// number of sources and transistors instead of the product of every
// choice, and still puts every worst-case corner under every DC state the
// board's inputs can take.

import (
	"math"
	"sort"

	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
)

// swingPoints is the number of phases a swing period is sampled at: 16
// gives the peaks, the zero crossings and three levels between on each
// side.
const swingPoints = 16

// clipSteps is the number of bisection steps that locate the input level
// where a stage leaves forward-active: the level is found to 2^-clipSteps
// of the bracketing step.
const clipSteps = 14

// levelsOf returns the two levels of a PULSE or EXP source and the extremes
// of a PWL source (low, high), or false.
func levelsOf(w *netlist.Waveform) (lo, hi float64, ok bool) {
	if w == nil {
		return 0, 0, false
	}
	switch w.Kind {
	case netlist.WavePulse, netlist.WaveExp:
		if len(w.Args) < 2 {
			return 0, 0, false
		}
		return math.Min(w.Args[0], w.Args[1]), math.Max(w.Args[0], w.Args[1]), true
	case netlist.WavePWL:
		if len(w.Args) < 2 {
			return 0, 0, false
		}
		lo, hi = math.Inf(1), math.Inf(-1)
		for i := 1; i < len(w.Args); i += 2 {
			lo, hi = math.Min(lo, w.Args[i]), math.Max(hi, w.Args[i])
		}
		return lo, hi, true
	}
	return 0, 0, false
}

// sameSettings reports whether two setting lists set the same values.
func sameSettings(x, y []setting) bool {
	if len(x) != len(y) {
		return false
	}
	m := map[string]float64{}
	for _, s := range x {
		m[s.key] = s.v
	}
	for _, s := range y {
		if v, ok := m[s.key]; !ok || v != s.v {
			return false
		}
	}
	return true
}

// levelScenarios lists the drive-level scenarios.
func (a *analyzer) levelScenarios() []caseSpec {
	var out []caseSpec
	var lows, highs []setting
	n := 0
	add := func(name string, set []setting) {
		var eff []setting
		for _, s := range set {
			if s.v != a.nominal[s.key] {
				eff = append(eff, s)
			}
		}
		if len(eff) == 0 {
			return
		}
		for _, o := range out {
			if sameSettings(o.set, eff) {
				return
			}
		}
		out = append(out, caseSpec{scenario: name, kind: KindLevel, set: eff, ambient: a.ambient,
			temp: a.temp, thermal: a.opt.Thermal, guess: 0})
	}
	for _, el := range a.c.Elements {
		if (el.Kind != 'V' && el.Kind != 'I') || el.Source == nil {
			continue
		}
		lo, hi, ok := levelsOf(el.Source.Wave)
		if !ok {
			continue
		}
		k := netlist.Key(el.Name)
		n++
		add(el.Name+" high", []setting{{k, hi}})
		add(el.Name+" low", []setting{{k, lo}})
		lows, highs = append(lows, setting{k, lo}), append(highs, setting{k, hi})
	}
	if n >= 2 {
		add("all drives high", highs)
		add("all drives low", lows)
	}
	return out
}

// openScenarios lists the opened-drive scenarios.
func (a *analyzer) openScenarios() []caseSpec {
	drives := map[string]bool{}
	for j := range a.tmpl {
		for _, d := range a.tmpl[j].Drives {
			drives[netlist.Key(d)] = true
		}
	}
	var out []caseSpec
	for _, el := range a.c.Elements {
		if (el.Kind != 'V' && el.Kind != 'I') || !drives[netlist.Key(el.Name)] {
			continue
		}
		_, _, lvl := levelsOf(el.Source.Wave)
		d := a.board.Device(el.Name)
		if !lvl && (d == nil || !d.Driver) && !a.pinOfSwitch(el) {
			continue
		}
		sp := caseSpec{scenario: el.Name + " open", kind: KindOpen, ambient: a.ambient, temp: a.temp,
			thermal: a.opt.Thermal, open: el, guess: 0, group: -1}
		if el.Kind == 'I' {
			sp.set = []setting{{netlist.Key(el.Name), 0}}
		}
		out = append(out, sp)
	}
	return out
}

// pinOfSwitch reports whether source el is a plain DC source standing for
// a controller pin (see graph.pinNet) that drives a switch's base: a pin
// lets go at reset like any other drive.
func (a *analyzer) pinOfSwitch(el *netlist.Element) bool {
	if len(el.Nodes) < 2 || (a.g.pin[nodeKey(el.Nodes[0])] != el && a.g.pin[nodeKey(el.Nodes[1])] != el) {
		return false
	}
	for j := range a.tmpl {
		if a.tmpl[j].Role == RoleSwitch && drivenBy(&a.tmpl[j], el.Name) {
			return true
		}
	}
	return false
}

// swingSource is one swept source.
type swingSource struct {
	el *netlist.Element
	// centre is the DC value, peak the amplitude (V).
	centre, peak float64
	// levels are the deviations solved, in case order; first is the index
	// of the first case.
	levels []float64
	first  int
	// gain is dV(collector)/dV(source) per transistor at the centre; clip
	// the level where each leaves forward-active (NaN when it does not)
	// and region where it goes.
	gain, clip []float64
	region     []string
	// peakV is the largest |V| of each net over the sweep, by net key.
	peakV map[string]float64
}

// swingSources lists the swept sources with their levels.
func (a *analyzer) swingSources() []*swingSource {
	var out []*swingSource
	for _, el := range a.c.Elements {
		if el.Kind != 'V' || el.Source == nil {
			continue
		}
		peak := math.NaN()
		if w := el.Source.Wave; w != nil && w.Kind == netlist.WaveSin && len(w.Args) >= 2 {
			peak = math.Abs(w.Args[1])
		} else if d := a.board.Device(el.Name); el.Source.HasAC && d != nil && !math.IsNaN(d.Amplitude) {
			peak = d.Amplitude
		}
		if !(peak > 0) || math.IsInf(peak, 0) {
			continue
		}
		s := &swingSource{el: el, centre: el.Source.DC, peak: peak}
		seen := map[float64]bool{0: true}
		var pos []float64
		for k := 0; k < swingPoints; k++ {
			v := peak * math.Sin(2*math.Pi*float64(k)/swingPoints)
			v = math.Round(v/peak*1e12) / 1e12 * peak // sin(pi) is not exactly 0
			if !seen[v] && v > 0 {
				pos = append(pos, v)
			}
			seen[v] = true
		}
		sort.Float64s(pos)
		// Case order: +peak, -peak, then the levels between from the
		// largest, positive before negative.
		s.levels = append(s.levels, peak, -peak)
		for i := len(pos) - 1; i >= 0; i-- {
			if pos[i] < peak {
				s.levels = append(s.levels, pos[i], -pos[i])
			}
		}
		out = append(out, s)
	}
	return out
}

// levelName names a swing case.
func (s *swingSource) levelName(v float64) string {
	switch v {
	case s.peak:
		return s.el.Name + " +peak"
	case -s.peak:
		return s.el.Name + " -peak"
	}
	sign := "+"
	if v < 0 {
		sign = "-"
	}
	return s.el.Name + " at " + sign + units.Format(math.Abs(v), "V")
}

// swingCircuit returns c with every capacitor replaced by a voltage source
// at its voltage in res (the mid-band large-signal view). A capacitor whose
// nets are already joined by voltage sources, inductors, shorts or other
// held capacitors stays open: holding it would add nothing and close a
// loop of voltage sources.
func swingCircuit(c *netlist.Circuit, res *solve.Result) *netlist.Circuit {
	parent := map[string]string{}
	join := func(x, y string) bool {
		rx, ry := findRoot(parent, nodeKey(x)), findRoot(parent, nodeKey(y))
		if rx == ry {
			return false
		}
		parent[rx] = ry
		return true
	}
	gnd := func(n string) string {
		if netlist.IsGround(n) {
			return netlist.Ground
		}
		return n
	}
	for _, e := range c.Elements {
		switch {
		case (e.Kind == 'V' || e.Kind == 'L' || e.Kind == 'E' || e.Kind == 'H') && len(e.Nodes) >= 2,
			e.Kind == 'R' && e.Value == 0 && len(e.Nodes) == 2:
			join(gnd(e.Nodes[0]), gnd(e.Nodes[1]))
		}
	}
	sc := *c
	sc.Elements = make([]*netlist.Element, 0, len(c.Elements))
	for _, e := range c.Elements {
		if e.Kind == 'C' && len(e.Nodes) == 2 && join(gnd(e.Nodes[0]), gnd(e.Nodes[1])) {
			v := res.V(nodeKey(e.Nodes[0])) - res.V(nodeKey(e.Nodes[1]))
			e = &netlist.Element{Kind: 'V', Name: e.Name, Nodes: e.Nodes, Pos: e.Pos, Chain: e.Chain,
				Source: &netlist.Source{DC: v, HasDC: true}}
		}
		sc.Elements = append(sc.Elements, e)
	}
	return &sc
}

// runSwings sweeps every swing source, one job per source (the sweep warm-
// starts each level from the one before, so it runs in order), appending
// the swing cases.
func (a *analyzer) runSwings(specs []caseSpec, outs []caseOut) ([]caseSpec, []caseOut, []*swingSource, error) {
	srcs := a.swingSources()
	if len(srcs) == 0 {
		return specs, outs, nil, nil
	}
	var held map[string]float64
	for _, op := range outs[0].res.BJTs {
		if held == nil {
			held = map[string]float64{}
		}
		held[netlist.Key(op.Name)] = op.Temp
	}
	for _, s := range srcs {
		s.first = len(specs)
		var more []caseSpec
		for _, v := range s.levels {
			more = append(more, caseSpec{scenario: s.levelName(v), kind: KindSwing, ambient: a.ambient,
				temp: a.temp, heldTemps: held, guess: -1, group: -1, swing: s, level: v,
				set: []setting{{netlist.Key(s.el.Name), s.centre + v}}})
		}
		specs, outs = a.add(specs, outs, more)
	}
	if err := a.fits(len(specs)); err != nil {
		return nil, nil, nil, err
	}
	nominal := outs[0].res
	errs := make([]error, len(srcs))
	a.pool.expect(len(specs) - srcs[0].first)
	a.pool.each(len(srcs), func(w *worker, i int) {
		errs[i] = w.sweep(srcs[i], specs, outs, nominal)
		a.pool.tick(len(srcs[i].levels))
	})
	// A sweep that fails leaves its levels without a solution: those cases
	// are not judged (the error says why), the others are.
	for i, err := range errs {
		if err == nil {
			continue
		}
		for k := range srcs[i].levels {
			if o := &outs[srcs[i].first+k]; o.res == nil {
				o.err = err
			}
		}
	}
	return specs, outs, srcs, nil
}

// sweep solves one source's swing cases and finds where each linear stage
// clips.
func (w *worker) sweep(s *swingSource, specs []caseSpec, outs []caseOut, nominal *solve.Result) error {
	if w.err != nil {
		return w.err
	}
	a := w.a
	w.setHFE(0)
	if w.swing == nil {
		sys, err := solve.Prepare(swingCircuit(w.circ, nominal))
		if err != nil {
			return err
		}
		w.swing = sys
	}
	key := netlist.Key(s.el.Name)
	held := specs[s.first].heldTemps
	at := func(v float64, guess *solve.Result, tight bool) (*solve.Result, error) {
		if err := w.apply(w.swing, &w.swingDirty, []setting{{key, s.centre + v}}); err != nil {
			return nil, err
		}
		o := solve.Options{Temp: solve.Temp(a.temp), DeviceTemp: held, Guess: guess, Context: a.opt.Context}
		if tight {
			o = tightOptions(o)
		}
		return w.swing.Solve(o)
	}
	centre, err := at(0, nominal, true)
	if err != nil {
		return err
	}
	// Small-signal gain at the centre, by a central difference.
	d := s.peak * 1e-2
	up, err1 := at(d, centre, true)
	dn, err2 := at(-d, centre, true)
	n := len(a.bjts)
	s.gain, s.clip, s.region = make([]float64, n), make([]float64, n), make([]string, n)
	for j, el := range a.bjts {
		s.clip[j] = math.NaN()
		if err1 == nil && err2 == nil {
			c := nodeKey(el.Nodes[0])
			s.gain[j] = (up.V(c) - dn.V(c)) / (2 * d)
		}
	}
	// The sweep, outward from the centre on each side.
	byLevel := map[float64]*solve.Result{0: centre}
	for _, sign := range []float64{1, -1} {
		var side []float64
		for _, v := range s.levels {
			if v*sign > 0 {
				side = append(side, v)
			}
		}
		sort.Slice(side, func(i, j int) bool { return math.Abs(side[i]) < math.Abs(side[j]) })
		prev := centre
		for _, v := range side {
			r, err := at(v, prev, false)
			if err != nil {
				return err
			}
			byLevel[v], prev = r, r
		}
	}
	for k, v := range s.levels {
		outs[s.first+k] = caseOut{res: byLevel[v]}
	}
	s.peakV = map[string]float64{}
	for _, r := range byLevel {
		for _, nv := range r.Nodes {
			k := nodeKey(nv.Name)
			s.peakV[k] = math.Max(s.peakV[k], math.Abs(nv.V))
		}
	}
	// Where each linear stage, active at the centre, first leaves
	// forward-active on each side: bisection between the last active level
	// and the first that is not.
	region := func(r *solve.Result, name string) string {
		for _, op := range r.BJTs {
			if netlist.Key(op.Name) == netlist.Key(name) {
				return string(op.Region)
			}
		}
		return ""
	}
	for j, el := range a.bjts {
		if !a.tmpl[j].Linear || region(centre, el.Name) != "active" {
			continue
		}
		for _, sign := range []float64{1, -1} {
			lo, hi := 0.0, math.NaN()
			var side []float64
			for _, v := range s.levels {
				if v*sign > 0 {
					side = append(side, v)
				}
			}
			sort.Slice(side, func(i, j int) bool { return math.Abs(side[i]) < math.Abs(side[j]) })
			for _, v := range side {
				if region(byLevel[v], el.Name) != "active" {
					hi = v
					break
				}
				lo = v
			}
			if math.IsNaN(hi) {
				continue
			}
			guess := byLevel[lo]
			for it := 0; it < clipSteps; it++ {
				mid := (lo + hi) / 2
				r, err := at(mid, guess, false)
				if err != nil {
					break
				}
				if region(r, el.Name) == "active" {
					lo, guess = mid, r
				} else {
					hi = mid
				}
			}
			if math.IsNaN(s.clip[j]) || math.Abs(hi) < math.Abs(s.clip[j]) {
				s.clip[j] = hi
				s.region[j] = region(byLevel[side[len(side)-1]], el.Name)
				if r, err := at(hi, guess, false); err == nil {
					s.region[j] = region(r, el.Name)
				}
			}
		}
	}
	return nil
}
