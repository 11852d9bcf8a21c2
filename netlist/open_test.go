package netlist

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// secret is text of a file outside the checked folder; no message may
// repeat it.
const secret = "root:x:0:0:confidential-line-of-another-account"

// policyTree builds, in a temporary folder:
//
//	outside/secret.txt      a file the netlist must not reach
//	outside/parts.lib       a real library outside the netlist's folder
//	board/top.cir           the netlist (written per case)
//	board/models/ok.lib     a library inside
//	board/models/link.lib   a link to ../../outside/secret.txt
//	board/models/partslink.lib a link to ../../outside/parts.lib
//	board/models/inlink.lib a link to ok.lib (inside: allowed)
//	board/pipe.lib          a FIFO
//	board/sub/              a folder
func policyTree(t *testing.T) (root string) {
	t.Helper()
	root = t.TempDir()
	mk := func(p, s string) {
		t.Helper()
		if err := os.MkdirAll(filepath.Dir(filepath.Join(root, p)), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(root, p), []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	mk("outside/secret.txt", secret+"\n"+secret+"\n")
	mk("outside/parts.lib", ".model QOUT NPN BF=100\n")
	mk("board/models/ok.lib", ".model QOK NPN BF=100\n")
	if err := os.Symlink(filepath.Join("..", "..", "outside", "secret.txt"), filepath.Join(root, "board/models/link.lib")); err != nil {
		t.Skipf("no symbolic links here: %v", err)
	}
	if err := os.Symlink(filepath.Join("..", "..", "outside", "parts.lib"), filepath.Join(root, "board/models/partslink.lib")); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink("ok.lib", filepath.Join(root, "board/models/inlink.lib")); err != nil {
		t.Fatal(err)
	}
	if err := syscall.Mkfifo(filepath.Join(root, "board/pipe.lib"), 0o644); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	if err := os.Mkdir(filepath.Join(root, "board/sub"), 0o755); err != nil {
		t.Fatal(err)
	}
	return root
}

func TestIncludePolicy(t *testing.T) {
	root := policyTree(t)
	outside := filepath.Join(root, "outside")
	for _, tc := range []struct {
		name    string
		include string
		dirs    []string
		want    []string // in the message; "" for no error
	}{
		{"inside", "models/ok.lib", nil, nil},
		{"link inside", "models/inlink.lib", nil, nil},
		{"absolute", filepath.Join(outside, "secret.txt"), nil, []string{":2:10:", "is outside the folders", "to allow it"}},
		{"dotdot", "../outside/secret.txt", nil, []string{":2:10:", `"../outside/secret.txt" is outside the folders`}},
		{"dotdot back inside", "../board/models/ok.lib", nil, nil},
		{"allowed with IncludeDirs", "../outside/parts.lib", []string{outside}, nil},
		{"link outside", "models/link.lib", nil, []string{":2:10:", `"models/link.lib" is a symbolic link to a file outside`}},
		{"link outside, target folder allowed", "models/partslink.lib", []string{outside}, nil},
		{"link outside, other folder allowed", "models/partslink.lib", []string{"/dev"}, []string{"symbolic link"}},
		{"fifo", "pipe.lib", nil, []string{":2:10:", "named pipe (FIFO), not a regular file"}},
		{"folder", "sub", nil, []string{":2:10:", "a folder, not a regular file"}},
		{"dev zero outside", "/dev/zero", nil, []string{":2:10:", "is outside the folders"}},
		{"dev zero allowed", "/dev/zero", []string{"/dev"}, []string{":2:10:", "a device, not a regular file"}},
		{"dev null allowed", "/dev/null", []string{"/dev"}, []string{":2:10:", "a device, not a regular file"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if strings.HasPrefix(tc.include, "/dev/") {
				if _, err := os.Stat(tc.include); err != nil {
					t.Skip(err)
				}
			}
			top := filepath.Join(root, "board", "top.cir")
			src := "policy probe\n.include \"" + tc.include + "\"\nV1 a 0 5\nR1 a 0 1k\n.end\n"
			if err := os.WriteFile(top, []byte(src), 0o644); err != nil {
				t.Fatal(err)
			}
			start := time.Now()
			_, err := Load(top, &LoadOptions{IncludeDirs: tc.dirs})
			if d := time.Since(start); d > 2*time.Second {
				t.Errorf("Load took %v", d) // a FIFO opened blocking would hang here
			}
			if tc.want == nil {
				if err != nil {
					t.Fatalf("unexpected error: %v", err)
				}
				return
			}
			mustMention(t, err, tc.want...)
			if strings.Contains(err.Error(), "confidential") || strings.Contains(err.Error(), "root:x") {
				t.Errorf("the message repeats the refused file's text: %v", err)
			}
		})
	}
}

// ConfineTop: a netlist found by searching a folder that is a link to a
// file outside is not read; a link inside is.
func TestConfineTop(t *testing.T) {
	root := policyTree(t)
	dir := filepath.Join(root, "board")
	if err := os.Symlink(filepath.Join("..", "outside", "secret.txt"), filepath.Join(dir, "alice.cir")); err != nil {
		t.Fatal(err)
	}
	_, err := Load(filepath.Join(dir, "alice.cir"), &LoadOptions{ConfineTop: true, IncludeDirs: []string{dir}})
	mustMention(t, err, "alice.cir:1:1:", "symbolic link to a file outside")
	if strings.Contains(err.Error(), "confidential") {
		t.Errorf("message repeats the file: %v", err)
	}
	// A FIFO as the top file is refused without blocking.
	_, err = Load(filepath.Join(dir, "pipe.lib"), nil)
	mustMention(t, err, "pipe.lib:1:1:", "named pipe")
}
