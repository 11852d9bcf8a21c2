package main

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"strconv"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rulesets"
	"github.com/biaslint/biaslint/rulesets/demo"
)

var (
	demoFlag = &cli.BoolFlag{
		Name:  "demo",
		Usage: "run on the demo board built into the binary instead of FILE arguments (revision A, with five mistakes; see 'biaslint demo')",
	}
	demoRevFlag = &cli.StringFlag{
		Name:  "demo-rev",
		Usage: "run on this `REVISION` of the demo board: A (five mistakes) or B (corrected); implies --demo",
	}
)

// demoRevision is the demo revision a command asked for, and whether it
// asked for the demo at all.
func demoRevision(c *cli.Context) (demo.Revision, bool, error) {
	if c.IsSet("demo-rev") {
		r, err := demo.Lookup(c.String("demo-rev"))
		if err != nil {
			return r, true, badInput(fmt.Errorf("biaslint: --demo-rev: %v", err))
		}
		return r, true, nil
	}
	return demo.First(), c.Bool("demo"), nil
}

// input is one netlist to read: a file on disk, the embedded demo, or
// text already read (standard input), in src.
type input struct {
	name string
	opts *netlist.LoadOptions
	src  []byte
}

func (in input) read() (*netlist.Circuit, error) {
	if in.src != nil {
		return netlist.ReadSource(in.name, in.src, in.opts)
	}
	return netlist.Read(in.name, in.opts)
}

// load parses the input without flattening it, so a caller can tell a
// library file from a circuit first.
func (in input) load() (*netlist.Deck, error) {
	if in.src != nil {
		return netlist.Parse(in.name, in.src, in.opts)
	}
	return netlist.Load(in.name, in.opts)
}

// stdinName is how a netlist read from standard input ("-" as FILE) is
// named in positions and reports. Its includes are resolved from the
// current directory, as filepath.Dir of this name is ".".
const stdinName = "<stdin>"

// stdin is where "-" reads from; tests replace it.
var stdin io.Reader = os.Stdin

// readStdin reads standard input, up to the netlist file-size limit.
func readStdin() ([]byte, error) {
	src, err := io.ReadAll(io.LimitReader(stdin, netlist.DefaultMaxFileSize+1))
	if err != nil {
		return nil, fmt.Errorf("%s: error: cannot read standard input: %v", stdinName, err)
	}
	if len(src) > netlist.DefaultMaxFileSize {
		return nil, fmt.Errorf("%s:1:1: error: standard input is larger than the limit of %d bytes (16 MiB)", stdinName, netlist.DefaultMaxFileSize)
	}
	return src, nil
}

// fileArgs returns a command's FILE arguments: all of them, except for
// plot, whose first argument names the device.
func fileArgs(c *cli.Context) []string {
	args := c.Args().Slice()
	if c.Command != nil && c.Command.Name == "plot" && len(args) > 0 {
		args = args[1:]
	}
	return args
}

// inputsOf returns the netlists a command was asked to read: FILE
// arguments may be files, directories or globs (see expandArgs). A Q line
// naming a registered type of parts that the netlist does not define gets
// the library's stand-in model (rulesets.Library.StandIn), with a note.
func inputsOf(c *cli.Context, parts *rulesets.Library) ([]input, error) {
	args := fileArgs(c)
	rev, useDemo, err := demoRevision(c)
	if err != nil {
		return nil, err
	}
	if useDemo {
		if len(args) > 0 {
			return nil, badInput(errors.New("biaslint: --demo takes no FILE arguments"))
		}
		return []input{{name: rev.Name, opts: &netlist.LoadOptions{ReadFile: demoFile}}}, nil
	}
	if len(args) == 0 && c.Command.Name != "plot" {
		args = projectFiles(c) // the project file's "files", if any
	}
	if len(args) == 0 {
		return nil, badInput(fmt.Errorf("biaslint %s: no netlist given (name one or more FILEs, use --demo, or list files: in %s)", c.Command.Name, ProjectFile))
	}
	dirs, err := includeDirs(c)
	if err != nil {
		return nil, err
	}
	found, err := expand(args)
	if err != nil {
		return nil, badInput(err)
	}
	var ins []input
	for _, f := range found {
		o := &netlist.LoadOptions{IncludeDirs: dirs, IncludeHint: includeHint, ConfineTop: f.searched, StandIn: parts.StandIn}
		if err := sizeBudget(c, o); err != nil {
			return nil, err
		}
		if f.root != "" {
			// A folder argument: its files may include from all of it.
			o.IncludeDirs = append([]string{f.root}, dirs...)
		}
		if f.path != "-" {
			ins = append(ins, input{name: f.path, opts: o})
			continue
		}
		src, err := readStdin()
		if err != nil {
			return nil, badInput(err)
		}
		if src == nil {
			src = []byte{}
		}
		ins = append(ins, input{name: stdinName, opts: o, src: src})
	}
	return ins, nil
}

// includeDirFlag names further folders includes may be read from.
var includeDirFlag = &cli.StringSliceFlag{
	Name: "include-dir",
	Usage: "also let .include and .lib read files from `DIR` (repeatable); by default only the netlist's folder " +
		"(for a folder argument, that folder) is allowed",
}

// includeDirs returns the folders of --include-dir, each checked to be a
// folder. (The project file's folders join here too.)
func includeDirs(c *cli.Context) ([]string, error) {
	var out []string
	for _, d := range c.StringSlice("include-dir") {
		fi, err := os.Stat(d)
		if err != nil || !fi.IsDir() {
			return nil, badInput(fmt.Errorf("biaslint: --include-dir %s: not a folder", d))
		}
		out = append(out, d)
	}
	return out, nil
}

// includeHint tells how to allow a folder an include was refused from.
func includeHint(dir string) string {
	if dir == "" {
		return "pass --include-dir with the folder the link points into"
	}
	if strings.ContainsAny(dir, " \t'\"") {
		dir = strconv.Quote(dir)
	}
	return "pass --include-dir " + dir
}

// demoFile serves the embedded demo netlists and nothing else.
func demoFile(name string) ([]byte, error) {
	for _, r := range demo.Revisions {
		if name == r.Name {
			return r.Netlist, nil
		}
	}
	return nil, &fs.PathError{Op: "open", Path: name, Err: fs.ErrNotExist}
}
