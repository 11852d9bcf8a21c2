package rules

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
	"github.com/biaslint/biaslint/rulesets"
)

// Severity ranks a finding.
type Severity string

// Severities of findings, from the most to the least serious.
const (
	SeverityError   Severity = "error"
	SeverityWarning Severity = "warning"
	SeverityNote    Severity = "note"
)

// Rank orders severities: 0 for error, 1 for warning, 2 for note, 3 for
// anything else.
func (s Severity) Rank() int {
	switch s {
	case SeverityError:
		return 0
	case SeverityWarning:
		return 1
	case SeverityNote:
		return 2
	}
	return 3
}

// Subject names what a rule judges.
type Subject string

// Subjects of rules.
const (
	SubjectTransistor Subject = "transistor"
	SubjectResistor   Subject = "resistor"
	SubjectNet        Subject = "net"
	// SubjectNode is the older name of SubjectNet; rule-set files may
	// still write "subject: node" (with a note).
	SubjectNode = SubjectNet
)

// Units are the units a parameter, a rule's unit key or a message
// placeholder may name. "" is a plain number; "%" a fraction shown as a
// percentage.
var Units = []string{"", "V", "A", "W", "Ohm", "C", "K", "K/W", "s", "Hz", "F", "H", "%"}

func knownUnit(u string) bool {
	for _, k := range Units {
		if u == k {
			return true
		}
	}
	return false
}

// formatValue prints v in unit u through units.Format; "%" shows a
// fraction as a percentage, and a figure without a unit is dimensionless
// (a gain, a forced beta) and prints without an SI prefix (units.Number).
func formatValue(v float64, u string) string {
	switch u {
	case "%":
		return units.Format(v*100, "%")
	case "":
		return units.Number(v)
	}
	return units.Format(v, u)
}

// MaxExtendsDepth bounds a chain of extends.
const MaxExtendsDepth = 16

// MaxExprNodes caps the size of one expression.
const MaxExprNodes = 400

// Param is a named parameter of a rule set.
type Param struct {
	Name string
	// Value is SI; a percentage is stored as a fraction (80 % is 0.8).
	Value float64
	// Unit is one of Units.
	Unit string
	Doc  string
	// Pos is where the value in force was set; From names the set that
	// set it, or "--set" for an override given to Load.
	Pos  netlist.Pos
	From string
}

// String prints the value with its unit ("800 mV", "80.0 %").
func (p Param) String() string { return formatValue(p.Value, p.Unit) }

// Rule is one compiled rule.
type Rule struct {
	ID       string
	Severity Severity
	Subject  Subject
	// Expression sources as written; Applies is "" when the rule applies
	// to every subject, Measure, Value and Limit are "" when absent.
	Applies, When, Measure, Value, Limit string
	// Unit is the unit of Value and Limit.
	Unit string
	// Message is the message template.
	Message   string
	Rationale string
	Fix       string
	// Unjudged is the severity of a finding that says the rule could not
	// be judged on a device.
	Unjudged Severity
	// Set names the rule set that defined the rule; Pos is its id's position.
	Set string
	Pos netlist.Pos
	// Facts are the facts Applies and When refer to; Params the parameters
	// any of the rule's expressions refer to. Both sorted.
	Facts  []string
	Params []string
	// Related are the roles of the nearby parts (checks.NearbyRoles) that
	// a finding of the rule names as its cause.
	Related []string

	c *compiled
}

// RuleSet is a loaded, merged and compiled rule set.
type RuleSet struct {
	Name        string
	Description string
	// File is where the set was read from; Extends the sets it extends,
	// nearest first (built-in names or file paths).
	File    string
	Extends []string
	// Params are the parameters in force, sorted by name.
	Params []Param
	// Rules are the active rules, parents' first, in file order.
	Rules []*Rule
	// Disabled are ids of rules that are known but switched off (by
	// disable in a set, or by Select), sorted.
	Disabled []string
	// Notes are located notes about the files read: old key names and
	// renamed rule ids that are still accepted.
	Notes []*netlist.Error
}

