package netlist

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"path/filepath"
	"strings"
)

// Default limits of LoadOptions. Each bounds the work one netlist can cause.
const (
	DefaultMaxFileSize     = 16 << 20 // bytes per file
	DefaultMaxLineLength   = 1 << 20  // bytes per physical line
	DefaultMaxIncludeDepth = 16       // nested .include / .lib levels
	DefaultMaxSubcktDepth  = 32       // nested subcircuit instances
	DefaultMaxElements     = 200000   // flat elements after flattening
	DefaultMaxTotalSize    = 64 << 20 // bytes of one netlist and all its includes
)

// LoadOptions controls how netlist files are read. The zero value (or a nil
// *LoadOptions) reads with os.ReadFile and the default limits.
type LoadOptions struct {
	// ReadFile reads an included file; nil means os.ReadFile. Tests and
	// fuzzing sandbox it (a function that always fails disables includes).
	ReadFile func(path string) ([]byte, error)
	// MaxIncludeDepth bounds nesting of .include and .lib (0: default 16).
	MaxIncludeDepth int
	// MaxSubcktDepth bounds nesting of subcircuit instances (0: default 32).
	MaxSubcktDepth int
	// MaxFileSize bounds each file in bytes (0: default 16 MiB). The default
	// ReadFile reads at most one byte more, so a larger file costs no memory.
	MaxFileSize int
	// MaxLineLength bounds each physical line in bytes (0: default 1 MiB).
	MaxLineLength int
	// MaxElements bounds the flat element count (0: default 200000).
	MaxElements int
	// MaxTotalSize bounds the bytes read for one netlist, the top file and
	// every include together, however often a file is included (0: default
	// 64 MiB), so the memory reading takes is bounded too.
	MaxTotalSize int
	// ReadDir lists the names in a directory, for an include name that
	// matches a file only without regard to letter case; nil means
	// os-backed listing when ReadFile is nil too, else no such lookup.
	ReadDir func(dir string) ([]string, error)

	// IncludeDirs are the folders, besides the top file's own folder, that
	// .include and .lib files may be read from (see open.go): a file
	// outside all of them, after ".." is applied and links are resolved,
	// is a located error.
	IncludeDirs []string
	// IncludeHint ends the message about a refused include: how the user
	// allows a folder (the CLI names its --include-dir flag); dir is ""
	// for a link, whose target is not named. Nil says to add the folder to
	// IncludeDirs.
	IncludeHint func(dir string) string
	// ConfineTop holds the top file itself to the policy: its path, links
	// resolved, must lie inside its folder or IncludeDirs. For files found
	// by searching a folder, where a link could lead anywhere.
	ConfineTop bool
	// StandIn, if not nil, gives a model for a Q line whose model name
	// the netlist defines nowhere (a standard type written without its
	// .model card, as schematic editors with a built-in library export
	// it): the model, of type NPN or PNP, and a note saying what it is,
	// which is reported once per name, as an alert (every report shows it),
	// at the first line that uses it.
	// ok false leaves the line an undefined-model error.
	StandIn func(name string) (m *Model, note string, ok bool)

	osFiles bool // ReadFile is the default file-system reader
}

// withDefaults returns a copy of o with zero fields set to the defaults.
func (o *LoadOptions) withDefaults() LoadOptions {
	var r LoadOptions
	if o != nil {
		r = *o
	}
	set := func(p *int, d int) {
		if *p <= 0 {
			*p = d
		}
	}
	set(&r.MaxIncludeDepth, DefaultMaxIncludeDepth)
	set(&r.MaxSubcktDepth, DefaultMaxSubcktDepth)
	set(&r.MaxFileSize, DefaultMaxFileSize)
	set(&r.MaxLineLength, DefaultMaxLineLength)
	set(&r.MaxElements, DefaultMaxElements)
	set(&r.MaxTotalSize, DefaultMaxTotalSize)
	if r.ReadFile == nil {
		if r.ReadDir == nil {
			r.ReadDir = osReadDir
		}
		limit := r.MaxFileSize
		r.ReadFile = func(path string) ([]byte, error) { return readRegular(path, limit) }
		r.osFiles = true
	}
	return r
}

// logical is one logical line: a statement with its continuation lines
// joined (tokens keep their own positions), or one annotation.
type logical struct {
	toks []token
	ann  *Annotation
	raw  string // the first physical line, blanks trimmed
}

