package netlist

import (
	"errors"
	"io/fs"
	"math"
	"sort"
	"strings"
)

// Read loads filename with Load and flattens it with Flatten. The error, if
// any, lists the problems of both steps.
func Read(filename string, opts *LoadOptions) (*Circuit, error) {
	d, _ := Load(filename, opts)
	return Flatten(d)
}

// ReadSource is Read for netlist text already in memory: src is parsed as
// the file filename (includes are read through opts.ReadFile) and
// flattened. The error, if any, lists the problems of both steps.
func ReadSource(filename string, src []byte, opts *LoadOptions) (*Circuit, error) {
	d, _ := Parse(filename, src, opts)
	return Flatten(d)
}

// errNoFiles is what NoFiles answers.
var errNoFiles = errors.New("includes are disabled")

// NoFiles is a LoadOptions.ReadFile that reads nothing, so that .include
// and .lib are located errors and text read in tests or fuzzing never
// reaches the file system.
func NoFiles(path string) ([]byte, error) {
	return nil, &fs.PathError{Op: "open", Path: path, Err: errNoFiles}
}

// Flatten evaluates the deck's parameters and expands every subcircuit
// instance into a flat Circuit:
//
//   - an element placed through instances is named by the instance path
//     joined with '.', its own name last (X1.X2.Q1); so is an internal node
//     (X1.mid). Ports map to the nodes of the instance line; ground (0, gnd)
//     and global nodes (names ending in '!', or listed on .global) are
//     never prefixed.
//   - parameters are looked up from the innermost scope out: the instance's
//     .param lines and its .subckt defaults (overridden by the instance
//     line's name=value, evaluated where the instance is written), then the
//     enclosing definitions, then the top-level .param lines.
//   - a model written inside a subcircuit is made once per instance and
//     keyed by its scoped name (x1.qmod); an element uses the innermost
//     model of that name.
//   - node names are matched case-insensitively and printed as first
//     written.
//
// The Circuit is returned even when there are errors, as complete as
// possible. The error holds the deck's diagnostics and Flatten's own; the
// notes and warnings of both are in Circuit.Notes.
func Flatten(d *Deck) (*Circuit, error) {
	errs := &ErrorList{}
	errs.Merge(&d.Diagnostics)
	f := &flattener{
		d:       d,
		errs:    quoted{errs},
		ev:      newEvaluator(errs),
		spell:   map[string]string{},
		globals: map[string]bool{},
		opts:    d.opts.withDefaults(),
		c: &Circuit{
			File:    d.File,
			Title:   d.Title,
			Models:  map[string]*Model{},
			Options: DefaultOptions(),
		},
	}
	for _, g := range d.Globals {
		f.globals[Key(g.Text)] = true
	}
	top := &env{defs: map[string]*pdef{}, def: d.Top}
	for _, p := range d.Top.ParamDefs {
		top.defs[Key(p.Name.Text)] = &pdef{v: p.Value, in: top}
	}
	f.options(top)
	f.body(d.Top, top, 0, nil)
	f.controls()
	if len(f.c.Elements) == 0 && len(f.errs.Errors()) == 0 && f.errs.Dropped() == 0 {
		what := "no elements"
		if len(d.Top.Subckts) > 0 && len(d.Top.Elements) == 0 {
			what = "no elements at top level (only subcircuit definitions)"
		}
		if looksLikeElement(d.Title) {
			// A one-line file, or one whose only element is on the first
			// line: SPICE reads that line as the title.
			f.errs.Addf(Pos{File: d.File, Line: 1, Col: 1}, "%s: the first line, %q, is the netlist's title (as in SPICE, the first line of a netlist always is); put a title line above it",
				verbatim(what), d.Title)
		} else {
			f.errs.Addf(Pos{File: d.File, Line: 1, Col: 1}, "%s", verbatim(what))
		}
	}
	if len(f.c.Elements) > 0 {
		f.titleElement()
	}
	f.errs.Sort()
	f.c.Notes = f.errs.Notes()
	return f.c, f.errs.Err()
}

