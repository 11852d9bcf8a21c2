// Package fix computes resistor value changes that clear findings. For a
// finding whose related parts include resistors written as literal values,
// it searches the IEC 60063 E12 values, then the E24 values, for the one
// nearest the present value that clears the finding in every case and
// corner without raising a finding that was not there before, and it
// verifies each candidate by solving the whole circuit again (the Judge).
// Edits then replace only the value's text in the netlist file.
//
// The search assumes that, along one direction from the present value, a
// finding once cleared stays cleared (true of the bias rules: a smaller
// base resistor drives a switch harder, a larger collector resistor only
// pushes a stage further into saturation); it is bounded in solves, and a
// value is only ever proposed after a solve has shown that it works.
package fix

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
	"github.com/biaslint/biaslint/rules"
)

// E12 and E24 are the IEC 60063 preferred values of one decade.
var (
	E12 = []float64{1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2}
	E24 = []float64{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
		3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1}
)

// Verdict is what a Judge found in a circuit: its findings (before
// waivers are applied), the rules that applied to each subject
// (rules.EvalOptions.Applied) and the number of cases solved.
type Verdict struct {
	Findings []rules.Finding
	Applied  map[string]bool
	Cases    int
}

// Judge analyses a circuit and evaluates the rule set on it: in every
// case and corner, or, when quick is true, in a cheaper set of cases (the
// scenarios without corners) that the search uses to narrow the values
// down before a full judgement verifies one.
type Judge func(c *netlist.Circuit, quick bool) (Verdict, error)

// Options bound the search.
type Options struct {
	// MaxFindings is how many findings of one circuit are searched (0:
	// DefaultMaxFindings), in report order; errors and warnings only.
	MaxFindings int
	// MaxSolves caps the Judge calls for one circuit (0: DefaultMaxSolves).
	MaxSolves int
	// MaxWork caps the cases the Judge calls solve in all, summed over
	// calls (0: no cap beyond MaxSolves), so that a large board's search
	// costs about as much as a few checks of it.
	MaxWork int
	// Decades is how far from the present value the search goes, in
	// decades each way (0: DefaultDecades).
	Decades int
	// MaxCandidates is how many related resistors of one finding are tried
	// (0: DefaultMaxCandidates), in the order the rule names them.
	MaxCandidates int
	// First stops the search at the first change found.
	First bool
}

// Defaults of Options.
const (
	DefaultMaxFindings   = 12
	DefaultMaxSolves     = 120
	DefaultDecades       = 2
	DefaultMaxCandidates = 3
)

// Minimum and maximum resistances proposed, Ohm.
const (
	MinOhms = 0.1
	MaxOhms = 1e9
)

// key names a finding for comparison across solves.
type key struct{ rule, device string }

func keyOf(f rules.Finding) key { return key{f.Rule, netlist.Key(f.Device)} }

// searcher carries one circuit's search.
type searcher struct {
	c      *netlist.Circuit
	judge  Judge
	opt    Options
	before map[key]bool
	// measure is how far each finding was past its limit (rules.Finding.Measure).
	measure map[key]float64
	solves  int
	work    int
	cache   map[probeKey]*probe
}

type probeKey struct {
	pos   netlist.Pos
	ohm   float64
	quick bool
}

type probe struct {
	present map[key]bool
	measure map[key]float64
	applied map[string]bool
	cases   int
	err     error
}

// Search proposes a change for each finding it can clear and returns the
// findings with Change set where one was found (a copy; the input is not
// modified). before are the circuit's findings as reported (waived ones
// included, and not searched).
func Search(c *netlist.Circuit, before []rules.Finding, judge Judge, opt Options) []rules.Finding {
	out, _ := SearchStats(c, before, judge, opt)
	return out
}

// Stats say how far a search went.
type Stats struct {
	// Searched is the number of findings searched, Unsearched the number
	// of searchable findings left when the budget ran out; Solves and
	// Work the Judge calls made and the cases they solved.
	Searched, Unsearched, Solves, Work int
}

