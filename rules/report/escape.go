package report

import (
	"fmt"
	"strings"
	"unicode/utf8"
)

// Printable returns s with every character that could drive a terminal
// written out as an escape, so that text from a netlist, a rule set or a
// board file (names, titles, messages, waiver reasons) prints as itself:
// C0 controls other than tab and newline (a carriage return could overwrite
// a line, ESC starts terminal commands) as \r or \xNN, DEL and the C1
// controls U+0080 to U+009F (read as commands by some terminals) and the
// bidirectional overrides and isolates U+202A to U+202E and U+2066 to
// U+2069 (which reorder what is shown) as \uNNNN, and bytes that are not
// UTF-8 as \xNN. A backslash is left alone: names hold them.
func Printable(s string) string {
	clean := true
	for _, r := range s {
		if needsEscape(r) {
			clean = false
			break
		}
	}
	if clean {
		return s
	}
	var b strings.Builder
	for i := 0; i < len(s); {
		r, n := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && n == 1:
			fmt.Fprintf(&b, `\x%02x`, s[i])
		case r == '\r':
			b.WriteString(`\r`)
		case r < 0x80 && needsEscape(r):
			fmt.Fprintf(&b, `\x%02x`, r)
		case needsEscape(r):
			fmt.Fprintf(&b, `\u%04x`, r)
		default:
			b.WriteString(s[i : i+n])
		}
		i += n
	}
	return b.String()
}

// needsEscape reports whether Printable writes r as an escape.
func needsEscape(r rune) bool {
	switch {
	case r == '\t' || r == '\n':
		return false
	case r < 0x20 || r == 0x7f || (0x80 <= r && r <= 0x9f):
		return true
	case 0x202a <= r && r <= 0x202e, 0x2066 <= r && r <= 0x2069:
		return true
	}
	return r == utf8.RuneError
}

// styled is text the text report made itself, colour codes included: it
// is printed as it is, while every other string argument of errWriter.printf
// goes through Printable.
type styled string

// printableArgs returns args with strings, Stringers and errors made
// Printable; styled text and numbers are left as they are.
func printableArgs(args []any) []any {
	out := make([]any, len(args))
	for i, a := range args {
		switch v := a.(type) {
		case styled:
		case string:
			a = Printable(v)
		case error:
			a = Printable(v.Error())
		case fmt.Stringer:
			a = Printable(v.String())
		}
		out[i] = a
	}
	return out
}