// titleElement warns when the title line reads as an element on two nets
// of the circuit (VCC vcc 0 12, R1 vcc b 47k): a netlist written without
// a title, whose first element SPICE's convention turns into the title,
// so the circuit silently lacks it.
func (f *flattener) titleElement() {
	title := f.d.Title
	fs := strings.Fields(title)
	if len(fs) < 3 || !strings.ContainsRune("RCLVIQDrclviqd", rune(fs[0][0])) {
		return
	}
	nets := map[string]bool{}
	for _, e := range f.c.Elements {
		for _, n := range e.Nodes {
			nets[Key(n)] = true
		}
	}
	on := func(n string) bool { return IsGround(n) || nets[Key(n)] }
	if !on(fs[1]) || !on(fs[2]) || Key(fs[1]) == Key(fs[2]) {
		return
	}
	for _, e := range f.c.Elements {
		if Key(e.Name) == Key(fs[0]) {
			return // an element of that name is in the circuit: a title that names it
		}
	}
	f.errs.Warnf(Pos{File: f.d.File, Line: 1, Col: 1}, "the first line, %q, is read as the netlist's title (as in SPICE, the first line always is), yet it reads as an element on nets %s and %s of this circuit, which then lacks it; if it is one, put a title line above it",
		title, fs[1], fs[2])
}

// looksLikeElement reports whether a title line reads like an element
// line: a name of a device letter then letters, digits or underscores,
// with a digit among them (R1, Q12, x_amp2: words of a title rarely have
// one), then at least one more field.
func looksLikeElement(title string) bool {
	fs := strings.Fields(title)
	if len(fs) < 2 || !strings.ContainsRune("RCLVIQDXEFGHrclviqdxefgh", rune(fs[0][0])) {
		return false
	}
	digit := false
	for _, r := range fs[0][1:] {
		switch {
		case r >= '0' && r <= '9':
			digit = true
		case r == '_' || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z'):
		default:
			return false
		}
	}
	return digit
}

// flattener holds the state of one Flatten call.
type flattener struct {
	d       *Deck
	c       *Circuit
	errs    quoted
	ev      *evaluator
	spell   map[string]string // node key -> first spelling
	globals map[string]bool
	opts    LoadOptions
	full    bool // the element limit was reached
	// alerted marks the values whose letters were noted (letters.go).
	alerted map[Pos]bool
}

// options evaluates .temp and .options.
func (f *flattener) options(top *env) {
	o := &f.c.Options
	for _, t := range f.d.Temps {
		if x, ok := f.ev.eval(t, top); ok {
			o.Temps = append(o.Temps, x)
		}
	}
	if len(o.Temps) > 0 {
		o.Temp, o.TempSet = o.Temps[0], true
	}
	for _, p := range f.d.Options {
		k := Key(p.Name.Text)
		switch k {
		case "temp", "tnom", "gmin":
			x, ok := f.ev.eval(p.Value, top)
			if !ok {
				continue
			}
			switch k {
			case "temp":
				o.Temp, o.TempSet = x, true
			case "tnom":
				o.TNom = x
			case "gmin":
				o.GMin = x
			}
		default:
			// biaslint reads no other option: whatever its value (a
			// number, a word, a path), it is kept when numeric and noted.
			if p.Value.Braced || looksNumeric(p.Value.Text) || f.hasParam(top, p.Value.Text) {
				if x, ok := f.quiet(p.Value, top); ok {
					o.Others[k] = x
				}
			}
			if p.Value.Text == "1" && p.Value.Pos == p.Name.Pos {
				f.ev.notef(p.Name.Pos, "option %s is not used by biaslint and is ignored", p.Name.Text)
			} else {
				f.ev.notef(p.Name.Pos, "option %s=%s is not used by biaslint and is ignored", p.Name.Text, p.Value.short())
			}
		}
	}
}

// quiet evaluates v, dropping any problem it has: for values that are
// read only to be kept, never to be used.
func (f *flattener) quiet(v Value, e *env) (float64, bool) {
	var scratch ErrorList
	ev := newEvaluator(&scratch)
	x, ok := ev.eval(v, e)
	return x, ok && scratch.Err() == nil
}

func (f *flattener) hasParam(e *env, name string) bool {
	for s := e; s != nil; s = s.parent {
		if s.defs[Key(name)] != nil {
			return true
		}
	}
	return false
}