// SearchStats is Search that also says how far it went.
func SearchStats(c *netlist.Circuit, before []rules.Finding, judge Judge, opt Options) ([]rules.Finding, Stats) {
	if opt.MaxFindings <= 0 {
		opt.MaxFindings = DefaultMaxFindings
	}
	if opt.MaxSolves <= 0 {
		opt.MaxSolves = DefaultMaxSolves
	}
	if opt.Decades <= 0 {
		opt.Decades = DefaultDecades
	}
	if opt.MaxCandidates <= 0 {
		opt.MaxCandidates = DefaultMaxCandidates
	}
	s := &searcher{c: c, judge: judge, opt: opt, before: map[key]bool{}, measure: map[key]float64{}, cache: map[probeKey]*probe{}}
	for _, f := range before {
		s.before[keyOf(f)] = true
		s.measure[keyOf(f)] = f.Measure
	}
	out := append([]rules.Finding(nil), before...)
	var st Stats
	for i := range out {
		f := &out[i]
		if f.Waived || f.Unjudged || f.Severity == rules.SeverityNote || len(f.Related) == 0 {
			continue
		}
		if st.Searched >= opt.MaxFindings || s.spent() {
			st.Unsearched++
			continue
		}
		st.Searched++
		f.Change = s.finding(f)
		if f.Change != nil && opt.First {
			break
		}
	}
	st.Solves, st.Work = s.solves, s.work
	return out, st
}

// spent reports whether the solve budget is used up.
func (s *searcher) spent() bool {
	return s.solves >= s.opt.MaxSolves || (s.opt.MaxWork > 0 && s.work >= s.opt.MaxWork)
}

// candidates are the related resistors of f whose value is a literal,
// each once.
func (s *searcher) candidates(f *rules.Finding) []*netlist.Element {
	var out []*netlist.Element
	seen := map[netlist.Pos]bool{}
	for _, r := range f.Related {
		if r.Missing || len(out) >= s.opt.MaxCandidates {
			continue
		}
		el := s.c.Element(r.Name)
		if el == nil || el.Kind != 'R' || el.ValueText == "" || seen[el.ValuePos] {
			continue
		}
		if v, err := units.Parse(el.ValueText); err != nil || !(v > 0) || math.Abs(v-el.Value) > 1e-9*v {
			continue // the text is not the value the solver uses
		}
		seen[el.ValuePos] = true
		out = append(out, el)
	}
	return out
}

// finding searches a change that clears f.
func (s *searcher) finding(f *rules.Finding) *rules.Change {
	target := keyOf(*f)
	quick := s.quickSees(target)
	for _, el := range s.candidates(f) {
		for _, series := range []struct {
			name string
			vals []float64
		}{{"E12", E12}, {"E24", E24}} {
			var best *rules.Change
			for _, dir := range []int{-1, +1} {
				ch := s.direction(el, target, series.vals, dir, quick)
				if ch == nil {
					continue
				}
				ch.Series = series.name
				if best == nil || math.Abs(math.Log(ch.NewValue/ch.OldValue)) < math.Abs(math.Log(best.NewValue/best.OldValue)) {
					best = ch
				}
			}
			if best != nil {
				best.Rule = f.Rule
				return best
			}
		}
	}
	return nil
}

// ladder lists the series values from v0 outwards in direction dir (-1
// smaller, +1 larger), nearest first, within opt.Decades decades.
func (s *searcher) ladder(v0 float64, series []float64, dir int) []float64 {
	lo, hi := v0/math.Pow(10, float64(s.opt.Decades)), v0*math.Pow(10, float64(s.opt.Decades))
	lo, hi = math.Max(lo, MinOhms), math.Min(hi, MaxOhms)
	var out []float64
	for d := int(math.Floor(math.Log10(lo))) - 1; d <= int(math.Ceil(math.Log10(hi)))+1; d++ {
		for _, m := range series {
			v := roundSig(m*math.Pow(10, float64(d)), 3)
			if v < lo*(1-1e-9) || v > hi*(1+1e-9) || math.Abs(v-v0) <= 0.01*v0 {
				continue
			}
			if (dir < 0 && v < v0) || (dir > 0 && v > v0) {
				out = append(out, v)
			}
		}
	}
	sort.Float64s(out)
	if dir < 0 {
		for i, j := 0, len(out)-1; i < j; i, j = i+1, j-1 {
			out[i], out[j] = out[j], out[i]
		}
	}
	return out
}

