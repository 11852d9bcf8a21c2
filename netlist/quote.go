package netlist

// This file keeps messages from repeating input at length: a netlist or an
// included file may hold anything (another account's file, a key), and the
// messages about it go back to whoever wrote it.

import (
	"fmt"
	"strings"
	"unicode/utf8"
)

// maxShown bounds how much of an offending text a message repeats, in
// bytes; longer text is cut at a character boundary and ends in "...".
const maxShown = 24

// short returns s cut to maxShown bytes with "..." when it is longer.
func short(s string) string { return cutAt(s, maxShown) }

// cutAt returns s cut to at most n bytes, at a character boundary, with
// "..." when it was longer.
func cutAt(s string, n int) string {
	if len(s) <= n {
		return s
	}
	cut := n
	for cut > 0 && !utf8.RuneStart(s[cut]) {
		cut--
	}
	return s[:cut] + "..."
}

// verbatim marks a message argument that is our own text (a file path, a
// description, a list of shortened names), printed whole by quoted.
type verbatim string

// shortArgs returns args with every string shortened (see short); other
// types, verbatim among them, are left as they are.
func shortArgs(args []any) []any {
	out := make([]any, len(args))
	for i, a := range args {
		if s, ok := a.(string); ok {
			a = short(s)
		}
		out[i] = a
	}
	return out
}

// quoted is the ErrorList the reader, parser and flattener report through:
// its Addf, Warnf and Notef shorten every string argument, so a message
// repeats at most maxShown bytes of any name, value or line it quotes,
// whatever file it came from. Text of our own goes in as verbatim.
type quoted struct{ *ErrorList }

// Addf is ErrorList.Addf with string arguments shortened.
func (q quoted) Addf(pos Pos, format string, args ...any) {
	q.ErrorList.Addf(pos, format, shortArgs(args)...)
}

// Warnf is ErrorList.Warnf with string arguments shortened.
func (q quoted) Warnf(pos Pos, format string, args ...any) {
	q.ErrorList.Warnf(pos, format, shortArgs(args)...)
}

// Notef is ErrorList.Notef with string arguments shortened.
func (q quoted) Notef(pos Pos, format string, args ...any) {
	q.ErrorList.Notef(pos, format, shortArgs(args)...)
}

// Alertf is ErrorList.Alertf with string arguments shortened.
func (q quoted) Alertf(pos Pos, format string, args ...any) {
	q.ErrorList.Alertf(pos, format, shortArgs(args)...)
}

// sprintf is fmt.Sprintf with string arguments shortened.
func sprintf(format string, args ...any) string { return fmt.Sprintf(format, shortArgs(args)...) }

// joinShort joins names, each shortened, for a message.
func joinShort(names []string, sep string) verbatim {
	s := make([]string, len(names))
	for i, n := range names {
		s[i] = short(n)
	}
	return verbatim(strings.Join(s, sep))
}

// maxPathShown bounds a file name as written in a message: long enough for
// any real path, short enough that a "path" cannot carry a whole line.
const maxPathShown = 200

// pathText is a file name as written for a message: whole up to
// maxPathShown bytes when the top file wrote it (the user's own text), and
// shortened like any other text when an included file did.
func pathText(s string, depth int) verbatim {
	if depth > 0 {
		return verbatim(short(s))
	}
	return verbatim(cutAt(s, maxPathShown))
}

// capped is a library's message for a message of ours: its first 80 bytes
// (it may repeat part of the expression it is about).
func capped(s string) verbatim { return verbatim(cutAt(s, 80)) }

// notNetlist counts the lines of text that no netlist holds, to tell a
// file that is not a netlist at all (a password file, a key, a program)
// from a netlist with mistakes in it: such a file gets one error, not one
// quoting each of its lines. A line counts as netlist when it is a '*' or
// ';' comment (not counted), a dot statement (.word), a '+' continuation,
// or an element line: a first word that starts with a letter and holds
// none of : = " ' ( ) { } ` \ , followed by at least two more fields, the
// first of them not "=" (that is "key = value", a setting), or an element
// line cut short: a name of letters, digits and underscores with a digit
// (R1, Q12) and one more such field (R1 a, a typo, which then gets its own
// located error).
// Lines inside .control blocks and after .end are not counted; skip drops
// the first line (a top file's title). It returns the counts of foreign
// and counted lines, and the line number of the first foreign one.
func notNetlist(text string, skip bool) (foreign, counted, first int) {
	control := false
	for lineNo := 1; len(text) > 0; lineNo++ {
		ln := text
		if i := strings.IndexByte(text, '\n'); i >= 0 {
			ln, text = text[:i], text[i+1:]
		} else {
			text = ""
		}
		if skip && lineNo == 1 {
			continue
		}
		t := strings.TrimSpace(ln)
		w := firstWord(t)
		switch {
		case control:
			control = w != ".endc"
			continue
		case t == "" || t[0] == '*' || t[0] == ';':
			continue
		case w == ".end":
			return foreign, counted, first
		case w == ".control":
			control = true
			continue
		}
		counted++
		if !netlistLine(t) {
			if foreign == 0 {
				first = lineNo
			}
			foreign++
		}
	}
	return foreign, counted, first
}

// netlistLine reports whether t (trimmed, not a comment) reads as a
// netlist line; see notNetlist.
func netlistLine(t string) bool {
	switch t[0] {
	case '+':
		return true
	case '.':
		w := strings.Fields(t)[0][1:]
		if w == "" {
			return false
		}
		for i := 0; i < len(w); i++ {
			if c := w[i]; !(isLetter(c) || isDigit(c) || c == '_') {
				return false
			}
		}
		return true
	}
	f := strings.FieldsFunc(t, func(r rune) bool { return r == ' ' || r == '\t' || r == ',' })
	if len(f) == 2 {
		return shortElement(f[0]) && plainWord(f[1])
	}
	if len(f) < 3 || !isLetter(f[0][0]) || strings.ContainsAny(f[0], ":=\"'(){}`\\") || f[1] == "=" {
		return false
	}
	return true
}

// shortElement reports whether w reads as an element name: a letter, then
// letters, digits and underscores, with a digit among them.
func shortElement(w string) bool {
	if !isLetter(w[0]) {
		return false
	}
	digit := false
	for i := 1; i < len(w); i++ {
		switch c := w[i]; {
		case isDigit(c):
			digit = true
		case isLetter(c) || c == '_':
		default:
			return false
		}
	}
	return digit
}

// plainWord reports whether w holds only letters, digits, underscores and
// dots (a net or a value).
func plainWord(w string) bool {
	for i := 0; i < len(w); i++ {
		if c := w[i]; !(isLetter(c) || isDigit(c) || c == '_' || c == '.') {
			return false
		}
	}
	return true
}

func isLetter(c byte) bool { return 'a' <= c|0x20 && c|0x20 <= 'z' }
