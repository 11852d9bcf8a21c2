// Command biaslint solves the DC bias of every bipolar transistor in a
// SPICE-syntax netlist and judges each operating point against editable
// rule sets.
//
// Exit status: 0 when the run succeeded (and, for check, nothing reached
// --fail-on), 1 when check found something at or above --fail-on, 2 on bad
// input or usage. In a batch of several files, 2 when any file could not
// be judged, else 1 or 0 as for one file; the reports are written either
// way.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/rules/report"
)

// Exit statuses.
const (
	exitOK       = 0
	exitFindings = 1
	exitBadInput = 2
)

// statusError carries an exit status out of a command.
type statusError struct {
	code int
	err  error
}

func (e *statusError) Error() string {
	if e.err == nil {
		return ""
	}
	return e.err.Error()
}

// badInput wraps err as an exit-status-2 error.
func badInput(err error) error { return &statusError{code: exitBadInput, err: err} }

// gcPercent is the garbage collector's GOGC when the environment sets
// none: the heap may grow to 1.75 times the data in use before a
// collection, not twice (Go's default 100). A check holds every case's
// facts, which for a board of 2,000 transistors is most of its memory;
// measured there, peak RSS falls from 290-310 MB to 230-260 MB for about
// 4 % more CPU time. A user's GOGC (or GOGC=off) wins.
const gcPercent = 75

func main() {
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(gcPercent)
	}
	os.Exit(run(os.Args, os.Stdout, os.Stderr))
}

// run is main without the process exit, so tests can drive the CLI.
func run(args []string, stdout, stderr io.Writer) int {
	app := newApp(stdout, stderr)
	err := app.Run(flagsFirst(app, args))
	if err == nil {
		return exitOK
	}
	var se *statusError
	if errors.As(err, &se) {
		if se.err != nil && se.err.Error() != "" {
			// Messages quote input: escape what could drive a terminal.
			fmt.Fprintln(stderr, report.Printable(se.err.Error()))
		}
		return se.code
	}
	// Anything else comes from flag parsing or usage.
	fmt.Fprintf(stderr, "biaslint: %v\n", err)
	return exitBadInput
}

// flagsFirst moves a command's flags ahead of its FILE arguments, so that
// "biaslint report a.cir b.cir --output review.html" reads as people type
// it: the flag parser underneath stops at the first argument that is not a
// flag. A flag that takes a value keeps the word after it; "--" ends the
// flags as usual.
func flagsFirst(app *cli.App, args []string) []string {
	if len(args) < 3 {
		return args
	}
	cmd := app.Command(args[1])
	if cmd == nil {
		return args
	}
	takesValue := map[string]bool{}
	for _, f := range cmd.Flags {
		_, isBool := f.(*cli.BoolFlag)
		for _, n := range f.Names() {
			takesValue[n] = !isBool
		}
	}
	var flags, rest []string
	for i := 2; i < len(args); i++ {
		a := args[i]
		switch {
		case a == "--":
			rest = append(rest, args[i+1:]...)
			i = len(args)
		case len(a) > 1 && a[0] == '-':
			flags = append(flags, a)
			name := strings.TrimLeft(a, "-")
			if !strings.Contains(name, "=") && takesValue[name] && i+1 < len(args) {
				i++
				flags = append(flags, args[i])
			}
		default:
			rest = append(rest, a)
		}
	}
	out := append([]string{args[0], args[1]}, flags...)
	if len(rest) > 0 {
		out = append(append(out, "--"), rest...)
	}
	return out
}

func newApp(stdout, stderr io.Writer) *cli.App {
	app := &cli.App{
		Name:  "biaslint",
		Usage: "solve and judge the DC bias of every BJT in a netlist",
		Description: "biaslint reads SPICE-syntax netlists, solves each bipolar transistor's DC operating point " +
			"(modified nodal analysis, Newton-Raphson, Gummel-Poon equations) and reports it.",
		Version:         toolVersion(),
		Writer:          stdout,
		ErrWriter:       stderr,
		HideHelpCommand: true, // ours is helpCommand
		// With a command named help of our own the library adds no
		// --help flag to the app: add it.
		Flags:  []cli.Flag{cli.HelpFlag},
		Action: noCommand,
		Commands: []*cli.Command{
			checkCommand(),
			opCommand(),
			rulesCommand(),
			explainCommand(),
			reportCommand(),
			plotCommand(),
			initCommand(),
			demoCommand(),
			fixCommand(),
			mergeCommand(),
			versionCommand(),
			completionCommand(),
			helpCommand(),
		},
		// Usage errors are exit status 2, like bad input.
		OnUsageError: func(c *cli.Context, err error, isSubcommand bool) error {
			return badInput(fmt.Errorf("biaslint: %v (see 'biaslint --help')", err))
		},
		ExitErrHandler: func(c *cli.Context, err error) {},
	}
	// --version prints what "biaslint version" prints.
	cli.VersionFlag = &cli.BoolFlag{Name: "version", Usage: "print biaslint's version and the commit it was built from"}
	cli.VersionPrinter = func(c *cli.Context) { fmt.Fprintln(c.App.Writer, readBuildInfo()) }
	for _, cmd := range app.Commands {
		name := cmd.Name
		cmd.OnUsageError = func(c *cli.Context, err error, isSubcommand bool) error {
			return badInput(fmt.Errorf("biaslint %s: %v (see 'biaslint %s --help')", name, err, name))
		}
	}
	return app
}
