package rules

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"runtime"
	"sort"
	"strings"
	"sync"
	"sync/atomic"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/file"
)

// Quantity is a named value shown in a finding's message. Value is finite
// (non-finite values are not kept), so a Finding marshals to JSON.
type Quantity struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	Unit  string  `json:"unit"`
}

// Finding is the result of one rule on one device: a violation, or a
// statement that the rule could not be judged there.
type Finding struct {
	Rule     string   `json:"rule"`
	Severity Severity `json:"severity"`
	Subject  Subject  `json:"subject"`
	// Device is the flat device or net name as written.
	Device string `json:"device"`
	// Pos is the device's line (a net's first element line); Chain the
	// instances that placed it, outermost first.
	Pos   netlist.Pos        `json:"pos"`
	Chain []netlist.Instance `json:"chain,omitempty"`
	// Scenario and Corner name the case the finding was judged in (the
	// worst violating case).
	Scenario string `json:"scenario"`
	Corner   string `json:"corner,omitempty"`
	Message  string `json:"message"`
	// Values are the numbers the message shows, in message order.
	Values []Quantity `json:"values,omitempty"`
	// Value against Limit, in Unit, when the rule gives both and both are
	// finite (HasLimit).
	Value    float64 `json:"value"`
	Limit    float64 `json:"limit"`
	Unit     string  `json:"unit,omitempty"`
	HasLimit bool    `json:"has_limit,omitempty"`
	// Nets are the nets the subject connects to.
	Nets []string `json:"nets,omitempty"`
	Fix  string   `json:"fix,omitempty"`
	// Unjudged is true when the rule could not be judged on the device;
	// Missing then lists the referenced facts that were not known.
	Unjudged bool     `json:"unjudged,omitempty"`
	Missing  []string `json:"missing,omitempty"`
	// Waived is set by ApplyWaivers.
	Waived       bool        `json:"waived,omitempty"`
	WaiverReason string      `json:"waiver_reason,omitempty"`
	WaiverPos    netlist.Pos `json:"waiver_pos,omitempty"`
	// Related are the other parts that make the finding happen (a weak
	// switch's base resistor, the divider of a beta-sensitive stage), and
	// the places where a missing part belongs, as the rule's related key
	// asks for them.
	Related []Related `json:"related,omitempty"`
	// Measure is how far the worst case is past the rule's limit, in the
	// rule's measure (larger is worse); not reported.
	Measure float64 `json:"-"`
	// Change is a computed resistor value change that clears the finding
	// in every case (package rules/fix), or nil.
	Change *Change `json:"change,omitempty"`
	// WaiverExternal: the waiver is in a board file, not in the netlist.
	WaiverExternal bool `json:"waiver_external,omitempty"`
	// AlsoIn lists the other cases where the rule is violated on the
	// device, and UnjudgedIn those where it could not be judged, as
	// "scenario" or "scenario/corner".
	AlsoIn     []string `json:"also_in,omitempty"`
	UnjudgedIn []string `json:"unjudged_in,omitempty"`

	// lead orders the finding first at its position: it names the drive
	// of a device whose operating point is not physical, the cause.
	lead bool
}

// Related is one part that takes part in a finding, or the place where a
// missing one belongs.
type Related struct {
	// Role is what the part does for the finding's device (see
	// checks.NearbyRoles).
	Role string `json:"role"`
	// Name is the flat element name ("" when Missing).
	Name string `json:"name,omitempty"`
	// Pos is the element's line; for a missing part, the first line that
	// names the net it belongs on.
	Pos     netlist.Pos        `json:"pos"`
	Chain   []netlist.Instance `json:"chain,omitempty"`
	Missing bool               `json:"missing,omitempty"`
	// Message says it in words: "RB (base resistor)", or "no bleed
	// resistor: one belongs from net b to net 0".
	Message string `json:"message"`
}

