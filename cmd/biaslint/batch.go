package main

// Batch checking: directories and globs on the command line, the per-file
// work spread over the cores, a progress bar for long batches, and the
// batch formats (a per-file summary table after the text report, CSV of
// findings, CSV of files).

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"sync"
	"time"

	"github.com/mattn/go-isatty"
	"github.com/schollz/progressbar/v3"
	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules/report"
)

// NetlistExts are the file extensions, compared without regard to case, that
// a directory named on the command line is searched for.
var NetlistExts = []string{".cir", ".net", ".sp", ".spi", ".spice", ".ckt"}

// maxBatchFiles caps the netlists one command line may expand to.
const maxBatchFiles = 100000

// isNetlistName reports whether a file name has one of NetlistExts.
func isNetlistName(name string) bool {
	ext := strings.ToLower(filepath.Ext(name))
	for _, e := range NetlistExts {
		if ext == e {
			return true
		}
	}
	return false
}

// extList lists NetlistExts as patterns for help texts.
func extList() string {
	var ps []string
	for _, e := range NetlistExts {
		ps = append(ps, "*"+e)
	}
	return strings.Join(ps, " ")
}

// hasGlobMeta reports whether a pattern uses filepath.Match syntax.
func hasGlobMeta(s string) bool { return strings.ContainsAny(s, "*?[") }

// expandArgs turns the FILE arguments into netlist paths: a file is taken as
// it is (whatever its extension), a directory is walked for files with one
// of NetlistExts (hidden directories skipped), and an argument that names
// nothing but holds glob characters is expanded with filepath.Glob (a
// matched directory is walked in turn). Each directory's or pattern's
// files are sorted by path; the arguments keep their order; a path named
// twice is read once.
func expandArgs(args []string) ([]string, error) {
	found, err := expand(args)
	var out []string
	for _, f := range found {
		out = append(out, f.path)
	}
	return out, err
}

// argFile is one netlist a FILE argument expanded to. root is the folder
// argument it was found in ("" for a file named or matched directly), and
// searched says it was found by a search (a folder walk or a glob) rather
// than named: such a file must not be a link that leads out of its folder.
type argFile struct {
	path, root string
	searched   bool
}

// expand is expandArgs, keeping where each file came from.
func expand(args []string) ([]argFile, error) {
	var out []argFile
	seen := map[string]bool{}
	root, searched := "", false
	add := func(p string) error {
		if k := filepath.Clean(p); !seen[k] {
			seen[k] = true
			out = append(out, argFile{path: p, root: root, searched: searched})
		}
		if len(out) > maxBatchFiles {
			return fmt.Errorf("biaslint: more than %d netlists named; check a smaller set at a time", maxBatchFiles)
		}
		return nil
	}
	walk := func(dir string) error {
		var found []string
		err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
			if err != nil {
				return err
			}
			if d.IsDir() {
				if p != dir && strings.HasPrefix(d.Name(), ".") {
					return filepath.SkipDir
				}
				return nil
			}
			if isNetlistName(d.Name()) {
				found = append(found, p)
				if len(found) > maxBatchFiles {
					return fmt.Errorf("more than %d netlists", maxBatchFiles)
				}
			}
			return nil
		})
		if err != nil {
			return fmt.Errorf("%s: error: cannot read directory: %v", dir, err)
		}
		if len(found) == 0 {
			return fmt.Errorf("%s: error: no netlist files (%s) in this directory", dir, strings.Join(NetlistExts, " "))
		}
		sort.Strings(found)
		for _, p := range found {
			if err := add(p); err != nil {
				return err
			}
		}
		return nil
	}
	for _, a := range args {
		if a == "-" { // standard input, read once however often named
			root, searched = "", false
			if err := add(a); err != nil {
				return nil, err
			}
			continue
		}
		fi, err := os.Stat(a)
		root, searched = "", false
		switch {
		case err == nil && fi.IsDir():
			root, searched = a, true
			if err := walk(a); err != nil {
				return nil, err
			}
		case err == nil || !hasGlobMeta(a):
			// A file, or a name that does not exist: reading it reports.
			if err := add(a); err != nil {
				return nil, err
			}
		default:
			matches, gerr := filepath.Glob(a)
			if gerr != nil {
				return nil, fmt.Errorf("%s: error: bad pattern: %v", a, gerr)
			}
			if len(matches) == 0 {
				return nil, fmt.Errorf("%s: error: no file matches", a)
			}
			sort.Strings(matches)
			for _, m := range matches {
				root, searched = "", true
				if mi, err := os.Stat(m); err == nil && mi.IsDir() {
					root = m
					if err := walk(m); err != nil {
						return nil, err
					}
					continue
				}
				if err := add(m); err != nil {
					return nil, err
				}
			}
		}
	}
	return out, nil
}

