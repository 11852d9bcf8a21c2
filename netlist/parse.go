package netlist

import (
	"errors"
	"fmt"
	"io/fs"
	"strconv"
	"strings"
)

// Load reads the netlist file filename (with opts.ReadFile) and parses it;
// see Parse.
func Load(filename string, opts *LoadOptions) (*Deck, error) {
	o := opts.withDefaults()
	read := o.ReadFile
	if o.ConfineTop {
		read = newPolicy(filename, &o).confineTop
	}
	src, err := read(filename)
	if err != nil {
		d := &Deck{File: filename, Top: newSubckt(nil), opts: o}
		if msg, ok := refused(err, false); ok {
			d.Diagnostics.Addf(Pos{File: filename, Line: 1, Col: 1}, "netlist %s", msg)
			return d, d.Diagnostics.Err()
		}
		var pe *fs.PathError
		if errors.As(err, &pe) && pe.Path == filename {
			err = pe.Err // the position already names the file
		}
		d.Diagnostics.Addf(Pos{File: filename}, "cannot read netlist: %v", err)
		return d, d.Diagnostics.Err()
	}
	return Parse(filename, src, opts)
}

// Parse parses the netlist src read from filename. Includes are read with
// opts.ReadFile relative to the including file, and only inside the folder
// of filename and opts.IncludeDirs (the include policy, open.go). The first line is the title,
// unless it starts with '.' (a library file that starts with a statement) or
// is an annotation.
//
// Parse always returns a Deck, as complete as the input allows. The error is
// nil or holds an *ErrorList (see AsErrorList) with every located problem;
// notes and warnings are in Deck.Diagnostics either way.
func Parse(filename string, src []byte, opts *LoadOptions) (*Deck, error) {
	o := opts.withDefaults()
	d := &Deck{File: filename, Top: newSubckt(nil), opts: o}
	ro := o
	ro.ReadFile = newPolicy(filename, &o).read // every include goes through the policy
	r := &reader{opts: ro, errs: quoted{&d.Diagnostics}}
	r.readTop(filename, src)
	d.Title, d.TitlePos, d.Files, d.libSections = r.title, r.tpos, r.files, r.sections
	p := &parser{d: d, errs: quoted{&d.Diagnostics}, cur: d.Top, max: o.MaxElements}
	for i := range r.out {
		p.logical(&r.out[i])
	}
	if p.skip > 0 {
		p.errs.Addf(Pos{File: filename, Line: 1, Col: 1}, "a .subckt nested too deeply is never closed with .ends")
	}
	for s := p.cur; s != d.Top && s != nil; s = s.Parent {
		p.errs.Addf(s.Pos, ".subckt %s is never closed with .ends", s.Name.Text)
	}
	return d, d.Diagnostics.Err()
}

// AsErrorList returns the *ErrorList behind an error returned by Parse,
// Load, Flatten or Read, or nil if err is not one.
func AsErrorList(err error) *ErrorList {
	if l, ok := err.(interface{ List() *ErrorList }); ok {
		return l.List()
	}
	return nil
}

func newSubckt(parent *Subckt) *Subckt {
	return &Subckt{
		Parent:  parent,
		models:  map[string]*ModelStmt{},
		subckts: map[string]*Subckt{},
		names:   map[string]Pos{},
	}
}

// parser builds a Deck from logical lines.
type parser struct {
	d      *Deck
	errs   quoted
	cur    *Subckt
	depth  int // nesting of the definition being read
	skip   int // nesting inside a definition too deep to read
	n, max int // element lines read, and the limit
}

// item is one field of a statement: a value, a name=value pair, or a
// parenthesised call such as SIN(0 1 1k).
type item struct {
	kind itemKind
	tok  token  // the value, the key, or the call's name
	val  token  // the value of a pair
	args []item // a call's arguments
}

type itemKind int

const (
	iValue itemKind = iota
	iPair
	iCall
)

// isValueTok reports whether t can be a value or a name.
func isValueTok(t token) bool { return t.kind == tWord || t.kind == tExpr || t.kind == tString }

