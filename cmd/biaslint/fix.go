package main

// The fix command: compute the resistor value changes that clear findings
// (rules/fix), one at a time so that each is searched on the circuit with
// the earlier ones made, verify them together by reading the changed text
// back and checking it again, and write each changed file atomically,
// touching only the values' text.

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"maps"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
	"github.com/biaslint/biaslint/rules/fix"
	"github.com/biaslint/biaslint/rules/report"
)

// maxFixChanges bounds the changes fix makes to one netlist.
const maxFixChanges = 16

func fixCommand() *cli.Command {
	// fix takes check's flags that choose what is judged and how, not
	// those that choose how a report looks.
	skip := map[string]bool{"format": true, "summary": true, "fail-on": true, "notes": true, "color": true,
		"output": true, "fixes": true, "shard": true}
	var flags []cli.Flag
	for _, f := range checkCommand().Flags {
		if !skip[f.Names()[0]] {
			flags = append(flags, f)
		}
	}
	flags = append(flags,
		&cli.BoolFlag{Name: "preview", Usage: "print the changes as a unified diff and write nothing"},
		&cli.IntFlag{Name: "max-changes", Value: 8, Usage: "change at most `N` values per netlist (at most 16)"})
	return &cli.Command{
		Name:      "fix",
		Usage:     "apply the computed resistor value changes (E12/E24, verified by solving) to the netlist files",
		ArgsUsage: "FILE...",
		Description: "Each change clears a finding in every case and corner without raising another; the changes " +
			"are verified together by checking the changed text again, then each changed file is replaced " +
			"atomically and only the values' text changes. --preview shows the diff instead.",
		Flags:  flags,
		Before: applyProjectFile,
		Action: runFix,
	}
}

// fixedFile is the outcome of fix on one netlist.
type fixedFile struct {
	path    string
	changes []*rules.Change
	// texts are the changed files' new contents, by path; old their old.
	texts, old map[string][]byte
	after      report.Counts
}

func runFix(c *cli.Context) error {
	preview := c.Bool("preview")
	if c.Bool("demo") && !preview {
		return badInput(errors.New("biaslint fix: the demo board is built in and cannot be changed; add --preview to see the changes"))
	}
	if !preview && slices.Contains(c.Args().Slice(), "-") {
		return badInput(errors.New("biaslint fix: standard input cannot be changed in place; add --preview to see the changes"))
	}
	maxChanges := c.Int("max-changes")
	if maxChanges < 1 || maxChanges > maxFixChanges {
		return badInput(fmt.Errorf("biaslint fix: --max-changes %d: give 1 to %d", maxChanges, maxFixChanges))
	}
	set, err := loadRuleSets(c)
	if err != nil {
		return err
	}
	if only, skip := idList(c.StringSlice("only")), idList(c.StringSlice("skip")); len(only) > 0 || len(skip) > 0 {
		if set, err = set.Select(only, skip); err != nil {
			return badInput(fmt.Errorf("biaslint: %v (see 'biaslint rules')", err))
		}
	}
	parts, err := loadParts(c)
	if err != nil {
		return err
	}
	inputs, err := inputsOf(c, parts)
	if err != nil {
		return err
	}
	opt, err := worstCaseOptions(c, set)
	if err != nil {
		return err
	}
	opt.Parts = parts
	if opt.MemoryLimit, err = fileMemory(c); err != nil {
		return err
	}
	if opt.Ambient, err = tempOf(c, "ambient"); err != nil {
		return err
	}
	if opt.Temp, err = tempOf(c, "temp"); err != nil {
		return err
	}
	var boardText []byte
	if p := c.String("board"); p != "" {
		if boardText, err = board.ReadFile(p); err != nil {
			return badInput(err)
		}
	}
	run := &checkRun{set: set, boardPath: c.String("board"), board: boardText}
	var done []fixedFile
	for _, in := range inputs {
		ff, err := run.fixOne(in, opt, maxChanges)
		if err != nil {
			// Every file or none: a batch is not left half changed.
			return badInput(fmt.Errorf("%v\nbiaslint fix: nothing written", err))
		}
		done = append(done, ff)
	}
	var out bytes.Buffer
	for _, ff := range done {
		writeFixSummary(&out, ff, preview)
	}
	if preview {
		for _, ff := range done {
			for _, p := range sortedPaths(ff.texts) {
				out.WriteString(unifiedDiff(p, ff.old[p], ff.texts[p]))
			}
		}
	} else {
		for _, ff := range done {
			if err := replaceFiles(ff.texts); err != nil {
				return err
			}
		}
	}
	_, err = c.App.Writer.Write(out.Bytes())
	return err
}

