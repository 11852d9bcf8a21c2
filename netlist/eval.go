package netlist

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/vm"

	"github.com/biaslint/biaslint/netlist/units"
)

// Parameter evaluation. A Value is a number with a SPICE suffix, a
// parameter name, or an expression in the github.com/expr-lang/expr
// language (+ - * / ^ or **, comparisons, a ? b : c) with the functions in
// exprFuncs. Number literals inside expressions take SPICE suffixes and RKM
// codes ({2*1k} = 2000); names are case-insensitive.

// maxEvalDepth bounds how deeply parameter definitions may refer to each
// other, so that a long chain cannot exhaust the stack.
const maxEvalDepth = 200

// Limits on one expression, so that the expression parser's recursion and
// the messages quoting an expression stay small.
const (
	maxExprLen     = 4096
	maxExprNesting = 64
)

// pdef is one parameter definition in a scope and its evaluation state.
type pdef struct {
	v     Value
	in    *env // the scope v is evaluated in
	state int8 // 0 not yet, 1 being evaluated, 2 done, 3 failed
	val   float64
}

// env is a parameter scope: the top level, or one subcircuit instance.
// parent is the lexically enclosing scope (the instance of the enclosing
// definition, or the top level); path and chain are the instance path.
type env struct {
	parent *env
	defs   map[string]*pdef
	def    *Subckt
	path   string
	chain  []Instance
	ports  map[string]string // port key -> flat outer node
}

// exprFunc is a function callable in expressions, with its argument count
// (-1: one or more).
type exprFunc struct {
	n  int
	fn func(a []float64) float64
}

func f1(fn func(float64) float64) exprFunc {
	return exprFunc{1, func(a []float64) float64 { return fn(a[0]) }}
}

func f2(fn func(x, y float64) float64) exprFunc {
	return exprFunc{2, func(a []float64) float64 { return fn(a[0], a[1]) }}
}

// exprFuncs are the functions of parameter expressions. log and ln are the
// natural logarithm, as in SPICE-class readers; int truncates towards zero;
// sgn is -1, 0 or 1.
var exprFuncs = map[string]exprFunc{
	"sqrt": f1(math.Sqrt), "exp": f1(math.Exp), "log": f1(math.Log), "ln": f1(math.Log),
	"log10": f1(math.Log10), "abs": f1(math.Abs), "sin": f1(math.Sin), "cos": f1(math.Cos),
	"tan": f1(math.Tan), "asin": f1(math.Asin), "acos": f1(math.Acos), "atan": f1(math.Atan),
	"sinh": f1(math.Sinh), "cosh": f1(math.Cosh), "tanh": f1(math.Tanh),
	"floor": f1(math.Floor), "ceil": f1(math.Ceil), "int": f1(math.Trunc), "round": f1(math.Round),
	"sgn": f1(sgn), "sign": f1(sgn),
	"pow": f2(math.Pow), "pwr": f2(math.Pow), "atan2": f2(math.Atan2), "hypot": f2(math.Hypot),
	"min": {-1, func(a []float64) float64 {
		m := a[0]
		for _, x := range a[1:] {
			m = math.Min(m, x)
		}
		return m
	}},
	"max": {-1, func(a []float64) float64 {
		m := a[0]
		for _, x := range a[1:] {
			m = math.Max(m, x)
		}
		return m
	}},
}

func sgn(x float64) float64 {
	switch {
	case x > 0:
		return 1
	case x < 0:
		return -1
	}
	return 0
}

// exprOptions are the expr compile options: no built-ins, our functions.
var exprOptions = func() []expr.Option {
	opts := []expr.Option{expr.DisableAllBuiltins(), expr.MaxNodes(5000)}
	for name, f := range exprFuncs {
		opts = append(opts, expr.Function(name, func(params ...any) (any, error) {
			if (f.n >= 0 && len(params) != f.n) || len(params) == 0 {
				return nil, fmt.Errorf("%s takes %s", name, argCount(f.n))
			}
			a := make([]float64, len(params))
			for i, p := range params {
				x, ok := toFloat(p)
				if !ok {
					return nil, fmt.Errorf("%s: argument %d is not a number", name, i+1)
				}
				a[i] = x
			}
			return f.fn(a), nil
		}))
	}
	return opts
}()

