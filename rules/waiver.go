package rules

import (
	"fmt"
	"strings"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rulesets"
)

// Waiver accepts the findings of one rule on matching devices, with a
// reason. Device is a flat device or net name, case-insensitive, where "*"
// matches any run of characters and "?" one character (X1.*).
type Waiver struct {
	Rule, Device, Reason string
	Pos                  netlist.Pos
	// External is true for a waiver kept outside the netlist (a board
	// file), false for one written in it (an annotation).
	External bool
}

// Rule ids of findings about waivers themselves.
const (
	// RuleUnusedWaiver: a waiver that matches no finding.
	RuleUnusedWaiver = "unused-waiver"
	// RuleUnknownWaiverRule: a waiver that names a rule the set does not know.
	RuleUnknownWaiverRule = "waiver-unknown-rule"
)

// ApplyWaivers marks the findings each waiver matches (same rule id,
// device matching the waiver's pattern; both case-insensitive) as waived,
// with the waiver's reason and position. It returns the findings followed
// by one warning finding for each waiver naming a rule id that is not in
// knownRuleIDs (RuleUnknownWaiverRule) and one for each waiver that
// matches nothing (RuleUnusedWaiver; a note when its rule is known but not
// active), sorted as Evaluate sorts. knownRuleIDs maps lower-case ids to
// whether the rule is active (RuleSet.RuleIDs). The input slice is not
// modified.
func ApplyWaivers(findings []Finding, waivers []Waiver, knownRuleIDs map[string]bool) []Finding {
	out := append([]Finding(nil), findings...)
	for _, w := range waivers {
		cur, _ := CanonicalRuleID(w.Rule)
		id := strings.ToLower(cur)
		active, known := knownRuleIDs[id]
		if !known {
			out = append(out, Finding{Rule: RuleUnknownWaiverRule, Severity: SeverityWarning, Device: w.Device,
				Pos: w.Pos, Message: fmt.Sprintf("waiver names rule %q, which the rule set does not have; it waives nothing", w.Rule),
				Fix: "correct the rule id (list the rules to see them) or remove the waiver"})
			continue
		}
		matched := false
		for i := range out {
			f := &out[i]
			if strings.ToLower(f.Rule) != id || !rulesets.MatchName(w.Device, f.Device) {
				continue
			}
			matched = true
			if f.Waived {
				continue // the first waiver that matches keeps its reason
			}
			f.Waived, f.WaiverReason, f.WaiverPos, f.WaiverExternal = true, w.Reason, w.Pos, w.External
		}
		if matched {
			continue
		}
		f := Finding{Rule: RuleUnusedWaiver, Severity: SeverityWarning, Device: w.Device, Pos: w.Pos,
			Message: fmt.Sprintf("waiver of %s on %s matches no finding", w.Rule, w.Device),
			Fix:     "remove the waiver if the problem is gone, or correct the device name"}
		if !active {
			f.Severity = SeverityNote
			f.Message = fmt.Sprintf("waiver of %s on %s was not checked: the rule is not active in this run", w.Rule, w.Device)
			f.Fix = ""
		}
		out = append(out, f)
	}
	sortFindings(out)
	return out
}
