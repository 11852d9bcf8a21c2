package main

import (
	"bytes"
	"context"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/checks/plane"
	"github.com/biaslint/biaslint/rules/report"
)

// analysisFlags are check's flags that shape the analysis and the rules
// (rule sets, parts, board, temperatures and whatever else check gains),
// without its output-format flags; report and plot take them too, so all
// three commands see the same cases.
func analysisFlags() []cli.Flag {
	var out []cli.Flag
	for _, f := range checkCommand().Flags {
		switch f.Names()[0] {
		case "format", "fail-on", "notes", "color", "summary":
			continue
		}
		out = append(out, f)
	}
	return out
}

func reportCommand() *cli.Command {
	return &cli.Command{
		Name:  "report",
		Usage: "write a review report: one self-contained HTML page with findings and each transistor's output-plane plot",
		Description: "FILE may be a netlist, a directory (searched for " + extList() + " files) or a glob. " +
			"For several files the page opens with a grid of rule counts, files down and rules across.",
		ArgsUsage: "FILE...",
		Flags: append(analysisFlags(),
			&cli.StringFlag{Name: "title", Usage: "heading of the page (default \"biaslint review\")"}),
		Before: applyProjectFile,
		Action: runReport,
	}
}

func runReport(c *cli.Context) error {
	run, err := newCheckRun(c)
	if err != nil {
		return err
	}
	files := run.report.Files
	planes := make([][]plane.Plane, len(files))
	pr := newProgress(c.App.ErrWriter, len(files), "plotting")
	parallel(len(files), func(i int) {
		// The plots of a file get their own --file-timeout: past it the
		// plots not yet made are left out (the page counts them).
		_, _ = withBudget(files[i].Path, run.timeout, func(ctx context.Context) error {
			planes[i] = plane.AllContext(ctx, files[i].Analysis)
			return ctx.Err()
		})
	}, pr.step)
	pr.finish()
	var out bytes.Buffer
	if err := report.HTML(&out, &run.report, report.HTMLOptions{Planes: planes, Title: c.String("title")}); err != nil {
		return badInput(err)
	}
	if err := emit(c, &out); err != nil {
		return err
	}
	return run.finish(c, false)
}
