package report

import (
	"strings"
	"unicode"

	"github.com/biaslint/biaslint/netlist/units"
)

// abbreviations end in a full stop without ending a sentence.
var abbreviations = []string{"e.g.", "i.e.", "etc.", "approx.", "vs.", "cf.", "incl.", "max.", "min.", "typ.", "no.", "fig.", "ref."}

// FirstSentence returns the first sentence of s, with runs of white space
// joined: up to the first full stop, question or exclamation mark that is
// followed by a space and an upper-case letter, a digit or an opening
// bracket, and that does not end an abbreviation such as "e.g." or
// "i.e.". Text without such a stop is returned whole.
func FirstSentence(s string) string {
	s = strings.Join(strings.Fields(s), " ")
	for i := 0; i+2 < len(s); i++ {
		c := s[i]
		if (c != '.' && c != '?' && c != '!') || s[i+1] != ' ' {
			continue
		}
		next := rune(s[i+2])
		if !unicode.IsUpper(next) && !unicode.IsDigit(next) && next != '(' {
			continue
		}
		if c == '.' && endsAbbreviation(s[:i+1]) {
			continue
		}
		return s[:i+1]
	}
	return s
}

// endsAbbreviation reports whether text ends with a known abbreviation
// (as a whole word).
func endsAbbreviation(text string) bool {
	low := strings.ToLower(text)
	for _, a := range abbreviations {
		if strings.HasSuffix(low, a) {
			start := len(low) - len(a)
			if start == 0 || low[start-1] == ' ' || low[start-1] == '(' {
				return true
			}
		}
	}
	return false
}

// Figure prints a value in its unit for a report: through units.Format,
// except that a figure without a unit is dimensionless and prints
// without an SI prefix (units.Number: a loop gain of 0.0164, not 16.4m).
func Figure(v float64, unit string) string {
	if unit == "" {
		return units.Number(v)
	}
	return units.Format(v, unit)
}
