package netlist

// This file holds the include policy and the safe opening of files: which
// files .include and .lib may read (inside the allowed folders, links
// resolved first), and how a file is opened (regular files only, never
// blocking). Every file a netlist names is read through the LoadOptions
// ReadFile that Parse wraps with includePolicy.read, so any other way of
// finding an include file (a spelling fallback, say) is held to the same
// policy as long as it reads through r.opts.ReadFile.

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"syscall"
)

// refusedError is a file the reader will not open: outside the allowed
// folders, or not a regular file. Its text completes a sentence that starts
// with the file's name as written ("include \"x\" " + msg), and ends with
// hint(dir) when hint is set: how to allow the folder dir.
type refusedError struct {
	msg  string
	hint func(dir string) string
	dir  string
}

func (e *refusedError) Error() string { return e.text(false) }

// text is the message; shorten cuts the folder (which comes from the path
// as written) like any other quoted text.
func (e *refusedError) text(shorten bool) string {
	if e.hint == nil {
		return e.msg
	}
	dir := e.dir
	if shorten {
		dir = short(dir)
	}
	return e.msg + "; to allow it, " + e.hint(dir)
}

// refused reports whether err is a refusal and returns its text.
func refused(err error, shorten bool) (string, bool) {
	var re *refusedError
	if errors.As(err, &re) {
		return re.text(shorten), true
	}
	return "", false
}

// includePolicy decides which files includes may read: those inside one of
// the allowed folders, the top file's own folder first, then
// LoadOptions.IncludeDirs. The check is made on the path after joining and
// cleaning (so a ".." that leaves the folders is refused) and, when files
// come from the file system, again after filepath.EvalSymlinks on both the
// file and the folders (so a link cannot lead out).
type includePolicy struct {
	shown []string // the folders as given, for messages
	abs   []string // the same, absolute and cleaned
	real  []string // the same, links resolved (file-system mode only)
	osFS  bool     // the base reader is the file system
	hint  func(dir string) string
	base  func(path string) ([]byte, error)
	what  string // who may read from the folders, for messages ("includes may be read from")
}

// newPolicy returns the policy for a netlist whose top file is top, with
// o's folders, reading through o.ReadFile.
func newPolicy(top string, o *LoadOptions) *includePolicy {
	p := &includePolicy{osFS: o.osFiles, hint: o.IncludeHint, base: o.ReadFile, what: "includes may be read from"}
	if p.hint == nil {
		p.hint = func(dir string) string {
			if dir == "" {
				dir = "the folder the link points into"
			}
			return fmt.Sprintf("add %s to LoadOptions.IncludeDirs", dir)
		}
	}
	seen := map[string]bool{}
	for _, d := range append([]string{filepath.Dir(top)}, o.IncludeDirs...) {
		a, err := filepath.Abs(d)
		if err != nil || seen[a] {
			continue
		}
		seen[a] = true
		p.shown = append(p.shown, d)
		p.abs = append(p.abs, a)
		if p.osFS {
			if r, err := filepath.EvalSymlinks(a); err == nil {
				p.real = append(p.real, r)
			}
		}
	}
	return p
}

// within reports whether path lies in dir or below it; both are absolute
// and clean.
func within(path, dir string) bool {
	rel, err := filepath.Rel(dir, path)
	if err != nil {
		return false
	}
	return rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator)) && !filepath.IsAbs(rel)
}

func withinAny(path string, dirs []string) bool {
	for _, d := range dirs {
		if within(path, d) {
			return true
		}
	}
	return false
}

// allowed returns the folders for messages.
// Only the netlist's own folder is named: the others are the checking
// machine's settings (a course's model folder, say), and the message goes
// back to whoever wrote the netlist.
func (p *includePolicy) allowed() string {
	if len(p.shown) == 0 {
		return "none"
	}
	s := p.shown[0]
	if n := len(p.shown) - 1; n == 1 {
		s += " and 1 more folder"
	} else if n > 1 {
		s += fmt.Sprintf(" and %d more folders", n)
	}
	return s
}

// check returns the path to open for path, or a refusal. In file-system
// mode the path returned has its links resolved, so the file checked is the
// file opened.
func (p *includePolicy) check(path string) (string, error) {
	a, err := filepath.Abs(path)
	if err != nil {
		return "", err
	}
	if !withinAny(a, p.abs) {
		return "", &refusedError{msg: fmt.Sprintf("is outside the folders %s (%s)", p.what, p.allowed()),
			hint: p.hint, dir: filepath.Dir(filepath.Clean(path))}
	}
	if !p.osFS {
		return path, nil
	}
	r, err := filepath.EvalSymlinks(a)
	if err != nil {
		return "", err
	}
	if !withinAny(r, p.real) {
		return "", &refusedError{msg: fmt.Sprintf("is a symbolic link to a file outside the folders %s (%s)", p.what, p.allowed()),
			hint: p.hint, dir: ""}
	}
	return r, nil
}

