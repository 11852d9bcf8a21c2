package netlist

import (
	"path/filepath"
	"testing"
)

// An include name resolves without regard to letter case, component by
// component, only when exactly one file matches.
func TestFoldCase(t *testing.T) {
	tree := map[string][]string{
		"board":            {"Models", "top.cir", "a.inc", "A.INC"},
		"board/Models":     {"stage.inc"},
		"board/Models/sub": nil,
	}
	readDir := func(dir string) ([]string, error) { return tree[filepath.ToSlash(dir)], nil }
	for _, tc := range []struct {
		inc, want string
		ok        bool
	}{
		{"models/Stage.INC", "board/Models/stage.inc", true},
		{"Models/stage.inc", "board/Models/stage.inc", false}, // exact: nothing to fold
		{"a.Inc", "", false}, // a.inc and A.INC both match: ambiguous, not folded
		{"models/none.inc", "", false},
	} {
		got, ok := foldCase("board/top.cir", filepath.Join("board", filepath.FromSlash(tc.inc)), readDir)
		if ok != tc.ok || (ok && filepath.ToSlash(got) != tc.want) {
			t.Errorf("foldCase(%s) = %q, %v; want %q, %v", tc.inc, got, ok, tc.want, tc.ok)
		}
	}
	if _, ok := foldCase("board/top.cir", "board/x.inc", nil); ok {
		t.Error("folded without a directory lister")
	}
}
