package rules

import (
	"sort"
	"strings"
)

// Combine layers rule sets given together (--ruleset A --ruleset B) the way
// extends layers a child over its parent: a later set's rule replaces an
// earlier rule with the same id in place, its parameters replace earlier
// ones of the same name (so an earlier set's rules are judged with them),
// and a rule an earlier set switched off stays off unless a later set
// defines it again. The result is named after all the sets, "a+b".
// Combine of one set returns that set.
func Combine(sets ...*RuleSet) *RuleSet {
	if len(sets) == 1 {
		return sets[0]
	}
	out := &RuleSet{}
	var names, files, descs []string
	ruleAt := map[string]int{}
	param := map[string]int{}
	disabled := map[string]bool{}
	for _, s := range sets {
		names = append(names, s.Name)
		files = append(files, s.File)
		if s.Description != "" {
			descs = append(descs, s.Description)
		}
		out.Extends = append(out.Extends, s.Extends...)
		out.Notes = append(out.Notes, s.Notes...)
		for _, p := range s.Params {
			if i, ok := param[p.Name]; ok {
				out.Params[i] = p
				continue
			}
			param[p.Name] = len(out.Params)
			out.Params = append(out.Params, p)
		}
		for _, r := range s.Rules {
			k := strings.ToLower(r.ID)
			delete(disabled, k)
			if i, ok := ruleAt[k]; ok {
				out.Rules[i] = r
				continue
			}
			ruleAt[k] = len(out.Rules)
			out.Rules = append(out.Rules, r)
		}
		for _, id := range s.Disabled {
			k := strings.ToLower(id)
			if _, active := ruleAt[k]; !active {
				disabled[id] = true
			}
		}
	}
	out.Name = strings.Join(names, "+")
	out.File = strings.Join(files, ", ")
	out.Description = strings.Join(descs, " / ")
	sort.Slice(out.Params, func(i, j int) bool { return out.Params[i].Name < out.Params[j].Name })
	for id := range disabled {
		out.Disabled = append(out.Disabled, id)
	}
	sort.Strings(out.Disabled)
	return out
}
