package fix

import (
	"bytes"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// FuzzApply: Apply never panics; when it succeeds the result is the input
// with exactly the old text at the edit's place replaced, and everything
// before and after it unchanged.
func FuzzApply(f *testing.F) {
	f.Add([]byte("t\nRB in b 47k\n"), 2, 9, "47k", "1k")
	f.Add([]byte("\xef\xbb\xbfRB a b 4k7\r\n"), 1, 8, "4k7", "2k2")
	f.Add([]byte(""), 1, 1, "x", "y")
	f.Add([]byte("a\n\n\nb"), 4, 1, "b", "")
	f.Fuzz(func(t *testing.T, src []byte, line, col int, old, new string) {
		out, err := Apply(src, []Edit{{Pos: netlist.Pos{Line: line, Col: col}, Old: old, New: new}})
		if err != nil {
			return
		}
		i := bytes.Index(out, []byte(new))
		if len(out) != len(src)-len(old)+len(new) || i < 0 {
			t.Fatalf("Apply(%q, %d:%d %q -> %q) = %q", src, line, col, old, new, out)
		}
		// The bytes around the edit are the input's.
		at := -1
		for k := 0; k+len(old) <= len(src); k++ {
			if string(src[k:k+len(old)]) == old && string(src[:k])+new+string(src[k+len(old):]) == string(out) {
				at = k
				break
			}
		}
		if at < 0 {
			t.Fatalf("Apply(%q, %d:%d %q -> %q) = %q: not a single replacement", src, line, col, old, new, out)
		}
	})
}