// reader turns files into a stream of logical lines, resolving includes.
type reader struct {
	opts  LoadOptions
	errs  quoted
	out   []logical
	files []string
	title string
	tpos  Pos
	// sections counts the .lib sections opened (see Deck.LibraryOnly).
	sections int
	// total is the bytes read so far, every file counted each time it is
	// read (LoadOptions.MaxTotalSize); over is set once it passed.
	total int
	over  bool
}

// byteSize prints a byte count, with MiB for the large ones.
func byteSize(n int) string {
	if n >= 1<<20 {
		return fmt.Sprintf("%d bytes (%d MiB)", n, n>>20)
	}
	return fmt.Sprintf("%d bytes", n)
}

// fileState is the per-file state of the line reader.
type fileState struct {
	r       *reader
	name    string
	depth   int
	stack   []string // cleaned paths of the including files, outermost first
	want    string   // the .lib section to read, "" for the whole file
	hasEndl bool     // the file has .endl lines, so one-word .lib lines are section markers

	pending   *logical
	anns      []logical // annotations seen while a statement was pending
	section   string    // current .lib section ("" outside any)
	secPos    Pos
	found     bool // the wanted section was seen
	control   bool // inside .control ... .endc
	ctrlPos   Pos
	ended     bool
	notedSkip map[string]bool
}

// readTop reads the top-level file.
func (r *reader) readTop(name string, src []byte) {
	r.readFile(name, src, 0, nil, "", Pos{}, true)
}

// readFile reads one file's lines into r.out. incPos is the including
// statement (invalid for the top file).
func (r *reader) readFile(name string, src []byte, depth int, stack []string, want string, incPos Pos, top bool) {
	r.files = append(r.files, name)
	if len(src) > r.opts.MaxFileSize {
		r.errs.Addf(orFile(incPos, name), "file %q is larger than the limit of %d bytes (%d MiB)", verbatim(name), r.opts.MaxFileSize, r.opts.MaxFileSize>>20)
		return
	}
	if r.total += len(src); r.total > r.opts.MaxTotalSize {
		r.over = true
		r.errs.Addf(orFile(incPos, name), "the netlist and its includes come to more than the limit of %s together; %q and the includes after it are not read",
			verbatim(byteSize(r.opts.MaxTotalSize)), verbatim(name))
		return
	}
	src = bytes.TrimPrefix(src, []byte("\xef\xbb\xbf"))
	// A file that is not a netlist at all gets one error, quoting nothing
	// of it: binary (at its first control byte), or mostly foreign lines.
	if line, col, c, ok := firstBinary(src); ok {
		if incPos.IsValid() {
			r.errs.Addf(incPos, "file %q is not text: control byte 0x%02x on its line %d; nothing of it is read", verbatim(name), c, line)
		} else {
			r.errs.Addf(Pos{File: name, Line: line, Col: col}, "file %q is not text: control byte 0x%02x", verbatim(name), c)
		}
		return
	}
	if foreign, counted, first := notNetlist(string(src), top); foreign*2 > counted {
		r.errs.Addf(orFile(incPos, name), "file %q does not read as a netlist: %d of its %d statement lines are not netlist lines (the first is line %d); nothing of it is read",
			verbatim(name), foreign, counted, first)
		return
	}
	f := &fileState{r: r, name: name, depth: depth, stack: append(stack[:len(stack):len(stack)], filepath.Clean(name)), want: want}
	text := string(src)
	f.hasEndl = hasEndl(text)
	lineNo := 0
	for len(text) > 0 || lineNo == 0 {
		lineNo++
		var ln string
		if i := strings.IndexByte(text, '\n'); i >= 0 {
			ln, text = text[:i], text[i+1:]
		} else {
			ln, text = text, ""
		}
		ln = strings.TrimSuffix(ln, "\r")
		if f.ended {
			if strings.TrimSpace(ln) != "" && !strings.HasPrefix(strings.TrimSpace(ln), "*") {
				r.errs.Notef(Pos{File: name, Line: lineNo, Col: 1}, "text after .end is ignored")
				break
			}
			continue
		}
		if len(ln) > r.opts.MaxLineLength {
			r.errs.Addf(Pos{File: name, Line: lineNo, Col: 1}, "line is longer than the limit of %d bytes", r.opts.MaxLineLength)
			continue
		}
		if top && lineNo == 1 {
			t := strings.TrimSpace(ln)
			if !strings.HasPrefix(t, ".") && !strings.HasPrefix(t, "*@") && !strings.HasPrefix(t, "+") {
				r.title = strings.TrimSpace(strings.TrimPrefix(t, "*"))
				r.tpos = Pos{File: name, Line: 1, Col: 1}
				continue
			}
		}
		f.line(ln, lineNo)
	}
	f.flush()
	if f.control {
		r.errs.Warnf(f.ctrlPos, ".control block is never closed with .endc")
	}
	if f.section != "" && !f.ended {
		r.errs.Warnf(f.secPos, ".lib section %s is never closed with .endl", f.section)
	}
	if want != "" && !f.found {
		r.errs.Addf(incPos, "library %q has no section %q", verbatim(name), want)
	}
}

