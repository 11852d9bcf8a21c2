package main

import (
	"bytes"
	"fmt"
	"path/filepath"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/checks/plane"
	"github.com/biaslint/biaslint/rules/report"
)

func plotCommand() *cli.Command {
	return &cli.Command{
		Name:  "plot",
		Usage: "draw one transistor's output plane: load line, operating points, safe operating area, saturation edge",
		Description: "Writes SVG, or PNG when --output ends in .png; without --output, SVG goes to standard output. " +
			"DEVICE is the flat name as in reports (X1.Q2).",
		ArgsUsage: "DEVICE FILE",
		Flags:     withoutFlag(analysisFlags(), "shard"),
		Before:    applyProjectFile,
		Action:    runPlot,
	}
}

// plotArgs checks the arguments of plot: a device name, then one netlist
// (none with --demo).
func plotArgs(c *cli.Context) (string, error) {
	want := 2
	_, useDemo, err := demoRevision(c)
	if err != nil {
		return "", err
	}
	if useDemo {
		want = 1
	}
	if c.NArg() != want {
		return "", badInput(fmt.Errorf("biaslint plot: name a DEVICE and %s (see 'biaslint plot --help')",
			map[bool]string{true: "no FILE with --demo", false: "one netlist FILE"}[useDemo]))
	}
	return c.Args().First(), nil
}

func runPlot(c *cli.Context) error {
	device, err := plotArgs(c)
	if err != nil {
		return err
	}
	ext := strings.ToLower(filepath.Ext(c.String("output")))
	if c.String("output") != "" && ext != ".svg" && ext != ".png" {
		return badInput(fmt.Errorf("biaslint plot: --output %s: write .svg or .png", c.String("output")))
	}
	run, err := newCheckRun(c)
	if err != nil {
		return err
	}
	if len(run.report.Files) != 1 {
		return badInput(fmt.Errorf("biaslint plot: expected one netlist"))
	}
	if f := &run.report.Files[0]; f.Analysis == nil {
		return badInput(fmt.Errorf("%s: error: nothing to plot: %s", f.Path, report.StatusText(f)))
	}
	pl, err := plane.Of(run.report.Files[0].Analysis, device)
	if err != nil {
		return badInput(fmt.Errorf("biaslint plot: %v", err))
	}
	var out bytes.Buffer
	marks := report.MarksOf(run.report.Files[0].Findings, pl.Device)
	if ext == ".png" {
		err = report.PlanePNG(&out, pl, marks...)
	} else {
		err = report.PlaneSVG(&out, pl, marks...)
	}
	if err != nil {
		return badInput(fmt.Errorf("biaslint plot: %v", err))
	}
	if pl.LoadNote != "" {
		fmt.Fprintf(c.App.ErrWriter, "biaslint plot: %s: no load line: %s\n", pl.Device, pl.LoadNote)
	}
	return emit(c, &out)
}
