// Package rulesets holds biaslint's built-in YAML files: the default rule
// set, example team and lab-course rule sets, and the parts library of
// generic transistor classes. The rule sets are read by package rules; the
// parts library is read here (Parts, LoadParts) and consumed by checks.
package rulesets

import (
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"reflect"
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

// PartRatings are the ratings of one class of the parts library. Every
// quantity is SI (V, A, W, degrees Celsius, K/W); a value the file does not
// give is NaN.
type PartRatings struct {
	// Class is the entry's name ("small-signal-npn", "generic").
	Class       string
	Description string
	// Polarity is "npn", "pnp" or "any".
	Polarity string
	// Origin says where the values come from.
	Origin string
	// Models are the model-name patterns that select the class (see MatchName).
	Models []string
	// VCEO, VCBO, VEBO are breakdown ratings, V; ICMax the maximum
	// continuous collector current, A; Pd the dissipation at 25 C, W; TjMax
	// the maximum junction temperature, C; RthJA the junction-to-ambient
	// thermal resistance, K/W; HFEMin and HFEMax the DC current gain spread.
	VCEO, VCBO, VEBO, ICMax, Pd, TjMax, RthJA, HFEMin, HFEMax float64
	// Pos is where the entry starts.
	Pos netlist.Pos
}

// Library is a parsed parts library: its entries in file order.
type Library struct {
	Entries []PartRatings
}

// GenericClass is the name of the entry used when no other entry matches.
const GenericClass = "generic"

// Lookup returns the first entry, in file order, one of whose model
// patterns matches model and whose polarity is polarity ("npn", "pnp") or
// "any". ok is false when no entry matches; callers then use Generic.
func (l *Library) Lookup(model, polarity string) (p PartRatings, ok bool) {
	for _, e := range l.Entries {
		if e.Polarity != "any" && !strings.EqualFold(e.Polarity, polarity) {
			continue
		}
		for _, pat := range e.Models {
			if MatchName(pat, model) {
				return e, true
			}
		}
	}
	return PartRatings{}, false
}

// Generic returns the "generic" entry; ok is false when the library has none.
func (l *Library) Generic() (p PartRatings, ok bool) {
	for _, e := range l.Entries {
		if e.Class == GenericClass {
			return e, true
		}
	}
	return PartRatings{}, false
}

// Parts parses the embedded parts library.
func Parts() (*Library, error) {
	src, err := fs.ReadFile(files, PartsFile)
	if err != nil {
		return nil, err
	}
	return LoadParts(Dir+"/"+PartsFile, src)
}

// partEntry is the YAML shape of one entry; pointers tell a missing value
// from zero.
type partEntry struct {
	Class       string   `yaml:"class"`
	Description string   `yaml:"description"`
	Polarity    string   `yaml:"polarity"`
	Origin      string   `yaml:"origin"`
	Models      []string `yaml:"models"`
	VCEO        *float64 `yaml:"vceo"`
	VCBO        *float64 `yaml:"vcbo"`
	VEBO        *float64 `yaml:"vebo"`
	ICMax       *float64 `yaml:"icmax"`
	Pd          *float64 `yaml:"pd"`
	TjMax       *float64 `yaml:"tjmax"`
	RthJA       *float64 `yaml:"rthja"`
	HFEMin      *float64 `yaml:"hfemin"`
	HFEMax      *float64 `yaml:"hfemax"`
}

// LoadParts parses a parts library. file names the source in positions.
// Unknown keys, a missing or repeated class name, a bad polarity and a
// negative rating are errors, returned as a netlist.ErrorList error.
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
			key := strings.ToLower(e.Class)
			switch {
			case e.Class == "":
				errs.Add(pos, "parts library: entry without a class name")
				continue
			case seen[key]:
				errs.Addf(pos, "parts library: class %q defined twice", e.Class)
				continue
			}
			seen[key] = true
			pol := strings.ToLower(e.Polarity)
			if pol == "" {
				pol = "any"
			}
			if pol != "npn" && pol != "pnp" && pol != "any" {
				errs.Addf(pos, "parts library: class %q: polarity %q is not npn, pnp or any", e.Class, e.Polarity)
			}
			p := PartRatings{
				Class: e.Class, Description: e.Description, Polarity: pol,
				Origin: e.Origin, Models: e.Models, Pos: pos,
			}
			vals := []struct {
				name string
				in   *float64
				out  *float64
			}{
				{"vceo", e.VCEO, &p.VCEO}, {"vcbo", e.VCBO, &p.VCBO}, {"vebo", e.VEBO, &p.VEBO},
				{"icmax", e.ICMax, &p.ICMax}, {"pd", e.Pd, &p.Pd}, {"tjmax", e.TjMax, &p.TjMax},
				{"rthja", e.RthJA, &p.RthJA}, {"hfemin", e.HFEMin, &p.HFEMin}, {"hfemax", e.HFEMax, &p.HFEMax},
			}
			for _, x := range vals {
				*x.out = math.NaN()
				if x.in == nil {
					continue
				}
				if *x.in < 0 || math.IsNaN(*x.in) {
					errs.Addf(pos, "parts library: class %q: %s must not be negative", e.Class, x.name)
					continue
				}
				*x.out = *x.in
			}
			lib.Entries = append(lib.Entries, p)
		}
	}
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