// orFile returns p, or the start of file name when p is invalid.
func orFile(p Pos, name string) Pos {
	if p.IsValid() {
		return p
	}
	return Pos{File: name, Line: 1, Col: 1}
}

// hasEndl reports whether text has a line starting with .endl.
func hasEndl(text string) bool {
	for len(text) > 0 {
		i := strings.IndexByte(text, '\n')
		ln := text
		if i >= 0 {
			ln, text = text[:i], text[i+1:]
		} else {
			text = ""
		}
		if firstWord(ln) == ".endl" {
			return true
		}
	}
	return false
}

// firstBinary returns the line and column of the first byte of src that no
// text file holds (see binaryByte), and the byte; what follows a .end line
// is not looked at.
func firstBinary(src []byte) (line, col int, c byte, ok bool) {
	text := string(src)
	for line = 1; len(text) > 0; line++ {
		ln := text
		if i := strings.IndexByte(text, '\n'); i >= 0 {
			ln, text = text[:i], text[i+1:]
		} else {
			text = ""
		}
		if col, ok := binaryByte(ln); ok {
			return line, col, ln[col-1], true
		}
		if firstWord(ln) == ".end" {
			break
		}
	}
	return 0, 0, 0, false
}

// binaryByte returns the 1-based column of the first control byte in ln that
// no text file holds (NUL and the other C0 controls except tab, vertical tab,
// form feed and carriage return; DEL).
func binaryByte(ln string) (int, bool) {
	for i := 0; i < len(ln); i++ {
		c := ln[i]
		if (c < 0x20 && c != '\t' && c != '\f' && c != '\v' && c != '\r') || c == 0x7f {
			return i + 1, true
		}
	}
	return 0, false
}

// line handles one physical line.
func (f *fileState) line(ln string, lineNo int) {
	r := f.r
	trimmed := strings.TrimLeft(ln, " \t")
	if trimmed == "" {
		return
	}
	col := len(ln) - len(trimmed) + 1
	pos := Pos{File: f.name, Line: lineNo, Col: col}
	word := firstWord(trimmed)
	if f.control {
		if word == ".endc" {
			f.control = false
		}
		return
	}
	// .lib sections: one-word ".lib NAME" opens a section in a file with
	// .endl lines; ".endl" closes it.
	if word == ".endl" {
		f.flush()
		if f.section == "" {
			r.errs.Notef(pos, ".endl without .lib section is ignored")
		}
		f.section = ""
		return
	}
	if word == ".lib" && f.hasEndl {
		toks := tokenize(trimmed, f.name, lineNo, col, r.errs.ErrorList)
		if len(toks) == 2 {
			f.flush()
			if f.section != "" {
				r.errs.Addf(pos, ".lib section %s opened inside section %s", toks[1].text, f.section)
			}
			f.section = toks[1].text
			f.secPos = pos
			r.sections++
			if f.want != "" && Key(f.section) == Key(f.want) {
				f.found = true
			} else if f.want == "" && !f.notedSkip[Key(f.section)] {
				if f.notedSkip == nil {
					f.notedSkip = map[string]bool{}
				}
				f.notedSkip[Key(f.section)] = true
				r.errs.Notef(pos, "library section %s is skipped: the file is read whole; select a section with .lib FILE %s", f.section, f.section)
			}
			return
		}
	}
	if !f.reading() {
		return
	}
	switch {
	case strings.HasPrefix(trimmed, "*@"):
		a := parseAnnotation(trimmed, pos, r.errs.ErrorList)
		if a == nil {
			return
		}
		l := logical{ann: a}
		if f.pending != nil {
			f.anns = append(f.anns, l)
		} else {
			r.out = append(r.out, l)
		}
	case trimmed[0] == '*':
		// comment line
	case trimmed[0] == '+':
		toks := tokenize(trimmed[1:], f.name, lineNo, col+1, r.errs.ErrorList)
		if f.pending == nil {
			r.errs.Addf(pos, "continuation line '+' with no statement before it to continue")
			return
		}
		f.pending.toks = append(f.pending.toks, toks...)
	default:
		f.flush()
		switch word {
		case ".end":
			f.ended = true
			return
		case ".control":
			f.control = true
			f.ctrlPos = pos
			return
		}
		toks := tokenize(trimmed, f.name, lineNo, col, r.errs.ErrorList)
		if len(toks) > 0 {
			f.pending = &logical{toks: toks, raw: strings.TrimSpace(trimmed)}
		}
	}
}

