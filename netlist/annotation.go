package netlist

import "strings"

// parseAnnotation reads a comment annotation line "*@kind word k=v ...".
// s starts with "*@"; pos is where it starts. Words are separated by blanks;
// a value may be double-quoted to hold blanks (reason="needs review"); keys
// are folded to lower case. What the annotation means is checked by its
// users, not here; only its shape is: a missing kind, a key with no value
// and a repeated key are warnings (the annotation is dropped when it has no
// kind).
func parseAnnotation(s string, pos Pos, list *ErrorList) *Annotation {
	errs := quoted{list}
	at := func(i int) Pos { return Pos{File: pos.File, Line: pos.Line, Col: pos.Col + i} }
	i := 2
	j := i
	for j < len(s) && !isBlank(s[j]) {
		j++
	}
	if j == i {
		errs.Warnf(pos, "annotation '*@' has no kind; write *@kind ...")
		return nil
	}
	a := &Annotation{
		Kind: strings.ToLower(s[i:j]),
		Pos:  pos,
		Text: strings.TrimSpace(s[j:]),
	}
	i = j
	for i < len(s) {
		if isBlank(s[i]) {
			i++
			continue
		}
		start := i
		for i < len(s) && !isBlank(s[i]) && s[i] != '=' && s[i] != '"' {
			i++
		}
		word := s[start:i]
		// "key = value" with blanks around '=' reads as key=value.
		k := i
		for k < len(s) && isBlank(s[k]) {
			k++
		}
		if word == "" || k >= len(s) || s[k] != '=' {
			if word == "" { // a quoted word standing alone
				w, n := quotedOrWord(s[i:])
				word, i = w, i+n
			}
			a.Args = append(a.Args, word)
			a.ArgPos = append(a.ArgPos, at(start))
			continue
		}
		i = k + 1
		for i < len(s) && isBlank(s[i]) {
			i++
		}
		val, n := quotedOrWord(s[i:])
		i += n
		key := strings.ToLower(word)
		if val == "" && n == 0 {
			errs.Warnf(at(start), "annotation *@%s: %s= has no value", a.Kind, word)
			continue
		}
		if a.KV == nil {
			a.KV = map[string]string{}
			a.KVPos = map[string]Pos{}
		}
		if _, dup := a.KV[key]; dup {
			errs.Warnf(at(start), "annotation *@%s: %s given twice; the last value is used", a.Kind, word)
		}
		a.KV[key] = val
		a.KVPos[key] = at(start)
	}
	return a
}

// quotedOrWord reads a double-quoted string or a blank-separated word at the
// start of s, returning its text and the bytes consumed. An unclosed quote
// runs to the end of s.
func quotedOrWord(s string) (string, int) {
	if strings.HasPrefix(s, `"`) {
		if j := strings.IndexByte(s[1:], '"'); j >= 0 {
			return s[1 : 1+j], j + 2
		}
		return s[1:], len(s)
	}
	j := 0
	for j < len(s) && !isBlank(s[j]) {
		j++
	}
	return s[:j], j
}

func isBlank(c byte) bool { return c == ' ' || c == '\t' }