func argCount(n int) string {
	switch n {
	case -1:
		return "one or more arguments"
	case 1:
		return "one argument"
	}
	return fmt.Sprintf("%d arguments", n)
}

func toFloat(v any) (float64, bool) {
	switch x := v.(type) {
	case float64:
		return x, true
	case int:
		return float64(x), true
	case int64:
		return float64(x), true
	case float32:
		return float64(x), true
	}
	return 0, false
}

// exprOperators are words of the expression language kept as operators.
var exprOperators = map[string]bool{"and": true, "or": true, "not": true}

// identRef is a parameter name used in an expression and its byte offset.
type identRef struct {
	name string
	off  int
}

// preprocess rewrites expression text for expr: number literals with SPICE
// suffixes become plain floating-point literals, names are folded to lower
// case. It returns the parameter names used.
func preprocess(src string) (string, []identRef, error) {
	var b strings.Builder
	var refs []identRef
	isIdent := func(c byte) bool {
		return c == '_' || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z') || ('0' <= c && c <= '9')
	}
	for i := 0; i < len(src); {
		c := src[i]
		switch {
		case c == '_' || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z'):
			j := i
			for j < len(src) && isIdent(src[j]) {
				j++
			}
			name := strings.ToLower(src[i:j])
			k := j
			for k < len(src) && (src[k] == ' ' || src[k] == '\t') {
				k++
			}
			switch {
			case k < len(src) && src[k] == '(':
				if _, ok := exprFuncs[name]; !ok {
					return "", nil, fmt.Errorf("unknown function %s", src[i:j])
				}
			case exprOperators[name]:
			default:
				refs = append(refs, identRef{name, i})
			}
			b.WriteString(name)
			i = j
		case isDigit(c) || (c == '.' && i+1 < len(src) && isDigit(src[i+1])):
			j := i
			for j < len(src) && (isDigit(src[j]) || src[j] == '.') {
				j++
			}
			if j+1 < len(src) && (src[j] == 'e' || src[j] == 'E') {
				k := j + 1
				if src[k] == '+' || src[k] == '-' {
					k++
				}
				if k < len(src) && isDigit(src[k]) {
					j = k
					for j < len(src) && isDigit(src[j]) {
						j++
					}
				}
			}
			for j < len(src) && (isIdent(src[j]) || src[j] >= 0x80) {
				j++
			}
			v, _, err := units.ParseValue(src[i:j])
			if err != nil {
				return "", nil, err
			}
			b.WriteString(floatLiteral(v))
			i = j
		case c == '"' || c == '\'' || c == '`':
			return "", nil, fmt.Errorf("text strings are not allowed")
		default:
			b.WriteByte(c)
			i++
		}
	}
	return b.String(), refs, nil
}

// floatLiteral writes v so that expr reads it as a float.
func floatLiteral(v float64) string {
	s := strconv.FormatFloat(v, 'g', -1, 64)
	if !strings.ContainsAny(s, ".eEn") { // n: NaN cannot occur, Inf neither
		s += ".0"
	}
	return "(" + s + ")"
}

// isIdentText reports whether s is a plain name.
func isIdentText(s string) bool {
	if s == "" || isDigit(s[0]) {
		return false
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c == '_' || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z') || isDigit(c)) {
			return false
		}
	}
	return true
}

// evaluator evaluates Values in parameter scopes, reporting each problem
// once per position.
type evaluator struct {
	errs  quoted
	seen  map[string]bool
	progs map[string]*vm.Program
	depth int
	stack []string // names of the parameters being evaluated, outermost first
}

