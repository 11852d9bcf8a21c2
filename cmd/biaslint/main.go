// Command biaslint solves the DC bias of every bipolar transistor in a
// SPICE-syntax netlist and judges each operating point against editable
// rule sets.
//
// Exit status: 0 when the run succeeded (and, for check, nothing reached
// --fail-on), 1 when check found something at or above --fail-on, 2 on bad
// input or usage.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/urfave/cli/v2"
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

func main() {
	os.Exit(run(os.Args, os.Stdout, os.Stderr))
}

// run is main without the process exit, so tests can drive the CLI.
func run(args []string, stdout, stderr io.Writer) int {
	app := newApp(stdout, stderr)
	err := app.Run(args)
	if err == nil {
		return exitOK
	}
	var se *statusError
	if errors.As(err, &se) {
		if se.err != nil && se.err.Error() != "" {
			fmt.Fprintln(stderr, se.err)
		}
		return se.code
	}
	// Anything else comes from flag parsing or usage.
	fmt.Fprintf(stderr, "biaslint: %v\n", err)
	return exitBadInput
}

func newApp(stdout, stderr io.Writer) *cli.App {
	app := &cli.App{
		Name:  "biaslint",
		Usage: "solve and judge the DC bias of every BJT in a netlist",
		Description: "biaslint reads SPICE-syntax netlists, solves each bipolar transistor's DC operating point " +
			"(modified nodal analysis, Newton-Raphson, Gummel-Poon equations) and reports it.",
		Writer:          stdout,
		ErrWriter:       stderr,
		HideHelpCommand: true,
		Commands: []*cli.Command{
			checkCommand(),
			opCommand(),
			rulesCommand(),
			explainCommand(),
			reportCommand(),
			plotCommand(),
			initCommand(),
		},
		// Usage errors are exit status 2, like bad input.
		OnUsageError: func(c *cli.Context, err error, isSubcommand bool) error {
			return badInput(fmt.Errorf("biaslint: %v (see 'biaslint --help')", err))
		},
		ExitErrHandler: func(c *cli.Context, err error) {},
	}
	for _, cmd := range app.Commands {
		name := cmd.Name
		cmd.OnUsageError = func(c *cli.Context, err error, isSubcommand bool) error {
			return badInput(fmt.Errorf("biaslint %s: %v (see 'biaslint %s --help')", name, err, name))
		}
	}
	return app
}
