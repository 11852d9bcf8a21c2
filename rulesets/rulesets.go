// Package rulesets holds biaslint's built-in YAML files: the default rule
// set, example team and lab-course rule sets, and the parts library of
// registered transistor types and generic classes. The rule sets are read
// by package rules; the parts library is read here (Parts, LoadParts,
// Combine) and consumed by checks, which finds a model's entry with
// Library.Lookup (type names with their variants, class patterns).
package rulesets

import (
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"maps"
	"math"
	"reflect"
	"slices"
	"sort"
	"strings"

	"github.com/biaslint/biaslint/netlist"
	"go.yaml.in/yaml/v3"
)

//go:embed *.yaml
var files embed.FS

// Dir is the directory the embedded files are shown under in positions, so
// a problem in a built-in file prints as "rulesets/default.yaml:12:3".
const Dir = "rulesets"

// FS returns the embedded files. File names are "<name>.yaml".
func FS() fs.FS { return files }

// PartsFile is the name of the embedded parts library.
const PartsFile = "parts.yaml"

// Names lists the built-in rule sets by name (file name without ".yaml"),
// sorted. The parts library is not a rule set and is not listed.
func Names() []string {
	entries, err := fs.ReadDir(files, ".")
	if err != nil {
		return nil
	}
	var names []string
	for _, e := range entries {
		n := e.Name()
		if n == PartsFile || !strings.HasSuffix(n, ".yaml") {
			continue
		}
		names = append(names, strings.TrimSuffix(n, ".yaml"))
	}
	sort.Strings(names)
	return names
}

// RuleSet returns the text of the built-in rule set with the given name
// (case-insensitive) and the file name to show in positions.
func RuleSet(name string) (src []byte, file string, err error) {
	for _, n := range Names() {
		if strings.EqualFold(n, name) {
			src, err = fs.ReadFile(files, n+".yaml")
			return src, Dir + "/" + n + ".yaml", err
		}
	}
	return nil, "", fmt.Errorf("no built-in rule set %q (built in: %s)", name, strings.Join(Names(), ", "))
}

// PartRatings are the ratings of one entry of the parts library: a
// registered type (Type true) or a generic class. Every quantity is SI (V,
// A, W, degrees Celsius, K/W); a value the file does not give is NaN.
type PartRatings struct {
	// Class is the entry's unique name: the type ("2N3904") or the class
	// ("small-signal-npn", "generic").
	Class string
	// Type is true for a registered type, matched by name with its
	// variants (see MatchType); a class is matched by its Models patterns.
	Type        bool
	Description string
	// Polarity is "npn", "pnp" or "any".
	Polarity string
	// Package names the package the dissipation figures are for ("TO-92").
	Package string
	// Origin says where the values come from.
	Origin string
	// Models are the model-name patterns that select a class (see MatchName).
	Models []string
	// Also lists other names of a type (an older designation).
	Also []string
	// Like names the type whose ratings a class takes ("" for none).
	Like string
	// VCEO, VCBO, VEBO are breakdown ratings, V; ICMax the maximum
	// continuous collector current, A; Pd the dissipation at 25 C, W; TjMax
	// the maximum junction temperature, C; RthJA the junction-to-ambient
	// thermal resistance, K/W; HFEMin and HFEMax the DC current gain spread
	// at collector current HFEIC, A.
	VCEO, VCBO, VEBO, ICMax, Pd, TjMax, RthJA, HFEMin, HFEMax, HFEIC float64
	// Groups are a type's hFE groups by suffix (upper case: "B", "25"),
	// each [hfemin, hfemax].
	Groups map[string][2]float64
	// Name is the name the entry is known by after a match: the entry's
	// name, with an hFE group suffix when one matched ("BC547B").
	Name string
	// Group is the hFE group that matched ("" for none) and Variant how
	// the model name matched ("name", "Q prefix", "hFE group B", ...).
	Group, Variant string
	// Pos is where the entry starts.
	Pos netlist.Pos
}

