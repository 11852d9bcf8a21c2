package rules

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"sort"
	"strconv"
	"strings"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/conf"
	"github.com/expr-lang/expr/file"
	"github.com/expr-lang/expr/parser"
	"github.com/expr-lang/expr/vm"
)

// transistorEnv, resistorEnv and nodeEnv are the typed environments of
// rule expressions: the subject's facts promoted, the case's names, and the
// set's parameters as param.
type transistorEnv struct {
	checks.Transistor
	Scenario string             `expr:"scenario"`
	Corner   string             `expr:"corner"`
	Param    map[string]float64 `expr:"param"`
}

type resistorEnv struct {
	checks.Resistor
	Scenario string             `expr:"scenario"`
	Corner   string             `expr:"corner"`
	Ambient  float64            `expr:"ambient"`
	Param    map[string]float64 `expr:"param"`
}

type nodeEnv struct {
	checks.Node
	Scenario string             `expr:"scenario"`
	Corner   string             `expr:"corner"`
	Ambient  float64            `expr:"ambient"`
	Param    map[string]float64 `expr:"param"`
}

// envType returns the environment type of a subject.
func envType(s Subject) reflect.Type {
	switch s {
	case SubjectResistor:
		return reflect.TypeOf(resistorEnv{})
	case SubjectNode:
		return reflect.TypeOf(nodeEnv{})
	}
	return reflect.TypeOf(transistorEnv{})
}

// Fact describes one name an expression can use.
type Fact struct {
	// Name as expressions write it ("vce", "rating.vceo").
	Name string
	// Type is "float", "string", "bool" or "list".
	Type string
}

// Facts lists the names available to expressions of a subject, sorted
// (parameters, written param.NAME, are not included).
func Facts(s Subject) []Fact {
	var out []Fact
	walkFacts(envType(s), "", nil, func(name string, idx []int, t reflect.Type) {
		kind := "float"
		switch t.Kind() {
		case reflect.String:
			kind = "string"
		case reflect.Bool:
			kind = "bool"
		case reflect.Slice:
			kind = "list"
		}
		out = append(out, Fact{name, kind})
	})
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out
}

// walkFacts visits every field of t that expressions see, with its dotted
// name and field index path. Embedded structs are promoted; named struct
// fields (rating, gp) become prefixes; an embedded pointer to a struct
// is followed like an embedded struct. The recursion follows the fixed Go
// types only, so it is bounded.
func walkFacts(t reflect.Type, prefix string, idx []int, fn func(name string, idx []int, t reflect.Type)) {
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if !f.IsExported() {
			continue
		}
		tag := f.Tag.Get("expr")
		if tag == "-" {
			continue
		}
		path := append(append([]int(nil), idx...), i)
		if f.Anonymous && f.Type.Kind() == reflect.Struct {
			walkFacts(f.Type, prefix, path, fn)
			continue
		}
		if f.Anonymous && f.Type.Kind() == reflect.Pointer && f.Type.Elem().Kind() == reflect.Struct {
			// The case-independent facts a subject shares (checks.
			// TransistorFixed, ...): promoted as if embedded by value;
			// reflect.Value.FieldByIndex follows the pointer, which the
			// analysis never leaves nil.
			walkFacts(f.Type.Elem(), prefix, path, fn)
			continue
		}
		name := tag
		if name == "" {
			name = f.Name
		}
		if name == "param" && prefix == "" {
			continue
		}
		if f.Type.Kind() == reflect.Struct {
			walkFacts(f.Type, prefix+name+".", path, fn)
			continue
		}
		fn(prefix+name, path, f.Type)
	}
}

// floatFacts maps each float fact name of a subject to its field index.
func floatFacts(s Subject) map[string][]int {
	m := map[string][]int{}
	walkFacts(envType(s), "", nil, func(name string, idx []int, t reflect.Type) {
		if t.Kind() == reflect.Float64 {
			m[name] = idx
		}
	})
	return m
}

var factIndex = map[Subject]map[string][]int{
	SubjectTransistor: floatFacts(SubjectTransistor),
	SubjectResistor:   floatFacts(SubjectResistor),
	SubjectNode:       floatFacts(SubjectNode),
}

// allowedBuiltins are the expr builtins rule expressions may call: none of
// them builds a string or a collection of arbitrary size.
var allowedBuiltins = []string{
	"abs", "ceil", "floor", "round", "min", "max", "len", "float", "int",
	"lower", "upper", "trim", "hasPrefix", "hasSuffix",
	"all", "any", "none", "one", "count", "sum", "mean", "median",
}

// Guard functions replace numeric comparisons and division, so that a NaN
// operand or a zero divisor stops the evaluation with an error instead of
// silently making a comparison false.
const (
	guardPrefix = "__guard_"
)

