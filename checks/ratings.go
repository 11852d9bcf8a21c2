package checks

// This file combines the ratings a user gives for a part (a *@part
// annotation or the board file) with those of the parts-library class its
// model falls back on. Which class that is (library matching) is decided
// in analyze.go; here only how the values combine.

import (
	"fmt"
	"math"
	"strings"

	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/netlist/units"
	"github.com/biaslint/biaslint/rulesets"
)

// deratingRef is the ambient at which a Pd rating is stated, C (data
// sheets rate Pd at 25 C ambient, common practice).
const deratingRef = 25.0

// combineRatings lays the user's values over the class's: every value the
// user gives wins, every missing one comes from the class. The three
// thermal ratings belong together, Pd = (TjMax - 25 C)/RthJA (linear
// derating, common practice), so a user's Pd is never silently derated
// along the class's RthJA to another limit:
//
//   - Pd given, RthJA not: RthJA = (TjMax - 25)/Pd, so the part is judged
//     at the user's Pd at 25 C, derated to zero at TjMax (the user's or
//     the class's);
//   - RthJA given, Pd not: Pd = (TjMax - 25)/RthJA;
//   - both given: both are used, with the class's TjMax if the user gives
//     none.
//
// When the user gives some values but not all, the returned note names
// which came from where. part may be nil (the class alone, no note).
func combineRatings(lib rulesets.PartRatings, part *board.Part) (Ratings, string) {
	r := Ratings{Part: lib.Name, Origin: "parts library: " + lib.Origin,
		VCEO: lib.VCEO, VCBO: lib.VCBO, VEBO: lib.VEBO, ICMax: lib.ICMax, Pd: lib.Pd,
		TjMax: lib.TjMax, RthJA: lib.RthJA, HFEMin: lib.HFEMin, HFEMax: lib.HFEMax}
	if lib.Class == "" {
		n := math.NaN()
		r = Ratings{VCEO: n, VCBO: n, VEBO: n, ICMax: n, Pd: n, TjMax: n, RthJA: n, HFEMin: n, HFEMax: n}
	}
	if part == nil {
		return r, ""
	}
	r.Part, r.Origin = part.Model, "annotation at "+part.Pos.String()
	type field struct {
		key  string
		dst  *float64
		user float64
	}
	fields := []field{
		{"vceo", &r.VCEO, part.VCEO}, {"vcbo", &r.VCBO, part.VCBO}, {"vebo", &r.VEBO, part.VEBO},
		{"icmax", &r.ICMax, part.ICMax}, {"pd", &r.Pd, part.Pd}, {"tjmax", &r.TjMax, part.TjMax},
		{"rthja", &r.RthJA, part.RthJA}, {"hfemin", &r.HFEMin, part.HFEMin}, {"hfemax", &r.HFEMax, part.HFEMax},
	}
	var given, fromClass, derived []string
	for _, f := range fields {
		if !math.IsNaN(f.user) {
			*f.dst = f.user
			given = append(given, f.key)
		}
	}
	hasPd, hasRth := !math.IsNaN(part.Pd), !math.IsNaN(part.RthJA)
	span := r.TjMax - deratingRef
	switch {
	case hasPd && !hasRth && span > 0 && part.Pd > 0:
		r.RthJA = span / part.Pd
		derived = append(derived, fmt.Sprintf("rthja %s from pd %s and tjmax %s", units.Format(r.RthJA, "K/W"),
			units.Format(r.Pd, "W"), units.Format(r.TjMax, "C")))
	case hasRth && !hasPd && span > 0 && part.RthJA > 0:
		r.Pd = span / part.RthJA
		derived = append(derived, fmt.Sprintf("pd %s from rthja %s and tjmax %s", units.Format(r.Pd, "W"),
			units.Format(r.RthJA, "K/W"), units.Format(r.TjMax, "C")))
	}
	for _, f := range fields {
		if math.IsNaN(f.user) && !isDerived(f.key, derived) && !math.IsNaN(*f.dst) {
			fromClass = append(fromClass, f.key+" "+ratingText(f.key, *f.dst))
		}
	}
	if len(fromClass) == 0 && len(derived) == 0 {
		return r, ""
	}
	what := strings.Join(given, ", ") + " as given"
	if len(given) == 0 {
		what = "no usable rating given"
	}
	note := fmt.Sprintf("ratings of %s: %s", part.Model, what)
	if len(fromClass) > 0 {
		note += fmt.Sprintf("; %s from the %q class (%s)", strings.Join(fromClass, ", "), lib.Class, lib.Origin)
	}
	if len(derived) > 0 {
		note += "; " + strings.Join(derived, ", ") + " (linear derating to Tj max, common practice)"
	}
	return r, note
}

func isDerived(key string, derived []string) bool {
	for _, d := range derived {
		if strings.HasPrefix(d, key+" ") {
			return true
		}
	}
	return false
}

// ratingText prints a rating value with its unit.
func ratingText(key string, v float64) string {
	switch key {
	case "vceo", "vcbo", "vebo":
		return units.Format(v, "V")
	case "icmax":
		return units.Format(v, "A")
	case "pd":
		return units.Format(v, "W")
	case "tjmax":
		return units.Format(v, "C")
	case "rthja":
		return units.Format(v, "K/W")
	}
	return units.Format(v, "")
}
