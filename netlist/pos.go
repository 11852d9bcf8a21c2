package netlist

import (
	"fmt"
	"sort"
	"strings"
)

// Pos is a position in a netlist file: a file name, a 1-based line and a
// 1-based column counted in bytes, as go/token.Position does. The zero Pos is
// "no position".
type Pos struct {
	File string
	Line int
	Col  int
}

// IsValid reports whether the position names a line.
func (p Pos) IsValid() bool { return p.Line > 0 }

// String formats the position as file:line:col, the convention compilers use.
// Missing parts are left out.
func (p Pos) String() string {
	s := p.File
	if p.IsValid() {
		if s != "" {
			s += ":"
		}
		s += fmt.Sprintf("%d", p.Line)
		if p.Col > 0 {
			s += fmt.Sprintf(":%d", p.Col)
		}
	}
	if s == "" {
		s = "-"
	}
	return s
}

// Before reports whether p sorts before q (file, then line, then column).
func (p Pos) Before(q Pos) bool {
	if p.File != q.File {
		return p.File < q.File
	}
	if p.Line != q.Line {
		return p.Line < q.Line
	}
	return p.Col < q.Col
}

// Severity ranks a diagnostic about the input.
type Severity int

// Severities of input diagnostics, from the most to the least serious.
const (
	SevError Severity = iota
	SevWarning
	SevNote
)

func (s Severity) String() string {
	switch s {
	case SevError:
		return "error"
	case SevWarning:
		return "warning"
	default:
		return "note"
	}
}

// Error is one located problem with the input. Its Error method prints
// "file:line:col: severity: message" (severity error, warning or note),
// the form compilers print and CI problem matchers read.
type Error struct {
	Pos      Pos
	Severity Severity
	Msg      string
	// Alert marks a note about a reading that people often get wrong (1M
	// on a resistor is one milliohm): reports show it even when they
	// leave other notes out.
	Alert bool
}

func (e *Error) Error() string {
	return e.Pos.String() + ": " + e.Severity.String() + ": " + e.Msg
}

// MaxErrors caps how many errors an ErrorList keeps; one run reports every
// problem up to this count and then says how many more there were.
const MaxErrors = 50

// ErrorList is a list of located problems, modelled on go/scanner.ErrorList.
// Notes and warnings can be kept in the same list; Err returns non-nil only
// when the list holds at least one SevError.
type ErrorList struct {
	List    []*Error
	dropped int
}

// Add appends an error at pos. Past MaxErrors errors, further errors are
// counted but not kept; notes and warnings are capped the same way.
func (l *ErrorList) Add(pos Pos, msg string) { l.add(pos, SevError, msg) }

// Addf is Add with a format string.
func (l *ErrorList) Addf(pos Pos, format string, args ...any) {
	l.add(pos, SevError, fmt.Sprintf(format, args...))
}

// Warnf appends a warning: the input is read, but something in it is odd.
func (l *ErrorList) Warnf(pos Pos, format string, args ...any) {
	l.add(pos, SevWarning, fmt.Sprintf(format, args...))
}

// Notef appends a note: something was read but ignored or read in a way the
// user may not expect.
func (l *ErrorList) Notef(pos Pos, format string, args ...any) {
	l.add(pos, SevNote, fmt.Sprintf(format, args...))
}

// Alertf appends a note that every report shows: the input was read as
// SPICE reads it, but people often mean something else by it.
func (l *ErrorList) Alertf(pos Pos, format string, args ...any) {
	l.put(&Error{Pos: pos, Severity: SevNote, Msg: fmt.Sprintf(format, args...), Alert: true})
}

func (l *ErrorList) add(pos Pos, sev Severity, msg string) {
	l.put(&Error{Pos: pos, Severity: sev, Msg: msg})
}

func (l *ErrorList) put(e *Error) {
	n := 0
	for _, x := range l.List {
		if x.Severity == e.Severity {
			n++
		}
	}
	if n >= MaxErrors {
		if e.Severity == SevError {
			l.dropped++
		}
		return
	}
	l.List = append(l.List, e)
}

// Merge appends every entry of m to l.
func (l *ErrorList) Merge(m *ErrorList) {
	if m == nil {
		return
	}
	for _, e := range m.List {
		c := *e
		l.put(&c)
	}
	l.dropped += m.dropped
}

// Sort orders the list by position, errors first at equal positions.
func (l *ErrorList) Sort() {
	sort.SliceStable(l.List, func(i, j int) bool {
		a, b := l.List[i], l.List[j]
		if a.Pos != b.Pos {
			return a.Pos.Before(b.Pos)
		}
		return a.Severity < b.Severity
	})
}

// Errors returns only the entries of severity SevError.
func (l *ErrorList) Errors() []*Error {
	return l.filter(func(s Severity) bool { return s == SevError })
}

// Notes returns the warnings and notes.
func (l *ErrorList) Notes() []*Error { return l.filter(func(s Severity) bool { return s != SevError }) }

func (l *ErrorList) filter(keep func(Severity) bool) []*Error {
	var out []*Error
	for _, e := range l.List {
		if keep(e.Severity) {
			out = append(out, e)
		}
	}
	return out
}

// Dropped is the number of errors past MaxErrors that were counted but not kept.
func (l *ErrorList) Dropped() int { return l.dropped }

// Err returns the list as an error when it holds at least one error, else nil.
func (l *ErrorList) Err() error {
	if len(l.Errors()) == 0 && l.dropped == 0 {
		return nil
	}
	return errorListError{l}
}

type errorListError struct{ l *ErrorList }

func (e errorListError) Error() string {
	errs := e.l.Errors()
	var b strings.Builder
	for i, x := range errs {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(x.Error())
	}
	if e.l.dropped > 0 {
		fmt.Fprintf(&b, "\n(and %d more errors)", e.l.dropped)
	}
	return b.String()
}

// List returns the underlying list, so callers can print notes too.
func (e errorListError) List() *ErrorList { return e.l }
