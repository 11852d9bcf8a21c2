package checks

// This file computes the facts that need several cases, after every case
// is solved: the IC spread over the hFE corners, the opened-drive
// verdicts, the swing's clipping facts and peak voltages, and the notes
// about electro-thermal iterations that did not settle.

import (
	"math"

	"github.com/biaslint/biaslint/netlist"
)

// crossCase writes the cross-case facts into the cases.
func (a *analyzer) crossCase(an *Analysis, specs []caseSpec, swings []*swingSource) {
	n := len(a.bjts)
	// at finds transistor j's facts in case ci: a case lists its
	// transistors in the solver's order, which is the circuit's, so the
	// slot j is tried first and the list searched only when it differs.
	at := func(ci, j int) *Transistor {
		cs := &an.Cases[ci]
		if j < len(cs.Transistors) && cs.Transistors[j].TransistorFixed == a.tmpl[j].TransistorFixed {
			return &cs.Transistors[j]
		}
		for k := range cs.Transistors {
			if cs.Transistors[k].TransistorFixed == a.tmpl[j].TransistorFixed {
				return &cs.Transistors[k]
			}
		}
		return nil
	}
	// Opened drives.
	opened := make([]bool, n)
	for i := range specs {
		if specs[i].open == nil {
			continue
		}
		for j := range a.bjts {
			if drivenBy(&a.tmpl[j], specs[i].open.Name) {
				opened[j] = true
			}
		}
	}
	// hFE spread per group.
	type pair struct{ lo, hi int }
	hfe := map[int]*pair{}
	for i := range specs {
		sp := &specs[i]
		if sp.kind != KindCorner || sp.hfe == 0 {
			continue
		}
		p := hfe[sp.group]
		if p == nil {
			p = &pair{-1, -1}
			hfe[sp.group] = p
		}
		if sp.hfe < 0 {
			p.lo = i
		} else {
			p.hi = i
		}
	}
	for j := range a.tmpl {
		a.tmpl[j].OpenJudged = opened[j] // shared by every case
	}
	for g, p := range hfe {
		if p.lo < 0 || p.hi < 0 {
			continue
		}
		for j := range a.bjts {
			t, lo, hi := at(g, j), at(p.lo, j), at(p.hi, j)
			if t == nil || lo == nil || hi == nil || a.hfeFactor[j] == [2]float64{} {
				continue
			}
			t.BetaJudged = true
			t.ICHFEMin, t.ICHFEMax = lo.IC, hi.IC
			if t.IC != 0 {
				t.ICBetaSpread = math.Abs(hi.IC-lo.IC) / math.Abs(t.IC)
			}
		}
	}
	// Swing: clipping facts and peaks.
	worst := make([]*swingSource, n)
	for _, s := range swings {
		for j := range a.bjts {
			if s.clip == nil || math.IsNaN(s.clip[j]) {
				continue
			}
			if w := worst[j]; w == nil || s.missing(j) > w.missing(j) {
				worst[j] = s
			}
		}
	}
	// One Clipping per transistor and source, shared by the cases that
	// show it; the rest share one record of no clipping.
	none := &Clipping{}
	clips := map[*swingSource][]*Clipping{}
	clipping := func(s *swingSource, j int) *Clipping {
		if clips[s] == nil {
			clips[s] = make([]*Clipping, n)
		}
		if c := clips[s][j]; c != nil {
			return c
		}
		c := &Clipping{Clips: true, ClipSource: s.el.Name, ClipLevel: s.clip[j], ClipRegion: s.region[j],
			SwingPeak: s.peak, SwingGain: s.gain[j], HeadroomMissing: s.missing(j)}
		clips[s][j] = c
		return c
	}
	for ci := range an.Cases {
		cs := &an.Cases[ci]
		src := specs[ci].swing
		for k := range cs.Transistors {
			t := &cs.Transistors[k]
			t.Clipping = none
			j := a.bjtIdx[netlist.Key(t.Name)]
			s := worst[j]
			if src != nil {
				s = src
			}
			if s != nil && s.clip != nil && !math.IsNaN(s.clip[j]) {
				t.Clipping = clipping(s, j)
			}
		}
		if src != nil {
			for k := range cs.Nodes {
				nd := &cs.Nodes[k]
				nd.Peak = math.Max(nd.Peak, src.peakV[nodeKey(nd.Name)])
			}
		}
	}
}

// missing is the collector headroom transistor j lacks in the swing, V.
func (s *swingSource) missing(j int) float64 {
	if s.clip == nil || math.IsNaN(s.clip[j]) {
		return 0
	}
	return math.Max(0, s.peak-math.Abs(s.clip[j])) * math.Abs(s.gain[j])
}
