// Package units reads SPICE-style numeric values and prints SI quantities in
// engineering notation.
//
// Reading (Parse, ParseValue) accepts what SPICE-class netlist readers accept:
//
//   - a decimal number with an optional exponent: 10, -1.5, .47, 4.8E-14;
//   - an optional scale suffix, case-insensitive:
//     T = 1e12, G = 1e9, MEG = 1e6, K = 1e3, M = 1e-3 (milli, not mega),
//     MIL = 25.4e-6 (a thousandth of an inch, in metres), U = 1e-6,
//     N = 1e-9, P = 1e-12, F = 1e-15 (femto, not farad); the micro signs
//     µ (U+00B5) and μ (U+03BC) are read as U;
//   - trailing unit letters after the suffix, which are ignored:
//     10kOhm, 5V, 100nF, 1.5uA;
//   - IEC 60062 "RKM" value codes, where the multiplier letter stands in for
//     the decimal point: 4k7 = 4.7e3, 2R2 = 2.2, R47 = 0.47, 1M5 = 1.5e6,
//     4u7 = 4.7e-6, 6n8 = 6.8e-9, 2F2 = 2.2. In an RKM code the case of M
//     matters as the standard writes it: M is mega, m is milli. Classic SPICE
//     readers do not know RKM codes and read "4k7" as 4e3, so ParseValue
//     reports when the RKM reading was used.
//
// Printing (Format, FormatDigits) writes engineering notation: a mantissa
// in [1, 1000) with three significant digits and an SI prefix (f p n u m k
// M G T), micro written as ASCII "u": Format(1.02e-3, "A") = "1.02 mA".
package units

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Mil is one thousandth of an inch in metres, the SPICE MIL suffix.
const Mil = 25.4e-6

// maxQuoted bounds how much of an offending text an error message repeats.
const maxQuoted = 24 // as netlist shows input: a short excerpt, never a whole line

// quote returns s quoted for an error message, shortened if long.
func quote(s string) string {
	if len(s) > maxQuoted {
		cut := maxQuoted
		for cut > 0 && !utf8.RuneStart(s[cut]) {
			cut--
		}
		s = s[:cut] + "..."
	}
	return strconv.Quote(s)
}

// Parse reads a SPICE value such as "4.7k", "10MEG", "100nF", "2.5e-3" or
// the IEC 60062 code "4k7" and returns it in SI units. See the package
// documentation for the accepted forms.
func Parse(s string) (float64, error) {
	v, _, err := ParseValue(s)
	return v, err
}

// ErrSyntax is wrapped by every error Parse and ParseValue return, so callers
// can test for a value error with errors.Is.
var ErrSyntax = errors.New("bad value")

func bad(s, format string, args ...any) error {
	return fmt.Errorf("%w %s: %s", ErrSyntax, quote(s), fmt.Sprintf(format, args...))
}

// ParseValue is Parse that also reports whether the text was read as an IEC
// 60062 RKM code (4k7, 2R2, R47), which classic SPICE readers would read
// differently (4k7 as 4e3).
func ParseValue(s string) (v float64, rkm bool, err error) {
	r, err := Read(s)
	return r.Value, r.RKM, err
}

// Reading is how Read took a value apart.
type Reading struct {
	// Value is the value in SI units.
	Value float64
	// RKM reports an IEC 60062 code (4k7).
	RKM bool
	// Suffix is the scale suffix as written ("k", "M", "meg", "" for none);
	// Unit the letters after it, as written, which do not change Value
	// ("Ohm" in 10kOhm, "x" in 4.7x). Both are empty for an RKM code.
	Suffix, Unit string
}

// Read is Parse that also says how the text was read: the scale suffix and
// the trailing letters it ignored, so a caller can tell the user when
// those letters change the meaning in a way people often get wrong (1M on
// a resistor is one milliohm; 4.7x drops the x).
func Read(s string) (Reading, error) {
	v, rkm, suf, unit, err := read(s)
	return Reading{Value: v, RKM: rkm, Suffix: suf, Unit: unit}, err
}

