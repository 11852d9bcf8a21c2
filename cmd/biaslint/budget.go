package main

// Per-file budgets of a batch: how long one netlist may be checked, how
// much memory its analysis may hold, and how large it may be (elements
// after flattening, bytes read with its includes). A file past its time or
// memory budget is reported as not checked, with the reason, and the batch
// goes on; the size budgets are located errors of that file.

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"time"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules/report"
)

// defaultFileTimeout is generous: the demo board's 78 cases take about a
// third of a second, a 40-transistor board a few seconds.
const defaultFileTimeout = 60 * time.Second

// defaultFileMemory is generous too, MiB: a full check of 2000 transistors
// (107 cases) is estimated at about 206 MiB, one with 1000 Monte Carlo
// runs at about 1656 MiB.
const defaultFileMemory = 4096

var (
	fileTimeoutFlag = &cli.DurationFlag{
		Name:  "file-timeout",
		Value: defaultFileTimeout,
		Usage: "stop checking one netlist after `DURATION` (e.g. 30s, 2m) and report it as not checked; 0 for no limit",
	}
	fileElementsFlag = &cli.IntFlag{
		Name:  "file-elements",
		Value: netlist.DefaultMaxElements,
		Usage: "read at most `N` elements of one netlist after flattening its subcircuits; more is an error of that file",
	}
	fileMemoryFlag = &cli.IntFlag{
		Name:  "file-memory",
		Value: defaultFileMemory,
		Usage: "let the analysis of one netlist hold at most about `N` MiB, estimated before its cases are solved; a file that needs more is reported as not checked",
	}
	fileMiBFlag = &cli.IntFlag{
		Name:  "file-mib",
		Value: netlist.DefaultMaxTotalSize >> 20,
		Usage: "read at most `N` MiB for one netlist, its includes counted each time they are read; more is an error of that file",
	}
)

// sizeBudget sets o's element and byte limits from the flags (a command
// without them keeps the defaults).
func sizeBudget(c *cli.Context, o *netlist.LoadOptions) error {
	if c.IsSet("file-elements") {
		n := c.Int("file-elements")
		if n <= 0 {
			return badInput(fmt.Errorf("biaslint: --file-elements %d: give a positive number", n))
		}
		o.MaxElements = n
	}
	if c.IsSet("file-mib") {
		n := c.Int("file-mib")
		if n <= 0 || n > 1<<20 {
			return badInput(fmt.Errorf("biaslint: --file-mib %d: give a number of MiB from 1 to %d", n, 1<<20))
		}
		o.MaxTotalSize = n << 20
	}
	return nil
}

// fileTimeout returns the --file-timeout budget (0: none).
func fileTimeout(c *cli.Context) (time.Duration, error) {
	d := c.Duration("file-timeout")
	if d < 0 {
		return 0, badInput(fmt.Errorf("biaslint: --file-timeout %v: give a duration of zero (no limit) or more", d))
	}
	return d, nil
}

// fileMemory returns the --file-memory budget, bytes.
func fileMemory(c *cli.Context) (int64, error) {
	n := c.Int("file-memory")
	if n <= 0 || n > 1<<20 {
		return 0, badInput(fmt.Errorf("biaslint: --file-memory %d: give a number of MiB from 1 to %d", n, 1<<20))
	}
	return int64(n) << 20, nil
}

// budgetContext returns the context that bounds checking the file path
// to d; tests replace it to run one file of a batch out of time.
var budgetContext = func(path string, d time.Duration) (context.Context, context.CancelFunc) {
	return context.WithTimeout(context.Background(), d)
}

// withBudget runs check on the file path under the time budget d (none
// when d is 0): the context it gets is done after d, which stops every
// solve of the file (checks.Options.Context). It reports whether the
// budget ran out.
func withBudget(path string, d time.Duration, check func(ctx context.Context) error) (err error, over bool) {
	ctx := context.Background()
	if d > 0 {
		var cancel context.CancelFunc
		ctx, cancel = budgetContext(path, d)
		defer cancel()
	}
	err = check(ctx)
	return err, err != nil && errors.Is(err, context.DeadlineExceeded)
}

// overTime says why a file whose check ran out of time d is not checked.
func overTime(d time.Duration) string {
	return fmt.Sprintf("checking took longer than the limit of %v per file (raise it with --file-timeout)", d)
}

// overMemory says why a file whose analysis would pass its memory budget
// is not checked, or "" when err is not that.
func overMemory(err error) string {
	var me *checks.MemoryError
	if !errors.As(err, &me) {
		return ""
	}
	return me.Error() + " per file (raise it with --file-memory)"
}

// overBudget is the report entry of a file whose check ran past a budget,
// with why in words.
func overBudget(path, title, why string) (report.File, error) {
	f := report.File{Path: path, Title: title, Status: report.StatusOverBudget, StatusDetail: why,
		Errors: []*netlist.Error{{Pos: netlist.Pos{File: path, Line: 1, Col: 1}, Msg: "not checked: " + why}}}
	return f, fmt.Errorf("%s:1:1: error: not checked: %s", path, why)
}

// loosensBudget returns why a project-file value of a budget key is
// refused, or "": the project file travels with the netlists (a pull
// request can change it), so it may tighten a per-file budget, not loosen
// it; a longer one is given on the command line.
func loosensBudget(key, val string) string {
	var ok bool
	var limit string
	switch key {
	case "file-timeout":
		d, err := time.ParseDuration(val)
		ok, limit = err != nil || (d > 0 && d <= defaultFileTimeout), defaultFileTimeout.String()
	case "file-elements":
		n, err := strconv.Atoi(val)
		ok, limit = err != nil || (n > 0 && n <= netlist.DefaultMaxElements), strconv.Itoa(netlist.DefaultMaxElements)
	case "file-memory":
		n, err := strconv.Atoi(val)
		ok, limit = err != nil || (n > 0 && n <= defaultFileMemory), strconv.Itoa(defaultFileMemory)
	case "file-mib":
		n, err := strconv.Atoi(val)
		ok, limit = err != nil || (n > 0 && n <= netlist.DefaultMaxTotalSize>>20), strconv.Itoa(netlist.DefaultMaxTotalSize>>20)
	default:
		return ""
	}
	if ok {
		return "" // a malformed value is reported by the flag itself
	}
	return fmt.Sprintf("%s %s would loosen the per-file budget (the default is %s); the project file can only tighten it: give a larger one with --%s", key, val, limit, key)
}
