package main

import (
	"errors"
	"fmt"
	"io/fs"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rulesets/demo"
)

var demoFlag = &cli.BoolFlag{
	Name:  "demo",
	Usage: "run on the demo board built into the binary instead of FILE arguments",
}

// input is one netlist to read: a file on disk, or the embedded demo.
type input struct {
	name string
	opts *netlist.LoadOptions
}

func (in input) read() (*netlist.Circuit, error) {
	return netlist.Read(in.name, in.opts)
}

// load parses the input without flattening it, so a caller can tell a
// library file from a circuit first.
func (in input) load() (*netlist.Deck, error) {
	return netlist.Load(in.name, in.opts)
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
// arguments may be files, directories or globs (see expandArgs).
func inputsOf(c *cli.Context) ([]input, error) {
	args := fileArgs(c)
	if c.Bool("demo") {
		if len(args) > 0 {
			return nil, badInput(errors.New("biaslint: --demo takes no FILE arguments"))
		}
		return []input{{name: demo.Name, opts: &netlist.LoadOptions{ReadFile: demoFile}}}, nil
	}
	if len(args) == 0 {
		return nil, badInput(fmt.Errorf("biaslint %s: no netlist given (name one or more FILEs, or use --demo)", c.Command.Name))
	}
	names, err := expandArgs(args)
	if err != nil {
		return nil, badInput(err)
	}
	var ins []input
	for _, a := range names {
		ins = append(ins, input{name: a})
	}
	return ins, nil
}

// demoFile serves the embedded demo netlist and nothing else.
func demoFile(name string) ([]byte, error) {
	if name == demo.Name {
		return demo.Netlist, nil
	}
	return nil, &fs.PathError{Op: "open", Path: name, Err: fs.ErrNotExist}
}
