package netlist

import "strings"

// tokKind is the kind of a lexical token of a netlist line.
type tokKind int

const (
	tWord   tokKind = iota // a name, number or keyword: R1, 4k7, .model, n+
	tEq                    // =
	tLParen                // (
	tRParen                // )
	tExpr                  // {expr} or 'expr', text without the delimiters
	tString                // "quoted", text without the quotes
)

// token is one lexical token with the position of its first byte.
type token struct {
	kind tokKind
	text string
	pos  Pos
}

// String returns the token as it would be written, shortened for messages.
func (t token) String() string {
	s := short(t.text)
	switch t.kind {
	case tExpr:
		return "{" + s + "}"
	case tString:
		return `"` + s + `"`
	}
	return s
}

// isSpace reports whether c separates tokens. Commas separate too, so that
// "SIN(0, 1, 1k)" and "IS=1e-14, BF=200" read as the plain forms.
func isSpace(c byte) bool {
	return c == ' ' || c == '\t' || c == ',' || c == '\f' || c == '\v' || c == '\r'
}

// dollarComment reports whether s[i] is '$' starting an inline comment: a
// dollar followed by a blank or by the end of the line.
func dollarComment(s string, i int) bool {
	return s[i] == '$' && (i+1 == len(s) || s[i+1] == ' ' || s[i+1] == '\t')
}

// wordEnd reports whether c ends a word token.
func wordEnd(c byte) bool {
	switch c {
	case '=', '(', ')', ';', '{', '"', '\'':
		return true
	}
	return isSpace(c)
}

// tokenize splits one physical line (or the part of it after a leading '+')
// into tokens. col is the 1-based column of s[0]. Inline comments (';' and
// '$ ') end the line. Problems are reported through errs.
func tokenize(s string, file string, line, col int, list *ErrorList) []token {
	errs := quoted{list}
	var toks []token
	at := func(i int) Pos { return Pos{File: file, Line: line, Col: col + i} }
	i := 0
	for i < len(s) {
		c := s[i]
		switch {
		case isSpace(c):
			i++
		case c == ';' || dollarComment(s, i):
			return toks
		case c == '=':
			toks = append(toks, token{tEq, "=", at(i)})
			i++
		case c == '(':
			toks = append(toks, token{tLParen, "(", at(i)})
			i++
		case c == ')':
			toks = append(toks, token{tRParen, ")", at(i)})
			i++
		case c == '{':
			depth, j := 0, i
			for ; j < len(s); j++ {
				if s[j] == '{' {
					depth++
				} else if s[j] == '}' {
					depth--
					if depth == 0 {
						break
					}
				}
			}
			if j >= len(s) {
				errs.Addf(at(i), "unclosed '{' in %s", clip(s[i:]))
				return toks
			}
			toks = append(toks, token{tExpr, s[i+1 : j], at(i)})
			i = j + 1
		case c == '\'' || c == '"':
			j := strings.IndexByte(s[i+1:], c)
			if j < 0 {
				errs.Addf(at(i), "unclosed %c in %s", c, clip(s[i:]))
				return toks
			}
			k := tExpr
			if c == '"' {
				k = tString
			}
			toks = append(toks, token{k, s[i+1 : i+1+j], at(i)})
			i += j + 2
		case c == '}':
			errs.Addf(at(i), "'}' without '{'")
			i++
		default:
			j := i
			for j < len(s) && !dollarComment(s, j) {
				if s[j] == '(' && j > i && s[j-1] == '-' {
					// Exported net names carry parentheses after a
					// dash: Net-(R1-Pad2), unconnected-(U1-Pad3).
					if k := strings.IndexByte(s[j:], ')'); k > 0 && !strings.ContainsAny(s[j+1:j+k], " \t(,;=") {
						j += k + 1
						continue
					}
				}
				if wordEnd(s[j]) {
					break
				}
				j++
			}
			toks = append(toks, token{tWord, s[i:j], at(i)})
			i = j
		}
	}
	return toks
}

// clip shortens s for quoting in a message.
func clip(s string) string { return "\"" + short(s) + "\"" }

// firstWord returns the first blank-separated word of s, lower case.
func firstWord(s string) string {
	s = strings.TrimLeft(s, " \t")
	if i := strings.IndexAny(s, " \t;"); i >= 0 {
		s = s[:i]
	}
	return strings.ToLower(s)
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }
