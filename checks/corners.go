package checks

// This file makes the worst-case corners. Each is applied to the nominal
// case and to every drive-level scenario (its "group"), one kind at a time:
//
//   - "hfe min", "hfe max": every transistor's BF is set so that its hFE
//     (IC/IB at its nominal operating point, or at IC = 1 mA, VCB = 1 V
//     when it is not forward-active there) equals the part's hfemin or
//     hfemax. At fixed junction voltages the Gummel-Poon base current is
//     IB = Ibe/BF + (leakage terms), and IC does not depend on BF, so the
//     BF giving hFE h is BF * (Ibe/BF) / (IC/h - leakage), exact at that
//     point (see hfeFactors).
//   - "ambient MIN C", "ambient MAX C": the ambient range; the devices are
//     solved at that temperature (or at their junction temperature with
//     the electro-thermal solve), with the published (Nagel 1975) scaling.
//   - "supplies -5 %", "supplies +5 %": every rail (a DC voltage source
//     that is not a drive) at its value times 1 -/+ its tolerance.
//   - "resistors worst Q1 IC-high" and the like: extreme-value analysis.
//     First-order sensitivities of each transistor's IC (and, for a
//     switch, its forced beta IC/IB) to each resistor are taken by the
//     direct method on the factorisation of the group's solution (as if
//     the resistor moved by sensitivityStep of its value); each
//     resistor then goes to the end of its tolerance that moves the
//     objective the wrong way, and the corner is solved (the verification
//     solve). Objectives: IC high for every conducting transistor, IC low
//     for a linear stage, drive weak (forced beta high) for a switch.
//     Corners with the same resistor values are solved once, named after
//     the first objective that asked for them.
//   - "resistors worst R3 power": the same analysis with each resistor's
//     own dissipation as the objective, so a resistor that exceeds its
//     rating only at the end of its own tolerance (a resistor across a
//     rail at -5 %) is found. The sensitivity solves are shared with the
//     transistor objectives; a corner is made only for a resistor whose
//     first-order worst power reaches powerScreen of its rating, at most
//     maxPowerCorners per group, the nearest to their rating first.
//
// Corners are single-factor: not a product of every kind, which would
// multiply the case count without telling a reviewer which tolerance
// hurts.

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

// sensitivityStep is the relative resistor step of the first-order
// sensitivities.
const sensitivityStep = 1e-4

// powerScreen is the share of its power rating that a resistor's
// first-order worst-case dissipation must reach for it to get a power
// corner of its own; maxPowerCorners bounds those corners per group.
const (
	powerScreen     = 0.5
	maxPowerCorners = 20
)

// conductingIC is the forward collector current above which a transistor
// counts as conducting for the resistor corners, A (the default rule set's
// linear_ic_min).
const conductingIC = 1e-6

// referenceIC is the collector current at which hFE is taken for a
// transistor that is not forward-active at its nominal point, A.
const referenceIC = 1e-3

// tolerance returns an element's relative tolerance.
func (a *analyzer) tolerance(el *netlist.Element, def float64) float64 {
	if d := a.board.Device(el.Name); d != nil && !math.IsNaN(d.Tol) {
		return d.Tol
	}
	if def > 0 {
		return def
	}
	return DefaultTolerance
}