// Library is a parsed parts library: its entries in file order.
type Library struct {
	Entries []PartRatings
}

// GenericClass is the name of the entry used when no other entry matches.
const GenericClass = "generic"

// Lookup returns the first entry, in file order, that matches one of the
// model names (the model's own name, then its hierarchical name) and
// whose polarity is polarity ("npn", "pnp") or "any": a class by one of
// its patterns, a type by MatchType. A type matched through an hFE group
// carries that group's hFE range. ok is false when no entry matches;
// callers then use Generic.
func (l *Library) Lookup(polarity string, names ...string) (p PartRatings, ok bool) {
	for _, e := range l.Entries {
		if e.Polarity != "any" && !strings.EqualFold(e.Polarity, polarity) {
			continue
		}
		if m, ok := e.match(names); ok {
			return m, true
		}
	}
	return PartRatings{}, false
}

// LookupType returns the first registered type that matches one of the
// names whatever its polarity, so a caller can say that a model named for
// an NPN type is a PNP.
func (l *Library) LookupType(names ...string) (p PartRatings, ok bool) {
	for _, e := range l.Entries {
		if !e.Type {
			continue
		}
		if m, ok := e.match(names); ok {
			return m, true
		}
	}
	return PartRatings{}, false
}

func (e PartRatings) match(names []string) (PartRatings, bool) {
	for _, name := range names {
		if name == "" {
			continue
		}
		if !e.Type {
			for _, pat := range e.Models {
				if MatchName(pat, name) {
					e.Name, e.Variant = e.Class, "pattern "+pat
					return e, true
				}
			}
			continue
		}
		group, variant, ok := MatchType(e, name)
		if !ok {
			continue
		}
		e.Name, e.Group, e.Variant = e.Class, group, variant
		if group != "" {
			g := e.Groups[group]
			e.HFEMin, e.HFEMax = g[0], g[1]
			if isDigitByte(group[0]) {
				e.Name += "-" + group
			} else {
				e.Name += group
			}
		}
		return e, true
	}
	return PartRatings{}, false
}

func isDigitByte(c byte) bool { return '0' <= c && c <= '9' }

// maxVariantName bounds the model names MatchType looks at.
const maxVariantName = 64

// MatchType reports whether a model name names the registered type e,
// ignoring case, and how. The forms, tried in this order on the name and
// on the name without a leading "Q" (Q2N3904), each as written and cut at
// the first "_", "/" or "-" (a maker's suffix: 2N3904_ON, 2N3904-ON; a
// dash that starts an hFE group, BC337-25, matches as written first):
//
//	the type or one of its other names            2N3904
//	the type and one of its hFE groups, with or
//	without a dash                                BC547B, BC337-25, BD139-16
//
// group is the hFE group that matched ("" for none, upper case), variant
// a short description of the form ("name", "Q prefix", "hFE group B",
// "maker suffix _ON", joined with ", ").
func MatchType(e PartRatings, name string) (group, variant string, ok bool) {
	if !e.Type || len(name) > maxVariantName {
		return "", "", false
	}
	names := append([]string{e.Class}, e.Also...)
	type form struct{ s, why string }
	var forms []form
	add := func(s, why string) {
		forms = append(forms, form{s, why})
		if i := strings.IndexAny(s, "_/-"); i > 0 {
			forms = append(forms, form{s[:i], strings.TrimPrefix(why+", maker suffix "+s[i:], ", ")})
		}
	}
	add(name, "")
	if len(name) > 1 && (name[0] == 'q' || name[0] == 'Q') {
		add(name[1:], "Q prefix")
	}
	for _, f := range forms {
		for _, t := range names {
			if len(f.s) < len(t) || !strings.EqualFold(f.s[:len(t)], t) {
				continue
			}
			rest := f.s[len(t):]
			if rest == "" {
				return "", joinWhy(f.why, "name"), true
			}
			g := strings.ToUpper(strings.TrimPrefix(rest, "-"))
			if _, ok := e.Groups[g]; ok && g != "" {
				return g, joinWhy(f.why, "hFE group "+g), true
			}
		}
	}
	return "", "", false
}