func newEvaluator(errs *ErrorList) *evaluator {
	return &evaluator{errs: quoted{errs}, seen: map[string]bool{}, progs: map[string]*vm.Program{}}
}

// errorf adds an error unless the same one was added at the same position.
func (ev *evaluator) errorf(pos Pos, format string, args ...any) {
	msg := sprintf(format, args...)
	k := pos.String() + "\x00E" + msg
	if ev.seen[k] {
		return
	}
	ev.seen[k] = true
	ev.errs.Add(pos, msg)
}

// notef adds a note unless the same one was added at the same position.
func (ev *evaluator) notef(pos Pos, format string, args ...any) {
	msg := sprintf(format, args...)
	k := pos.String() + "\x00N" + msg
	if ev.seen[k] {
		return
	}
	ev.seen[k] = true
	ev.errs.Notef(pos, "%s", verbatim(msg))
}

// eval evaluates v in scope e. It reports a problem and returns false when v
// cannot be evaluated or is not finite.
func (ev *evaluator) eval(v Value, e *env) (float64, bool) {
	x, ok := ev.evalRaw(v, e)
	if ok && (math.IsNaN(x) || math.IsInf(x, 0)) {
		ev.errorf(v.Pos, "value %s is not a finite number", v.short())
		return 0, false
	}
	return x, ok
}

func (ev *evaluator) evalRaw(v Value, e *env) (float64, bool) {
	t := strings.TrimSpace(v.Text)
	if t == "" {
		ev.errorf(v.Pos, "empty value")
		return 0, false
	}
	if !v.Braced {
		c := t[0]
		if isDigit(c) || c == '.' || c == '+' || c == '-' {
			x, rkm, err := units.ParseValue(t)
			if err == nil {
				if rkm {
					ev.rkmNote(v, x)
				}
				return x, true
			}
			if !strings.ContainsAny(t[1:], "*/+-()^<>=!?:") {
				ev.errorf(v.Pos, "%v", err)
				return 0, false
			}
		} else if isIdentText(t) {
			x, ok, found := ev.lookup(t, e, v.Pos)
			if !found {
				// Not a parameter: perhaps an RKM code that starts with
				// its letter (R47).
				if y, rkm, err := units.ParseValue(t); err == nil && rkm {
					ev.rkmNote(v, y)
					return y, true
				}
				switch Key(t) {
				case "nan", "inf", "infinity":
					ev.errorf(v.Pos, "bad value %q: not a finite number", t)
				default:
					ev.errorf(v.Pos, "undefined parameter %s", v.short())
				}
			}
			return x, ok
		}
	}
	return ev.expression(v, e)
}

// rkmNote notes that v was read as an IEC 60062 RKM code.
func (ev *evaluator) rkmNote(v Value, x float64) {
	t := strings.TrimSpace(v.Text)
	classic := "a name"
	for i := 0; i < len(t); i++ {
		if c := t[i]; !isDigit(c) && c != '+' && c != '-' {
			if y, err := units.Parse(t[:i+1]); err == nil && i > 0 {
				classic = units.Format(y, "")
			}
			break
		}
	}
	ev.notef(v.Pos, "%q is read as the IEC 60062 code for %s; classic SPICE readers take it as %s", t, units.Format(x, ""), classic)
}