// hfeFactors computes each transistor's BF multipliers for the hFE
// corners from the nominal solution.
func (a *analyzer) hfeFactors(res *solve.Result) {
	a.hfeFactor = make([][2]float64, len(a.bjts))
	ops := map[string]solve.BJTOp{}
	for _, op := range res.BJTs {
		ops[netlist.Key(op.Name)] = op
	}
	dopt := device.Options{TNom: a.c.Options.TNom, GMin: a.c.Options.GMin}
	if !(dopt.GMin > 0) {
		dopt.GMin = solve.DefaultGMin
	}
	for j, el := range a.bjts {
		t := &a.tmpl[j]
		lo, hi := t.Rating.HFEMin, t.Rating.HFEMax
		op, ok := ops[netlist.Key(el.Name)]
		m := a.c.Models[netlist.Key(el.Model)]
		if m == nil {
			m = a.c.Models[el.Model]
		}
		if !ok || m == nil || !(lo > 0) || !(hi >= lo) || math.IsInf(hi, 0) {
			continue
		}
		area := el.Area
		if area == 0 {
			area = 1
		}
		two := *m
		two.Params = map[string]float64{}
		for k, v := range m.Params {
			two.Params[k] = v
		}
		two.Params["BF"] = 2 * t.GP.BF
		b1, err1 := device.NewBJT(m, area, op.Temp, dopt)
		b2, err2 := device.NewBJT(&two, area, op.Temp, dopt)
		if err1 != nil || err2 != nil {
			continue
		}
		sg := b1.Polarity.Sign()
		vbe, vbc := op.JunctionVBE, op.JunctionVBC
		if op.Region != device.Active || sg*op.IC < conductingIC {
			// Reference point: VBC = -1 V, VBE for IC = referenceIC.
			vbc = -sg
			l, h := 0.0, 1.5
			for i := 0; i < 60; i++ {
				mid := (l + h) / 2
				if sg*b1.Eval(sg*mid, vbc).IC < referenceIC*area {
					l = mid
				} else {
					h = mid
				}
			}
			vbe = sg * (l + h) / 2
		}
		e1, e2 := b1.Eval(vbe, vbc), b2.Eval(vbe, vbc)
		ic := sg * e1.IC
		ideal := 2 * sg * (e1.IB - e2.IB) // Ibe/BF
		other := sg*e1.IB - ideal
		for k, h := range []float64{lo, hi} {
			want := ic/h - other
			if !(ideal > 0) || !(want > 0) || !(ic > 0) {
				a.notes.Notef(el.Pos, "%s: hFE %g cannot be reached by BF at its operating point (leakage base current too large); its hFE corner keeps BF", el.Name, h)
				continue
			}
			a.hfeFactor[j][k] = ideal / want
		}
	}
}

// corners lists every corner of every group.
func (a *analyzer) corners(specs []caseSpec, outs []caseOut, groups []int) ([]caseSpec, error) {
	var out []caseSpec
	hfe := false
	for _, f := range a.hfeFactor {
		hfe = hfe || f[0] > 0 || f[1] > 0
	}
	rng := DefaultAmbientRange
	if a.opt.AmbientRange != nil {
		rng = *a.opt.AmbientRange
	}
	var rails []*netlist.Element
	for _, el := range a.c.Elements {
		if el.Kind == 'V' && !isDriveSource(el, a.board) && el.Source != nil && el.Source.DC != 0 {
			rails = append(rails, el)
		}
	}
	supplyName := func(sign string) string {
		t := a.tolerance(rails[0], a.opt.Tolerances.Supply)
		for _, r := range rails[1:] {
			if a.tolerance(r, a.opt.Tolerances.Supply) != t {
				if sign == "-" {
					return "supplies low"
				}
				return "supplies high"
			}
		}
		return fmt.Sprintf("supplies %s%g %%", sign, math.Round(t*1e4)/100)
	}
	sens := a.sensitivities(specs, outs, groups)
	for gi, g := range groups {
		base := specs[g]
		mk := func(corner string) caseSpec {
			sp := base
			sp.corner, sp.kind, sp.guess, sp.group = corner, KindCorner, g, g
			sp.set = append([]setting(nil), base.set...)
			return sp
		}
		if hfe {
			for _, h := range []int{-1, 1} {
				name := "hfe min"
				if h > 0 {
					name = "hfe max"
				}
				sp := mk(name)
				sp.hfe = h
				out = append(out, sp)
			}
		}
		for _, ta := range rng {
			if ta == a.ambient {
				continue
			}
			sp := mk("ambient " + fmt.Sprintf("%g", ta) + " C")
			sp.ambient, sp.temp = ta, ta
			out = append(out, sp)
		}
		if len(rails) > 0 {
			for _, sign := range []float64{-1, 1} {
				name := supplyName("+")
				if sign < 0 {
					name = supplyName("-")
				}
				sp := mk(name)
				for _, r := range rails {
					k := netlist.Key(r.Name)
					sp.set = setKey(sp.set, k, a.nominal[k]*(1+sign*a.tolerance(r, a.opt.Tolerances.Supply)))
				}
				out = append(out, sp)
			}
		}
		var seen [][]setting
		for _, c := range sens[gi] {
			sp := mk("resistors worst " + c.name)
			sp.set = append(sp.set, c.set...)
			dup := false
			for _, s := range seen {
				if sameSettings(s, c.set) {
					dup = true
				}
			}
			if dup || len(c.set) == 0 {
				continue
			}
			seen = append(seen, c.set)
			out = append(out, sp)
		}
	}
	return out, nil
}