var guardOps = map[string]string{
	"<": "lt", "<=": "le", ">": "gt", ">=": "ge", "==": "eq", "!=": "ne", "/": "div",
}

// errNaN and errDivZero are the guard failures.
var (
	errNaN     = errors.New("a compared value is not a number (NaN)")
	errDivZero = errors.New("division by zero")
)

func toFloat(v any) (float64, bool) {
	switch x := v.(type) {
	case float64:
		return x, true
	case int:
		return float64(x), true
	case float32:
		return float64(x), true
	case int64:
		return float64(x), true
	case int32:
		return float64(x), true
	case uint:
		return float64(x), true
	case uint64:
		return float64(x), true
	}
	return 0, false
}

func guardOptions() []expr.Option {
	cmp := func(op string, f func(a, b float64) bool) expr.Option {
		return expr.Function(guardPrefix+op, func(p ...any) (any, error) {
			if len(p) != 2 {
				return nil, fmt.Errorf("internal: %s with %d operands", op, len(p))
			}
			a, ok1 := toFloat(p[0])
			b, ok2 := toFloat(p[1])
			if !ok1 || !ok2 {
				return nil, fmt.Errorf("comparison of non-numbers")
			}
			if math.IsNaN(a) || math.IsNaN(b) {
				return nil, errNaN
			}
			return f(a, b), nil
		}, new(func(any, any) bool))
	}
	div := expr.Function(guardPrefix+"div", func(p ...any) (any, error) {
		if len(p) != 2 {
			return nil, fmt.Errorf("internal: division with %d operands", len(p))
		}
		a, ok1 := toFloat(p[0])
		b, ok2 := toFloat(p[1])
		if !ok1 || !ok2 {
			return nil, fmt.Errorf("division of non-numbers")
		}
		if b == 0 {
			return nil, errDivZero
		}
		return a / b, nil
	}, new(func(any, any) float64))
	return []expr.Option{
		cmp("lt", func(a, b float64) bool { return a < b }),
		cmp("le", func(a, b float64) bool { return a <= b }),
		cmp("gt", func(a, b float64) bool { return a > b }),
		cmp("ge", func(a, b float64) bool { return a >= b }),
		cmp("eq", func(a, b float64) bool { return a == b }),
		cmp("ne", func(a, b float64) bool { return a != b }),
		div,
		expr.Patch(guardPatch{}),
	}
}

// guardPatch rewrites numeric comparisons and divisions into guard calls.
type guardPatch struct{}

func isNumeric(t reflect.Type) bool {
	if t == nil {
		return false
	}
	switch t.Kind() {
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64,
		reflect.Float32, reflect.Float64:
		return true
	}
	return false
}

// Visit implements ast.Visitor.
func (guardPatch) Visit(n *ast.Node) {
	b, ok := (*n).(*ast.BinaryNode)
	if !ok {
		return
	}
	name, ok := guardOps[b.Operator]
	if !ok || !isNumeric(b.Left.Type()) || !isNumeric(b.Right.Type()) {
		return
	}
	call := &ast.CallNode{Callee: &ast.IdentifierNode{Value: guardPrefix + name}, Arguments: []ast.Node{b.Left, b.Right}}
	ast.Patch(n, call)
}

// kind of result an expression must give.
type resultKind int

const (
	wantBool resultKind = iota
	wantFloat
	wantAny
)

// program is one compiled expression with the facts it refers to.
type program struct {
	src   string
	prog  *vm.Program
	facts []string
}

// uses reports whether the program's text names fact name (of any type;
// facts lists only the float ones).
func (p *program) uses(name string) bool {
	if p == nil {
		return false
	}
	for i := strings.Index(p.src, name); i >= 0; {
		end := i + len(name)
		if (i == 0 || !identByte(p.src[i-1])) && (end == len(p.src) || !identByte(p.src[end])) {
			return true
		}
		j := strings.Index(p.src[i+1:], name)
		if j < 0 {
			break
		}
		i += 1 + j
	}
	return false
}

func identByte(c byte) bool {
	return c == '_' || c == '.' || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z') || ('0' <= c && c <= '9')
}

// compiled holds a rule's programs.
type compiled struct {
	applies, when, measure, value, limit *program
	message                              []piece
}

// piece is a literal part of a message template or a placeholder.
type piece struct {
	text string
	prog *program
	unit string
	isQ  bool
}