// parallel runs work(i) for every i in [0, n) on up to GOMAXPROCS
// goroutines and calls step after each (from the worker, so step must be
// safe for concurrent use). Each work(i) writes only to its own slot of
// the caller's pre-sized results, so the outcome does not depend on the
// schedule.
func parallel(n int, work func(i int), step func()) {
	workers := min(runtime.GOMAXPROCS(0), n)
	next := make(chan int)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				work(i)
				step()
			}
		}()
	}
	for i := range n {
		next <- i
	}
	close(next)
	wg.Wait()
}

// progressDelay is how long a batch runs before the progress bar shows.
const progressDelay = time.Second

// progress is a progress bar on a terminal's stderr that appears only once
// a batch has run for progressDelay; it is silent elsewhere.
type progress struct {
	mu    sync.Mutex
	w     io.Writer
	on    bool
	n     int
	what  string
	done  int
	start time.Time
	bar   *progressbar.ProgressBar
}

// newProgress returns the progress of a batch of n items described by
// what ("checking"), written to w, which must be a terminal for anything
// to show.
func newProgress(w io.Writer, n int, what string) *progress {
	p := &progress{w: w, n: n, what: what, start: time.Now()}
	if f, ok := w.(*os.File); ok && n > 1 && (isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd())) {
		p.on = true
	}
	return p
}