// movedShare is the relative change of a transistor's collector current
// (or a change of region) by which a drive-level scenario counts as
// moving its operating point.
const movedShare = 1e-3

// moves reports whether transistor j's operating point differs between
// the nominal solution and another scenario's: its region, or its IC by
// more than movedShare (of IC, at least conductingIC).
func (a *analyzer) moves(nom, other *solve.Result, j int) bool {
	p, q := bjtOp(nom, a.bjts[j].Name, j), bjtOp(other, a.bjts[j].Name, j)
	if p == nil || q == nil {
		return true
	}
	return p.Region != q.Region || math.Abs(q.IC-p.IC) > movedShare*math.Max(math.Abs(p.IC), conductingIC)
}

// bjtOp finds transistor name in a result: at index j when the result
// lists the transistors in circuit order (it does), else by a search.
func bjtOp(r *solve.Result, name string, j int) *solve.BJTOp {
	if j < len(r.BJTs) && netlist.Key(r.BJTs[j].Name) == netlist.Key(name) {
		return &r.BJTs[j]
	}
	for k := range r.BJTs {
		if netlist.Key(r.BJTs[k].Name) == netlist.Key(name) {
			return &r.BJTs[k]
		}
	}
	return nil
}

// setKey sets key to v in set.
func setKey(set []setting, key string, v float64) []setting {
	for i := range set {
		if set[i].key == key {
			set[i].v = v
			return set
		}
	}
	return append(set, setting{key, v})
}

// resistorCorner is one extreme-value corner: its objective's name and
// the resistor values.
type resistorCorner struct {
	name string
	set  []setting
}

// MaxSensitivityResistors bounds how many resistors the extreme-value
// analysis moves: each costs one solve per drive-level scenario. Past it,
// the resistors nearest the transistors (fewest elements away from a
// transistor terminal) are moved and the rest stay at nominal, with a note.
const MaxSensitivityResistors = 200

// nearestResistors keeps the MaxSensitivityResistors resistors of rs
// nearest a transistor terminal, in netlist order, and notes the cut.
func (a *analyzer) nearestResistors(rs []*netlist.Element, tol []float64) ([]*netlist.Element, []float64) {
	dist := map[string]int{}
	var queue []string
	for _, q := range a.bjts {
		for _, n := range q.Nodes[:3] {
			if k := nodeKey(n); !a.g.rail[k] {
				if _, ok := dist[k]; !ok {
					dist[k] = 0
					queue = append(queue, k)
				}
			}
		}
	}
	for len(queue) > 0 { // each net enters the queue once
		k := queue[0]
		queue = queue[1:]
		for _, e := range a.g.at[k] {
			for _, n := range e.Nodes {
				if m := nodeKey(n); !a.g.rail[m] {
					if _, ok := dist[m]; !ok {
						dist[m] = dist[k] + 1
						queue = append(queue, m)
					}
				}
			}
		}
	}
	far := func(e *netlist.Element) int {
		d := math.MaxInt
		for _, n := range e.Nodes {
			if v, ok := dist[nodeKey(n)]; ok && v < d {
				d = v
			}
		}
		return d
	}
	idx := make([]int, len(rs))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(i, j int) bool { return far(rs[idx[i]]) < far(rs[idx[j]]) })
	idx = idx[:MaxSensitivityResistors]
	sort.Ints(idx)
	keptR, keptT := make([]*netlist.Element, len(idx)), make([]float64, len(idx))
	for i, j := range idx {
		keptR[i], keptT[i] = rs[j], tol[j]
	}
	a.notes.Notef(netlist.Pos{File: a.c.File, Line: 1, Col: 1},
		"the resistor corners move the %d resistors nearest the transistors; %d more stay at their nominal values",
		MaxSensitivityResistors, len(rs)-MaxSensitivityResistors)
	return keptR, keptT
}