// compileRule compiles every expression of r against the environment of
// its subject; problems are located errors in l.errs.
func (l *loader) compileRule(r *rawRule, params map[string]bool) *Rule {
	rule := &Rule{ID: r.id, Severity: r.severity, Subject: r.subject, Unit: r.unit,
		Rationale: r.rationale, Fix: r.fix, Unjudged: r.unjudged, Set: r.set, Pos: r.pos, Related: r.related}
	c := &compiled{}
	before := len(l.errs.Errors())
	usedParams := map[string]bool{}
	comp := func(e *rawExpr, want resultKind) *program {
		if e == nil {
			return nil
		}
		return l.compileExpr(e, e.src, 1, 1, r.subject, want, params, usedParams)
	}
	if r.applies != nil {
		rule.Applies = r.applies.src
		c.applies = comp(r.applies, wantBool)
	}
	rule.When = r.when.src
	c.when = comp(r.when, wantBool)
	if r.measure != nil {
		rule.Measure = r.measure.src
		c.measure = comp(r.measure, wantFloat)
	}
	if r.value != nil && r.limit != nil {
		rule.Value, rule.Limit = r.value.src, r.limit.src
		c.value = comp(r.value, wantFloat)
		c.limit = comp(r.limit, wantFloat)
	}
	rule.Message = r.message.src
	c.message = l.compileTemplate(r.message, r.subject, params, usedParams)
	if len(l.errs.Errors()) > before {
		return nil
	}
	facts := map[string]bool{}
	for _, p := range []*program{c.applies, c.when} {
		if p != nil {
			for _, f := range p.facts {
				facts[f] = true
			}
		}
	}
	rule.Facts = sortedKeys(facts)
	rule.Params = sortedKeys(usedParams)
	rule.c = c
	return rule
}

// compileExpr compiles src, which starts at line, col (1-based) of the
// expression text e, and locates errors in the file.
func (l *loader) compileExpr(e *rawExpr, src string, line, col int, subj Subject, want resultKind, params, used map[string]bool) *program {
	locate := func(off int) netlist.Pos {
		ln, cl := line, col
		for i, r := range []rune(src) {
			if i >= off {
				break
			}
			if r == '\n' {
				ln++
				cl = 1
			} else {
				cl++
			}
		}
		return e.at(ln, cl)
	}
	if strings.TrimSpace(src) == "" {
		l.errs.Add(e.at(line, col), "empty expression")
		return nil
	}
	cfg := conf.CreateNew()
	cfg.MaxNodes = MaxExprNodes
	tree, err := parser.ParseWithConfig(src, cfg)
	if err != nil {
		l.exprError(err, locate, src)
		return nil
	}
	// Check the untyped tree before compiling: the optimizer would build a
	// constant range, so ".." must be refused first.
	bad := false
	walk(tree.Node, func(n ast.Node) {
		switch x := n.(type) {
		case *ast.BinaryNode:
			if x.Operator == ".." {
				l.errs.Add(locate(x.Location().From), "the range operator \"..\" is not allowed in rule expressions")
				bad = true
			}
		case *ast.MemberNode:
			id, ok := x.Node.(*ast.IdentifierNode)
			if !ok || id.Value != "param" {
				return
			}
			s, ok := x.Property.(*ast.StringNode)
			if !ok {
				l.errs.Add(locate(x.Location().From), "write a parameter by its name, param.NAME")
				bad = true
				return
			}
			if !params[s.Value] {
				l.errs.Addf(locate(x.Property.Location().From), "unknown parameter %q (%s)", s.Value, paramList(sortedKeys(params)))
				bad = true
				return
			}
			used[s.Value] = true
		}
	})
	if bad {
		return nil
	}
	opts := []expr.Option{expr.Env(reflect.New(envType(subj)).Elem().Interface()), expr.MaxNodes(MaxExprNodes), expr.DisableAllBuiltins()}
	for _, b := range allowedBuiltins {
		opts = append(opts, expr.EnableBuiltin(b))
	}
	opts = append(opts, guardOptions()...)
	switch want {
	case wantBool:
		opts = append(opts, expr.AsBool())
	case wantFloat:
		opts = append(opts, expr.AsFloat64())
	}
	prog, err := expr.Compile(src, opts...)
	if err != nil {
		l.exprError(err, locate, src)
		return nil
	}
	return &program{src: src, prog: prog, facts: referencedFacts(tree.Node, subj)}
}

// exprError adds a compile error of expr, located by its column and
// quoting the expression src it is about.
func (l *loader) exprError(err error, locate func(int) netlist.Pos, src string) {
	in := fmt.Sprintf(" (in %s)", quoteExpr(src))
	var fe *file.Error
	if errors.As(err, &fe) {
		l.errs.Add(locate(fe.From), fe.Message+in)
		return
	}
	l.errs.Add(locate(0), err.Error()+in)
}