// body flattens the elements of definition def in scope e. stack holds the
// definitions being expanded, outermost first.
func (f *flattener) body(def *Subckt, e *env, depth int, stack []*Subckt) {
	for _, m := range def.Models {
		f.model(m, e)
	}
	for _, a := range def.Annotations {
		a.Scope = e.path
		f.c.Annotations = append(f.c.Annotations, a)
	}
	for _, s := range def.Elements {
		if f.full {
			return
		}
		if s.Kind == 'X' {
			f.instance(s, def, e, depth, stack)
			continue
		}
		if len(f.c.Elements) >= f.opts.MaxElements {
			f.errs.Addf(s.Pos, "more than %d elements after flattening; the rest are not read", f.opts.MaxElements)
			f.full = true
			return
		}
		if el := f.element(s, def, e); el != nil {
			f.c.Elements = append(f.c.Elements, el)
		}
	}
}

// join prefixes name with the instance path.
func join(path, name string) string {
	if path == "" {
		return name
	}
	return path + "." + name
}

// node maps a node name written in scope e to its flat name.
func (f *flattener) node(w Word, e *env) string {
	k := Key(w.Text)
	var n string
	switch {
	case IsGround(k):
		// 0, gnd, gnd! (and a .global list naming one of them) are all
		// the reference node.
		return Ground
	case f.globals[k] || strings.HasSuffix(k, "!"):
		n = w.Text
	case e.ports[k] != "":
		return e.ports[k]
	default:
		n = join(e.path, w.Text)
	}
	fk := Key(n)
	if s, ok := f.spell[fk]; ok {
		return s
	}
	f.spell[fk] = n
	return n
}

// model evaluates a .model card in scope e into Circuit.Models.
func (f *flattener) model(m *ModelStmt, e *env) {
	name := join(e.path, m.Name.Text)
	out := &Model{Name: name, Local: m.Name.Text, Type: ModelType(m.Type), Params: map[string]float64{}, Pos: m.Pos}
	for _, p := range m.Params {
		canon, known := canonicalParam(out.Type, p.Name.Text)
		if _, dup := out.Params[canon]; dup {
			f.ev.notef(p.Name.Pos, "model %s: %s given twice; the last value is used", m.Name.Text, canon)
		}
		if !known && !p.Value.Braced && !looksNumeric(p.Value.Text) && !f.hasParam(e, p.Value.Text) {
			// A vendor field such as MFG=... or TYPE=silicon.
			if out.Text == nil {
				out.Text = map[string]string{}
			}
			out.Text[canon] = p.Value.Text
			continue
		}
		if x, ok := f.ev.eval(p.Value, e); ok {
			out.Params[canon] = x
			if known {
				f.paramLetters(m.Name.Text, canon, p.Value)
			}
		}
	}
	f.c.Models[Key(name)] = out
}

// looksNumeric reports whether s starts like a number.
func looksNumeric(s string) bool {
	return s != "" && (isDigit(s[0]) || s[0] == '.' || s[0] == '+' || s[0] == '-')
}

// findModel resolves a model name used in definition def, scope e.
func (f *flattener) findModel(name string, def *Subckt, e *env) *Model {
	_, holder := def.lookupModel(Key(name))
	if holder == nil {
		return nil
	}
	s := e
	for s != nil && s.def != holder {
		s = s.parent
	}
	if s == nil {
		return nil
	}
	return f.c.Models[Key(join(s.path, name))]
}

// params evaluates name=value pairs into a map with lower-case keys.
func (f *flattener) params(ps []Param, e *env) map[string]float64 {
	if len(ps) == 0 {
		return nil
	}
	out := map[string]float64{}
	for _, p := range ps {
		if x, ok := f.ev.eval(p.Value, e); ok {
			out[Key(p.Name.Text)] = x
		}
	}
	return out
}