// direction finds the nearest value in one direction that clears target
// and raises nothing new. On the quick judgement it solves the farthest
// value first (a finding that even it does not clear is not cleared in
// this direction) and bisects for the nearest clearing value; then it
// judges that value fully, stepping outwards past values that a full
// judgement shows do not clear or raise another finding, at most a few.
func (s *searcher) direction(el *netlist.Element, target key, series []float64, dir int, quick bool) *rules.Change {
	vals := s.ladder(el.Value, series, dir)
	if len(vals) == 0 {
		return nil
	}
	// A value clears the finding when the rule still applies to the
	// device (a switch still conducts, say) and is no longer violated.
	clears := func(i int, quick bool) (bool, *probe) {
		p := s.solve(el, vals[i], quick)
		return p != nil && p.err == nil && !p.present[target] && p.applied[rules.AppliedKey(target.rule, target.device)], p
	}
	last := len(vals) - 1
	if ok, _ := clears(last, quick); !ok {
		return nil
	}
	lo, hi := -1, last
	for hi-lo > 1 && !s.spent() {
		mid := (lo + hi) / 2
		if ok, _ := clears(mid, quick); ok {
			hi = mid
		} else {
			lo = mid
		}
	}
	if hi-lo > 1 {
		return nil // out of solves before the boundary was found
	}
	const maxStepsOut = 3
	for i := hi; i <= last && i < hi+maxStepsOut; i++ {
		ok, p := clears(i, false)
		if p == nil {
			return nil
		}
		if !ok {
			continue
		}
		if s.raises(p) || !s.keepsWorking(el, vals[i]) {
			continue
		}
		text, ok := ValueText(vals[i], el.ValueText)
		if !ok {
			continue
		}
		return &rules.Change{Element: el.Name, Pos: el.ValuePos, Old: el.ValueText, New: text,
			OldValue: el.Value, NewValue: vals[i], Elements: s.sharing(el.ValuePos), Cases: p.cases,
			Clears: s.cleared(p)}
	}
	return nil
}

// quickSees reports whether the quick judgement of the unchanged circuit
// shows the target finding, so that it can stand in for the full one in
// the search (a rule judged only across corners, such as the hFE spread,
// is not seen there and is searched with full judgements).
func (s *searcher) quickSees(target key) bool {
	p := s.unchangedQuick()
	return p != nil && p.err == nil && p.present[target]
}

// unchangedQuick returns the quick judgement of the unchanged circuit
// (nil when the solve budget is spent before it is made).
func (s *searcher) unchangedQuick() *probe {
	k := probeKey{quick: true}
	p, ok := s.cache[k]
	if !ok {
		if s.spent() {
			return nil
		}
		s.solves++
		v, err := s.judge(s.c, true)
		s.work += v.Cases
		p = &probe{present: map[key]bool{}, applied: v.Applied, err: err}
		for _, f := range v.Findings {
			p.present[keyOf(f)] = true
		}
		s.cache[k] = p
	}
	return p
}

// keepsWorking reports whether the circuit with the value at el's value
// position set to ohm still does what it did in the scenarios at nominal
// values (the quick judgement): every rule that applied to a device
// there still applies. A rule's applies condition states what the
// device is doing (a switch that conducts, a linear stage that carries
// current), so a change that turns another transistor off, or changes
// its role, is not a fix even when every finding it leaves is gone: a
// bleed resistor lowered until the reverse drive is clamped can also
// keep the relay driver beside it from ever turning on.
func (s *searcher) keepsWorking(el *netlist.Element, ohm float64) bool {
	base := s.unchangedQuick()
	if base == nil || base.err != nil {
		return false // cannot tell: no change is proposed
	}
	q := s.solve(el, ohm, true)
	if q == nil || q.err != nil {
		return false
	}
	for k, on := range base.applied {
		if on && !q.applied[k] {
			return false
		}
	}
	return true
}