// items splits toks into fields. Parentheses must be balanced (checked by
// the caller); nested parentheses are an error.
func (p *parser) items(toks []token, nested bool) []item {
	var out []item
	for i := 0; i < len(toks); i++ {
		t := toks[i]
		switch {
		case isValueTok(t) && i+1 < len(toks) && toks[i+1].kind == tEq:
			if i+2 >= len(toks) || !isValueTok(toks[i+2]) {
				p.errs.Addf(toks[i+1].pos, "missing value after %s=", t.text)
				i++
				continue
			}
			out = append(out, item{kind: iPair, tok: t, val: toks[i+2]})
			i += 2
		case t.kind == tLParen || (t.kind == tWord && i+1 < len(toks) && toks[i+1].kind == tLParen):
			name := token{kind: tWord, pos: t.pos}
			if t.kind == tWord {
				name = t
				i++
			}
			// toks[i] is '('; find its match.
			depth, j := 0, i
			for ; j < len(toks); j++ {
				if toks[j].kind == tLParen {
					depth++
				} else if toks[j].kind == tRParen {
					depth--
					if depth == 0 {
						break
					}
				}
			}
			if nested {
				p.errs.Addf(toks[i].pos, "nested parentheses are not supported here")
			} else {
				out = append(out, item{kind: iCall, tok: name, args: p.items(toks[i+1:min(j, len(toks))], true)})
			}
			i = j
		case t.kind == tEq:
			p.errs.Addf(t.pos, "unexpected '='")
		case t.kind == tRParen:
			// unmatched; reported by balanced
		default:
			out = append(out, item{kind: iValue, tok: t})
		}
	}
	return out
}

// balanced reports whether the parentheses of toks match, reporting the
// first one that does not.
func (p *parser) balanced(toks []token) bool {
	var open []token
	for _, t := range toks {
		switch t.kind {
		case tLParen:
			open = append(open, t)
		case tRParen:
			if len(open) == 0 {
				p.errs.Addf(t.pos, "')' without a matching '('")
				return false
			}
			open = open[:len(open)-1]
		}
	}
	if len(open) > 0 {
		p.errs.Addf(open[0].pos, "'(' is never closed with ')'")
		return false
	}
	return true
}

// value converts a value token to a Value, reporting a token that cannot be
// one.
func (p *parser) value(t token, what string) (Value, bool) {
	switch t.kind {
	case tWord:
		return Value{Text: t.text, Pos: t.pos}, true
	case tExpr:
		return Value{Text: t.text, Braced: true, Pos: t.pos}, true
	}
	p.errs.Addf(t.pos, "%s: expected a value, found %s", verbatim(what), t)
	return Value{}, false
}

func (p *parser) param(it item, what string) (Param, bool) {
	v, ok := p.value(it.val, what)
	return Param{Name: Word{it.tok.text, it.tok.pos}, Value: v}, ok
}

// logical handles one logical line.
func (p *parser) logical(l *logical) {
	if l.ann != nil {
		p.cur.Annotations = append(p.cur.Annotations, *l.ann)
		return
	}
	t := l.toks[0]
	if t.kind != tWord {
		p.errs.Addf(t.pos, "expected an element or a dot statement, found %s", t)
		return
	}
	if p.skip > 0 {
		// Inside a definition nested too deeply: only match .subckt/.ends.
		switch strings.ToLower(t.text) {
		case ".subckt", ".macro":
			p.skip++
		case ".ends", ".eom":
			p.skip--
		}
		return
	}
	if strings.EqualFold(t.text, ".title") {
		p.d.Title, p.d.TitlePos = strings.TrimSpace(l.raw[len(t.text):]), t.pos
		return
	}
	if strings.HasPrefix(t.text, ".") {
		p.dot(l.toks)
		return
	}
	p.element(l.toks)
}

// skipped are dot statements about analyses and output: read and dropped
// without a word, since biaslint only needs the circuit.
var skipped = map[string]bool{
	".tran": true, ".ac": true, ".dc": true, ".op": true, ".print": true, ".plot": true,
	".probe": true, ".save": true, ".meas": true, ".measure": true, ".four": true,
	".noise": true, ".ic": true, ".nodeset": true, ".tf": true, ".sens": true, ".pz": true,
	".disto": true, ".width": true, ".backanno": true, ".graph": true, ".net": true,
	".lin": true, ".sp": true,
}

