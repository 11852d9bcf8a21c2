package rules

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestExtendsConfined: with LoadOptions.Confine a rule set extends only
// files inside its own folder or AllowDirs, by the include policy: an
// absolute path, a ".." and a link that lead out are located errors naming
// the path as written and how to allow it; a FIFO is refused without
// blocking; the same files load once their folder is allowed.
func TestExtendsConfined(t *testing.T) {
	root := t.TempDir()
	top, out := filepath.Join(root, "top"), filepath.Join(root, "out")
	for _, d := range []string{top, out} {
		if err := os.Mkdir(d, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	parent := "name: p\nextends: default\n"
	if err := os.WriteFile(filepath.Join(out, "secret.yaml"), []byte(parent), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(top, "inside.yaml"), []byte(parent), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(out, "secret.yaml"), filepath.Join(top, "link.yaml")); err != nil {
		t.Fatal(err)
	}
	if err := syscall.Mkfifo(filepath.Join(top, "fifo.yaml"), 0o644); err != nil {
		t.Skipf("no FIFO here: %v", err)
	}
	hint := func(dir string) string {
		if dir == "" {
			return "allow the folder it points into"
		}
		return "allow " + dir
	}
	abs := filepath.Join(out, "secret.yaml")
	for _, tc := range []struct {
		extends, want string
		allowOut      bool // the refusal goes away with out allowed
	}{
		{abs, `rule set "` + abs + `": is outside the folders rule sets may extend (` + top + `); to allow it, allow ` + out, true},
		{"../out/secret.yaml", `rule set "../out/secret.yaml": is outside the folders rule sets may extend (` + top + `); to allow it, allow ` + filepath.Join(top, "../out"), true},
		{"link.yaml", `rule set "link.yaml": is a symbolic link to a file outside the folders rule sets may extend (` + top + `); to allow it, allow the folder`, true},
		{"fifo.yaml", `rule set "fifo.yaml": is a named pipe (FIFO), not a regular file`, false},
	} {
		file := filepath.Join(top, "set.yaml")
		src := "name: s\nextends: " + tc.extends + "\n"
		if err := os.WriteFile(file, []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
		start := time.Now()
		_, err := Load(file, LoadOptions{Confine: true, AllowHint: hint})
		if err == nil || !strings.Contains(err.Error(), file+":2:") || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("extends %s: error %v; want a located error containing %q", tc.extends, err, tc.want)
		}
		if err != nil && strings.Contains(err.Error(), "name: p") {
			t.Errorf("extends %s: the error quotes the target: %v", tc.extends, err)
		}
		if d := time.Since(start); d > time.Second {
			t.Errorf("extends %s: took %v", tc.extends, d)
		}
		_, err = Load(file, LoadOptions{Confine: true, AllowHint: hint, AllowDirs: []string{out}})
		if tc.allowOut && err != nil {
			t.Errorf("extends %s with %s allowed: %v", tc.extends, out, err)
		}
		// Without Confine (a library caller's own files) the path is read.
		if _, err := Load(file, LoadOptions{}); tc.allowOut && err != nil {
			t.Errorf("extends %s unconfined: %v", tc.extends, err)
		}
	}
	file := filepath.Join(top, "ok.yaml")
	if err := os.WriteFile(file, []byte("name: s\nextends: inside.yaml\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Load(file, LoadOptions{Confine: true}); err != nil {
		t.Errorf("extends inside its own folder: %v", err)
	}
}