// Change is a resistor value change, verified by solving, that clears a
// finding in every case and corner without raising another.
type Change struct {
	// Rule is the id of the finding it was searched for.
	Rule string `json:"rule"`
	// Element is the flat name of the resistor (the first, when the value
	// is written once in a subcircuit used several times).
	Element string `json:"element"`
	// Pos is where the value's text starts; Old is that text as written
	// and New its replacement. OldValue and NewValue are in Ohm.
	Pos      netlist.Pos `json:"pos"`
	Old      string      `json:"old"`
	New      string      `json:"new"`
	OldValue float64     `json:"old_value"`
	NewValue float64     `json:"new_value"`
	// Series is the IEC 60063 series the new value is from, "E12" or "E24".
	Series string `json:"series"`
	// Elements counts the flat resistors that share the value text.
	Elements int `json:"elements"`
	// Cases is the number of cases the verifying solve judged.
	Cases int `json:"cases"`
	// Clears lists every finding the change clears ("rule on device").
	Clears []string `json:"clears"`
}

// String says what a change does, for reports: "RB 47k -> 1.2k (E12)
// clears weak-switch-drive in all 9 cases".
func (c *Change) String() string {
	where := ""
	if c.Elements > 1 {
		where = fmt.Sprintf(" (the value of %d instances)", c.Elements)
	}
	return fmt.Sprintf("%s %s -> %s (%s)%s clears %s in all %d cases", c.Element, c.Old, c.New, c.Series, where, c.Rule, c.Cases)
}

// CaseName names a case as AlsoIn writes it: "scenario" or "scenario/corner".
func CaseName(scenario, corner string) string {
	if corner == "" {
		return scenario
	}
	return scenario + "/" + corner
}

// EvalOptions select rules for one evaluation.
type EvalOptions struct {
	// Only keeps just these rule ids; Skip drops these. Unknown ids are an
	// error (see RuleSet.Select).
	Only, Skip []string
	// Applied, when not nil, receives AppliedKey(rule, device) for every
	// rule whose applies condition held on a subject in some case and
	// that could be judged there (whether it passed or not).
	Applied map[string]bool
}

// AppliedKey is the key of EvalOptions.Applied for a rule on a subject.
func AppliedKey(rule, subject string) string { return rule + "\x00" + netlist.Key(subject) }

// subjectRef is one subject in one case, ready for the expressions.
type subjectRef struct {
	kind  Subject
	name  string
	pos   netlist.Pos
	chain []netlist.Instance
	// net holds the subject's nets (the first nnet of them), made into a
	// slice only for a finding (nets).
	net  [3]string
	nnet int
	// env points to the subject's environment, rv is the environment
	// itself (addressable): eachSubject rewrites one environment per kind
	// for each subject of a case, so neither lives past the call.
	env any
	rv  reflect.Value
}

// nets returns the subject's nets as a new slice.
func (s *subjectRef) nets() []string { return append([]string(nil), s.net[:s.nnet]...) }

// outcome of one rule on one subject in one case.
type outcome struct {
	violated, unjudged bool
	caseIdx            int
	f                  Finding
	measure            float64
}