// dot handles a dot statement.
func (p *parser) dot(toks []token) {
	kw := strings.ToLower(toks[0].text)
	if skipped[kw] {
		return
	}
	if !p.balanced(toks) {
		return
	}
	its := p.items(toks[1:], false)
	switch kw {
	case ".subckt", ".macro":
		p.subckt(toks[0], its)
	case ".ends", ".eom":
		p.ends(toks[0], its)
	case ".model":
		p.model(toks[0], its)
	case ".param", ".params":
		for _, it := range its {
			if it.kind != iPair {
				p.errs.Addf(it.tok.pos, ".param: expected name=value, found %s", it.tok)
				continue
			}
			if pr, ok := p.param(it, ".param "+it.tok.text); ok {
				p.cur.ParamDefs = append(p.cur.ParamDefs, pr)
			}
		}
		if len(its) == 0 {
			p.errs.Addf(toks[0].pos, ".param has no name=value")
		}
	case ".temp":
		if len(its) == 0 {
			p.errs.Addf(toks[0].pos, ".temp has no temperature")
		}
		for _, it := range its {
			if it.kind != iValue {
				p.errs.Addf(it.tok.pos, ".temp: expected a temperature, found %s", it.tok)
				continue
			}
			if v, ok := p.value(it.tok, ".temp"); ok {
				p.d.Temps = append(p.d.Temps, v)
			}
		}
	case ".options", ".option", ".opt", ".opts":
		for _, it := range its {
			switch it.kind {
			case iPair:
				if it.val.kind == tString {
					// A quoted word or path (search="models"): no
					// option biaslint reads takes one.
					p.errs.Notef(it.tok.pos, "option %s=%s is not used by biaslint and is ignored", it.tok.text, it.val)
					continue
				}
				if pr, ok := p.param(it, kw+" "+it.tok.text); ok {
					p.d.Options = append(p.d.Options, pr)
				}
			case iValue:
				p.d.Options = append(p.d.Options, Param{Name: Word{it.tok.text, it.tok.pos}, Value: Value{Text: "1", Pos: it.tok.pos}})
			default:
				p.errs.Addf(it.tok.pos, "%s: unexpected %s(...)", kw, it.tok)
			}
		}
	case ".global":
		for _, it := range its {
			if it.kind != iValue || it.tok.kind != tWord {
				p.errs.Addf(it.tok.pos, ".global: expected net names, found %s", it.tok)
				continue
			}
			p.d.Globals = append(p.d.Globals, Word{it.tok.text, it.tok.pos})
		}
	default:
		p.errs.Notef(toks[0].pos, "unknown statement %s is ignored", toks[0].text)
	}
}

// subckt opens a definition: .subckt NAME ports [params:] [a=1 ...].
func (p *parser) subckt(kw token, its []item) {
	if p.depth >= p.d.opts.MaxSubcktDepth {
		p.errs.Addf(kw.pos, "subcircuit definitions nested deeper than the limit of %d; this one is skipped", p.d.opts.MaxSubcktDepth)
		p.skip = 1
		return
	}
	p.depth++
	if len(its) == 0 || its[0].kind != iValue || its[0].tok.kind != tWord {
		p.errs.Addf(kw.pos, "%s needs a name", kw.text)
		// Open an anonymous definition anyway so its .ends matches.
		s := newSubckt(p.cur)
		s.Pos = kw.pos
		p.cur = s
		return
	}
	s := newSubckt(p.cur)
	s.Name = Word{its[0].tok.text, its[0].tok.pos}
	s.Pos = kw.pos
	seen := map[string]bool{}
	for _, it := range its[1:] {
		switch {
		case it.kind == iValue && strings.EqualFold(it.tok.text, "params:"):
		case it.kind == iValue && it.tok.kind == tWord:
			k := Key(it.tok.text)
			if seen[k] {
				p.errs.Addf(it.tok.pos, "subcircuit %s: port %s is listed twice", s.Name.Text, it.tok.text)
			}
			seen[k] = true
			s.Ports = append(s.Ports, Word{it.tok.text, it.tok.pos})
		case it.kind == iPair:
			if pr, ok := p.param(it, "subcircuit parameter "+it.tok.text); ok {
				s.Params = append(s.Params, pr)
			}
		default:
			p.errs.Addf(it.tok.pos, "subcircuit %s: unexpected %s", s.Name.Text, it.tok)
		}
	}
	k := Key(s.Name.Text)
	if prev := p.cur.subckts[k]; prev != nil {
		p.errs.Warnf(s.Name.Pos, "subcircuit %s is defined again in %s; the definition at %s is used", s.Name.Text, p.cur.displayName(), prev.Pos)
	} else {
		p.cur.subckts[k] = s
		p.cur.Subckts = append(p.cur.Subckts, s)
	}
	p.cur = s
}

// ends closes the innermost definition.
func (p *parser) ends(kw token, its []item) {
	if p.cur == p.d.Top {
		p.errs.Addf(kw.pos, "%s without .subckt", kw.text)
		return
	}
	if len(its) > 0 && its[0].kind == iValue && Key(its[0].tok.text) != Key(p.cur.Name.Text) {
		p.errs.Warnf(its[0].tok.pos, ".ends %s closes subcircuit %s", its[0].tok.text, p.cur.Name.Text)
	}
	p.cur = p.cur.Parent
	p.depth--
}

