package rules

import (
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rulesets"
	"go.yaml.in/yaml/v3"
)

// rawSet is one rule-set file as read, before merging with its parents.
type rawSet struct {
	file, name, description, extends string
	extendsPos                       netlist.Pos
	params                           []*rawParam
	disable                          []idRef
	severities                       []sevRef
	rules                            []*rawRule
}

type rawParam struct {
	name      string
	text      string // value as text, "" when written as a number
	value     float64
	unit      string
	unitGiven bool
	doc       string
	pos       netlist.Pos
}

type idRef struct {
	id  string
	pos netlist.Pos
}

type sevRef struct {
	id  string
	sev Severity
	pos netlist.Pos
}

// rawExpr is an expression as written, with what is needed to locate a
// column inside it in the file.
type rawExpr struct {
	src  string
	node *yaml.Node
	src0 *source
}

type source struct {
	file  string
	lines []string
}

type rawRule struct {
	id                                   string
	pos                                  netlist.Pos
	severity, unjudged                   Severity
	subject                              Subject
	applies, when, measure, value, limit *rawExpr
	message                              *rawExpr
	unit, rationale, fix, set            string
	// related are the roles of the nearby parts a finding names.
	related []string
}

var ruleIDPattern = regexp.MustCompile(`^[a-z][a-z0-9]*(-[a-z0-9]+)*$`)

var paramNamePattern = regexp.MustCompile(`^[a-z][a-z0-9_]*$`)

// fileParser reads one file's YAML tree.
type fileParser struct {
	src  *source
	errs *netlist.ErrorList
}

func (p *fileParser) pos(n *yaml.Node) netlist.Pos {
	return netlist.Pos{File: p.src.file, Line: n.Line, Col: n.Column}
}

// parseFile reads one rule-set file. It returns nil when the file cannot
// be read as a rule set at all; smaller problems are collected in l.errs.
func (l *loader) parseFile(file string, src []byte) *rawSet {
	p := &fileParser{src: &source{file: file, lines: strings.Split(string(src), "\n")}, errs: &l.errs}
	var root yaml.Node
	if err := yaml.Unmarshal(src, &root); err != nil {
		pos, msg := rulesets.YAMLError(file, err)
		l.errs.Add(pos, "rule set: "+msg)
		return nil
	}
	if len(root.Content) == 0 {
		l.errs.Add(netlist.Pos{File: file, Line: 1, Col: 1}, "rule set: the file is empty")
		return nil
	}
	doc := root.Content[0]
	rs := &rawSet{file: file}
	ok := p.mapping(doc, "rule set", []string{"name", "description", "extends", "parameters", "disable", "levels", "severities", "rules"},
		func(key string, k, v *yaml.Node) {
			switch key {
			case "name":
				rs.name = p.str(v, key)
			case "description":
				rs.description = p.str(v, key)
			case "extends":
				rs.extends, rs.extendsPos = p.str(v, key), p.pos(v)
			case "parameters":
				p.mapping(v, "parameters", nil, func(name string, k, v *yaml.Node) {
					if rp := p.param(name, k, v); rp != nil {
						rs.params = append(rs.params, rp)
					}
				})
			case "disable":
				for _, it := range p.seq(v, key) {
					rs.disable = append(rs.disable, idRef{p.ruleID(it), p.pos(it)})
				}
			case "levels", "severities":
				if key == "severities" {
					p.errs.Notef(p.pos(k), "the section \"severities\" is now called \"levels\" (as SARIF names a result's severity); rename it")
				}
				p.mapping(v, key, nil, func(id string, k, v *yaml.Node) {
					if sev, ok := p.severity(v); ok {
						rs.severities = append(rs.severities, sevRef{p.ruleID(k), sev, p.pos(k)})
					}
				})
			case "rules":
				seen := map[string]netlist.Pos{}
				for _, it := range p.seq(v, key) {
					r := p.rule(it)
					if r == nil {
						continue
					}
					if at, dup := seen[r.id]; dup {
						p.errs.Addf(r.pos, "rule %q is defined twice in this file (first at %s)", r.id, at)
						continue
					}
					seen[r.id] = r.pos
					rs.rules = append(rs.rules, r)
				}
			}
		})
	if !ok {
		return nil
	}
	if rs.name == "" {
		l.errs.Add(p.pos(doc), "rule set: missing name")
	}
	return rs
}

