package main

import (
	"bytes"
	"fmt"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/rulesets/demo"
)

// demoCommand prints or writes a demo netlist, so a user can read the
// board --demo checks, edit it and check the copy.
func demoCommand() *cli.Command {
	return &cli.Command{
		Name:  "demo",
		Usage: "print a demo netlist (revision A, five mistakes; --rev B the corrected board), or write it with --output",
		Description: "The demo board is what 'check --demo' judges: revision A carries five mistakes, each explained with " +
			"a hand estimate in its comments; revision B is the same board with the fixes. Write one to a file, edit it " +
			"and check the copy: biaslint demo --rev A --output board.cir && biaslint check board.cir",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "rev", Value: demo.First().ID, Usage: "the `REVISION`: A (five mistakes) or B (corrected)"},
			&cli.BoolFlag{Name: "list", Usage: "list the revisions instead"},
			outputFlag,
		},
		Action: func(c *cli.Context) error {
			if c.NArg() > 0 {
				return badInput(fmt.Errorf("biaslint demo: takes no arguments (use --rev and --output)"))
			}
			var out bytes.Buffer
			if c.Bool("list") {
				for _, r := range demo.Revisions {
					fmt.Fprintf(&out, "%s  %-24s  %s\n", r.ID, r.Name, r.About)
				}
				return emit(c, &out)
			}
			r, err := demo.Lookup(c.String("rev"))
			if err != nil {
				return badInput(fmt.Errorf("biaslint demo: %v", err))
			}
			out.Write(r.Netlist)
			if err := emit(c, &out); err != nil {
				return err
			}
			if path := c.String("output"); path != "" {
				fmt.Fprintf(c.App.Writer, "wrote demo revision %s (%s) to %s; check it with: biaslint check %s\n", r.ID, r.About, path, path)
			}
			return nil
		},
	}
}
