package rules

import "testing"

func TestCombine(t *testing.T) {
	def, err := LoadDefault(LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	team, err := Load("team-strict", LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	c := Combine(def, team)
	seen := map[string]int{}
	for _, r := range c.Rules {
		seen[r.ID]++
		if seen[r.ID] > 1 {
			t.Errorf("rule %s appears twice", r.ID)
		}
	}
	if len(c.Rules) != len(team.Rules) {
		t.Errorf("default+team-strict has %d rules, team-strict alone %d: team-strict already extends default", len(c.Rules), len(team.Rules))
	}
	// team-strict sets vceo_share to 80 % (its own derating guideline).
	if p, ok := c.Param("vceo_share"); !ok || p.Value != 0.8 {
		t.Errorf("vceo_share = %+v, want the later set's 0.8", p)
	}
	if c.Name != "default+team-strict" {
		t.Errorf("name %q", c.Name)
	}
	if Combine(def) != def {
		t.Error("Combine of one set should return it")
	}
}