// Evaluate judges every active rule of set on every applicable subject of
// every case of a. When several cases violate a rule on one device, one
// finding is kept, at the case with the largest measure (ties: the first
// case), listing the other violating cases in AlsoIn; a rule that could not
// be judged in any case and is violated in none gives one Unjudged
// finding. Findings are sorted by the device's position, then rule id,
// then device name.
func Evaluate(set *RuleSet, a *checks.Analysis, opts EvalOptions) ([]Finding, error) {
	if set == nil || a == nil {
		return nil, errors.New("rules: Evaluate needs a rule set and an analysis")
	}
	if len(opts.Only) > 0 || len(opts.Skip) > 0 {
		s, err := set.Select(opts.Only, opts.Skip)
		if err != nil {
			return nil, err
		}
		set = s
	}
	params := set.paramValues()
	type key struct {
		rule, subject, device string
	}
	// The cases are judged in parallel, each into its own list, and the
	// lists merged in case order: the findings do not depend on the
	// scheduling.
	type keyed struct {
		k       key
		o       outcome
		applied bool // applied without an outcome
	}
	per := make([][]keyed, len(a.Cases))
	eachCase(len(a.Cases), func(ci int) {
		c := &a.Cases[ci]
		var list []keyed
		eachSubject(c, params, func(s *subjectRef) {
			device := "" // netlist.Key(s.name), made once it is needed
			for _, r := range set.Rules {
				if r.Subject != s.kind || r.c == nil {
					continue
				}
				o, ok, applied := judge(r, s, c, ci)
				if !ok && !(applied && opts.Applied != nil) {
					continue
				}
				if device == "" {
					device = netlist.Key(s.name)
				}
				k := key{r.ID, string(s.kind), device}
				if applied && opts.Applied != nil {
					list = append(list, keyed{k: k, applied: true})
				}
				if !ok {
					continue
				}
				if unphysical(s) {
					// A case whose operating point is not physical for
					// this device judges only what its facts still say
					// (the drive, the topology); what they cannot say is
					// not a note, the analysis's warning explains it.
					if o.unjudged {
						continue
					}
					o.f.lead = r.c.when.uses("stiff_drive")
				}
				list = append(list, keyed{k: k, o: o})
			}
		})
		per[ci] = list
	})
	results := map[key][]outcome{}
	var order []key
	for ci := range per {
		for _, x := range per[ci] {
			if x.applied {
				opts.Applied[AppliedKey(x.k.rule, x.k.device)] = true
				continue
			}
			if _, seen := results[x.k]; !seen {
				order = append(order, x.k)
			}
			results[x.k] = append(results[x.k], x.o)
		}
		per[ci] = nil
	}
	var out []Finding
	for _, k := range order {
		out = append(out, pickWorst(results[k]))
	}
	sortFindings(out)
	return out, nil
}

// eachCase calls do(i) for every i below n on up to GOMAXPROCS
// goroutines and returns when all are done.
func eachCase(n int, do func(i int)) {
	workers := runtime.GOMAXPROCS(0)
	if workers > n {
		workers = n
	}
	if workers <= 1 {
		for i := 0; i < n; i++ {
			do(i)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				i := int(next.Add(1)) - 1
				if i >= n {
					return
				}
				do(i)
			}
		}()
	}
	wg.Wait()
}

// pickWorst folds one device's outcomes over the cases into one finding.
func pickWorst(os []outcome) Finding {
	best := -1
	for i, o := range os {
		if !o.violated {
			continue
		}
		if best < 0 || o.measure > os[best].measure {
			best = i
		}
	}
	if best < 0 {
		// No case violates: the first unjudged case speaks.
		f := os[0].f
		for _, o := range os[1:] {
			f.UnjudgedIn = append(f.UnjudgedIn, CaseName(o.f.Scenario, o.f.Corner))
		}
		return f
	}
	f := os[best].f
	for i, o := range os {
		if i == best {
			continue
		}
		name := CaseName(o.f.Scenario, o.f.Corner)
		if o.violated {
			f.AlsoIn = append(f.AlsoIn, name)
		} else {
			f.UnjudgedIn = append(f.UnjudgedIn, name)
		}
	}
	return f
}

// unphysical reports whether subject s is a transistor whose operating
// point in its case is not physical (checks.RegionNotPhysical).
func unphysical(s *subjectRef) bool {
	t, ok := s.env.(*transistorEnv)
	return ok && t.Region == checks.RegionNotPhysical
}

func sortFindings(fs []Finding) {
	sort.SliceStable(fs, func(i, j int) bool {
		a, b := fs[i], fs[j]
		if a.Pos != b.Pos {
			return a.Pos.Before(b.Pos)
		}
		if a.lead != b.lead {
			return a.lead
		}
		if a.Rule != b.Rule {
			return a.Rule < b.Rule
		}
		if a.Device != b.Device {
			return a.Device < b.Device
		}
		return a.Subject < b.Subject
	})
}

// noClipping is the clipping facts of a transistor whose Clipping was
// left nil: none. Expressions only read it.
var noClipping checks.Clipping

