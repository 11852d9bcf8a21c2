package rules

import "strings"

// RenamedRules maps rule ids that have been renamed (lower case) to their
// current ids. Rule sets, waivers, --only, --skip and explain still accept
// an old id; a rule-set file that uses one gets a note.
var RenamedRules = map[string]string{
	"vbe-reverse-overstress":    "vbe-reverse-over-rating",
	"vce-overstress":            "vce-over-rating",
	"vcb-overstress":            "vcb-over-rating",
	"ic-overrating":             "ic-over-rating",
	"overdissipation":           "power-over-rating",
	"junction-overtemperature":  "tj-over-rating",
	"resistor-overpower":        "resistor-power-over-rating",
	"hot-junction":              "tj-over-limit",
	"team-junction-temperature": "tj-over-limit",
}

// CanonicalRuleID returns the current id for id: its new name when it
// was renamed, else id itself. renamed tells which.
func CanonicalRuleID(id string) (current string, renamed bool) {
	if n, ok := RenamedRules[strings.ToLower(strings.TrimSpace(id))]; ok {
		return n, true
	}
	return id, false
}
