package netlist

import (
	"os"
	"path/filepath"
	"strings"
)

// This file resolves an include name that differs from the file on disk
// only in letter case: netlists written on systems whose file names ignore
// case (.include 'Stage.inc' for stage.inc) are read on systems that do
// not. The slash direction is folded by resolvePath; slashNote says so.

// maxFoldEntries bounds how many directory entries one folded lookup reads
// per path component.
const maxFoldEntries = 10000

// foldCase looks for the file at path, below the directory of the
// including file from, whose name matches path's component by component
// without regard to letter case. It reads directories with readDir (nil:
// no lookup) and returns the path on disk when exactly one file matches at
// every step that does not match exactly. A path outside that directory is
// not folded.
func foldCase(from, path string, readDir func(string) ([]string, error)) (string, bool) {
	if readDir == nil {
		return "", false
	}
	base := filepath.Dir(from)
	rel, err := filepath.Rel(base, path)
	if err != nil || rel == ".." || strings.HasPrefix(rel, ".."+string(filepath.Separator)) || filepath.IsAbs(rel) {
		// Only names below the including file's folder are folded: no
		// folder above it, or elsewhere, is listed.
		return "", false
	}
	cur := base
	changed := false
	for _, part := range strings.Split(filepath.Clean(rel), string(filepath.Separator)) {
		if part == "" || part == "." {
			continue
		}
		names, err := readDir(cur)
		if err != nil {
			return "", false
		}
		match, n := "", 0
		for i, nm := range names {
			if i >= maxFoldEntries {
				break
			}
			if nm == part {
				match, n = nm, 1
				break
			}
			if strings.EqualFold(nm, part) {
				match = nm
				n++
			}
		}
		if n != 1 {
			return "", false
		}
		changed = changed || match != part
		cur = filepath.Join(cur, match)
	}
	return cur, changed
}

// osReadDir lists the names in dir on the file system.
func osReadDir(dir string) ([]string, error) {
	f, err := os.Open(dir)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return f.Readdirnames(maxFoldEntries)
}

// slashNote notes an include name written with backslashes on a system
// whose separator is '/': it is read with '/' for each '\'.
func slashNote(errs quoted, pos Pos, name string, depth int) {
	if filepath.Separator == '/' && strings.ContainsRune(name, '\\') {
		errs.Notef(pos, "include file \"%s\" is read as \"%s\": each '\\' is taken as '/'",
			pathText(name, depth), pathText(strings.ReplaceAll(name, `\`, "/"), depth))
	}
}