// step counts one finished item.
func (p *progress) step() {
	if !p.on {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.done++
	if p.bar == nil {
		if time.Since(p.start) < progressDelay || p.done >= p.n {
			return
		}
		p.bar = progressbar.NewOptions(p.n,
			progressbar.OptionSetWriter(p.w),
			progressbar.OptionSetDescription(p.what),
			progressbar.OptionShowCount(),
			progressbar.OptionSetWidth(30),
			progressbar.OptionClearOnFinish(),
			progressbar.OptionThrottle(100*time.Millisecond),
		)
		_ = p.bar.Set(p.done)
		return
	}
	_ = p.bar.Add(1)
}

// finish clears the bar, if it showed.
func (p *progress) finish() {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil {
		_ = p.bar.Finish()
		p.bar = nil
	}
}

// readOut is one input after reading: its circuit, or why there is none.
type readOut struct {
	circ *netlist.Circuit
	// files are the files the input read, itself first.
	files   []string
	library bool
	err     error
}

// readInput reads one input: parsed, then, unless it is a library file
// with definitions only, flattened.
func readInput(in input) readOut {
	d, err := in.load()
	out := readOut{files: d.Files}
	if err == nil && d.LibraryOnly() {
		out.library = true
		return out
	}
	out.circ, out.err = netlist.Flatten(d)
	return out
}

// all checks every input in parallel, each on its own, and returns one
// report.File per input in input order: checked, or with the located
// errors that kept it from being judged, or marked as a library or as
// included by another input. Reading comes first (it is cheap), so that a
// file another input includes is not also checked on its own. When a
// single input was named and it cannot be judged, its error is returned
// instead, so the command fails as it always has for one bad file.
func (run *checkRun) all(c *cli.Context, inputs []input, opt checks.Options) ([]report.File, error) {
	reads := make([]readOut, len(inputs))
	parallel(len(inputs), func(i int) { reads[i] = readInput(inputs[i]) }, func() {})
	includedBy := map[string]string{}
	for i, r := range reads {
		for _, f := range r.files[min(1, len(r.files)):] {
			k := samePath(f)
			if _, seen := includedBy[k]; !seen {
				includedBy[k] = inputs[i].name
			}
		}
	}
	// --shard: every input is read (so that a file another one includes
	// is known as included whichever shard it falls in), only the shard's
	// are checked and reported.
	if run.shardN > 1 {
		var ins []input
		var rs []readOut
		for k := range inputs {
			if k%run.shardN == run.shardI-1 {
				ins, rs = append(ins, inputs[k]), append(rs, reads[k])
			}
		}
		inputs, reads = ins, rs
	}
	files := make([]report.File, len(inputs))
	errs := make([]error, len(inputs))
	pr := newProgress(c.App.ErrWriter, len(inputs), "checking")
	parallel(len(inputs), func(i int) {
		in, r := inputs[i], reads[i]
		f := &files[i]
		f.Path = in.name
		if by, ok := includedBy[samePath(in.name)]; ok && by != in.name {
			f.Status, f.StatusDetail = report.StatusIncluded, by
			return
		}
		if r.library {
			f.Status = report.StatusLibrary
			return
		}
		if r.err == nil {
			var over bool
			r.err, over = withBudget(in.name, run.timeout, func(ctx context.Context) error {
				o := opt
				o.Context = ctx // stops every solve of this file when the budget runs out
				var err error
				*f, err = run.one(c, r.circ, o)
				return err
			})
			why := overMemory(r.err)
			if over {
				why = overTime(run.timeout)
			}
			if why != "" {
				*f, errs[i] = overBudget(in.name, r.circ.Title, why)
				f.Notes = r.circ.Notes
				return
			}
		}
		if r.err != nil {
			errs[i] = r.err
			*f = report.File{Path: in.name, Status: report.StatusInputErrors, Errors: locate(r.err, in.name)}
			if r.circ != nil {
				f.Title, f.Notes = r.circ.Title, r.circ.Notes
			}
		}
	}, pr.step)
	pr.finish()
	if len(inputs) == 1 && errs[0] != nil {
		// The alerts (a value whose letters are often misread) may well
		// be why the file fails: they go with its errors.
		msg := errs[0].Error()
		for _, n := range files[0].Notes {
			if n.Alert {
				msg += "\n" + n.Error()
			}
		}
		return nil, errors.New(msg)
	}
	return files, nil
}

// samePath is a key under which two spellings of one file's path (relative
// and absolute, with ./ or ..) agree.
func samePath(p string) string {
	if a, err := filepath.Abs(p); err == nil {
		return a
	}
	return filepath.Clean(p)
}

// locate turns the error that kept a file from being judged into located
// errors: the entries of a netlist.ErrorList, a solver's failure at the
// element it names, or one message at the file.
func locate(err error, file string) []*netlist.Error {
	if l := netlist.AsErrorList(err); l != nil {
		out := l.Errors()
		if n := l.Dropped(); n > 0 {
			out = append(out, &netlist.Error{Pos: netlist.Pos{File: file}, Msg: fmt.Sprintf("(and %d more errors)", n)})
		}
		return out
	}
	var ce *solve.ConvergenceError
	if errors.As(err, &ce) {
		pos := ce.Pos
		if !pos.IsValid() {
			pos = netlist.Pos{File: file, Line: 1, Col: 1}
		}
		return []*netlist.Error{{Pos: pos, Msg: ce.Detail()}}
	}
	msg := err.Error()
	if rest, ok := strings.CutPrefix(msg, file+": "); ok {
		msg = rest
	}
	return []*netlist.Error{{Pos: netlist.Pos{File: file}, Msg: msg}}
}

// summaryFlag selects the per-file summary of check.
var summaryFlag = &cli.StringFlag{
	Name:  "summary",
	Value: "auto",
	Usage: "per-file summary: auto (a table after a text report of several files), table (always, after text), " +
		"csv (one row per file instead of the report), none",
}

// checkBatchFlags validates --summary.
func checkBatchFlags(c *cli.Context) error {
	switch c.String("summary") {
	case "auto", "table", "csv", "none":
		return nil
	}
	return badInput(fmt.Errorf("biaslint: --summary must be auto, table, csv or none, not %q", c.String("summary")))
}

// writeBatch finishes a check report in out: for --format csv it writes
// one row per finding; for text it appends the per-file summary table when
// more than one file was checked (or --summary table asks for it);
// --summary csv replaces whatever out holds with one CSV row per file.
func writeBatch(c *cli.Context, out *bytes.Buffer, r *report.Report, format string) error {
	switch summary := c.String("summary"); {
	case summary == "csv":
		out.Reset()
		return report.SummaryCSV(out, r)
	case format == "csv":
		return report.CSV(out, r)
	case format == "text" && (summary == "table" || summary == "auto" && len(r.Files) > 1):
		out.WriteString("\n")
		return report.SummaryTable(out, r)
	}
	return nil
}