// raises reports whether a solve found something the circuit did not
// have, or made a finding it had worse.
func (s *searcher) raises(p *probe) bool {
	for k := range p.present {
		if !s.before[k] {
			return true
		}
		if m, was := p.measure[k], s.measure[k]; m > was+1e-9*math.Abs(was) {
			return true
		}
	}
	return false
}

// cleared lists the rule ids (with their devices) of the findings the
// probe no longer has, sorted.
func (s *searcher) cleared(p *probe) []string {
	var out []string
	for k := range s.before {
		if k.rule == rules.RuleUnusedWaiver || k.rule == rules.RuleUnknownWaiverRule {
			continue // about the waivers, not the circuit
		}
		if !p.present[k] {
			out = append(out, k.rule+" on "+s.display(k.device))
		}
	}
	sort.Strings(out)
	return out
}

func (s *searcher) display(device string) string {
	if el := s.c.Element(device); el != nil {
		return el.Name
	}
	return device
}

// sharing counts the flat elements whose value is written at pos (every
// instance of a subcircuit's resistor).
func (s *searcher) sharing(pos netlist.Pos) int {
	n := 0
	for _, el := range s.c.Elements {
		if el.Kind == 'R' && el.ValueText != "" && el.ValuePos == pos {
			n++
		}
	}
	return n
}

// solve judges the circuit with every resistor whose value is written at
// el's value position set to ohm. It returns nil when the solve budget is
// spent.
func (s *searcher) solve(el *netlist.Element, ohm float64, quick bool) *probe {
	k := probeKey{el.ValuePos, ohm, quick}
	if p, ok := s.cache[k]; ok {
		return p
	}
	if s.spent() {
		return nil
	}
	s.solves++
	v, err := s.judge(WithValue(s.c, el.ValuePos, ohm), quick)
	s.work += v.Cases
	p := &probe{present: map[key]bool{}, measure: map[key]float64{}, applied: v.Applied, cases: v.Cases, err: err}
	for _, f := range v.Findings {
		p.present[keyOf(f)] = true
		p.measure[keyOf(f)] = f.Measure
	}
	s.cache[k] = p
	return p
}

// WithValue returns a copy of c in which every resistor whose literal
// value is written at pos has resistance ohm. c is not modified; elements
// that do not change are shared.
func WithValue(c *netlist.Circuit, pos netlist.Pos, ohm float64) *netlist.Circuit {
	return withValue(c, pos, ohm, "")
}

// WithChange is WithValue for a change, with the value's text too, so that
// a later search can change the same value again.
func WithChange(c *netlist.Circuit, ch *rules.Change) *netlist.Circuit {
	return withValue(c, ch.Pos, ch.NewValue, ch.New)
}

func withValue(c *netlist.Circuit, pos netlist.Pos, ohm float64, text string) *netlist.Circuit {
	cc := *c
	cc.Elements = make([]*netlist.Element, len(c.Elements))
	for i, el := range c.Elements {
		if el.Kind == 'R' && el.ValueText != "" && el.ValuePos == pos {
			e := *el
			e.Value = ohm
			if text != "" {
				e.ValueText = text
			}
			cc.Elements[i] = &e
			continue
		}
		cc.Elements[i] = el
	}
	return &cc
}

// roundSig rounds v to n significant digits (so 2.2 * 1e3 is 2200, not
// 2200.0000000000005).
func roundSig(v float64, n int) float64 {
	if v == 0 {
		return 0
	}
	s := strconv.FormatFloat(v, 'g', n, 64)
	r, _ := strconv.ParseFloat(s, 64)
	return r
}

// ValueText writes resistance v in the style of the value text old: an
// IEC 60062 RKM code when old is one (4k7 -> 2k2, 47R), else a number with
// a SPICE suffix in the case old writes it (10k -> 2.2k, 10K -> 2.2K,
// 1MEG -> 1.2MEG, 100 -> 8.2k), keeping a trailing "ohm" unit. ok is false
// when the text would not read back as v.
func ValueText(v float64, old string) (string, bool) {
	_, rkm, err := units.ParseValue(old)
	if err != nil {
		return "", false
	}
	upper := strings.ContainsAny(old, "KGT") || strings.Contains(old, "MEG")
	var text string
	if rkm {
		text = rkmText(v, upper)
	} else {
		text = spiceText(v, old, upper)
	}
	got, err := units.Parse(text)
	if err != nil || math.Abs(got-v) > 1e-9*v {
		return "", false
	}
	return text, true
}