// sensitivities solves the first-order resistor sensitivities of every
// group and returns its extreme-value corners. A group whose sensitivities
// cannot be solved gets no resistor corners and a warning saying so; the
// other groups and every other corner are judged as usual.
func (a *analyzer) sensitivities(specs []caseSpec, outs []caseOut, groups []int) [][]resistorCorner {
	var rs []*netlist.Element
	var tol []float64
	for _, el := range a.c.Elements {
		if el.Kind == 'R' && len(el.Nodes) == 2 && el.Value != 0 {
			if t := a.tolerance(el, a.opt.Tolerances.Resistor); t > 0 {
				rs, tol = append(rs, el), append(tol, t)
			}
		}
	}
	out := make([][]resistorCorner, len(groups))
	if len(rs) == 0 || len(a.bjts) == 0 {
		// No transistor, no objective to push the resistors towards.
		return out
	}
	if len(rs) > MaxSensitivityResistors {
		rs, tol = a.nearestResistors(rs, tol)
	}
	n := len(a.bjts)
	// A drive-level group moves the resistors only for the transistors
	// whose operating point it changes: the others' worst resistor
	// corners are the nominal group's, and repeating them in every group
	// would make the case count grow as drives times transistors.
	feels := make([][]bool, len(groups))
	var active []int
	for gi, g := range groups {
		feels[gi] = make([]bool, n)
		any := false
		for j := range a.bjts {
			feels[gi][j] = gi == 0 || outs[g].res == nil || a.moves(outs[0].res, outs[g].res, j)
			any = any || feels[gi][j]
		}
		if any {
			active = append(active, gi)
		}
	}
	// Slot gi*(len(rs)+1)+0 holds group gi's tight base solve, +1+i the
	// group with resistor i moved by sensitivityStep of its value, to
	// first order (solve.System.SolveSensitivities: one solve and one
	// sparse triangular solve pair per resistor, not a Newton solve each).
	per := len(rs) + 1
	ic := make([][]float64, len(groups)*per)
	beta := make([][]float64, len(groups)*per)
	// pw[k][i] is the dissipation of resistor rs[i] in solve k, W.
	pw := make([][]float64, len(groups)*per)
	errs := make([]error, len(groups)*per)
	names := make([]string, len(rs))
	onNet := map[string][]int{} // the resistors of rs on each net
	for i, r := range rs {
		names[i] = r.Name
		for _, nd := range r.Nodes {
			onNet[nodeKey(nd)] = append(onNet[nodeKey(nd)], i)
		}
	}
	a.pool.each(len(active), func(w *worker, k int) {
		gi := active[k]
		k = gi * per
		sp := specs[groups[gi]]
		if w.err != nil {
			errs[k] = w.err
			return
		}
		if outs[groups[gi]].res == nil {
			errs[k] = errors.New("the case itself was not solved")
			return
		}
		w.setHFE(0)
		if err := w.apply(w.sys, &w.dirty, sp.set); err != nil {
			errs[k] = err
			return
		}
		held := map[string]float64{}
		for _, op := range outs[groups[gi]].res.BJTs {
			held[netlist.Key(op.Name)] = op.Temp
		}
		o := tightOptions(solve.Options{Temp: solve.Temp(sp.temp), DeviceTemp: held, Guess: outs[groups[gi]].res, Context: a.opt.Context})
		r, sens, dv, err := w.sys.SolveSensitivities(o, names)
		if err != nil {
			errs[k] = err
			return
		}
		ic0, ib0 := make([]float64, n), make([]float64, n)
		sg := make([]float64, n)
		ic[k], beta[k], pw[k] = make([]float64, n), make([]float64, n), make([]float64, len(rs))
		vr := make([]float64, len(rs)) // each resistor's voltage
		for m, el := range rs {
			vr[m] = r.V(nodeKey(el.Nodes[0])) - r.V(nodeKey(el.Nodes[1]))
			pw[k][m] = vr[m] * vr[m] / valueOf(&sp, netlist.Key(el.Name), el.Value)
		}
		for _, op := range r.BJTs {
			j := a.bjtIdx[netlist.Key(op.Name)]
			sg[j] = 1
			if op.Polarity == "pnp" {
				sg[j] = -1
			}
			ic0[j], ib0[j] = op.IC, op.IB
			ic[k][j] = sg[j] * op.IC
			beta[k][j] = op.IC / op.IB
		}
		for i := range rs {
			ic[k+1+i] = append([]float64(nil), ic[k]...)
			beta[k+1+i] = append([]float64(nil), beta[k]...)
			// The dissipations with resistor i moved: the resistors on the
			// nets it moves, to first order, and its own value.
			pw[k+1+i] = append([]float64(nil), pw[k]...)
			moved := map[int]bool{i: true}
			for key := range dv[i] {
				for _, m := range onNet[key] {
					moved[m] = true
				}
			}
			for m := range moved {
				el := rs[m]
				v := vr[m] + sensitivityStep*(dv[i][nodeKey(el.Nodes[0])]-dv[i][nodeKey(el.Nodes[1])])
				rv := valueOf(&sp, netlist.Key(el.Name), el.Value)
				if m == i {
					rv *= 1 + sensitivityStep
				}
				pw[k+1+i][m] = v * v / rv
			}
			for _, d := range sens[i] {
				j := a.bjtIdx[netlist.Key(r.BJTs[d.BJT].Name)]
				c, bb := ic0[j]+d.DIC*sensitivityStep, ib0[j]+d.DIB*sensitivityStep
				ic[k+1+i][j] = sg[j] * c
				beta[k+1+i][j] = c / bb
			}
		}
	})
	failed := make([]bool, len(groups))
	for k, err := range errs {
		if err == nil || failed[k/per] {
			continue
		}
		failed[k/per] = true
		pos, msg := errorPlace(err, a.c.File)
		a.notes.Warnf(pos, "the resistor corners of case %s are unjudged (every other case is judged): their sensitivities could not be solved: %s",
			rulesCaseName(&specs[groups[k/per]]), msg)
	}
	for _, gi := range active {
		if failed[gi] {
			continue
		}
		b := gi * per
		corner := func(j int, what string, obj [][]float64, up bool) {
			var set []setting
			for i, r := range rs {
				d := obj[b+1+i][j] - obj[b][j]
				if math.Abs(d) <= 1e-9*math.Abs(obj[b][j]) || math.IsNaN(d) {
					continue
				}
				sign := 1.0
				if (d < 0) == up {
					sign = -1
				}
				set = append(set, setting{netlist.Key(r.Name), r.Value * (1 + sign*tol[i])})
			}
			out[gi] = append(out[gi], resistorCorner{name: a.bjts[j].Name + " " + what, set: set})
		}
		for j := range a.bjts {
			if !feels[gi][j] || !(ic[b][j] > conductingIC) {
				continue
			}
			corner(j, "IC-high", ic, true)
			if a.tmpl[j].Role == RoleSwitch {
				corner(j, "drive-weak", beta, true)
			} else {
				corner(j, "IC-low", ic, false)
			}
		}
		out[gi] = append(out[gi], a.powerCorners(rs, tol, pw[b:b+per])...)
	}
	return out
}