// fixOne computes, verifies and (in memory) applies the changes of one
// netlist.
func (run *checkRun) fixOne(in input, opt checks.Options, maxChanges int) (fixedFile, error) {
	ff := fixedFile{path: in.name, texts: map[string][]byte{}, old: map[string][]byte{}}
	circ, err := in.read()
	if err != nil {
		return ff, err
	}
	if run.boardPath != "" {
		b, err := board.Parse(run.boardPath, run.board, circ)
		if err != nil {
			return ff, err
		}
		opt.Board = b
	}
	judge := run.judge(opt)
	first, err := judge(circ, false)
	if why := overMemory(err); why != "" {
		_, err = overBudget(in.name, circ.Title, why)
	}
	if err != nil {
		return ff, err
	}
	var waivers []rules.Waiver
	if opt.Board != nil {
		for _, w := range opt.Board.Waivers {
			waivers = append(waivers, rules.Waiver{Rule: w.Rule, Device: w.Device, Reason: w.Reason, Pos: w.Pos, External: w.External})
		}
	}
	if b, _ := board.FromCircuit(circ); b != nil {
		for _, w := range b.Waivers {
			waivers = append(waivers, rules.Waiver{Rule: w.Rule, Device: w.Device, Reason: w.Reason, Pos: w.Pos, External: w.External})
		}
	}
	cur, v := circ, first
	for len(ff.changes) < maxChanges {
		fs := rules.ApplyWaivers(v.Findings, waivers, run.set.RuleIDs())
		var ch *rules.Change
		for _, f := range fix.Search(cur, fs, judge, fix.Options{First: true, MaxWork: max(4000, 8*first.Cases)}) {
			if f.Change != nil {
				ch = f.Change
				break
			}
		}
		if ch == nil {
			break
		}
		ff.changes = append(ff.changes, ch)
		cur = fix.WithChange(cur, ch)
		if v, err = judge(cur, false); err != nil {
			return ff, err
		}
	}
	if len(ff.changes) == 0 {
		ff.after = countsOf(rules.ApplyWaivers(first.Findings, waivers, run.set.RuleIDs()))
		return ff, nil
	}
	// The changed text, file by file.
	readFile := os.ReadFile
	if in.opts != nil && in.opts.ReadFile != nil {
		readFile = in.opts.ReadFile
	}
	// A value changed twice is one edit, from its text as written to its
	// last text.
	last := map[netlist.Pos]fix.Edit{}
	var order []netlist.Pos
	for _, ch := range ff.changes {
		e, seen := last[ch.Pos]
		if !seen {
			e = fix.EditOf(ch)
			order = append(order, ch.Pos)
		}
		e.New = ch.New
		last[ch.Pos] = e
	}
	edits := map[string][]fix.Edit{}
	for _, p := range order {
		edits[p.File] = append(edits[p.File], last[p])
	}
	for _, p := range sortedPaths(edits) {
		src, err := readFile(p)
		if in.src != nil && p == in.name {
			src, err = in.src, nil
		}
		if err != nil {
			return ff, fmt.Errorf("%s: cannot read it again to change it: %v", p, err)
		}
		text, err := fix.Apply(src, edits[p])
		if err != nil {
			return ff, err
		}
		ff.old[p], ff.texts[p] = src, text
	}
	// Verify: read the changed text back and check it again.
	var o netlist.LoadOptions
	if in.opts != nil {
		o = *in.opts
	}
	o.ReadFile = func(p string) ([]byte, error) {
		if t, ok := ff.texts[p]; ok {
			return t, nil
		}
		return readFile(p)
	}
	var changed *netlist.Circuit
	if in.src != nil {
		top := in.src
		if t, ok := ff.texts[in.name]; ok {
			top = t
		}
		changed, err = netlist.ReadSource(in.name, top, &o)
	} else {
		changed, err = netlist.Read(in.name, &o)
	}
	if err != nil {
		return ff, fmt.Errorf("%s: the changed netlist does not read back: %v", in.name, err)
	}
	after, err := judge(changed, false)
	if err != nil {
		return ff, fmt.Errorf("%s: the changed netlist does not solve: %v", in.name, err)
	}
	was := map[string]bool{}
	for _, f := range first.Findings {
		was[rules.AppliedKey(f.Rule, f.Device)] = true
	}
	for _, f := range after.Findings {
		if !was[rules.AppliedKey(f.Rule, f.Device)] {
			return ff, fmt.Errorf("%s: together the changes raise %s on %s", in.name, f.Rule, f.Device)
		}
	}
	ff.after = countsOf(rules.ApplyWaivers(after.Findings, waivers, run.set.RuleIDs()))
	return ff, nil
}

