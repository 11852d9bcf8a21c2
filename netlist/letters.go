package netlist

import (
	"strings"

	"github.com/biaslint/biaslint/netlist/units"
)

// This file notes values whose letters change their meaning in ways people
// often get wrong. SPICE reads them as written, and so does biaslint, but
// never in silence: each gets a located alert (a note every report shows).
//
//   - M is milli, not mega: "R1 vcc b 1M" is one milliohm; 1MEG is meant.
//     (A lower-case "10m", as a current-sense shunt may be written on
//     purpose, is said without assuming the slip.)
//   - Letters after the number and suffix are ignored as a unit: "4.7x" is
//     4.7 with the x dropped.
//   - A unit that belongs to another kind of element: "1F" on a resistor
//     is one femtoohm (F is the femto suffix), "10uH" on a capacitor; and
//     "1F" on a capacitor is one femtofarad.

// unitsOf are the unit words that fit each element kind, lower case.
var unitsOf = map[Kind][]string{
	'R': {"ohm", "ohms", "Ω", "r"},
	'C': {"f", "farad", "farads"},
	'L': {"h", "henry", "henries", "henrys"},
	'V': {"v", "volt", "volts"},
	'I': {"a", "amp", "amps", "ampere", "amperes"},
}

// fitsUnit reports whether unit (as written) is a unit of kind k's value.
func fitsUnit(k Kind, unit string) bool {
	u := strings.ToLower(unit)
	for _, w := range unitsOf[k] {
		if u == w {
			return true
		}
	}
	return false
}

// unitNames name the unit each kind's value is in, for messages, and
// unitSymbols give its symbol for units.Format.
var (
	unitNames   = map[Kind]string{'R': "ohm", 'C': "farad", 'L': "henry", 'V': "volt", 'I': "ampere"}
	unitSymbols = map[Kind]string{'R': "Ohm", 'C': "F", 'L': "H", 'V': "V", 'I': "A"}
)

// valueLetters checks the letters of an element's value v written in
// scope e: the value itself, or, when it is just a parameter's name (rtop
// or {rtop}), the text that parameter was defined with, at its definition
// (".param rtop=1M" read as a resistor's value is one milliohm too).
func (f *flattener) valueLetters(k Kind, elem string, v Value, e *env) {
	name := strings.TrimSpace(v.Text)
	if !isIdentText(name) {
		f.letters(k, elem, v)
		return
	}
	for s := e; s != nil; s = s.parent {
		if d := s.defs[Key(name)]; d != nil {
			if d.v.Braced || !looksNumeric(strings.TrimSpace(d.v.Text)) {
				return // an expression or another name: no letters to judge
			}
			f.letters(k, elem+" (parameter "+name+")", d.v)
			return
		}
	}
}

// letters checks the letters of value v of element elem of kind k and
// alerts once per position.
func (f *flattener) letters(k Kind, elem string, v Value) {
	_, ok := unitsOf[k]
	t := strings.TrimSpace(v.Text)
	if !ok || v.Braced || t == "" || !looksNumeric(t) || f.alerted[v.Pos] {
		return
	}
	r, err := units.Read(t)
	if err != nil || r.RKM {
		return
	}
	say := func(format string, args ...any) {
		if f.alerted == nil {
			f.alerted = map[Pos]bool{}
		}
		f.alerted[v.Pos] = true
		f.errs.Alertf(v.Pos, format, args...)
	}
	unit := unitNames[k]
	num := t[:len(t)-len(r.Suffix)-len(r.Unit)]
	suf := strings.ToLower(r.Suffix)
	ohms := r.Unit == "" || fitsUnit('R', r.Unit) // 1M, 1Mohm, 1MR
	switch {
	case r.Suffix == "M" && k == 'R' && ohms:
		say("%s: %s is %s milliohm (SPICE reads M as milli); write %sMEG for %s megohm", elem, t, num, num, num)
		return
	case r.Suffix == "m" && k == 'R' && r.Unit == "":
		// A lower-case m is also how a current-sense shunt is written on
		// purpose: said without assuming the slip (and not at all when
		// the unit follows, 10mOhm).
		say("%s: %s is %s milliohm (SPICE reads m as milli); if a megohm is meant, write %sMEG", elem, t, num, num)
		return
	case suf == "f" && r.Unit == "" && k != 'C':
		say("%s: %s is %s femto%s (F is the femto suffix); farads do not fit a %s", elem, t, num, unit, kindName(k))
		return
	case suf == "f" && r.Unit == "" && k == 'C':
		say("%s: %s is %s femtofarad (F alone is the femto suffix); write %s for %s farad", elem, t, num, num, num)
		return
	}
	if r.Unit == "" {
		return
	}
	if fitsUnit(k, r.Unit) {
		return
	}
	for _, other := range []Kind{'R', 'C', 'L', 'V', 'I'} {
		if other != k && fitsUnit(other, r.Unit) {
			say("%s: unit %q (%s) does not fit a %s and is ignored: the value is read as %s",
				elem, r.Unit, unitNames[other], kindName(k), units.Format(r.Value, unitSymbols[k]))
			return
		}
	}
	say("%s: the letters %q after %s are not a unit biaslint knows and are ignored: the value is read as %s",
		elem, r.Unit, num+r.Suffix, units.Format(r.Value, unitSymbols[k]))
}

// modelUnits are the unit words a model parameter's value may carry after
// its number and suffix (lower case): amperes, volts, ohms, farads,
// seconds, electron-volts, kelvin and degrees.
var modelUnits = map[string]bool{"a": true, "v": true, "ohm": true, "ohms": true, "f": true, "s": true,
	"ev": true, "k": true, "c": true, "hz": true, "w": true}

// paramLetters alerts when a model parameter's value carries letters that
// are no unit: "BF=2OO" (letter O for zero) is read as BF = 2.
func (f *flattener) paramLetters(model, param string, v Value) {
	t := strings.TrimSpace(v.Text)
	if v.Braced || !looksNumeric(t) || f.alerted[v.Pos] {
		return
	}
	r, err := units.Read(t)
	if err != nil || r.RKM || r.Unit == "" || modelUnits[strings.ToLower(r.Unit)] {
		return
	}
	if f.alerted == nil {
		f.alerted = map[Pos]bool{}
	}
	f.alerted[v.Pos] = true
	f.errs.Alertf(v.Pos, "model %s: %s=%s: the letters %q are not a unit and are ignored: %s is read as %s",
		model, param, t, r.Unit, param, units.Format(r.Value, ""))
}