func rkmText(v float64, upper bool) string {
	letter, scale := "R", 1.0
	switch {
	case v >= 1e6:
		letter, scale = "M", 1e6
	case v >= 1e3:
		letter, scale = "k", 1e3
		if upper {
			letter = "K"
		}
	}
	m := strconv.FormatFloat(roundSig(v/scale, 3), 'f', -1, 64)
	if i := strings.IndexByte(m, '.'); i >= 0 {
		if i == 0 || m[:i] == "0" {
			return letter + m[i+1:]
		}
		return m[:i] + letter + m[i+1:]
	}
	if letter == "M" {
		// "1M" alone reads as SPICE milli; the code writes 1 MOhm as 1M0.
		return m + letter + "0"
	}
	return m + letter
}

func spiceText(v float64, old string, upper bool) string {
	tail := ""
	if lo := strings.ToLower(old); strings.HasSuffix(lo, "ohm") {
		tail = old[len(old)-3:]
	}
	suffix, scale := "", 1.0
	switch {
	case v >= 1e9:
		suffix, scale = "g", 1e9
	case v >= 1e6:
		suffix, scale = "meg", 1e6
		switch {
		case strings.Contains(old, "MEG"):
			suffix = "MEG"
		case strings.Contains(old, "Meg"):
			suffix = "Meg"
		}
	case v >= 1e3:
		suffix, scale = "k", 1e3
	}
	if upper && suffix != "meg" && suffix != "Meg" {
		suffix = strings.ToUpper(suffix)
	}
	return strconv.FormatFloat(roundSig(v/scale, 3), 'f', -1, 64) + suffix + tail
}

// Edit replaces the text Old that starts at Pos (1-based line, and column
// in bytes as netlist positions count them) with New.
type Edit struct {
	Pos      netlist.Pos
	Old, New string
}

// EditOf is the text edit that applies a change.
func EditOf(ch *rules.Change) Edit { return Edit{Pos: ch.Pos, Old: ch.Old, New: ch.New} }

// Apply returns src with the edits made, touching nothing else. Every
// edit must find its Old text at its position (a file changed since it
// was read is an error naming the position); two edits of one place are
// an error. A UTF-8 byte order mark is skipped as the netlist reader
// skips it.
func Apply(src []byte, edits []Edit) ([]byte, error) {
	bom := 0
	if len(src) >= 3 && src[0] == 0xef && src[1] == 0xbb && src[2] == 0xbf {
		bom = 3
	}
	// Line starts, as byte offsets into src.
	starts := []int{bom}
	for i := bom; i < len(src); i++ {
		if src[i] == '\n' {
			starts = append(starts, i+1)
		}
	}
	type span struct {
		at   int
		e    Edit
		last int
	}
	var spans []span
	for _, e := range edits {
		if e.Pos.Line < 1 || e.Pos.Line > len(starts) || e.Pos.Col < 1 || e.Old == "" {
			return nil, fmt.Errorf("%s: no such place in the file", e.Pos)
		}
		at := starts[e.Pos.Line-1] + e.Pos.Col - 1
		if at+len(e.Old) > len(src) || string(src[at:at+len(e.Old)]) != e.Old {
			return nil, fmt.Errorf("%s: expected %q there; the file changed since it was read", e.Pos, e.Old)
		}
		spans = append(spans, span{at, e, at + len(e.Old)})
	}
	sort.Slice(spans, func(i, j int) bool { return spans[i].at < spans[j].at })
	for i := 1; i < len(spans); i++ {
		if spans[i].at < spans[i-1].last {
			return nil, fmt.Errorf("%s: two changes of the same value", spans[i].e.Pos)
		}
	}
	out := make([]byte, 0, len(src)+16*len(spans))
	prev := 0
	for _, sp := range spans {
		out = append(out, src[prev:sp.at]...)
		out = append(out, sp.e.New...)
		prev = sp.last
	}
	return append(out, src[prev:]...), nil
}