// mapping calls fn for each key of the mapping n in order. When known is
// not nil, other keys are errors. Repeated keys are errors. It reports
// whether n is a mapping.
func (p *fileParser) mapping(n *yaml.Node, what string, known []string, fn func(key string, k, v *yaml.Node)) bool {
	if n.Kind == yaml.AliasNode {
		p.errs.Addf(p.pos(n), "%s: anchors and aliases are not supported", what)
		return false
	}
	if n.Kind != yaml.MappingNode {
		p.errs.Addf(p.pos(n), "%s: expected a mapping of keys to values", what)
		return false
	}
	seen := map[string]bool{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		if k.Kind != yaml.ScalarNode {
			p.errs.Addf(p.pos(k), "%s: a key must be plain text", what)
			continue
		}
		if v.Kind == yaml.AliasNode {
			p.errs.Addf(p.pos(v), "%s: anchors and aliases are not supported", what)
			continue
		}
		if known != nil && !contains(known, k.Value) {
			p.errs.Addf(p.pos(k), "%s: unknown key %q (known keys: %s)", what, k.Value, strings.Join(known, ", "))
			continue
		}
		if seen[k.Value] {
			p.errs.Addf(p.pos(k), "%s: key %q given twice", what, k.Value)
			continue
		}
		seen[k.Value] = true
		fn(k.Value, k, v)
	}
	return true
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func (p *fileParser) str(n *yaml.Node, what string) string {
	if n.Kind != yaml.ScalarNode {
		p.errs.Addf(p.pos(n), "%s: expected text", what)
		return ""
	}
	return n.Value
}

func (p *fileParser) seq(n *yaml.Node, what string) []*yaml.Node {
	if n.Kind != yaml.SequenceNode {
		p.errs.Addf(p.pos(n), "%s: expected a list", what)
		return nil
	}
	var out []*yaml.Node
	for _, it := range n.Content {
		if it.Kind == yaml.AliasNode {
			p.errs.Addf(p.pos(it), "%s: anchors and aliases are not supported", what)
			continue
		}
		out = append(out, it)
	}
	return out
}

func (p *fileParser) severity(n *yaml.Node) (Severity, bool) {
	s := Severity(p.str(n, "level"))
	if s.Rank() > 2 {
		p.errs.Addf(p.pos(n), "level %q is not error, warning or note", n.Value)
		return "", false
	}
	return s, true
}

// param reads one parameter: a number, a value text, or a mapping with
// value, unit and doc.
func (p *fileParser) param(name string, k, v *yaml.Node) *rawParam {
	rp := &rawParam{name: name, pos: p.pos(k)}
	if !paramNamePattern.MatchString(name) {
		p.errs.Addf(rp.pos, "parameter name %q: use lower case letters, digits and _", name)
		return nil
	}
	valueNode := v
	if v.Kind == yaml.MappingNode {
		valueNode = nil
		p.mapping(v, "parameter "+name, []string{"value", "unit", "doc"}, func(key string, k, v *yaml.Node) {
			switch key {
			case "value":
				valueNode = v
			case "unit":
				rp.unit, rp.unitGiven = p.str(v, "unit"), true
				if !knownUnit(rp.unit) {
					p.errs.Addf(p.pos(v), "parameter %s: unknown unit %q (known: %s)", name, rp.unit, strings.Join(Units[1:], " "))
				}
			case "doc":
				rp.doc = p.str(v, "doc")
			}
		})
		if valueNode == nil {
			p.errs.Addf(rp.pos, "parameter %s: missing value", name)
			return nil
		}
	}
	if valueNode.Kind != yaml.ScalarNode {
		p.errs.Addf(p.pos(valueNode), "parameter %s: the value must be a number or a value with its unit", name)
		return nil
	}
	rp.pos = p.pos(valueNode)
	if valueNode.Tag == "!!int" || valueNode.Tag == "!!float" {
		f, err := strconv.ParseFloat(strings.ReplaceAll(valueNode.Value, "_", ""), 64)
		if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			p.errs.Addf(rp.pos, "parameter %s: %q is not a finite number", name, valueNode.Value)
			return nil
		}
		rp.value = f
		return rp
	}
	rp.text = valueNode.Value
	if !rp.unitGiven {
		rp.unit = inferUnit(rp.text)
	}
	f, err := parseQuantity(rp.text, rp.unit)
	if err != nil {
		p.errs.Addf(rp.pos, "parameter %s: %v", name, err)
		return nil
	}
	rp.value = f
	return rp
}

// inferUnit reads the unit off a value text: "80%" is "%", "2.5 V" and
// "10mA" are "V" and "A". The one-letter units F, H, K and s are taken
// only after a space, since a SPICE-style value uses F as a scale suffix.
func inferUnit(text string) string {
	t := strings.TrimSpace(text)
	if strings.HasSuffix(t, "%") {
		return "%"
	}
	if i := strings.LastIndexByte(t, ' '); i >= 0 {
		if u := strings.TrimSpace(t[i+1:]); knownUnit(u) {
			return u
		}
	}
	for _, u := range []string{"K/W", "Ohm", "Hz", "V", "A", "W"} {
		if strings.HasSuffix(t, u) {
			return u
		}
	}
	return ""
}