func joinWhy(a, b string) string {
	if a == "" {
		return b
	}
	return a + ", " + b
}

// Generic returns the "generic" entry; ok is false when the library has none.
func (l *Library) Generic() (p PartRatings, ok bool) {
	for _, e := range l.Entries {
		if e.Class == GenericClass {
			e.Name, e.Variant = e.Class, "no match"
			return e, true
		}
	}
	return PartRatings{}, false
}

// Combine returns a library whose entries are first's then rest's (so
// first's win a lookup), with every class's "like" resolved against all
// of them. A like that names no type is an error at the class.
func Combine(first *Library, rest ...*Library) (*Library, error) {
	out := &Library{}
	for _, l := range append([]*Library{first}, rest...) {
		if l != nil {
			out.Entries = append(out.Entries, l.Entries...)
		}
	}
	var errs netlist.ErrorList
	out.resolve(&errs, true)
	if err := errs.Err(); err != nil {
		return nil, err
	}
	return out, nil
}

// resolve fills each class that names a type in Like with the type's
// ratings (where the class gives none of its own). With strict, a like
// that names no type in the library is an error.
func (l *Library) resolve(errs *netlist.ErrorList, strict bool) {
	for i := range l.Entries {
		c := &l.Entries[i]
		if c.Like == "" {
			continue
		}
		var src *PartRatings
		for j := range l.Entries {
			if t := &l.Entries[j]; t.Type && strings.EqualFold(t.Class, c.Like) {
				src = t
				break
			}
		}
		if src == nil {
			if strict {
				errs.Addf(c.Pos, "parts library: class %q: like %q names no type in the library", c.Class, c.Like)
			}
			continue
		}
		if c.Polarity != "any" && src.Polarity != c.Polarity {
			errs.Addf(c.Pos, "parts library: class %q is %s but like %q is %s", c.Class, c.Polarity, src.Class, src.Polarity)
			continue
		}
		fill := func(dst *float64, v float64) {
			if math.IsNaN(*dst) {
				*dst = v
			}
		}
		fill(&c.VCEO, src.VCEO)
		fill(&c.VCBO, src.VCBO)
		fill(&c.VEBO, src.VEBO)
		fill(&c.ICMax, src.ICMax)
		fill(&c.Pd, src.Pd)
		fill(&c.TjMax, src.TjMax)
		fill(&c.RthJA, src.RthJA)
		fill(&c.HFEMin, src.HFEMin)
		fill(&c.HFEMax, src.HFEMax)
		fill(&c.HFEIC, src.HFEIC)
		if c.Package == "" {
			c.Package = src.Package
		}
	}
}

// Parts parses the embedded parts library.
func Parts() (*Library, error) {
	src, err := fs.ReadFile(files, PartsFile)
	if err != nil {
		return nil, err
	}
	lib, err := LoadParts(Dir+"/"+PartsFile, src)
	if err != nil {
		return nil, err
	}
	return Combine(lib)
}

// partEntry is the YAML shape of one entry; pointers tell a missing value
// from zero.
type partEntry struct {
	Class       string               `yaml:"class"`
	Type        string               `yaml:"type"`
	Description string               `yaml:"description"`
	Polarity    string               `yaml:"polarity"`
	Package     string               `yaml:"package"`
	Origin      string               `yaml:"origin"`
	Models      []string             `yaml:"models"`
	Also        []string             `yaml:"also"`
	Like        string               `yaml:"like"`
	VCEO        *float64             `yaml:"vceo"`
	VCBO        *float64             `yaml:"vcbo"`
	VEBO        *float64             `yaml:"vebo"`
	ICMax       *float64             `yaml:"icmax"`
	Pd          *float64             `yaml:"pd"`
	TjMax       *float64             `yaml:"tjmax"`
	RthJA       *float64             `yaml:"rthja"`
	HFEMin      *float64             `yaml:"hfemin"`
	HFEMax      *float64             `yaml:"hfemax"`
	HFEIC       *float64             `yaml:"hfe_ic"`
	Groups      map[string][]float64 `yaml:"groups"`
}