// element flattens one non-X element.
func (f *flattener) element(s *ElementStmt, def *Subckt, e *env) *Element {
	el := &Element{
		Kind:   s.Kind,
		Name:   join(e.path, s.Name.Text),
		Pos:    s.Pos,
		Chain:  e.chain,
		Params: f.params(s.Params, e),
	}
	for _, n := range s.Nodes {
		el.Nodes = append(el.Nodes, f.node(n, e))
	}
	ok := true
	if s.Value != nil {
		el.Value, ok = f.ev.eval(*s.Value, e)
		if !s.Value.Braced && looksNumeric(s.Value.Text) {
			el.ValueText, el.ValuePos = s.Value.Text, s.Value.Pos
		}
		if ok {
			f.valueLetters(s.Kind, s.Name.Text, *s.Value, e)
		}
	}
	switch s.Kind {
	case 'V', 'I':
		el.Source, ok = f.source(s, e)
	case 'F', 'H':
		el.Control = join(e.path, s.Control.Text)
		if s.Poly != nil {
			for _, c := range s.Poly.Controls {
				el.Controls = append(el.Controls, join(e.path, c.Text))
			}
			el.Control = el.Controls[0]
		}
	case 'D':
		m := f.findModel(s.Model.Text, def, e)
		ok = f.useModel(el, s, s.Model, m, Diode) && ok
		ok = f.area(el, s, e) && ok
	case 'Q':
		ok = f.bjt(el, s, def, e) && ok
	}
	if s.Poly != nil {
		el.PolyN = s.Poly.N
		for _, c := range s.Poly.Coeffs {
			x, good := f.ev.eval(c, e)
			ok = ok && good
			el.Poly = append(el.Poly, x)
		}
		if len(el.Poly) == 1 && el.PolyN == 1 {
			// One coefficient of a one-dimensional polynomial is its
			// linear term, p1 (p0 = 0), as the SPICE2 user's guide
			// gives it, so that POLY(1) a b 2 is a gain of 2.
			el.Poly = []float64{0, el.Poly[0]}
		}
	}
	if !ok {
		return nil
	}
	return el
}

// standIn returns the stand-in model of LoadOptions.StandIn for the
// model name w that the netlist does not define, registered in the circuit
// under that name and noted at its first use; nil for none.
func (f *flattener) standIn(w Word) *Model {
	if f.opts.StandIn == nil {
		return nil
	}
	if m := f.c.Models[Key(w.Text)]; m != nil {
		return m // made for an earlier line
	}
	m, note, ok := f.opts.StandIn(w.Text)
	if !ok || m == nil || (m.Type != NPN && m.Type != PNP) {
		return nil
	}
	sm := *m
	sm.Name, sm.Local, sm.Pos = w.Text, w.Text, w.Pos
	f.c.Models[Key(w.Text)] = &sm
	f.errs.Alertf(w.Pos, "model %s is not defined in the netlist: %s", w.Text, verbatim(note))
	return &sm
}

// useModel checks that m exists and has one of the wanted types.
func (f *flattener) useModel(el *Element, s *ElementStmt, name Word, m *Model, want ...ModelType) bool {
	if m == nil {
		f.ev.errorf(name.Pos, "%s: undefined model %s", s.Name.Text, name.Text)
		return false
	}
	for _, t := range want {
		if m.Type == t {
			el.Model = Key(m.Name)
			return true
		}
	}
	var w []string
	for _, t := range want {
		w = append(w, strings.ToUpper(string(t)))
	}
	f.ev.errorf(name.Pos, "%s: model %s has type %s, but a %s needs %s", s.Name.Text, name.Text,
		strings.ToUpper(string(m.Type)), verbatim(kindName(s.Kind)), verbatim(strings.Join(w, " or ")))
	return false
}

// area sets the area factor of a D or Q element: the area (default 1)
// times the instance multiplier m.
func (f *flattener) area(el *Element, s *ElementStmt, e *env) bool {
	el.Area = 1
	if s.Area != nil {
		x, ok := f.ev.eval(*s.Area, e)
		if !ok {
			return false
		}
		el.Area = x
	}
	if m, ok := el.Params["m"]; ok {
		el.Area *= m
	}
	return true
}