// quoteExpr quotes an expression for a message, shortened to 60 bytes.
func quoteExpr(src string) string {
	s := strings.Join(strings.Fields(src), " ")
	if len(s) > 60 {
		s = s[:57] + "..."
	}
	return strconv.Quote(s)
}

// walk visits every node of the tree (children first). ast.Walk's own
// recursion is bounded by the tree's size, which MaxExprNodes caps.
func walk(root ast.Node, fn func(ast.Node)) {
	if root == nil {
		return
	}
	ast.Walk(&root, visitFunc(fn))
}

type visitFunc func(ast.Node)

func (f visitFunc) Visit(n *ast.Node) { f(*n) }

// referencedFacts returns the float facts an expression names: plain
// identifiers (vce) and member chains on a struct fact (rating.vceo).
func referencedFacts(root ast.Node, subj Subject) []string {
	idx := factIndex[subj]
	set := map[string]bool{}
	walk(root, func(n ast.Node) {
		switch x := n.(type) {
		case *ast.IdentifierNode:
			if _, ok := idx[x.Value]; ok {
				set[x.Value] = true
			}
		case *ast.MemberNode:
			id, ok1 := x.Node.(*ast.IdentifierNode)
			p, ok2 := x.Property.(*ast.StringNode)
			if ok1 && ok2 {
				if _, ok := idx[id.Value+"."+p.Value]; ok {
					set[id.Value+"."+p.Value] = true
				}
			}
		}
	})
	return sortedKeys(set)
}

// compileTemplate splits a message into text and {EXPR[:UNIT]} pieces and
// compiles each placeholder.
func (l *loader) compileTemplate(e *rawExpr, subj Subject, params, used map[string]bool) []piece {
	var out []piece
	var text strings.Builder
	rs := []rune(e.src)
	line, col := 1, 1
	// advance keeps line and col in step with the rune index.
	advance := func(r rune) {
		if r == '\n' {
			line++
			col = 1
		} else {
			col++
		}
	}
	for i := 0; i < len(rs); i++ {
		r := rs[i]
		switch {
		case r == '{' && i+1 < len(rs) && rs[i+1] == '{':
			text.WriteRune('{')
			advance(r)
			advance(r)
			i++
		case r == '}' && i+1 < len(rs) && rs[i+1] == '}':
			text.WriteRune('}')
			advance(r)
			advance(r)
			i++
		case r == '}':
			l.errs.Add(e.at(line, col), "message: unmatched \"}\" (write \"}}\" for a brace)")
			advance(r)
		case r == '{':
			startLine, startCol := line, col+1
			end := closingBrace(rs, i)
			if end < 0 {
				l.errs.Add(e.at(line, col), "message: unclosed \"{\" (write \"{{\" for a brace)")
				return out
			}
			body := string(rs[i+1 : end])
			src, unit, hasUnit := splitUnit(body)
			if text.Len() > 0 {
				out = append(out, piece{text: text.String()})
				text.Reset()
			}
			want := wantAny
			if hasUnit {
				want = wantFloat
			}
			p := l.compileExpr(e, src, startLine, startCol, subj, want, params, used)
			out = append(out, piece{text: body, prog: p, unit: unit, isQ: true})
			for j := i; j <= end; j++ {
				advance(rs[j])
			}
			i = end
		default:
			text.WriteRune(r)
			advance(r)
		}
	}
	if text.Len() > 0 {
		out = append(out, piece{text: text.String()})
	}
	return out
}

// closingBrace returns the index of the "}" that closes the "{" at open,
// skipping nested braces and quoted strings; -1 when there is none.
func closingBrace(rs []rune, open int) int {
	depth := 0
	var quote rune
	for j := open; j < len(rs); j++ {
		r := rs[j]
		if quote != 0 {
			if r == '\\' {
				j++
			} else if r == quote {
				quote = 0
			}
			continue
		}
		switch r {
		case '"', '\'', '`':
			quote = r
		case '{':
			depth++
		case '}':
			depth--
			if depth == 0 {
				return j
			}
		}
	}
	return -1
}

// splitUnit splits "EXPR:UNIT" at its last colon when what follows is one
// of Units; otherwise the whole body is the expression.
func splitUnit(body string) (src, unit string, ok bool) {
	i := strings.LastIndexByte(body, ':')
	if i < 0 {
		return body, "", false
	}
	u := strings.TrimSpace(body[i+1:])
	if u == "" || !knownUnit(u) {
		return body, "", false
	}
	return body[:i], u, true
}

// paramList lists parameter names for a message.
func paramList(names []string) string {
	if len(names) == 0 {
		return "the rule set has no parameters"
	}
	return "parameters: " + strings.Join(names, ", ")
}
