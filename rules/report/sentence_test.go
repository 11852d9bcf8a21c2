package report

import (
	"math"
	"testing"
)

// Descriptions are cut at the end of their first sentence, not at an
// abbreviation or a decimal point inside it.
func TestFirstSentence(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"A team set may widen it, e.g. to 85 C (industrial). More text.", "A team set may widen it, e.g. to 85 C (industrial)."},
		{"Keep it low, i.e. below 0.3 V. Then.", "Keep it low, i.e. below 0.3 V."},
		{"One.  Two.", "One."},
		{"No stop at all", "No stop at all"},
		{"Ends here.", "Ends here."},
		{"VCE(sat) is about 0.1-0.3 V (common practice). 2 more.", "VCE(sat) is about 0.1-0.3 V (common practice)."},
	} {
		if got := FirstSentence(tc.in); got != tc.want {
			t.Errorf("FirstSentence(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// The junction-temperature margin compares rises above the ambient, not
// Celsius values: a junction at 70 C in a 25 C ambient with Tj,max
// 150 C has used 45 of its 125 K, 36 %, and is 80 K below the rating
// (arithmetic of the linear derating, common practice).
func TestTjMargin(t *testing.T) {
	m := tjMargin(70, 25, 150)
	if want := "36 % of the 125 K rise; 80.0 K below"; m.Share != want || m.Class != "ok" {
		t.Errorf("share %q class %q, want %q ok", m.Share, m.Class, want)
	}
	m = tjMargin(160, 25, 150)
	if want := "108 % of the 125 K rise; 10.0 K above"; m.Share != want || m.Class != "over" {
		t.Errorf("share %q class %q, want %q over", m.Share, m.Class, want)
	}
	if m := tjMargin(70, 25, nan()); m.Limit != "not rated" || m.Share != "" {
		t.Errorf("unrated: %+v", m)
	}
}

// Dimensionless figures print without SI prefixes; units keep theirs.
func TestFigure(t *testing.T) {
	for _, tc := range []struct {
		v    float64
		unit string
		want string
	}{
		{0.0164, "", "0.0164"}, {200, "", "200"}, {0.0164, "A", "16.4 mA"}, {53.5, "%", "53.5 %"},
	} {
		if got := Figure(tc.v, tc.unit); got != tc.want {
			t.Errorf("Figure(%g, %q) = %q, want %q", tc.v, tc.unit, got, tc.want)
		}
	}
}
func nan() float64 { return math.NaN() }