// eachSubject calls do with every subject of one case and its
// environment, one at a time: one environment per kind is rewritten for
// each subject, so a board of many devices neither holds a case's
// environments at once nor makes one per subject. do must not keep s.
func eachSubject(c *checks.Case, params map[string]float64, do func(s *subjectRef)) {
	var te transistorEnv
	s := subjectRef{kind: SubjectTransistor, env: &te, rv: reflect.ValueOf(&te).Elem(), nnet: 3}
	for i := range c.Transistors {
		t := &c.Transistors[i]
		te = transistorEnv{Transistor: *t, Scenario: c.Scenario, Corner: c.Corner, Param: params}
		if te.Clipping == nil {
			te.Clipping = &noClipping // facts made by hand
		}
		s.name, s.pos, s.chain, s.net = t.Name, t.Pos, t.Chain, [3]string{t.Collector, t.Base, t.Emitter}
		do(&s)
	}
	var re resistorEnv
	s = subjectRef{kind: SubjectResistor, env: &re, rv: reflect.ValueOf(&re).Elem(), nnet: 2}
	for i := range c.Resistors {
		r := &c.Resistors[i]
		re = resistorEnv{Resistor: *r, Scenario: c.Scenario, Corner: c.Corner, Ambient: c.Ambient, Param: params}
		s.name, s.pos, s.chain, s.net = r.Name, r.Pos, r.Chain, [3]string{r.NodeA, r.NodeB}
		do(&s)
	}
	var ne nodeEnv
	s = subjectRef{kind: SubjectNode, env: &ne, rv: reflect.ValueOf(&ne).Elem(), nnet: 1}
	for i := range c.Nodes {
		n := &c.Nodes[i]
		ne = nodeEnv{Node: *n, Scenario: c.Scenario, Corner: c.Corner, Ambient: c.Ambient, Param: params}
		s.name, s.pos, s.chain, s.net = n.Name, n.Pos, nil, [3]string{n.Name}
		do(&s)
	}
}