// read is the ReadFile of a netlist's includes: the policy, then the base
// reader.
func (p *includePolicy) read(path string) ([]byte, error) {
	r, err := p.check(path)
	if err != nil {
		return nil, err
	}
	return p.base(r)
}

// notRegular returns a refusal when fi is not a regular file.
func notRegular(fi fs.FileInfo) error {
	m := fi.Mode()
	var what string
	switch {
	case m.IsRegular():
		return nil
	case m.IsDir():
		what = "a folder"
	case m&fs.ModeNamedPipe != 0:
		what = "a named pipe (FIFO)"
	case m&fs.ModeSocket != 0:
		what = "a socket"
	case m&fs.ModeDevice != 0:
		what = "a device"
	default:
		what = "a special file"
	}
	return &refusedError{msg: "is " + what + ", not a regular file; only regular files are read"}
}

// readRegular reads at most limit+1 bytes of the regular file at path:
// enough to tell that it is over the limit without holding all of it. A
// FIFO, device, socket or folder is refused before it is opened, and the
// file is opened non-blocking and checked again once open, so a file
// swapped for a FIFO in between cannot block the read either.
func readRegular(path string, limit int) ([]byte, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, err
	}
	if err := notRegular(fi); err != nil {
		return nil, err
	}
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if fi, err = f.Stat(); err != nil {
		return nil, err
	}
	if err := notRegular(fi); err != nil {
		return nil, err
	}
	return io.ReadAll(io.LimitReader(f, int64(limit)+1))
}

// readErrText returns err for a message about a file, without the path an
// *fs.PathError carries (the message names the file as written; the path
// resolved on this machine is not repeated).
func readErrText(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// confineTop reads the top file when LoadOptions.ConfineTop holds it to the
// policy: after its links are resolved it must still lie inside the allowed
// folders.
func (p *includePolicy) confineTop(path string) ([]byte, error) {
	if p.osFS {
		a, err := filepath.Abs(path)
		if err != nil {
			return nil, err
		}
		r, err := filepath.EvalSymlinks(a)
		if err != nil {
			return nil, err
		}
		if !withinAny(r, p.real) {
			return nil, &refusedError{msg: fmt.Sprintf("is a symbolic link to a file outside the folders being checked (%s); it is not read", p.allowed())}
		}
		path = r
	}
	return p.base(path)
}

// ReadRegular reads the file at path for a caller outside the netlist
// reader (a rule set, a board file): only a regular file is read, opened
// without blocking, and at most limit+1 bytes of it, so a caller sees that
// it is over its limit (len > limit) without holding more. A FIFO, device,
// socket or folder gives an error saying what it is.
func ReadRegular(path string, limit int) ([]byte, error) {
	src, err := readRegular(path, limit)
	if msg, ok := refused(err, false); ok {
		return nil, errors.New(msg)
	}
	return src, err
}

// ConfinedRead reads the file at path for a caller outside the netlist
// reader that follows a reference written inside a file (a rule set's
// extends) by the include policy: path, after joining and cleaning and
// again with its links resolved, must lie inside one of dirs (the first is
// the one named in messages); then only a regular file is read, as
// ReadRegular does. A refusal completes a sentence that starts with the
// path as written ("rule set \"x\" " + msg): what names who reads from
// the folders ("rule sets may extend"), and hint tells how to allow a
// folder (as LoadOptions.IncludeHint).
func ConfinedRead(path string, dirs []string, what string, hint func(dir string) string, limit int) ([]byte, error) {
	if len(dirs) == 0 {
		return nil, errors.New("no folders to read from")
	}
	o := &LoadOptions{IncludeDirs: dirs[1:], IncludeHint: hint, osFiles: true}
	p := newPolicy(filepath.Join(dirs[0], "x"), o)
	p.what = what
	r, err := p.check(path)
	if err == nil {
		return ReadRegular(r, limit)
	}
	if msg, ok := refused(err, false); ok {
		return nil, errors.New(msg)
	}
	// The links could not be resolved (a missing file, a dangling link):
	// the error of reading the path as joined says so without naming the
	// resolved path on this machine, and reads nothing (os.Stat fails on
	// the same path).
	return ReadRegular(path, limit)
}