func countsOf(fs []rules.Finding) report.Counts {
	var c report.Counts
	for _, f := range fs {
		c.Add(f)
	}
	return c
}

func sortedPaths[V any](m map[string]V) []string { return slices.Sorted(maps.Keys(m)) }

// writeFixSummary prints one line per change and a closing line per file.
func writeFixSummary(w *bytes.Buffer, ff fixedFile, preview bool) {
	for _, ch := range ff.changes {
		where := ""
		if filepath.Clean(ch.Pos.File) != filepath.Clean(ff.path) {
			// A value in an included file changes every netlist that
			// includes it: say so.
			where = " (in an included file)"
		}
		fmt.Fprintf(w, "%s: %s%s\n", ch.Pos, ch, where)
	}
	verb := "changed"
	if preview {
		verb = "to change (preview, nothing written)"
	}
	values := map[netlist.Pos]bool{}
	for _, ch := range ff.changes {
		values[ch.Pos] = true
	}
	n := len(values)
	word := "values"
	if n == 1 {
		word = "value"
	}
	fmt.Fprintf(w, "%s: %d %s %s; checked again: %s\n", ff.path, n, word, verb, report.CountText(ff.after))
}

// unifiedDiff shows the changed lines of one file as a unified diff, one
// hunk per changed line (the changes never add or remove lines).
func unifiedDiff(path string, old, new []byte) string {
	a, b := strings.SplitAfter(string(old), "\n"), strings.SplitAfter(string(new), "\n")
	var out strings.Builder
	fmt.Fprintf(&out, "--- %s\n+++ %s\n", path, path)
	for i := 0; i < len(a) && i < len(b); i++ {
		if a[i] == b[i] {
			continue
		}
		fmt.Fprintf(&out, "@@ -%d +%d @@\n-%s+%s", i+1, i+1, withNewline(a[i]), withNewline(b[i]))
	}
	return out.String()
}

func withNewline(s string) string {
	if strings.HasSuffix(s, "\n") {
		return s
	}
	return s + "\n\\ No newline at end of file\n"
}

// replaceFiles writes each file's new text through a temporary file in its
// directory and a rename, keeping its permissions: every temporary file is
// written before any is renamed, and a failure removes them all, so a
// netlist is either wholly old or wholly new.
func replaceFiles(texts map[string][]byte) error {
	type pending struct{ tmp, path string }
	var ready []pending
	cleanup := func() {
		for _, p := range ready {
			os.Remove(p.tmp)
		}
	}
	for _, path := range sortedPaths(texts) {
		mode := fs.FileMode(0o644)
		if fi, err := os.Stat(path); err == nil {
			mode = fi.Mode().Perm()
		}
		tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".fix*")
		if err != nil {
			cleanup()
			return badInput(fmt.Errorf("biaslint fix: cannot write %s: %v", path, unwrapPath(err)))
		}
		_, werr := tmp.Write(texts[path])
		if werr == nil {
			werr = tmp.Chmod(mode)
		}
		if cerr := tmp.Close(); werr == nil {
			werr = cerr
		}
		ready = append(ready, pending{tmp.Name(), path})
		if werr != nil {
			cleanup()
			return badInput(fmt.Errorf("biaslint fix: cannot write %s: %v", path, unwrapPath(werr)))
		}
	}
	for i, p := range ready {
		if err := os.Rename(p.tmp, p.path); err != nil {
			cleanup()
			var done []string
			for _, q := range ready[:i] {
				done = append(done, q.path)
			}
			return badInput(fmt.Errorf("biaslint fix: cannot replace %s: %v (already replaced: %s)", p.path, unwrapPath(err), strings.Join(done, ", ")))
		}
	}
	return nil
}

func unwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	var le *os.LinkError
	if errors.As(err, &le) {
		return le.Err
	}
	return err
}