func read(s string) (v float64, rkm bool, suf, unit string, err error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, false, "", "", fmt.Errorf("%w: empty value", ErrSyntax)
	}
	i := 0
	neg := false
	if t[0] == '+' || t[0] == '-' {
		neg = t[0] == '-'
		i++
	}
	body := t[i:]
	if v, ok, err := parseRKM(t, body); ok || err != nil {
		if neg {
			v = -v
		}
		return v, true, "", "", err
	}
	// Mantissa: digits [. digits] or . digits.
	j := 0
	nd := 0
	for j < len(body) && isDigit(body[j]) {
		j++
		nd++
	}
	if j < len(body) && body[j] == '.' {
		j++
		for j < len(body) && isDigit(body[j]) {
			j++
			nd++
		}
	}
	if nd == 0 {
		return 0, false, "", "", bad(s, "not a number")
	}
	// Exponent: e or E, optional sign, at least one digit. An 'e' not followed
	// by digits is not an exponent and no SPICE suffix starts with it.
	if j < len(body) && (body[j] == 'e' || body[j] == 'E') {
		k := j + 1
		if k < len(body) && (body[k] == '+' || body[k] == '-') {
			k++
		}
		ds := k
		for k < len(body) && isDigit(body[k]) {
			k++
		}
		if k == ds {
			return 0, false, "", "", bad(s, "exponent has no digits")
		}
		j = k
	}
	num := body[:j]
	mant, exp := num, 0
	if e := strings.IndexAny(num, "eE"); e >= 0 {
		mant = num[:e]
		x, err := strconv.Atoi(num[e+1:])
		if err != nil {
			return 0, false, "", "", bad(s, "out of range")
		}
		exp = x
	}
	rest := body[j:]
	exp10, mul, n := suffix(rest)
	suf = rest[:n]
	rest = rest[n:]
	for _, r := range rest {
		if !unicode.IsLetter(r) {
			return 0, false, "", "", bad(s, "unexpected %q after the number", r)
		}
	}
	m, ok := decimal(mant, exp+exp10)
	if !ok {
		return 0, false, "", "", bad(s, "out of range")
	}
	v = m * mul
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, false, "", "", bad(s, "out of range")
	}
	if neg {
		v = -v
	}
	return v, false, suf, rest, nil
}

// suffix reads the SPICE suffix at the start of s. The scale is
// mul * 10^exp10 (mul is 1 except for MIL); n is the suffix length in bytes,
// 0 if s does not start with one.
func suffix(s string) (exp10 int, mul float64, n int) {
	up := strings.ToUpper(s)
	switch {
	case strings.HasPrefix(up, "MEG"):
		return 6, 1, 3
	case strings.HasPrefix(up, "MIL"):
		return 0, Mil, 3
	case strings.HasPrefix(s, "µ"):
		return -6, 1, len("µ")
	case strings.HasPrefix(s, "μ"):
		return -6, 1, len("μ")
	}
	if s == "" {
		return 0, 1, 0
	}
	switch up[0] {
	case 'T':
		return 12, 1, 1
	case 'G':
		return 9, 1, 1
	case 'K':
		return 3, 1, 1
	case 'M':
		return -3, 1, 1
	case 'U':
		return -6, 1, 1
	case 'N':
		return -9, 1, 1
	case 'P':
		return -12, 1, 1
	case 'F':
		return -15, 1, 1
	}
	return 0, 1, 0
}

// decimal returns the value of the decimal mantissa mant times 10^exp,
// correctly rounded. It reports false on overflow; underflow gives 0.
func decimal(mant string, exp int) (float64, bool) {
	if exp > 100000 {
		exp = 100000
	} else if exp < -100000 {
		exp = -100000
	}
	v, err := strconv.ParseFloat(mant+"e"+strconv.Itoa(exp), 64)
	if err != nil {
		var ne *strconv.NumError
		if errors.As(err, &ne) && ne.Err == strconv.ErrRange && !math.IsInf(v, 0) {
			return 0, true
		}
		return 0, false
	}
	return v, true
}

// rkmScale maps an IEC 60062 RKM multiplier letter to its power of ten. R
// and F mark the decimal point of a plain value (ohms, farads); K, M, G, T
// are the resistance multipliers, p, n, u (µ), m the capacitance ones.
func rkmScale(r rune) (int, bool) {
	switch r {
	case 'R', 'r', 'F':
		return 0, true
	case 'K', 'k':
		return 3, true
	case 'M':
		return 6, true
	case 'G', 'g':
		return 9, true
	case 'T', 't':
		return 12, true
	case 'm':
		return -3, true
	case 'u', 'U', 'µ', 'μ':
		return -6, true
	case 'n', 'N':
		return -9, true
	case 'p', 'P':
		return -12, true
	}
	return 0, false
}

// parseRKM reads body as an RKM code: [digits] LETTER digits [unit letters].
// Leading digits may be left out only before R (R47). It reports ok = false,
// err = nil when body is not an RKM code at all.
func parseRKM(orig, body string) (float64, bool, error) {
	j := 0
	for j < len(body) && isDigit(body[j]) {
		j++
	}
	intPart := body[:j]
	r, size := utf8.DecodeRuneInString(body[j:])
	scale, ok := rkmScale(r)
	if !ok || size == 0 {
		return 0, false, nil
	}
	if intPart == "" && r != 'R' && r != 'r' {
		return 0, false, nil
	}
	k := j + size
	ds := k
	for k < len(body) && isDigit(body[k]) {
		k++
	}
	if k == ds {
		return 0, false, nil // no digits after the letter: a plain suffix
	}
	frac := body[ds:k]
	for _, c := range body[k:] {
		if !unicode.IsLetter(c) {
			return 0, true, bad(orig, "unexpected %q in an RKM code", c)
		}
	}
	if intPart == "" {
		intPart = "0"
	}
	v, ok := decimal(intPart+"."+frac, scale)
	if !ok {
		return 0, true, bad(orig, "out of range")
	}
	return v, true, nil
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }

// prefixes are the SI prefixes Format uses, from 1e-15 to 1e12 in steps of
// 1e3; index 5 is no prefix.
var prefixes = [...]string{"f", "p", "n", "u", "m", "", "k", "M", "G", "T"}

// Format prints v in engineering notation with three significant digits and
// the unit: Format(1.02e-3, "A") = "1.02 mA", Format(4700, "Ohm") =
// "4.70 kOhm", Format(0, "V") = "0 V". With an empty unit the prefix is
// attached to the number ("4.70k"). Values beyond the prefixes (below 1e-15
// or from 1e15 up) are printed with an exponent ("2.00e-18 A").
func Format(v float64, unit string) string { return FormatDigits(v, unit, 3) }

// FormatDigits is Format with digits significant digits (clamped to 1..15).
// Temperatures and shares take no prefix: units C, K, K/W and % print
// the number as Number does ("70.2 C", "12.5 K", "0.500 %").
func FormatDigits(v float64, unit string, digits int) string {
	digits = max(1, min(digits, 15))
	if noPrefix[unit] {
		return NumberDigits(v, digits) + " " + unit
	}
	join := func(num, prefix string) string {
		if unit == "" {
			return num + prefix
		}
		return num + " " + prefix + unit
	}
	switch {
	case math.IsNaN(v):
		return join("NaN", "")
	case math.IsInf(v, 1):
		return join("+Inf", "")
	case math.IsInf(v, -1):
		return join("-Inf", "")
	case v == 0:
		return join("0", "")
	}
	a := math.Abs(v)
	// Round to the requested significant digits first, so 999.96 becomes
	// 1.00e3 and takes the next prefix.
	r, err := strconv.ParseFloat(strconv.FormatFloat(a, 'e', digits-1, 64), 64)
	if err == nil {
		a = r
	}
	e3 := int(math.Floor(math.Log10(a)/3)) * 3
	idx := e3/3 + 5
	sign := ""
	if v < 0 {
		sign = "-"
	}
	if idx < 0 || idx >= len(prefixes) {
		return join(sign+strconv.FormatFloat(a, 'e', digits-1, 64), "")
	}
	m := a / math.Pow(10, float64(e3))
	// Log10 may land a hair off an exact power of 1000; settle the mantissa
	// into [1, 1000).
	if m >= 1000 && idx+1 < len(prefixes) {
		e3 += 3
		idx++
		m = a / math.Pow(10, float64(e3))
	} else if m < 1 && idx > 0 {
		e3 -= 3
		idx--
		m = a / math.Pow(10, float64(e3))
	}
	intDigits := 1
	if m >= 100 {
		intDigits = 3
	} else if m >= 10 {
		intDigits = 2
	}
	dec := max(0, digits-intDigits)
	return join(sign+strconv.FormatFloat(m, 'f', dec, 64), prefixes[idx])
}

// noPrefix are the units whose values Format prints without an SI prefix:
// a "millidegree" or a "kilo-percent" reads as a misprint.
var noPrefix = map[string]bool{"C": true, "K": true, "K/W": true, "%": true}

// Number prints a dimensionless figure (a gain, a ratio, a forced beta)
// with three significant digits and no SI prefix: Number(0.0164) =
// "0.0164", Number(50) = "50.0", Number(212.6) = "213", Number(1500) =
// "1500". Magnitudes from 1e6 up or below 1e-4 get an exponent
// ("1.23e+06").
func Number(v float64) string { return NumberDigits(v, 3) }

// NumberDigits is Number with digits significant digits (clamped to 1..15).
func NumberDigits(v float64, digits int) string {
	digits = max(1, min(digits, 15))
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "+Inf"
	case math.IsInf(v, -1):
		return "-Inf"
	case v == 0:
		return "0"
	}
	// Round to the significant digits first, so 999.96 is 1000 and its
	// exponent is that of the rounded value.
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'e', digits-1, 64), 64)
	if err != nil {
		r = v
	}
	e := int(math.Floor(math.Log10(math.Abs(r))))
	if e < -4 || e >= 6 {
		return strconv.FormatFloat(r, 'e', digits-1, 64)
	}
	return strconv.FormatFloat(r, 'f', max(0, digits-1-e), 64)
}