// powerCorners returns the corners that push each resistor towards its own
// worst dissipation, from the powers pw of one group's sensitivity solves
// (pw[0] the base solve, pw[1+i] with resistor i moved): every resistor
// goes to the end of its tolerance that raises the objective's power. Only
// resistors whose first-order worst power, P + Σ|ΔP_i|/sensitivityStep·tol_i,
// reaches powerScreen of their rating get one, at most maxPowerCorners,
// nearest to their rating first.
func (a *analyzer) powerCorners(rs []*netlist.Element, tol []float64, pw [][]float64) []resistorCorner {
	type cand struct {
		j     int
		share float64
	}
	var cands []cand
	for j, el := range rs {
		p0 := pw[0][j]
		worst := p0
		for i := range rs {
			worst += math.Abs(pw[1+i][j]-p0) / sensitivityStep * tol[i]
		}
		rating := DefaultResistorPower
		if d := a.board.Device(el.Name); d != nil && !math.IsNaN(d.Power) {
			rating = d.Power
		}
		if share := worst / rating; share >= powerScreen && !math.IsNaN(share) {
			cands = append(cands, cand{j, share})
		}
	}
	sort.SliceStable(cands, func(x, y int) bool { return cands[x].share > cands[y].share })
	if len(cands) > maxPowerCorners {
		cands = cands[:maxPowerCorners]
	}
	sort.SliceStable(cands, func(x, y int) bool { return cands[x].j < cands[y].j })
	var out []resistorCorner
	for _, c := range cands {
		p0 := pw[0][c.j]
		var set []setting
		for i, r := range rs {
			d := pw[1+i][c.j] - p0
			if math.Abs(d) <= 1e-9*math.Abs(p0) || math.IsNaN(d) {
				continue
			}
			sign := 1.0
			if d < 0 {
				sign = -1
			}
			set = append(set, setting{netlist.Key(r.Name), r.Value * (1 + sign*tol[i])})
		}
		out = append(out, resistorCorner{name: rs[c.j].Name + " power", set: set})
	}
	return out
}