// Param returns the parameter with the given name.
func (s *RuleSet) Param(name string) (Param, bool) {
	for _, p := range s.Params {
		if p.Name == name {
			return p, true
		}
	}
	return Param{}, false
}

// Rule returns the active rule with the given id (case-insensitive), or nil.
func (s *RuleSet) Rule(id string) *Rule {
	id, _ = CanonicalRuleID(id)
	for _, r := range s.Rules {
		if strings.EqualFold(r.ID, id) {
			return r
		}
	}
	return nil
}

// RuleIDs maps every known rule id (lower case) to whether it is active.
// It is the knownRuleIDs argument of ApplyWaivers.
func (s *RuleSet) RuleIDs() map[string]bool {
	m := map[string]bool{}
	for _, id := range s.Disabled {
		m[strings.ToLower(id)] = false
	}
	for _, r := range s.Rules {
		m[strings.ToLower(r.ID)] = true
	}
	return m
}

// Select returns a copy of the set keeping only the rules named in only
// (all when only is empty) and dropping those named in skip. An id that is
// not known to the set is an error.
func (s *RuleSet) Select(only, skip []string) (*RuleSet, error) {
	known := s.RuleIDs()
	var bad []string
	check := func(ids []string) map[string]bool {
		m := map[string]bool{}
		for _, id := range ids {
			cur, _ := CanonicalRuleID(id)
			k := strings.ToLower(strings.TrimSpace(cur))
			if _, ok := known[k]; !ok {
				bad = append(bad, id)
			}
			m[k] = true
		}
		return m
	}
	o, sk := check(only), check(skip)
	if len(bad) > 0 {
		return nil, fmt.Errorf("unknown rule id(s): %s (known: %s)", strings.Join(bad, ", "), strings.Join(sortedKeys(known), ", "))
	}
	out := *s
	out.Rules = nil
	dis := append([]string(nil), s.Disabled...)
	for _, r := range s.Rules {
		k := strings.ToLower(r.ID)
		if (len(o) > 0 && !o[k]) || sk[k] {
			dis = append(dis, r.ID)
			continue
		}
		out.Rules = append(out.Rules, r)
	}
	sort.Strings(dis)
	out.Disabled = dis
	return &out, nil
}