// bjt resolves a Q line's fields after c b e: "model [area]" or
// "substrate model [area]", choosing the reading whose model exists.
func (f *flattener) bjt(el *Element, s *ElementStmt, def *Subckt, e *env) bool {
	x := s.Extra
	word := func(i int) (Word, bool) {
		if i >= len(x) || x[i].Braced {
			return Word{}, false
		}
		return Word{x[i].Text, x[i].Pos}, true
	}
	var model Word
	var m *Model
	rest := x
	if w, ok := word(0); ok {
		if m = f.findModel(w.Text, def, e); m != nil {
			model, rest = w, x[1:]
		}
	}
	if m == nil {
		if w, ok := word(1); ok && len(x) >= 2 {
			if m = f.findModel(w.Text, def, e); m != nil {
				model, rest = w, x[2:]
				sub, _ := word(0)
				el.Nodes = append(el.Nodes, f.node(sub, e))
			}
		}
	}
	if m == nil {
		// A registered type without its .model card: "type [area]", or
		// "substrate type [area]".
		if w, ok := word(0); ok && (len(x) == 1 || (len(x) == 2 && looksNumeric(x[1].Text))) {
			if m = f.standIn(w); m != nil {
				model, rest = w, x[1:]
			}
		}
		if w, ok := word(1); m == nil && ok && (len(x) == 2 || (len(x) == 3 && looksNumeric(x[2].Text))) {
			if m = f.standIn(w); m != nil {
				model, rest = w, x[2:]
				sub, _ := word(0)
				el.Nodes = append(el.Nodes, f.node(sub, e))
			}
		}
	}
	if m == nil {
		w0, ok0 := word(0)
		w1, ok1 := word(1)
		switch {
		case ok0 && ok1 && !looksNumeric(w1.Text):
			f.ev.errorf(w0.Pos, "%s: undefined model: neither %s nor %s names a model", s.Name.Text, w0.Text, w1.Text)
		case ok0:
			f.ev.errorf(w0.Pos, "%s: undefined model %s", s.Name.Text, w0.Text)
		default:
			f.ev.errorf(x[0].Pos, "%s: expected a model name, found %s", s.Name.Text, x[0].short())
		}
		return false
	}
	if len(rest) > 1 {
		f.ev.errorf(rest[1].Pos, "%s: unexpected %s after the area factor", s.Name.Text, rest[1].short())
		return false
	}
	if !f.useModel(el, s, model, m, NPN, PNP) {
		return false
	}
	if len(rest) == 1 {
		if s.Area != nil {
			f.ev.errorf(rest[0].Pos, "%s: area given twice", s.Name.Text)
			return false
		}
		a := rest[0]
		s2 := *s
		s2.Area = &a
		return f.area(el, &s2, e)
	}
	return f.area(el, s, e)
}

// source evaluates a V or I source's value part.
func (f *flattener) source(s *ElementStmt, e *env) (*Source, bool) {
	st := s.Source
	src := &Source{}
	ok := true
	get := func(v *Value) float64 {
		if v == nil {
			return 0
		}
		x, good := f.ev.eval(*v, e)
		ok = ok && good
		return x
	}
	if st.DC != nil {
		src.DC, src.HasDC = get(st.DC), true
		if ok {
			f.valueLetters(s.Kind, s.Name.Text, *st.DC, e)
		}
	}
	if st.ACMag != nil {
		src.ACMag, src.HasAC = get(st.ACMag), true
		src.ACPhase = get(st.ACPhase)
	}
	if st.Wave != "" {
		w := &Waveform{Kind: st.Wave, Pos: st.WavePos}
		for i := range st.WaveArgs {
			w.Args = append(w.Args, get(&st.WaveArgs[i]))
		}
		src.Wave = w
		if ok && !src.HasDC {
			src.DC = w.ValueAtZero()
		}
	}
	return src, ok
}

// ValueAtZero returns the waveform's value at t = 0, which SPICE uses as
// the DC value of a source that has no DC term:
//
//	SIN(VO VA FREQ TD THETA PHASE): VO + VA*sin(PHASE*pi/180) if TD <= 0, else VO
//	PULSE(V1 V2 ...): V1
//	PWL(T1 V1 T2 V2 ...): the value at t = 0 by linear interpolation; V1
//	  before T1, the last value after the last point
//	EXP(V1 V2 ...): V1
//
// Missing arguments count as 0.
func (w *Waveform) ValueAtZero() float64 {
	arg := func(i int) float64 {
		if i < len(w.Args) {
			return w.Args[i]
		}
		return 0
	}
	switch w.Kind {
	case WaveSin:
		if arg(3) > 0 {
			return arg(0)
		}
		return arg(0) + arg(1)*math.Sin(arg(5)*math.Pi/180)
	case WavePWL:
		n := len(w.Args) / 2
		if n == 0 {
			return 0
		}
		if 0 <= w.Args[0] {
			return w.Args[1]
		}
		for i := 1; i < n; i++ {
			t0, v0 := w.Args[2*i-2], w.Args[2*i-1]
			t1, v1 := w.Args[2*i], w.Args[2*i+1]
			if 0 <= t1 {
				if t1 == t0 {
					return v1
				}
				return v0 + (v1-v0)*(0-t0)/(t1-t0)
			}
		}
		return w.Args[2*n-1]
	}
	return arg(0) // PULSE V1, EXP V1
}