// reading reports whether lines at the current place are read: outside
// sections when the whole file is read, inside the wanted section when a
// section is selected.
func (f *fileState) reading() bool {
	if f.want == "" {
		return f.section == ""
	}
	return f.section != "" && Key(f.section) == Key(f.want)
}

// flush completes the pending logical line: includes are read in place,
// anything else goes to the output.
func (f *fileState) flush() {
	p := f.pending
	f.pending = nil
	if p != nil {
		if !f.include(p) {
			f.r.out = append(f.r.out, *p)
		}
	}
	f.r.out = append(f.r.out, f.anns...)
	f.anns = nil
}

// include handles .include, .inc and two-word .lib lines. It reports whether
// l was one of them.
func (f *fileState) include(l *logical) bool {
	r := f.r
	t := l.toks
	word := strings.ToLower(t[0].text)
	if t[0].kind != tWord {
		return false
	}
	var section string
	switch word {
	case ".include", ".inc", ".incl":
		if len(t) != 2 {
			r.errs.Addf(t[0].pos, "%s needs one file name", t[0].text)
			return true
		}
	case ".lib":
		switch len(t) {
		case 2:
		case 3:
			section = t[2].text
		default:
			r.errs.Addf(t[0].pos, ".lib needs a file name and a section name")
			return true
		}
	default:
		return false
	}
	if t[1].kind == tEq || t[1].kind == tLParen || t[1].kind == tRParen {
		r.errs.Addf(t[1].pos, "%s needs a file name, found %s", t[0].text, t[1])
		return true
	}
	name := resolvePath(f.name, t[1].text)
	clean := filepath.Clean(name)
	if clean == filepath.Clean(f.name) {
		r.errs.Addf(t[1].pos, "file %q includes itself", pathText(t[1].text, f.depth))
		return true
	}
	for _, s := range f.stack {
		if s == clean {
			r.errs.Addf(t[1].pos, "include cycle: %s is already being read (%s)", pathText(t[1].text, f.depth), verbatim(strings.Join(append(f.stack, clean), " -> ")))
			return true
		}
	}
	if f.depth+1 > r.opts.MaxIncludeDepth {
		r.errs.Addf(t[1].pos, "includes nested deeper than the limit of %d", r.opts.MaxIncludeDepth)
		return true
	}
	if r.over {
		return true // past MaxTotalSize: reported once, nothing more is read
	}
	// r.opts.ReadFile holds the include policy (Parse wraps it; open.go).
	src, err := r.opts.ReadFile(name)
	if errors.Is(err, fs.ErrNotExist) {
		// The name may differ from the file's only in letter case
		// (include_fold.go).
		if disk, ok := foldCase(f.name, name, r.opts.ReadDir); ok {
			if src2, err2 := r.opts.ReadFile(disk); err2 == nil {
				shown := disk
				if rel, err := filepath.Rel(filepath.Dir(f.name), disk); err == nil {
					shown = filepath.ToSlash(rel)
				}
				r.errs.Notef(t[1].pos, "include file \"%s\" is read as \"%s\": the names differ only in letter case",
					pathText(t[1].text, f.depth), pathText(shown, f.depth))
				name, src, err = disk, src2, nil
			}
		}
	}
	if err == nil {
		slashNote(r.errs, t[1].pos, t[1].text, f.depth)
	}
	if err != nil {
		if msg, ok := refused(err, f.depth > 0); ok {
			r.errs.Addf(t[1].pos, "include %q %s", pathText(t[1].text, f.depth), verbatim(msg))
		} else if errors.Is(err, fs.ErrNotExist) {
			r.errs.Addf(t[1].pos, "include file not found: %q", pathText(t[1].text, f.depth))
		} else {
			r.errs.Addf(t[1].pos, "cannot read include file %q: %s", pathText(t[1].text, f.depth), verbatim(readErrText(err)))
		}
		return true
	}
	r.readFile(name, src, f.depth+1, f.stack, section, t[1].pos, false)
	return true
}

// resolvePath resolves an include path written in file from: either slash
// works, and a relative path is relative to the including file's directory.
func resolvePath(from, p string) string {
	p = filepath.FromSlash(strings.ReplaceAll(p, `\`, "/"))
	if filepath.IsAbs(p) {
		return p
	}
	return filepath.Join(filepath.Dir(from), p)
}