// rule reads one rule mapping.
func (p *fileParser) rule(n *yaml.Node) *rawRule {
	r := &rawRule{pos: p.pos(n), unjudged: SeverityNote}
	var idSeen, sevSeen, subjSeen bool
	exprKeys := map[string]**rawExpr{"applies": &r.applies, "when": &r.when, "measure": &r.measure,
		"value": &r.value, "limit": &r.limit, "message": &r.message}
	ok := p.mapping(n, "rule", []string{"id", "level", "severity", "subject", "applies", "when", "measure", "value", "limit",
		"unit", "message", "rationale", "fix", "unjudged", "related"},
		func(key string, k, v *yaml.Node) {
			expr := func() *rawExpr {
				s := p.str(v, key)
				return &rawExpr{src: s, node: v, src0: p.src}
			}
			switch key {
			case "id":
				r.id, r.pos, idSeen = p.ruleID(v), p.pos(v), true
				if !ruleIDPattern.MatchString(r.id) {
					p.errs.Addf(p.pos(v), "rule id %q: use kebab-case (lower case words joined by -)", r.id)
				}
			case "level", "severity":
				if key == "severity" {
					p.errs.Notef(p.pos(k), "the rule key \"severity\" is now called \"level\" (as SARIF names it); rename it")
				}
				r.severity, sevSeen = p.severityOf(v)
			case "unjudged":
				r.unjudged, _ = p.severityOf(v)
			case "subject":
				r.subject, subjSeen = Subject(p.str(v, key)), true
				if r.subject == "node" {
					p.errs.Notef(p.pos(v), "subject \"node\" is now called \"net\"; rename it")
					r.subject = SubjectNet
				}
				switch r.subject {
				case SubjectTransistor, SubjectResistor, SubjectNet:
				default:
					p.errs.Addf(p.pos(v), "subject %q is not transistor, resistor or net", v.Value)
					subjSeen = false
				}
			case "applies", "when", "measure", "value", "limit", "message":
				*exprKeys[key] = expr()
			case "unit":
				r.unit = p.str(v, key)
				if !knownUnit(r.unit) {
					p.errs.Addf(p.pos(v), "unknown unit %q (known: %s)", r.unit, strings.Join(Units[1:], " "))
				}
			case "rationale":
				r.rationale = p.str(v, key)
			case "fix":
				r.fix = p.str(v, key)
			case "related":
				for _, item := range p.seq(v, key) {
					role := p.str(item, key)
					if !slices.Contains(checks.NearbyRoles, role) {
						p.errs.Addf(p.pos(item), "related: %q is not a role of a nearby part (known: %s)", role, strings.Join(checks.NearbyRoles, ", "))
						continue
					}
					r.related = append(r.related, role)
				}
			}
		})
	if !ok {
		return nil
	}
	missing := func(what string) { p.errs.Addf(r.pos, "rule %s: missing %s", r.id, what) }
	if !idSeen {
		p.errs.Add(r.pos, "rule without an id")
		return nil
	}
	if !sevSeen {
		missing("level")
	}
	if !subjSeen {
		missing("subject")
	}
	if r.when == nil {
		missing("when")
	}
	if r.message == nil {
		missing("message")
	}
	if len(r.related) > 0 && subjSeen && r.subject != SubjectTransistor {
		p.errs.Addf(r.pos, "rule %s: related names parts near a transistor; the rule's subject is %s", r.id, r.subject)
	}
	if (r.value == nil) != (r.limit == nil) {
		p.errs.Addf(r.pos, "rule %s: value and limit go together; give both or neither", r.id)
	}
	if !sevSeen || !subjSeen || r.when == nil || r.message == nil {
		return nil
	}
	return r
}

func (p *fileParser) severityOf(v *yaml.Node) (Severity, bool) { return p.severity(v) }

// ruleID reads a rule id, taking a renamed id as its current one with a
// note.
func (p *fileParser) ruleID(n *yaml.Node) string {
	id := p.str(n, "rule id")
	if cur, renamed := CanonicalRuleID(id); renamed {
		p.errs.Notef(p.pos(n), "rule %q is now called %q; rename it", id, cur)
		return cur
	}
	return id
}

// at locates the 1-based line and column (in runes) of an expression's
// text within the file, from the YAML node that holds it.
func (e *rawExpr) at(line, col int) netlist.Pos {
	n := e.node
	pos := netlist.Pos{File: e.src0.file, Line: n.Line, Col: n.Column}
	switch n.Style {
	case yaml.DoubleQuotedStyle, yaml.SingleQuotedStyle:
		pos.Col += 1 + col - 1
	case yaml.LiteralStyle, yaml.FoldedStyle:
		// The text starts on the line after the indicator, at the block's
		// indentation.
		pos.Line = n.Line + line
		pos.Col = 1 + indentOf(e.src0.lines, pos.Line) + col - 1
	default:
		// Plain scalars are folded to one line; the column is counted on
		// the first line.
		pos.Col += col - 1
	}
	return pos
}

func indentOf(lines []string, line int) int {
	if line < 1 || line > len(lines) {
		return 0
	}
	s := lines[line-1]
	return len(s) - len(strings.TrimLeft(s, " "))
}