// instance expands an X line.
func (f *flattener) instance(s *ElementStmt, def *Subckt, e *env, depth int, stack []*Subckt) {
	sub := def.lookupSubckt(Key(s.Subckt.Text))
	if sub == nil {
		f.ev.errorf(s.Subckt.Pos, "%s: undefined subcircuit %s", s.Name.Text, s.Subckt.Text)
		return
	}
	for i, d := range stack {
		if d == sub {
			var names []string
			for _, x := range stack[i:] {
				names = append(names, x.Name.Text)
			}
			names = append(names, sub.Name.Text)
			f.ev.errorf(s.Pos, "%s: recursive subcircuit: %s", s.Name.Text, joinShort(names, " -> "))
			return
		}
	}
	if depth+1 > f.opts.MaxSubcktDepth {
		f.ev.errorf(s.Pos, "%s: subcircuits nested deeper than the limit of %d", s.Name.Text, f.opts.MaxSubcktDepth)
		return
	}
	if len(s.Nodes) != len(sub.Ports) {
		f.ev.errorf(s.Pos, "%s: subcircuit %s has %d port%s, the instance gives %d net%s",
			s.Name.Text, sub.Name.Text, len(sub.Ports), plural(len(sub.Ports)), len(s.Nodes), plural(len(s.Nodes)))
		return
	}
	// The lexical parent: the scope of the definition enclosing sub.
	parent := e
	for parent != nil && parent.def != sub.Parent {
		parent = parent.parent
	}
	path := join(e.path, s.Name.Text)
	chain := append(e.chain[:len(e.chain):len(e.chain)], Instance{Name: s.Name.Text, Subckt: sub.Name.Text, Pos: s.Pos})
	ne := &env{parent: parent, defs: map[string]*pdef{}, def: sub, path: path, chain: chain, ports: map[string]string{}}
	for i, p := range sub.Ports {
		ne.ports[Key(p.Text)] = f.node(s.Nodes[i], e)
	}
	for _, p := range sub.Params {
		ne.defs[Key(p.Name.Text)] = &pdef{v: p.Value, in: ne}
	}
	for _, p := range s.Params {
		k := Key(p.Name.Text)
		d := ne.defs[k]
		if d == nil {
			if k == "m" {
				f.ev.notef(p.Name.Pos, "%s: the multiplier m of a subcircuit instance is not applied to its elements", s.Name.Text)
				continue
			}
			f.ev.errorf(p.Name.Pos, "%s: subcircuit %s has no parameter %s", s.Name.Text, sub.Name.Text, p.Name.Text)
			continue
		}
		d.v, d.in = p.Value, e
	}
	for _, p := range sub.ParamDefs {
		ne.defs[Key(p.Name.Text)] = &pdef{v: p.Value, in: ne}
	}
	f.body(sub, ne, depth+1, append(stack, sub))
}

// controls resolves the controlling source of every F and H element to the
// flat name of a voltage source.
func (f *flattener) controls() {
	byKey := map[string]*Element{}
	for _, el := range f.c.Elements {
		if _, dup := byKey[Key(el.Name)]; !dup {
			byKey[Key(el.Name)] = el
		}
	}
	for _, el := range f.c.Elements {
		if el.Kind != 'F' && el.Kind != 'H' {
			continue
		}
		ctls := el.Controls
		if len(ctls) == 0 {
			ctls = []string{el.Control}
		}
		for i, name := range ctls {
			v := byKey[Key(name)]
			switch {
			case v == nil:
				f.ev.errorf(el.Pos, "%s: controlling source %s not found", el.Name, name)
			case v.Kind != 'V':
				f.ev.errorf(el.Pos, "%s: controlling element %s is not a voltage source", el.Name, v.Name)
			default:
				ctls[i] = v.Name
			}
		}
		el.Control = ctls[0]
	}
}

// SortedModelKeys returns the keys of c.Models in sorted order, for
// deterministic iteration.
func (c *Circuit) SortedModelKeys() []string {
	keys := make([]string, 0, len(c.Models))
	for k := range c.Models {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