// LoadParts parses a parts library. file names the source in positions.
// Unknown keys, a missing or repeated entry name, an entry that is both a
// type and a class, a bad polarity, a negative rating and a malformed hFE
// group are errors, returned as a netlist.ErrorList error. A class's like
// is resolved against the file's own types when it can be (Combine
// resolves the rest).
func LoadParts(file string, src []byte) (*Library, error) {
	var errs netlist.ErrorList
	var root yaml.Node
	if err := yaml.Unmarshal(src, &root); err != nil {
		pos, msg := YAMLError(file, err)
		errs.Add(pos, "parts library: "+msg)
		return nil, errs.Err()
	}
	lib := &Library{}
	if len(root.Content) == 0 {
		return lib, nil
	}
	doc := root.Content[0]
	if doc.Kind != yaml.MappingNode {
		errs.Add(nodePos(file, doc), "parts library: expected a mapping with the key \"parts\"")
		return nil, errs.Err()
	}
	seen := map[string]bool{}
	for i := 0; i+1 < len(doc.Content); i += 2 {
		k, v := doc.Content[i], doc.Content[i+1]
		if k.Value != "parts" {
			errs.Addf(nodePos(file, k), "parts library: unknown key %q (known: parts)", k.Value)
			continue
		}
		if v.Kind != yaml.SequenceNode {
			errs.Add(nodePos(file, v), "parts library: \"parts\" must be a list of entries")
			continue
		}
		for _, item := range v.Content {
			var e partEntry
			if err := strictDecode(item, &e); err != nil {
				errs.Add(nodePos(file, item), "parts library: "+err.Error())
				continue
			}
			pos := nodePos(file, item)
			name := e.Class
			if e.Type != "" {
				name = e.Type
			}
			key := strings.ToLower(name)
			switch {
			case e.Class != "" && e.Type != "":
				errs.Addf(pos, "parts library: entry %q is both a class and a type; give one", name)
				continue
			case name == "":
				errs.Add(pos, "parts library: entry without a class or type name")
				continue
			case seen[key]:
				errs.Addf(pos, "parts library: %q defined twice", name)
				continue
			}
			seen[key] = true
			pol := strings.ToLower(e.Polarity)
			if pol == "" {
				pol = "any"
			}
			if pol != "npn" && pol != "pnp" && pol != "any" {
				errs.Addf(pos, "parts library: %q: polarity %q is not npn, pnp or any", name, e.Polarity)
			}
			if e.Type != "" && pol == "any" {
				errs.Addf(pos, "parts library: type %q needs a polarity, npn or pnp", name)
			}
			if e.Type != "" && (len(e.Models) > 0 || e.Like != "") {
				errs.Addf(pos, "parts library: type %q is matched by its name; models and like belong to classes", name)
			}
			p := PartRatings{
				Class: name, Type: e.Type != "", Description: e.Description, Polarity: pol,
				Package: e.Package, Origin: e.Origin, Models: e.Models, Also: e.Also, Like: e.Like, Pos: pos,
			}
			vals := []struct {
				name string
				in   *float64
				out  *float64
			}{
				{"vceo", e.VCEO, &p.VCEO}, {"vcbo", e.VCBO, &p.VCBO}, {"vebo", e.VEBO, &p.VEBO},
				{"icmax", e.ICMax, &p.ICMax}, {"pd", e.Pd, &p.Pd}, {"tjmax", e.TjMax, &p.TjMax},
				{"rthja", e.RthJA, &p.RthJA}, {"hfemin", e.HFEMin, &p.HFEMin}, {"hfemax", e.HFEMax, &p.HFEMax},
				{"hfe_ic", e.HFEIC, &p.HFEIC},
			}
			for _, x := range vals {
				*x.out = math.NaN()
				if x.in == nil {
					continue
				}
				if *x.in < 0 || math.IsNaN(*x.in) {
					errs.Addf(pos, "parts library: %q: %s must not be negative", name, x.name)
					continue
				}
				*x.out = *x.in
			}
			if len(e.Groups) > 0 {
				p.Groups = map[string][2]float64{}
				for _, g := range slices.Sorted(maps.Keys(e.Groups)) {
					r := e.Groups[g]
					if g == "" || len(r) != 2 || !(r[0] > 0) || !(r[1] >= r[0]) {
						errs.Addf(pos, "parts library: %q: hFE group %q must be [hfemin, hfemax] with 0 < hfemin <= hfemax", name, g)
						continue
					}
					p.Groups[strings.ToUpper(g)] = [2]float64{r[0], r[1]}
				}
			}
			lib.Entries = append(lib.Entries, p)
		}
	}
	lib.resolve(&errs, false)
	if err := errs.Err(); err != nil {
		return nil, err
	}
	return lib, nil
}