// judge runs one rule on one subject. ok is false when the rule does not
// apply or passes.
func judge(r *Rule, s *subjectRef, c *checks.Case, ci int) (o outcome, ok, applied bool) {
	base := func() Finding {
		return Finding{Rule: r.ID, Severity: r.Severity, Subject: s.kind, Device: s.name, Pos: s.pos,
			Chain: s.chain, Scenario: c.Scenario, Corner: c.Corner, Nets: s.nets(), Fix: r.Fix}
	}
	unjudged := func(p *program, err error) (outcome, bool, bool) {
		f := base()
		f.Severity = r.Unjudged
		f.Unjudged = true
		reason := errorText(err)
		if errors.Is(err, errNaN) {
			if f.Missing = nanFacts(p, s); len(f.Missing) > 0 {
				reason = strings.Join(f.Missing, ", ") + " not known (NaN)"
			}
		}
		f.Message = fmt.Sprintf("rule %s could not be judged for %s %s: %s", r.ID, s.kind, s.name, reason)
		return outcome{unjudged: true, caseIdx: ci, f: f}, true, false
	}
	if r.c.applies != nil {
		v, err := expr.Run(r.c.applies.prog, s.env)
		if err != nil {
			return unjudged(r.c.applies, err)
		}
		if b, _ := v.(bool); !b {
			return outcome{}, false, false
		}
	}
	v, err := expr.Run(r.c.when.prog, s.env)
	if err != nil {
		return unjudged(r.c.when, err)
	}
	if b, _ := v.(bool); !b {
		return outcome{}, false, true
	}
	f := base()
	f.Message, f.Values = render(r.c.message, s.env)
	if len(r.Related) > 0 {
		if te, ok := s.env.(*transistorEnv); ok {
			f.Related = relatedOf(r.Related, &te.Transistor, c)
		}
	}
	o = outcome{violated: true, caseIdx: ci}
	val, vok := runFloat(r.c.value, s.env)
	lim, lok := runFloat(r.c.limit, s.env)
	if vok && lok && finite(val) && finite(lim) {
		f.Value, f.Limit, f.Unit, f.HasLimit = val, lim, r.Unit, true
	}
	switch {
	case r.c.measure != nil:
		if m, ok := runFloat(r.c.measure, s.env); ok && !math.IsNaN(m) {
			o.measure = m
		} else {
			o.measure = math.Inf(-1)
		}
	case f.HasLimit:
		o.measure = val - lim
	}
	f.Measure = o.measure
	o.f = f
	return o, true, true
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func runFloat(p *program, env any) (float64, bool) {
	if p == nil {
		return 0, false
	}
	v, err := expr.Run(p.prog, env)
	if err != nil {
		return 0, false
	}
	f, ok := toFloat(v)
	return f, ok
}

// nanFacts lists the facts p refers to that are NaN for the subject.
func nanFacts(p *program, s *subjectRef) []string {
	if p == nil {
		return nil
	}
	idx := factIndex[s.kind]
	var out []string
	for _, name := range p.facts {
		path, ok := idx[name]
		if !ok {
			continue
		}
		if math.IsNaN(s.rv.FieldByIndex(path).Float()) {
			out = append(out, name)
		}
	}
	return out
}

// errorText is the first line of an evaluation error, without expr's
// location and snippet.
func errorText(err error) string {
	var fe *file.Error
	if errors.As(err, &fe) {
		if fe.Prev != nil {
			return fe.Prev.Error()
		}
		return fe.Message
	}
	msg := err.Error()
	if i := strings.IndexByte(msg, '\n'); i >= 0 {
		msg = msg[:i]
	}
	return msg
}

// render fills a message template for one subject.
func render(ps []piece, env any) (string, []Quantity) {
	var b strings.Builder
	var qs []Quantity
	for _, p := range ps {
		if !p.isQ {
			b.WriteString(p.text)
			continue
		}
		v, err := expr.Run(p.prog.prog, env)
		if err != nil {
			b.WriteString("?")
			continue
		}
		switch x := v.(type) {
		case string:
			b.WriteString(x)
		case bool:
			fmt.Fprint(&b, x)
		default:
			f, ok := toFloat(v)
			if !ok {
				fmt.Fprint(&b, v)
				continue
			}
			switch {
			case math.IsNaN(f):
				b.WriteString("unknown")
			default:
				b.WriteString(formatValue(f, p.unit))
			}
			if finite(f) {
				q := Quantity{Name: strings.TrimSpace(p.prog.src), Value: f, Unit: p.unit}
				if p.unit == "%" {
					q.Value *= 100
				}
				qs = append(qs, q)
			}
		}
	}
	return b.String(), qs
}

// relatedOf lists the parts near t in the given roles, in that order. The
// first role is the rule's main one: when t has no part in it, the list
// says where one belongs (a bleed resistor between the base and emitter
// nets, an emitter resistor in the emitter, a base resistor in series
// with a base that has no resistor at all), located at the first line
// that names the base net, or at the transistor.
func relatedOf(roles []string, t *checks.Transistor, c *checks.Case) []Related {
	var out []Related
	has := map[string]bool{}
	for _, n := range t.Nearby {
		has[n.Role] = true
	}
	for i, role := range roles {
		for _, n := range t.Nearby {
			if n.Role == role {
				out = append(out, Related{Role: role, Name: n.Name, Pos: n.Pos, Chain: n.Chain,
					Message: n.Name + " (" + role + ")"})
			}
		}
		if has[role] || i > 0 {
			continue
		}
		pos, where := t.Pos, ""
		switch {
		case role == checks.NearBleed:
			pos, where = netPos(c, t.Base, t.Pos), "between "+t.Name+"'s base (net "+t.Base+") and emitter (net "+t.Emitter+")"
		case role == checks.NearBaseResistor && !has[checks.NearDivider]:
			pos, where = netPos(c, t.Base, t.Pos), "in series with "+t.Name+"'s base (net "+t.Base+")"
		case role == checks.NearEmitter:
			where = "between " + t.Name + "'s emitter and net " + t.Emitter
		default:
			// A collector on a rail, no drive, no divider: nothing is
			// missing.
			continue
		}
		out = append(out, Related{Role: role, Pos: pos, Missing: true, Message: "no " + role + ": one belongs " + where})
	}
	return out
}

// netPos is the first line that names net in case c, else def.
func netPos(c *checks.Case, net string, def netlist.Pos) netlist.Pos {
	k := netlist.Key(net)
	for i := range c.Nodes {
		if netlist.Key(c.Nodes[i].Name) == k && c.Nodes[i].Pos.IsValid() {
			return c.Nodes[i].Pos
		}
	}
	return def
}