// lookup finds parameter name from scope e outwards and evaluates it.
func (ev *evaluator) lookup(name string, e *env, use Pos) (val float64, ok, found bool) {
	k := Key(name)
	for s := e; s != nil; s = s.parent {
		d := s.defs[k]
		if d == nil {
			continue
		}
		switch d.state {
		case 2:
			return d.val, true, true
		case 3:
			return 0, false, true
		case 1:
			cycle := []string{name}
			for i := len(ev.stack) - 1; i >= 0 && Key(ev.stack[i]) != k; i-- {
				cycle = append(cycle, ev.stack[i])
			}
			cycle = append(cycle, name)
			for i, j := 0, len(cycle)-1; i < j; i, j = i+1, j-1 {
				cycle[i], cycle[j] = cycle[j], cycle[i]
			}
			if len(cycle) == 2 {
				ev.errorf(d.v.Pos, "parameter %s depends on itself", name)
			} else {
				ev.errorf(d.v.Pos, "parameters depend on each other in a cycle: %s", joinShort(cycle, " -> "))
			}
			d.state = 3
			return 0, false, true
		}
		if ev.depth >= maxEvalDepth {
			ev.errorf(use, "parameters refer to each other more than %d deep", maxEvalDepth)
			return 0, false, true
		}
		d.state = 1
		ev.depth++
		ev.stack = append(ev.stack, name)
		x, good := ev.eval(d.v, d.in)
		ev.stack = ev.stack[:len(ev.stack)-1]
		ev.depth--
		if d.state == 3 {
			return 0, false, true
		}
		if !good {
			d.state = 3
			return 0, false, true
		}
		d.state, d.val = 2, x
		return x, true, true
	}
	if k == "pi" {
		return math.Pi, true, true
	}
	return 0, false, false
}

// expression evaluates v as an expression.
func (ev *evaluator) expression(v Value, e *env) (float64, bool) {
	if len(v.Text) > maxExprLen {
		ev.errorf(v.Pos, "expression is longer than the limit of %d bytes", maxExprLen)
		return 0, false
	}
	depth, deepest := 0, 0
	for i := 0; i < len(v.Text); i++ {
		switch v.Text[i] {
		case '(', '[', '{':
			depth++
			deepest = max(deepest, depth)
		case ')', ']', '}':
			depth--
		}
	}
	if deepest > maxExprNesting {
		ev.errorf(v.Pos, "expression nests parentheses deeper than the limit of %d", maxExprNesting)
		return 0, false
	}
	text, refs, err := preprocess(v.Text)
	if err != nil {
		ev.errorf(v.Pos, "bad expression %s: %v", v.short(), err)
		return 0, false
	}
	vars := map[string]any{}
	good := true
	for _, r := range refs {
		if _, done := vars[r.name]; done {
			continue
		}
		x, ok, found := ev.lookup(r.name, e, v.Pos)
		if !found {
			p := v.Pos
			if v.Braced {
				p.Col += 1 + r.off
			} else {
				p.Col += r.off
			}
			ev.errorf(p, "undefined parameter %s in %s", v.Text[r.off:r.off+len(r.name)], v.short())
		}
		if !ok {
			good = false
		}
		vars[r.name] = x
	}
	if !good {
		return 0, false
	}
	prog := ev.progs[text]
	if prog == nil {
		opts := append([]expr.Option{expr.Env(vars)}, exprOptions...)
		prog, err = expr.Compile(text, opts...)
		if err != nil {
			ev.errorf(v.Pos, "bad expression %s: %s", v.short(), capped(firstLine(err.Error())))
			return 0, false
		}
		ev.progs[text] = prog
	}
	out, err := expr.Run(prog, vars)
	if err != nil {
		ev.errorf(v.Pos, "cannot evaluate %s: %s", v.short(), capped(firstLine(err.Error())))
		return 0, false
	}
	x, ok := toFloat(out)
	if !ok {
		ev.errorf(v.Pos, "expression %s is not a number", v.short())
		return 0, false
	}
	return x, true
}

// firstLine returns the first line of an expr error message without its
// trailing "(line:col)", which counts in the rewritten text.
func firstLine(s string) string {
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		s = s[:i]
	}
	s = strings.TrimSpace(s)
	if i := strings.LastIndex(s, " ("); i >= 0 && strings.HasSuffix(s, ")") && strings.Contains(s[i:], ":") {
		s = s[:i]
	}
	return s
}