// strictDecode decodes n into v (a pointer to a struct with yaml tags),
// rejecting keys the struct does not have.
func strictDecode(n *yaml.Node, v any) error {
	if n.Kind == yaml.MappingNode {
		known := map[string]bool{}
		t := reflect.TypeOf(v).Elem()
		for i := 0; i < t.NumField(); i++ {
			known[t.Field(i).Tag.Get("yaml")] = true
		}
		for i := 0; i+1 < len(n.Content); i += 2 {
			if k := n.Content[i]; !known[k.Value] {
				return fmt.Errorf("unknown key %q at line %d", k.Value, k.Line)
			}
		}
	}
	return n.Decode(v)
}

func nodePos(file string, n *yaml.Node) netlist.Pos {
	return netlist.Pos{File: file, Line: n.Line, Col: n.Column}
}

// YAMLError locates an error of go.yaml.in/yaml/v3 in file and returns
// the message without the library's "yaml: line N:" prefix. The library
// reports the line only, so the column is given as 1, keeping every
// position in the file:line:col form.
func YAMLError(file string, err error) (netlist.Pos, string) {
	pos := netlist.Pos{File: file}
	msg := err.Error()
	var te *yaml.TypeError
	if errors.As(err, &te) && len(te.Errors) > 0 {
		msg = te.Errors[0]
	}
	msg = strings.TrimPrefix(msg, "yaml: ")
	var line int
	if _, e := fmt.Sscanf(msg, "line %d:", &line); e == nil {
		// yaml reports only the line; column 1 keeps the file:line:col form.
		pos.Line, pos.Col = line, 1
		msg = strings.TrimSpace(strings.TrimPrefix(msg, fmt.Sprintf("line %d:", line)))
	}
	return pos, msg
}

// MatchName reports whether name matches pattern, ignoring case. In the
// pattern "*" matches any run of characters (also none) and "?" any one
// character; every other character matches itself. The match runs in
// O(len(pattern)·len(name)) steps.
func MatchName(pattern, name string) bool {
	p := []rune(strings.ToLower(pattern))
	s := []rune(strings.ToLower(name))
	// Classic greedy match with one backtrack point: each step advances
	// either the name or the pattern, and backtracking restarts past the
	// last star, so the loop is bounded by len(p)*len(s) iterations.
	pi, si := 0, 0
	star, mark := -1, 0
	for si < len(s) {
		switch {
		case pi < len(p) && (p[pi] == '?' || p[pi] == s[si]):
			pi++
			si++
		case pi < len(p) && p[pi] == '*':
			star, mark = pi, si
			pi++
		case star >= 0:
			pi = star + 1
			mark++
			si = mark
		default:
			return false
		}
	}
	for pi < len(p) && p[pi] == '*' {
		pi++
	}
	return pi == len(p)
}
