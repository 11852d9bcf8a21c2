package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Sharded runs merged give the unsharded report byte for byte, in JSON and
// SARIF, for 1 to 4 shards (more shards than some shards have files), with
// the shards named in any order; together the shards check every file
// exactly once. The batch folder has a file that cannot be read, one with
// an unjudged case, a library and a file another one includes (exit
// status 2, notifications of several kinds).
func TestShardMergeIsByteIdentical(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range [][2]string{{"json", "testdata/check"}, {"sarif", "testdata/check"}, {"json", "testdata/batch"}, {"sarif", "testdata/batch"}} {
		format := tc[0]
		// One directory argument: the files in path order, as merge puts them.
		args := []string{"check", "--format", format, "--corners=false", tc[1]}
		want, _, code := runCLI(t, args...)
		if !strings.Contains(want, tc[1]+"/") {
			t.Fatalf("%s %s: report names no file", format, tc[1])
		}
		for n := 1; n <= 4; n++ {
			var parts []string
			seen := 0
			for i := n; i >= 1; i-- { // named in reverse order
				out, errs, c := runCLI(t, append([]string{"check", "--shard", fmt.Sprintf("%d/%d", i, n)}, args[1:]...)...)
				if c == exitBadInput && code != exitBadInput {
					t.Fatalf("%s shard %d/%d: %s", format, i, n, errs)
				}
				p := filepath.Join(dir, fmt.Sprintf("%s-%d-%d-%d", format, len(tc[1]), i, n))
				if err := os.WriteFile(p, []byte(out), 0o644); err != nil {
					t.Fatal(err)
				}
				seen += strings.Count(out, `"transistors":`)
				parts = append(parts, p)
			}
			got, errs, c := runCLI(t, append([]string{"merge"}, parts...)...)
			if c == exitBadInput && code != exitBadInput {
				t.Fatalf("%s merge of %d: %s", format, n, errs)
			}
			if c != code {
				t.Errorf("%s merge of %d: exit %d, unsharded run %d", format, n, c, code)
			}
			if got != want {
				t.Errorf("%s, %d shards: merged report differs from the unsharded one:\n%s", format, n, firstDiff(got, want))
			}
			if format == "json" && seen != strings.Count(want, `"transistors":`) && tc[1] == "testdata/check" {
				t.Errorf("%d shards checked %d files, the unsharded run %d", n, seen, strings.Count(want, `"transistors":`))
			}
		}
	}
}

// firstDiff shows where two texts part.
func firstDiff(a, b string) string {
	la, lb := strings.Split(a, "\n"), strings.Split(b, "\n")
	for i := 0; i < len(la) && i < len(lb); i++ {
		if la[i] != lb[i] {
			return fmt.Sprintf("line %d:\n  got  %s\n  want %s", i+1, la[i], lb[i])
		}
	}
	return fmt.Sprintf("lengths %d and %d lines", len(la), len(lb))
}

// Bad shard specifications and reports are located errors, exit 2.
func TestShardAndMergeErrors(t *testing.T) {
	for _, s := range []string{"0/2", "3/2", "1/0", "a/b", "2"} {
		if _, errs, code := runCLI(t, "check", "--shard", s, "--demo"); code != exitBadInput || !strings.Contains(errs, "--shard") {
			t.Errorf("--shard %s: exit %d, %q", s, code, errs)
		}
	}
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.json")
	os.WriteFile(bad, []byte("{\n  \"results\": [}\n"), 0o644)
	if _, errs, code := runCLI(t, "merge", bad); code != exitBadInput || !strings.Contains(errs, bad+":2:") {
		t.Errorf("merge of broken JSON: exit %d, %q", code, errs)
	}
	if _, errs, code := runCLI(t, "merge"); code != exitBadInput || errs == "" {
		t.Errorf("merge of nothing: exit %d, %q", code, errs)
	}
}

// report --shard writes the review page of its part only: the two halves
// of a folder name every file once between them.
func TestReportShard(t *testing.T) {
	files, _ := filepath.Glob("testdata/check/*.cir")
	dir := t.TempDir()
	seen := map[string]int{}
	for i := 1; i <= 2; i++ {
		out := filepath.Join(dir, fmt.Sprintf("part%d.html", i))
		if _, errs, code := runCLI(t, "report", "--shard", fmt.Sprintf("%d/2", i), "--corners=false", "--output", out, "testdata/check"); code == exitBadInput {
			t.Fatalf("report --shard %d/2: %s", i, errs)
		}
		page, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range files {
			if strings.Contains(string(page), filepath.Base(f)) {
				seen[f]++
			}
		}
	}
	for _, f := range files {
		if seen[f] != 1 {
			t.Errorf("%s is on %d of the two pages, want 1", f, seen[f])
		}
	}
}
