package rules

import (
	"strings"
	"testing"
)

// The related key names roles of nearby parts; an unknown role and a
// related key on a rule that does not judge transistors are located
// errors.
func TestRelatedKey(t *testing.T) {
	rs, err := Parse("t.yaml", []byte("name: t\nrules:\n  - id: a\n    level: note\n    subject: transistor\n    when: vce > 1\n    message: m\n    related: [bleed resistor, drive]\n"), LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(rs.Rules[0].Related, ","); got != "bleed resistor,drive" {
		t.Errorf("related %q", got)
	}
	for _, tc := range []struct{ src, want string }{
		{"name: t\nrules:\n  - id: a\n    level: note\n    subject: transistor\n    when: vce > 1\n    message: m\n    related: [bleed resistr]\n",
			// "    related: [bleed resistr]": the item starts at col 15.
			`t.yaml:8:15: error: related: "bleed resistr" is not a role`},
		{"name: t\nrules:\n  - id: a\n    level: note\n    subject: net\n    when: v > 1\n    message: m\n    related: [drive]\n",
			"t.yaml:3:9: error: rule a: related names parts near a transistor"},
	} {
		_, err := Parse("t.yaml", []byte(tc.src), LoadOptions{})
		if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
			t.Errorf("error %v, want %q", err, tc.want)
		}
	}
}