// model reads .model NAME TYPE [(] name=value ... [)].
func (p *parser) model(kw token, its []item) {
	if len(its) < 1 || its[0].kind != iValue || its[0].tok.kind != tWord {
		p.errs.Addf(kw.pos, ".model needs a name and a type")
		return
	}
	m := &ModelStmt{Name: Word{its[0].tok.text, its[0].tok.pos}, Pos: kw.pos}
	rest := its[1:]
	if len(rest) == 0 || rest[0].kind == iPair {
		p.errs.Addf(m.Name.Pos, "model %s has no type (NPN, PNP or D)", m.Name.Text)
		return
	}
	typ := rest[0]
	m.Type = strings.ToLower(typ.tok.text)
	fields := rest[1:]
	if typ.kind == iCall {
		fields = append(append([]item{}, typ.args...), fields...)
	}
	for _, it := range fields {
		if it.kind != iPair {
			p.errs.Addf(it.tok.pos, "model %s: expected name=value, found %s", m.Name.Text, it.tok)
			continue
		}
		if pr, ok := p.param(it, "model "+m.Name.Text+" "+it.tok.text); ok {
			m.Params = append(m.Params, pr)
		}
	}
	switch ModelType(m.Type) {
	case NPN, PNP, Diode:
		var unknown []string
		for _, pr := range m.Params {
			if _, known := canonicalParam(ModelType(m.Type), pr.Name.Text); !known {
				unknown = append(unknown, pr.Name.Text)
			}
		}
		if len(unknown) > 0 {
			p.errs.Notef(m.Name.Pos, "model %s: parameter%s %s not known for type %s; kept but not used by the device equations",
				m.Name.Text, plural(len(unknown)), strings.Join(unknown, ", "), strings.ToUpper(m.Type))
		}
	default:
		p.errs.Notef(typ.tok.pos, "model %s has type %s, which is kept but not solved; an element using it is an error", m.Name.Text, typ.tok.text)
	}
	k := Key(m.Name.Text)
	if prev := p.cur.models[k]; prev != nil {
		p.errs.Warnf(m.Name.Pos, "model %s is defined again in %s; the definition at %s is used", m.Name.Text, p.cur.displayName(), prev.Pos)
		return
	}
	p.cur.models[k] = m
	p.cur.Models = append(p.cur.Models, m)
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// element reads one element line.
func (p *parser) element(toks []token) {
	name := toks[0]
	letter := name.text[0]
	if 'a' <= letter && letter <= 'z' {
		letter -= 'a' - 'A'
	}
	e := &ElementStmt{Kind: Kind(letter), Name: Word{name.text, name.pos}, Pos: name.pos}
	switch letter {
	case 'R', 'C', 'L', 'V', 'I', 'D', 'Q', 'E', 'F', 'G', 'H', 'X':
	default:
		p.errs.Addf(name.pos, "device kind not supported: %s (element %s)", quoteByte(name.text), name.text)
		return
	}
	if !p.balanced(toks) {
		return
	}
	p.n++
	if p.n > p.max {
		if p.n == p.max+1 {
			p.errs.Addf(name.pos, "more than %d elements; the rest are not read", p.max)
		}
		return
	}
	its := p.items(toks[1:], false)
	var pos []item
	var pairs []item
	var calls []item
	for _, it := range its {
		switch it.kind {
		case iValue:
			pos = append(pos, it)
		case iPair:
			pairs = append(pairs, it)
		case iCall:
			calls = append(calls, it)
		}
	}
	ok := true
	switch letter {
	case 'V', 'I':
		ok = p.nodes(e, its, 2, "two nets")
		if ok {
			e.Source = p.source(e, its[2:])
		}
		pairs = nil // the source read its own pairs
	case 'X':
		ok = p.instance(e, pos, calls)
	case 'E', 'F', 'G', 'H':
		if hasPoly(calls) {
			ok = p.poly(e, its)
			pairs = nil // the polynomial read its own pairs
			break
		}
		fallthrough
	default:
		if len(calls) > 0 {
			c := calls[0]
			p.errs.Addf(c.tok.pos, "%s: %s(...) is not supported on a %s element", e.Name.Text, c.tok.text, verbatim(kindName(e.Kind)))
			ok = false
			break
		}
		ok = p.fixed(e, pos, pairs)
	}
	if !ok {
		p.declare(e)
		return
	}
	for _, it := range pairs {
		if pr, good := p.param(it, e.Name.Text+" "+it.tok.text); good {
			switch {
			case valueKey(e.Kind, pr.Name.Text):
				if e.Value != nil {
					p.errs.Addf(pr.Name.Pos, "%s: value given twice", e.Name.Text)
				}
				v := pr.Value
				e.Value = &v
			case Key(pr.Name.Text) == "area" && (e.Kind == 'D' || e.Kind == 'Q'):
				v := pr.Value
				e.Area = &v
			default:
				e.Params = append(e.Params, pr)
			}
		}
	}
	if e.Value == nil && needsValue(e.Kind) && e.Poly == nil {
		p.errs.Addf(e.Name.Pos, "%s has no value", e.Name.Text)
	}
	p.declare(e)
	p.cur.Elements = append(p.cur.Elements, e)
}

// declare records e's name in the current scope, reporting a duplicate.
func (p *parser) declare(e *ElementStmt) {
	k := Key(e.Name.Text)
	if prev, dup := p.cur.names[k]; dup {
		p.errs.Addf(e.Name.Pos, "duplicate element name %s in %s (first at %s)", e.Name.Text, p.cur.displayName(), prev)
		return
	}
	p.cur.names[k] = e.Name.Pos
}

// quoteByte returns the first letter of s quoted.
func quoteByte(s string) string { return fmt.Sprintf("'%c'", s[0]) }

// kindNames name the element kinds for messages.
var kindNames = map[Kind]string{
	'R': "resistor", 'C': "capacitor", 'L': "inductor", 'V': "voltage source",
	'I': "current source", 'D': "diode", 'Q': "bipolar transistor",
	'E': "voltage-controlled voltage source", 'F': "current-controlled current source",
	'G': "voltage-controlled current source", 'H': "current-controlled voltage source",
	'X': "subcircuit instance",
}

// kindName names an element kind for messages.
func kindName(k Kind) string {
	if n, ok := kindNames[k]; ok {
		return n
	}
	return "element"
}

// valueKey reports whether name=value sets the main value of a kind.
func valueKey(k Kind, name string) bool {
	switch Key(name) {
	case "value":
		return k != 'D' && k != 'Q' && k != 'X'
	case "r", "resistance":
		return k == 'R'
	case "c", "capacitance":
		return k == 'C'
	case "l", "inductance":
		return k == 'L'
	case "gain":
		return k == 'E' || k == 'F' || k == 'G' || k == 'H'
	}
	return false
}

func needsValue(k Kind) bool {
	switch k {
	case 'R', 'C', 'L', 'E', 'F', 'G', 'H':
		return true
	}
	return false
}

// nodes reads the first n fields of e as its nodes.
func (p *parser) nodes(e *ElementStmt, its []item, n int, what string) bool {
	for i := 0; i < n; i++ {
		if i >= len(its) {
			p.errs.Addf(e.Name.Pos, "%s needs %s, found %d", e.Name.Text, verbatim(what), i)
			return false
		}
		it := its[i]
		if it.kind != iValue || it.tok.kind != tWord {
			p.errs.Addf(it.tok.pos, "%s: expected a net name, found %s", e.Name.Text, it.tok)
			return false
		}
		e.Nodes = append(e.Nodes, Word{it.tok.text, it.tok.pos})
	}
	return true
}

// fixed reads the positional fields of R, C, L, D, Q, E, F, G, H elements.
func (p *parser) fixed(e *ElementStmt, pos []item, pairs []item) bool {
	hasValuePair := false
	for _, it := range pairs {
		if valueKey(e.Kind, it.tok.text) {
			hasValuePair = true
		}
	}
	var nn int
	var what string
	switch e.Kind {
	case 'R', 'C', 'L':
		nn, what = 2, "two nets and a value"
	case 'D':
		nn, what = 2, "anode and cathode nets and a model"
	case 'Q':
		nn, what = 3, "collector, base and emitter nets and a model"
	case 'E', 'G':
		nn, what = 4, "output +, output -, control + and control - nets and a gain"
	case 'F', 'H':
		nn, what = 2, "two output nets, a controlling voltage source and a gain"
	}
	if e.Kind == 'E' || e.Kind == 'G' {
		for _, it := range pairs {
			switch Key(it.tok.text) {
			case "value", "vol", "cur":
				if len(pos) < 4 {
					p.errs.Addf(it.tok.pos, "%s: behavioural sources (%s=) are not supported; write %s out+ out- in+ in- gain",
						e.Name.Text, it.tok.text, e.Name.Text)
					return false
				}
			}
		}
	}
	if !p.nodes(e, pos, nn, what) {
		return false
	}
	rest := pos[nn:]
	if e.Kind == 'D' || e.Kind == 'Q' {
		// The initial-condition flag OFF matters only to transient
		// analysis; keep it as the instance parameter off=1.
		kept := rest[:0:0]
		for _, it := range rest {
			if it.tok.kind == tWord && Key(it.tok.text) == "off" {
				e.Params = append(e.Params, Param{Name: Word{it.tok.text, it.tok.pos}, Value: Value{Text: "1", Pos: it.tok.pos}})
				continue
			}
			kept = append(kept, it)
		}
		rest = kept
	}
	tooMany := func(it item) bool {
		p.errs.Addf(it.tok.pos, "%s: unexpected %s; a %s takes %s", e.Name.Text, it.tok, verbatim(kindName(e.Kind)), verbatim(what))
		return false
	}
	switch e.Kind {
	case 'R', 'C', 'L', 'E', 'G':
		if len(rest) == 0 && !hasValuePair && (e.Kind == 'E' || e.Kind == 'G') {
			p.errs.Addf(e.Name.Pos, "%s needs %s", e.Name.Text, verbatim(what))
			return false
		}
		if len(rest) > 1 {
			return tooMany(rest[1])
		}
		if len(rest) == 1 {
			v, ok := p.value(rest[0].tok, e.Name.Text)
			if !ok {
				return false
			}
			e.Value = &v
		}
	case 'F', 'H', 'D':
		// A name (the controlling source, or the model) and an optional
		// value (the gain, or the area factor).
		if len(rest) == 0 || rest[0].tok.kind != tWord {
			p.errs.Addf(e.Name.Pos, "%s needs %s", e.Name.Text, verbatim(what))
			return false
		}
		if len(rest) > 2 {
			return tooMany(rest[2])
		}
		w := Word{rest[0].tok.text, rest[0].tok.pos}
		var v *Value
		if len(rest) == 2 {
			x, ok := p.value(rest[1].tok, e.Name.Text)
			if !ok {
				return false
			}
			v = &x
		}
		if e.Kind == 'D' {
			e.Model, e.Area = w, v
		} else {
			e.Control, e.Value = w, v
		}
	case 'Q':
		if len(rest) == 0 {
			p.errs.Addf(e.Name.Pos, "%s needs %s", e.Name.Text, verbatim(what))
			return false
		}
		if len(rest) > 3 {
			return tooMany(rest[3])
		}
		for _, it := range rest {
			v, ok := p.value(it.tok, e.Name.Text)
			if !ok {
				return false
			}
			e.Extra = append(e.Extra, v)
		}
	}
	return true
}

// maxPolyDim bounds the dimension n of POLY(n), and maxPolyCoeffs its
// coefficients (a polynomial of degree d in one variable has d+1), so that
// the work of evaluating one stays small for any input.
const (
	maxPolyDim    = 20
	maxPolyCoeffs = 200
)

// hasPoly reports whether one of the calls is POLY(...).
func hasPoly(calls []item) bool {
	for _, c := range calls {
		if strings.EqualFold(c.tok.text, "poly") {
			return true
		}
	}
	return false
}

// poly reads the SPICE2 polynomial form of a controlled source:
//
//	E|G out+ out- POLY(n) c1+ c1- ... cn+ cn- p0 p1 ...   (node pairs, each may be written (a,b))
//	F|H out+ out- POLY(n) V1 ... Vn p0 p1 ...
//
// Initial conditions IC=... after the coefficients matter only to
// transient analysis and are ignored with a note.
func (p *parser) poly(e *ElementStmt, its []item) bool {
	if !p.nodes(e, its, 2, "two output nets") {
		return false
	}
	rest := its[2:]
	if len(rest) == 0 || rest[0].kind != iCall || !strings.EqualFold(rest[0].tok.text, "poly") {
		p.errs.Addf(e.Name.Pos, "%s: POLY(n) must follow the two output nets", e.Name.Text)
		return false
	}
	call := rest[0]
	st := &PolyStmt{Pos: call.tok.pos}
	if len(call.args) != 1 || call.args[0].kind != iValue {
		p.errs.Addf(call.tok.pos, "%s: POLY needs its dimension, POLY(n)", e.Name.Text)
		return false
	}
	n, err := strconv.Atoi(call.args[0].tok.text)
	if err != nil || n < 1 || n > maxPolyDim {
		p.errs.Addf(call.args[0].tok.pos, "%s: POLY(%s): the dimension must be a whole number from 1 to %d", e.Name.Text, call.args[0].tok.text, maxPolyDim)
		return false
	}
	st.N = n
	rest = rest[1:]
	// The controls: node pairs (E, G) or voltage source names (F, H),
	// flattened out of any (a,b) groups.
	want := 2 * n
	if e.Kind == 'F' || e.Kind == 'H' {
		want = n
	}
	var ctl []item
	for len(rest) > 0 && len(ctl) < want {
		it := rest[0]
		switch {
		case it.kind == iCall && it.tok.text == "":
			ctl = append(ctl, it.args...)
		case it.kind == iValue && it.tok.kind == tWord:
			ctl = append(ctl, it)
		default:
			p.errs.Addf(it.tok.pos, "%s: expected a controlling %s, found %s", e.Name.Text, map[bool]string{true: "net", false: "voltage source"}[want == 2*n], it.tok)
			return false
		}
		rest = rest[1:]
	}
	if len(ctl) != want {
		what := fmt.Sprintf("%d controlling net pairs", n)
		if want == n {
			what = fmt.Sprintf("%d controlling voltage sources", n)
		}
		p.errs.Addf(st.Pos, "%s: POLY(%d) needs %s, found %d name%s", e.Name.Text, n, what, len(ctl), plural(len(ctl)))
		return false
	}
	for _, it := range ctl {
		if it.kind != iValue || it.tok.kind != tWord {
			p.errs.Addf(it.tok.pos, "%s: expected a name, found %s", e.Name.Text, it.tok)
			return false
		}
		w := Word{it.tok.text, it.tok.pos}
		if want == n {
			st.Controls = append(st.Controls, w)
		} else {
			e.Nodes = append(e.Nodes, w)
		}
	}
	for _, it := range rest {
		switch {
		case it.kind == iValue:
			v, ok := p.value(it.tok, e.Name.Text)
			if !ok {
				return false
			}
			st.Coeffs = append(st.Coeffs, v)
		case it.kind == iPair && strings.EqualFold(it.tok.text, "ic"):
			p.errs.Notef(it.tok.pos, "%s: the initial condition IC= matters only to transient analysis and is ignored", e.Name.Text)
		default:
			p.errs.Addf(it.tok.pos, "%s: expected a polynomial coefficient, found %s", e.Name.Text, it.tok)
			return false
		}
	}
	if len(st.Coeffs) == 0 {
		p.errs.Addf(st.Pos, "%s: POLY(%d) has no coefficients", e.Name.Text, n)
		return false
	}
	if len(st.Coeffs) > maxPolyCoeffs {
		p.errs.Addf(st.Pos, "%s: POLY(%d) has %d coefficients, more than the limit of %d", e.Name.Text, n, len(st.Coeffs), maxPolyCoeffs)
		return false
	}
	e.Poly = st
	return true
}

// instance reads an X line: X1 port... SUBCKT [params:] [a=1 ...].
func (p *parser) instance(e *ElementStmt, pos []item, calls []item) bool {
	if len(calls) > 0 {
		p.errs.Addf(calls[0].tok.pos, "%s: unexpected '('", e.Name.Text)
		return false
	}
	var words []item
	for _, it := range pos {
		if strings.EqualFold(it.tok.text, "params:") && it.tok.kind == tWord {
			continue
		}
		if it.tok.kind != tWord {
			p.errs.Addf(it.tok.pos, "%s: expected a net or subcircuit name, found %s", e.Name.Text, it.tok)
			return false
		}
		words = append(words, it)
	}
	if len(words) == 0 {
		p.errs.Addf(e.Name.Pos, "%s needs nets and a subcircuit name", e.Name.Text)
		return false
	}
	for _, it := range words[:len(words)-1] {
		e.Nodes = append(e.Nodes, Word{it.tok.text, it.tok.pos})
	}
	last := words[len(words)-1].tok
	e.Subckt = Word{last.text, last.pos}
	return true
}

// waveArgs gives the least and most argument counts of each waveform.
var waveArgs = map[WaveKind][2]int{
	WaveSin:   {2, 6},
	WavePulse: {2, 8},
	WavePWL:   {2, 1 << 30},
	WaveExp:   {2, 6},
}

// sourceWords are the keywords of a source's value part.
var sourceWords = map[string]bool{
	"dc": true, "ac": true, "sin": true, "sine": true, "pulse": true, "pwl": true, "exp": true,
	"sffm": true, "am": true, "distof1": true, "distof2": true,
}

func isKeyword(it item) bool {
	return it.kind == iValue && it.tok.kind == tWord && sourceWords[strings.ToLower(it.tok.text)]
}

// source reads the value part of a V or I line: [DC] value, DC value,
// dc(value), dc=value, AC [mag [phase]] (no magnitude reads as 1, as
// SPICE3 does), ac=mag[,phase], and one waveform SIN/PULSE/PWL/EXP with or
// without parentheses.
func (p *parser) source(e *ElementStmt, its []item) *SourceStmt {
	s := &SourceStmt{}
	setDC := func(v Value) {
		if s.DC != nil {
			p.errs.Addf(v.Pos, "%s: DC value given twice", e.Name.Text)
		}
		s.DC = &v
	}
	// following returns the value items after i that are not keywords.
	following := func(i, most int) []item {
		var out []item
		for j := i + 1; j < len(its) && len(out) < most; j++ {
			if its[j].kind != iValue || isKeyword(its[j]) {
				break
			}
			out = append(out, its[j])
		}
		return out
	}
	vals := func(args []item, what string) ([]Value, bool) {
		var out []Value
		for _, a := range args {
			if a.kind != iValue {
				p.errs.Addf(a.tok.pos, "%s: %s: expected a value, found %s", e.Name.Text, verbatim(what), a.tok)
				return nil, false
			}
			v, ok := p.value(a.tok, e.Name.Text)
			if !ok {
				return nil, false
			}
			out = append(out, v)
		}
		return out, true
	}
	wave := func(kw token, args []item) {
		k := WaveKind(strings.ToLower(kw.text))
		if k == "sine" {
			k = WaveSin // SINE(...) is how several editors write SIN(...)
		}
		lim, known := waveArgs[k]
		if !known {
			p.errs.Notef(kw.pos, "%s: waveform %s is not used; only SIN, PULSE, PWL and EXP are read", e.Name.Text, kw.text)
			return
		}
		v, ok := vals(args, kw.text)
		if !ok {
			return
		}
		if s.Wave != "" {
			p.errs.Addf(kw.pos, "%s: a second waveform %s", e.Name.Text, kw.text)
			return
		}
		if len(v) < lim[0] || len(v) > lim[1] || (k == WavePWL && len(v)%2 != 0) {
			want := fmt.Sprintf("%d to %d values", lim[0], lim[1])
			if k == WavePWL {
				want = "time, value pairs"
			}
			p.errs.Addf(kw.pos, "%s: %s needs %s, found %d", e.Name.Text, strings.ToUpper(kw.text), verbatim(want), len(v))
			return
		}
		s.Wave, s.WaveArgs, s.WavePos = k, v, kw.pos
	}
	ac := func(kw token, args []item) {
		v, ok := vals(args, "AC")
		if !ok {
			return
		}
		if len(v) == 0 {
			// AC with no magnitude: 1, as SPICE3 reads it.
			v = []Value{{Text: "1", Pos: kw.pos}}
		}
		if len(v) > 2 {
			p.errs.Addf(kw.pos, "%s: AC needs a magnitude and an optional phase", e.Name.Text)
			return
		}
		s.ACMag = &v[0]
		if len(v) == 2 {
			s.ACPhase = &v[1]
		}
	}
	for i := 0; i < len(its); i++ {
		it := its[i]
		kw := strings.ToLower(it.tok.text)
		switch it.kind {
		case iPair:
			v, ok := p.value(it.val, e.Name.Text)
			if !ok {
				continue
			}
			switch kw {
			case "dc":
				setDC(v)
			case "ac", "acmag":
				s.ACMag = &v
				// AC=mag,phase: the phase follows as a plain value.
				if kw == "ac" && i+1 < len(its) && its[i+1].kind == iValue && !isKeyword(its[i+1]) && s.ACPhase == nil {
					if ph, ok := p.value(its[i+1].tok, e.Name.Text); ok {
						s.ACPhase = &ph
					}
					i++
				}
			case "acphase":
				s.ACPhase = &v
			case "rser", "rpar", "cpar":
				// An editor's series resistance or parallel parts: they
				// change the DC point, and biaslint's source is ideal.
				p.errs.Alertf(it.tok.pos, "%s: %s=%s is ignored: the source is read as ideal; draw the resistance as a resistor if it matters", e.Name.Text, it.tok.text, it.val.text)
			default:
				p.errs.Notef(it.tok.pos, "%s: parameter %s is ignored", e.Name.Text, it.tok.text)
			}
		case iCall:
			switch kw {
			case "dc":
				v, ok := vals(it.args, "DC")
				if ok && len(v) == 1 {
					setDC(v[0])
				} else if ok {
					p.errs.Addf(it.tok.pos, "%s: DC needs one value", e.Name.Text)
				}
			case "ac":
				ac(it.tok, it.args)
			case "":
				p.errs.Addf(it.tok.pos, "%s: unexpected '('", e.Name.Text)
			default:
				wave(it.tok, it.args)
			}
		default:
			switch {
			case kw == "dc" && it.tok.kind == tWord:
				f := following(i, 1)
				if len(f) == 0 {
					p.errs.Addf(it.tok.pos, "%s: DC needs a value", e.Name.Text)
					continue
				}
				if v, ok := p.value(f[0].tok, e.Name.Text); ok {
					setDC(v)
				}
				i++
			case kw == "ac" && it.tok.kind == tWord:
				f := following(i, 2)
				ac(it.tok, f)
				i += len(f)
			case isKeyword(it) && kw != "distof1" && kw != "distof2":
				f := following(i, 1<<30)
				wave(it.tok, f)
				i += len(f)
			case isKeyword(it):
				f := following(i, 2)
				p.errs.Notef(it.tok.pos, "%s: %s is ignored", e.Name.Text, it.tok.text)
				i += len(f)
			case s.DC == nil && s.ACMag == nil && s.Wave == "":
				if v, ok := p.value(it.tok, e.Name.Text); ok {
					setDC(v)
				}
			default:
				p.errs.Addf(it.tok.pos, "%s: unexpected %s", e.Name.Text, it.tok)
			}
		}
	}
	return s
}