func sortedKeys(m map[string]bool) []string {
	var ks []string
	for k := range m {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return ks
}

// maxRuleSetFile bounds a rule-set file in bytes.
const maxRuleSetFile = 4 << 20

// LoadOptions adjust a rule set as it is loaded.
type LoadOptions struct {
	// Set overrides parameters: name to value text, as a rule-set file
	// writes a value ("0.8", "80%", "2.5 V"). An unknown name is an error.
	Set map[string]string
	// Confine holds the extends paths of a rule-set file to the include
	// policy of netlists: a set extends only files inside the top set's own
	// folder or one of AllowDirs, links resolved, regular files only (a
	// rule file that travels with netlists cannot read the checking
	// machine's files). AllowHint tells how to allow a refused folder.
	Confine   bool
	AllowDirs []string
	AllowHint func(dir string) string
}

// Load reads the rule set ref: the name of a built-in set (rulesets.Names)
// or a file path. Errors are located and returned as a netlist.ErrorList
// error.
func Load(ref string, opts LoadOptions) (*RuleSet, error) {
	l := newLoader()
	l.setConfine(ref, opts)
	raw := l.resolve(ref, "", false, netlist.Pos{File: ref}, nil)
	return l.finish(raw, opts)
}

// LoadDefault loads the built-in default rule set.
func LoadDefault(opts LoadOptions) (*RuleSet, error) { return Load("default", opts) }

// Parse reads a rule set from src; file names it in positions and anchors
// a relative extends path. A built-in parent is named as in Load.
func Parse(file string, src []byte, opts LoadOptions) (*RuleSet, error) {
	l := newLoader()
	l.setConfine(file, opts)
	raw := l.parseChain(file, src, false, nil)
	return l.finish(raw, opts)
}

// loader reads sets and their parents, collecting located errors.
type loader struct {
	errs netlist.ErrorList
	// dirs are the folders extends may read from (nil: anywhere), hint how
	// to allow another.
	dirs []string
	hint func(dir string) string
}

// setConfine sets the folders extends may read from, for the top set top.
func (l *loader) setConfine(top string, opts LoadOptions) {
	if !opts.Confine {
		return
	}
	l.dirs = append([]string{filepath.Dir(top)}, opts.AllowDirs...)
	l.hint = opts.AllowHint
}

func newLoader() *loader { return &loader{} }

// builtinKey marks a built-in set in an extends stack.
func builtinKey(name string) string { return "builtin:" + strings.ToLower(name) }

// resolve finds and reads the set named by ref, extended from the file
// from (empty for the top; fromBuiltin when that file is built in), and
// merges its chain. stack holds the keys of the sets being read, for the
// cycle check.
func (l *loader) resolve(ref, from string, fromBuiltin bool, at netlist.Pos, stack []string) *merged {
	if len(stack) >= MaxExtendsDepth {
		l.errs.Addf(at, "extends chain deeper than %d sets", MaxExtendsDepth)
		return nil
	}
	path := ref
	builtin := false
	if !strings.ContainsAny(ref, `/\`) && !strings.HasSuffix(ref, ".yaml") && !strings.HasSuffix(ref, ".yml") {
		builtin = true
	}
	var src []byte
	var file, key string
	var err error
	if builtin {
		src, file, err = rulesets.RuleSet(ref)
		key = builtinKey(ref)
	} else {
		if fromBuiltin {
			l.errs.Addf(at, "a built-in rule set can only extend built-in sets, not %q", ref)
			return nil
		}
		if from != "" && !filepath.IsAbs(path) {
			path = filepath.Join(filepath.Dir(from), path)
		}
		file = path
		key = "file:" + filepath.Clean(path)
		if abs, e := filepath.Abs(path); e == nil {
			key = "file:" + abs
		}
		// Only a regular file, never blocking, and no more than the limit
		// (an extends chain can be written by whoever wrote a rule file).
		if l.dirs != nil && from != "" {
			src, err = netlist.ConfinedRead(path, l.dirs, "rule sets may extend", l.hint, maxRuleSetFile)
		} else {
			src, err = netlist.ReadRegular(path, maxRuleSetFile)
		}
		if err == nil && len(src) > maxRuleSetFile {
			err = fmt.Errorf("larger than the limit of %d bytes", maxRuleSetFile)
		}
	}
	if err != nil {
		l.errs.Addf(at, "rule set %q: %v", ref, err)
		return nil
	}
	for _, k := range stack {
		if k == key {
			chain := make([]string, 0, len(stack)+1)
			for _, k := range append(stack, key) {
				chain = append(chain, displayKey(k))
			}
			l.errs.Addf(at, "extends cycle: %q extends itself through %s", ref, strings.Join(chain, " -> "))
			return nil
		}
	}
	return l.parseChain(file, src, builtin, append(stack, key))
}

// parseChain parses one file and, when it extends another, resolves and
// merges the parent first.
func (l *loader) parseChain(file string, src []byte, builtin bool, stack []string) *merged {
	if stack == nil {
		key := "file:" + filepath.Clean(file)
		if abs, e := filepath.Abs(file); e == nil {
			key = "file:" + abs
		}
		stack = []string{key}
	}
	rs := l.parseFile(file, src)
	if rs == nil {
		return nil
	}
	var parent *merged
	if rs.extends != "" {
		parent = l.resolve(rs.extends, file, builtin, rs.extendsPos, stack)
		if parent == nil {
			return nil
		}
	}
	return l.merge(parent, rs)
}

// merged is a set with its parents applied, before compiling.
type merged struct {
	name, description, file string
	extends                 []string
	params                  map[string]*Param
	rules                   []*rawRule
	disabled                map[string]string // lower id -> id as written
}

func (l *loader) merge(parent *merged, rs *rawSet) *merged {
	m := &merged{name: rs.name, description: rs.description, file: rs.file,
		params: map[string]*Param{}, disabled: map[string]string{}}
	if parent != nil {
		m.extends = append([]string{rs.extends}, parent.extends...)
		for k, p := range parent.params {
			c := *p
			m.params[k] = &c
		}
		m.rules = append(m.rules, parent.rules...)
		for k, v := range parent.disabled {
			m.disabled[k] = v
		}
	}
	for _, rp := range rs.params {
		old, ok := m.params[rp.name]
		if !ok {
			m.params[rp.name] = &Param{Name: rp.name, Value: rp.value, Unit: rp.unit, Doc: rp.doc, Pos: rp.pos, From: rs.name}
			continue
		}
		if rp.unitGiven && rp.unit != old.Unit {
			l.errs.Addf(rp.pos, "parameter %s: unit %q differs from %q given where it is first defined (%s)", rp.name, rp.unit, old.Unit, old.Pos)
			continue
		}
		if rp.text != "" {
			v, err := parseQuantity(rp.text, old.Unit)
			if err == nil {
				err = checkRange(rp.text, v, old.Unit)
			}
			if err != nil {
				l.errs.Addf(rp.pos, "parameter %s: %v", rp.name, err)
				continue
			}
			rp.value = v
		}
		old.Value, old.Pos, old.From = rp.value, rp.pos, rs.name
		if rp.doc != "" {
			old.Doc = rp.doc
		}
	}
	index := func(id string) int {
		for i, r := range m.rules {
			if strings.EqualFold(r.id, id) {
				return i
			}
		}
		return -1
	}
	for _, r := range rs.rules {
		r.set = rs.name
		delete(m.disabled, strings.ToLower(r.id))
		if i := index(r.id); i >= 0 {
			m.rules[i] = r
		} else {
			m.rules = append(m.rules, r)
		}
	}
	for _, d := range rs.disable {
		i := index(d.id)
		if i < 0 {
			if _, ok := m.disabled[strings.ToLower(d.id)]; !ok {
				l.errs.Addf(d.pos, "disable: no rule %q in this set or the sets it extends", d.id)
			}
			continue
		}
		m.disabled[strings.ToLower(d.id)] = m.rules[i].id
		m.rules = append(m.rules[:i:i], m.rules[i+1:]...)
	}
	for _, sv := range rs.severities {
		i := index(sv.id)
		if i < 0 {
			l.errs.Addf(sv.pos, "levels: no active rule %q in this set or the sets it extends", sv.id)
			continue
		}
		c := *m.rules[i]
		c.severity = sv.sev
		m.rules[i] = &c
	}
	return m
}

// finish applies overrides and compiles the merged set.
func (l *loader) finish(m *merged, opts LoadOptions) (*RuleSet, error) {
	if m == nil {
		if err := l.errs.Err(); err != nil {
			return nil, err
		}
		return nil, fmt.Errorf("rule set could not be read")
	}
	names := make([]string, 0, len(opts.Set))
	for k := range opts.Set {
		names = append(names, k)
	}
	sort.Strings(names)
	setPos := netlist.Pos{File: "--set"}
	for _, name := range names {
		p, ok := m.params[name]
		if !ok {
			l.errs.Addf(setPos, "no parameter %q in rule set %s (%s)", name, m.name, paramList(paramNames(m.params)))
			continue
		}
		v, err := parseQuantity(opts.Set[name], p.Unit)
		if err == nil {
			err = checkRange(opts.Set[name], v, p.Unit)
		}
		if err != nil {
			l.errs.Addf(setPos, "parameter %s: %v", name, err)
			continue
		}
		p.Value, p.Pos, p.From = v, setPos, "--set"
	}
	set := &RuleSet{Name: m.name, Description: m.description, File: m.file, Extends: m.extends}
	for _, n := range paramNames(m.params) {
		set.Params = append(set.Params, *m.params[n])
	}
	for _, d := range m.disabled {
		set.Disabled = append(set.Disabled, d)
	}
	sort.Strings(set.Disabled)
	paramSet := map[string]bool{}
	for n := range m.params {
		paramSet[n] = true
	}
	for _, r := range m.rules {
		if rule := l.compileRule(r, paramSet); rule != nil {
			set.Rules = append(set.Rules, rule)
		}
	}
	if err := l.errs.Err(); err != nil {
		return nil, err
	}
	set.Notes = l.errs.Notes()
	return set, nil
}

func paramNames(m map[string]*Param) []string {
	var ns []string
	for k := range m {
		ns = append(ns, k)
	}
	sort.Strings(ns)
	return ns
}

// paramValues returns the parameters as the map expressions see as param.
func (s *RuleSet) paramValues() map[string]float64 {
	m := make(map[string]float64, len(s.Params))
	for _, p := range s.Params {
		m[p.Name] = p.Value
	}
	return m
}

// parseQuantity reads a parameter value written as text: a percentage
// ("80%", returned as 0.8) or a SPICE-style value with an optional unit,
// which must be unit when given ("2.5 V", "10mA", "4.7k").
func parseQuantity(text, unit string) (float64, error) {
	s := strings.ReplaceAll(strings.TrimSpace(text), " ", "")
	if s == "" {
		return 0, fmt.Errorf("empty value")
	}
	if strings.HasSuffix(s, "%") {
		v, err := plainNumber(strings.TrimSuffix(s, "%"))
		if err != nil {
			return 0, fmt.Errorf("bad percentage %q", text)
		}
		return v / 100, nil
	}
	if unit != "" && unit != "%" && len(s) > len(unit) && strings.EqualFold(s[len(s)-len(unit):], unit) {
		s = s[:len(s)-len(unit)]
	}
	v, err := units.Parse(s)
	if err != nil {
		return 0, fmt.Errorf("bad value %q", text)
	}
	// units.Parse ignores trailing unit letters; accept only a scale
	// suffix here, so "2.5A" for a parameter in V is an error.
	if rest := strings.TrimLeft(s, "+-0123456789.eE"); rest != "" && !scaleSuffix(rest) {
		return 0, fmt.Errorf("bad value %q: %q is not a scale suffix or the unit %q", text, rest, unit)
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("bad value %q", text)
	}
	return v, nil
}

// checkRange checks an override value v, written text, against its
// parameter's unit: a share (unit %) written as a plain number above 1 is
// refused with the percentage it probably means (80 would be 8000 %, and
// would switch the rule off), and a share, a resistance, current, power,
// capacitance, inductance, time, frequency or thermal resistance below
// zero, or a temperature below absolute zero, has no meaning.
func checkRange(text string, v float64, unit string) error {
	t := strings.TrimSpace(text)
	switch unit {
	case "%":
		if !strings.HasSuffix(t, "%") && math.Abs(v) > 1 {
			return fmt.Errorf("%q is a share: write %s%% (a plain number is a fraction, so %s would be %s %%)",
				text, t, t, strconv.FormatFloat(v*100, 'g', -1, 64))
		}
		if v < 0 {
			return fmt.Errorf("%q: a share cannot be negative", text)
		}
	case "Ohm", "A", "W", "F", "H", "s", "Hz", "K/W":
		if v < 0 {
			return fmt.Errorf("%q: a value in %s cannot be negative", text, unit)
		}
	case "C":
		if v < -273.15 {
			return fmt.Errorf("%q is below absolute zero (-273.15 C)", text)
		}
	}
	return nil
}

func plainNumber(s string) (float64, error) {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || strings.TrimLeft(s, "+-0123456789.eE") != "" {
		return 0, fmt.Errorf("bad number %q", s)
	}
	return v, nil
}

// displayKey turns a set's key ("builtin:default", "file:/abs/path.yaml")
// into its name for messages: the built-in name, or the path relative to
// the working directory when it lies below it.
func displayKey(k string) string {
	if name, ok := strings.CutPrefix(k, "builtin:"); ok {
		return name
	}
	p := strings.TrimPrefix(k, "file:")
	if wd, err := os.Getwd(); err == nil {
		if rel, err := filepath.Rel(wd, p); err == nil && !strings.HasPrefix(rel, "..") {
			return rel
		}
	}
	return p
}

func scaleSuffix(s string) bool {
	switch strings.ToLower(s) {
	case "t", "g", "meg", "k", "m", "u", "µ", "μ", "n", "p", "f":
		return true
	}
	return false
}
