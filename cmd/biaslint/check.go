package main

import (
	"bytes"
	"fmt"
	"github.com/mattn/go-isatty"
	"github.com/schollz/progressbar/v3"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
	"github.com/biaslint/biaslint/rules/fix"
	"github.com/biaslint/biaslint/rules/report"
	"github.com/biaslint/biaslint/rulesets"
)

var (
	rulesetFlag = &cli.StringSliceFlag{
		Name:  "ruleset",
		Usage: "rule set to use: a built-in name (" + strings.Join(rulesets.Names(), ", ") + ") or a YAML `FILE`; repeat to use several",
	}
	setFlag = &cli.StringSliceFlag{
		Name:  "set",
		Usage: "override a rule-set parameter, `NAME=VALUE` (e.g. --set vceo_share=80%); repeatable",
	}
	partsFlag = &cli.StringFlag{
		Name:  "parts",
		Usage: "extra parts library `FILE` (YAML); its entries take precedence over the built-in types and classes",
	}
	boardFlag = &cli.StringFlag{
		Name:  "board",
		Usage: "board `FILE` (YAML) with ratings, device roles, power ratings and waivers for the netlist",
	}
	ambientFlag = &cli.StringFlag{
		Name:  "ambient",
		Usage: "ambient temperature in `C` for derating and junction temperature (default: the board file's, else 25)",
	}
)

func checkCommand() *cli.Command {
	return &cli.Command{
		Name:      "check",
		Usage:     "solve every BJT's bias and judge it against the rule set",
		ArgsUsage: "FILE...",
		Description: "FILE may be a netlist, a directory (searched for " + extList() + " files) or a glob; " +
			"files are checked in parallel and reported in a stable order.",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "format", Aliases: []string{"f"}, Value: "text", Usage: formatFlagUsage + ": text, json, sarif or csv (one row per finding)"},
			summaryFlag,
			&cli.StringFlag{Name: "fail-on", Value: "error", Usage: "exit with status 1 when a finding at or above this severity is left: error, warning or note"},
			rulesetFlag, setFlag,
			&cli.StringSliceFlag{Name: "only", Usage: "judge only these rule `IDS` (comma-separated or repeated)"},
			&cli.StringSliceFlag{Name: "skip", Usage: "do not judge these rule `IDS` (comma-separated or repeated)"},
			partsFlag, boardFlag, ambientFlag, tempFlag, includeDirFlag, fileTimeoutFlag, fileMemoryFlag, fileElementsFlag, fileMiBFlag,
			&cli.BoolFlag{Name: "notes", Usage: "also print the notes about reading the input"},
			colorFlag, outputFlag, demoFlag, demoRevFlag,
			&cli.StringFlag{Name: "ambient-range", Usage: "ambient range of the temperature corners, `MIN:MAX` in C (default: the rule set's ambient_min:ambient_max, else 0:70)"},
			&cli.BoolFlag{Name: "thermal", Value: true, Usage: "solve each transistor at its junction temperature Ta + P*RthJA (--thermal=false: at the ambient)"},
			&cli.BoolFlag{Name: "corners", Value: true, Usage: "also judge the hFE, ambient, supply and resistor corners (--corners=false: scenarios at nominal values only)"},
			&cli.IntFlag{Name: "monte-carlo", Usage: "add `N` Monte Carlo runs drawing every resistor and supply within its tolerance"},
			&cli.Uint64Flag{Name: "seed", Value: 1, Usage: "seed `S` of the Monte Carlo draws (the same seed gives the same report)"},
			&cli.StringFlag{Name: "distribution", Value: "uniform", Usage: "Monte Carlo distribution within each tolerance: uniform or normal (3 sigma at the tolerance)"},
			fixesFlag,
			shardFlag,
			configFlag, noConfigFlag,
		},
		Before: applyProjectFile,
		Action: runCheck,
	}
}

// loadRuleSets loads the rule sets a command was given (the default when
// none), with --set overrides, and layers them in order (rules.Combine).
func loadRuleSets(c *cli.Context) (*rules.RuleSet, error) {
	set := map[string]string{}
	for _, kv := range c.StringSlice("set") {
		k, v, ok := strings.Cut(kv, "=")
		if !ok || strings.TrimSpace(k) == "" {
			return nil, badInput(fmt.Errorf("biaslint: --set %q: write NAME=VALUE", kv))
		}
		set[strings.TrimSpace(k)] = strings.TrimSpace(v)
	}
	refs := c.StringSlice("ruleset")
	if len(refs) == 0 {
		refs = []string{"default"}
	}
	// extends is held to the include policy: the set's own folder, the
	// project file's folder and the --include-dir folders.
	lo := rules.LoadOptions{Confine: true, AllowHint: includeHint}
	if d, ok := c.App.Metadata[projectDirKey].(string); ok {
		lo.AllowDirs = append(lo.AllowDirs, d)
	}
	lo.AllowDirs = append(lo.AllowDirs, c.StringSlice("include-dir")...)
	var out []*rules.RuleSet
	for _, ref := range refs {
		// --set names a parameter of any of the sets; each set takes the
		// overrides it knows.
		rs, err := rules.Load(ref, lo)
		if err != nil {
			return nil, badInput(err)
		}
		mine := map[string]string{}
		for k, v := range set {
			if _, ok := rs.Param(k); ok {
				mine[k] = v
			}
		}
		if len(mine) > 0 {
			lo.Set = mine
			rs, err = rules.Load(ref, lo)
			lo.Set = nil
			if err != nil {
				return nil, badInput(err)
			}
		}
		out = append(out, rs)
	}
	for k := range set {
		found := false
		for _, rs := range out {
			if _, ok := rs.Param(k); ok {
				found = true
			}
		}
		if !found {
			return nil, badInput(fmt.Errorf("biaslint: --set %s: no such parameter in the rule set (see 'biaslint rules')", k))
		}
	}
	rs := rules.Combine(out...)
	// Notes about the rule-set files (old key names, renamed rule ids)
	// go to standard error, each once, so that reports stay as they were.
	seen := map[string]bool{}
	for _, n := range rs.Notes {
		if msg := n.Error(); !seen[msg] {
			seen[msg] = true
			fmt.Fprintln(c.App.ErrWriter, msg)
		}
	}
	return rs, nil
}

// idList splits repeated and comma-separated rule ids.
func idList(vals []string) []string {
	var out []string
	for _, v := range vals {
		for _, id := range strings.Split(v, ",") {
			if id = strings.TrimSpace(id); id != "" {
				out = append(out, id)
			}
		}
	}
	return out
}

// maxPartsFile bounds a --parts library in bytes.
const maxPartsFile = 4 << 20

// loadParts returns the parts library: the built-in classes, after any
// --parts FILE entries.
func loadParts(c *cli.Context) (*rulesets.Library, error) {
	lib, err := rulesets.Parts()
	if err != nil {
		return nil, badInput(err)
	}
	path := c.String("parts")
	if path == "" {
		return lib, nil
	}
	src, err := netlist.ReadRegular(path, maxPartsFile)
	if err != nil {
		return nil, badInput(fmt.Errorf("%s: error: cannot read parts library: %v", path, err))
	}
	if len(src) > maxPartsFile {
		return nil, badInput(fmt.Errorf("%s: error: parts library is over the %d-byte limit", path, maxPartsFile))
	}
	user, err := rulesets.LoadParts(path, src)
	if err != nil {
		return nil, badInput(err)
	}
	all, err := rulesets.Combine(user, lib)
	if err != nil {
		return nil, badInput(err)
	}
	return all, nil
}

// checkRun is the shared part of check and report: read, analyse and judge
// every input.
type checkRun struct {
	set    *rules.RuleSet
	report report.Report
	// boardPath and board are the --board file and its text, read once
	// and parsed against each netlist.
	boardPath string
	board     []byte
	// fixes asks for the computed fixes (rules/fix) of each file's findings.
	fixes bool
	// timeout is the --file-timeout budget of each file (0: none), and
	// memory the --file-memory budget, bytes.
	timeout time.Duration
	memory  int64
	// shardI of shardN is the part of the inputs checked (--shard).
	shardI, shardN int
}

func newCheckRun(c *cli.Context) (*checkRun, error) {
	set, err := loadRuleSets(c)
	if err != nil {
		return nil, err
	}
	if only, skip := idList(c.StringSlice("only")), idList(c.StringSlice("skip")); len(only) > 0 || len(skip) > 0 {
		if set, err = set.Select(only, skip); err != nil {
			return nil, badInput(fmt.Errorf("biaslint: %v (see 'biaslint rules')", err))
		}
	}
	parts, err := loadParts(c)
	if err != nil {
		return nil, err
	}
	inputs, err := inputsOf(c, parts)
	if err != nil {
		return nil, err
	}
	run := &checkRun{set: set, fixes: wantFixes(c)}
	if run.shardI, run.shardN, err = parseShard(c.String("shard")); err != nil {
		return nil, err
	}
	if run.timeout, err = fileTimeout(c); err != nil {
		return nil, err
	}
	if run.memory, err = fileMemory(c); err != nil {
		return nil, err
	}
	if run.boardPath = c.String("board"); run.boardPath != "" {
		if run.board, err = board.ReadFile(run.boardPath); err != nil {
			return nil, badInput(err)
		}
	}
	run.report.Version = toolVersion()
	run.report.RuleSet = set
	opt, err := worstCaseOptions(c, set)
	if err != nil {
		return nil, err
	}
	opt.Parts, opt.MemoryLimit = parts, run.memory
	if opt.Ambient, err = tempOf(c, "ambient"); err != nil {
		return nil, err
	}
	if opt.Temp, err = tempOf(c, "temp"); err != nil {
		return nil, err
	}
	if len(inputs) == 1 {
		bar := newCaseProgress(c)
		defer bar.finish()
		opt.Progress = bar.update
	}
	var single error
	run.report.Files, single = run.all(c, inputs, opt) // batch.go: in parallel, in input order
	if single != nil {
		// One netlist named, and it cannot be judged: nothing to report.
		return nil, badInput(single)
	}
	for _, f := range run.report.Files {
		if f.Analysis != nil && len(f.Analysis.Cases) > 0 {
			run.report.Ambient = f.Analysis.Cases[0].Ambient
			break
		}
	}
	return run, nil
}

// finish ends a check or report run whose report has been written: when
// some file could not be judged its located errors also go to stderr
// (unless the text report on stdout already shows them) and the result is
// exit status 2, else nil.
func (run *checkRun) finish(c *cli.Context, shown bool) error {
	failed := run.report.Failed()
	if len(failed) == 0 {
		return nil
	}
	w := c.App.ErrWriter
	if shown {
		fmt.Fprintf(w, "biaslint: %d of %d files could not be checked; their errors are in the report\n", len(failed), len(run.report.Files))
	} else {
		for _, f := range failed {
			for _, e := range f.Errors {
				fmt.Fprintln(w, e.Error())
			}
		}
	}
	return &statusError{code: exitBadInput}
}

// one checks a single netlist read by read (see batch.go).
func (run *checkRun) one(c *cli.Context, circ *netlist.Circuit, opt checks.Options) (report.File, error) {
	if run.boardPath != "" {
		b, err := board.Parse(run.boardPath, run.board, circ)
		if err != nil {
			return report.File{}, err
		}
		opt.Board = b
	}
	an, err := checks.Analyze(circ, opt)
	if err != nil {
		return report.File{}, err
	}
	findings, err := rules.Evaluate(run.set, an, rules.EvalOptions{})
	if err != nil {
		return report.File{}, err
	}
	var waivers []rules.Waiver
	for _, w := range an.Board.Waivers {
		waivers = append(waivers, rules.Waiver{Rule: w.Rule, Device: w.Device, Reason: w.Reason, Pos: w.Pos, External: w.External})
	}
	findings = rules.ApplyWaivers(findings, waivers, run.set.RuleIDs())
	notes := append(append([]*netlist.Error(nil), circ.Notes...), an.Notes...)
	if opt.Board != nil {
		notes = append(notes, opt.Board.Notes...)
	}
	if run.fixes {
		var st fix.Stats
		findings, st = fix.SearchStats(circ, findings, run.judge(opt), fix.Options{MaxWork: checkFixWork(len(an.Cases))})
		if st.Unsearched > 0 {
			notes = append(notes, &netlist.Error{Pos: netlist.Pos{File: circ.File, Line: 1, Col: 1}, Severity: netlist.SevNote,
				Msg: fmt.Sprintf("computed fixes: %d of %d findings searched before the search's budget (%d cases solved) ran out; 'biaslint fix' searches further",
					st.Searched, st.Searched+st.Unsearched, st.Work)})
		}
		// A search cut short by the file's time budget keeps the report
		// (every change shown was verified before the budget ran out).
		if ctx := opt.Context; ctx != nil && ctx.Err() != nil {
			notes = append(notes, &netlist.Error{Pos: netlist.Pos{File: circ.File, Line: 1, Col: 1}, Severity: netlist.SevNote,
				Msg: "computed fixes: the search stopped at the file's time budget (--file-timeout); the findings are all reported, some without a computed fix"})
		}
	}
	return report.File{Path: circ.File, Title: circ.Title, Analysis: an, Findings: findings, Notes: notes}, nil
}

// fixesFlag turns the computed fixes of check on or off.
var fixesFlag = &cli.BoolFlag{Name: "fixes", Value: true,
	Usage: "search E12/E24 resistor values that clear findings, verified by solving (--fixes=false: do not)"}

// wantFixes reports whether a check run shows computed fixes: asked for,
// and a format that shows them (not the CSV tables).
func wantFixes(c *cli.Context) bool {
	return c.Bool("fixes") && c.String("format") != "csv" && c.String("summary") != "csv"
}

// checkFixWork is the budget of check's fix search for a netlist whose
// check solved cases cases: about one more check of a large board, and
// room for a few dozen solves of a small one.
func checkFixWork(cases int) int { return max(400, cases) }

// judge returns the fix search's Judge: analyse a changed circuit with
// the run's options (no progress bar; the quick judgement without the
// corners, the Monte Carlo runs and the electro-thermal solve) and
// evaluate the rule set.
func (run *checkRun) judge(opt checks.Options) fix.Judge {
	opt.Progress = nil
	return func(c *netlist.Circuit, quick bool) (fix.Verdict, error) {
		o := opt
		if quick {
			o.Corners, o.MonteCarlo, o.Thermal = false, 0, false
		}
		an, err := checks.Analyze(c, o)
		if err != nil {
			return fix.Verdict{}, err
		}
		v := fix.Verdict{Applied: map[string]bool{}, Cases: len(an.Cases)}
		v.Findings, err = rules.Evaluate(run.set, an, rules.EvalOptions{Applied: v.Applied})
		return v, err
	}
}

func runCheck(c *cli.Context) error {
	format := c.String("format")
	switch format {
	case "text", "json", "sarif", "csv":
	default:
		return badInput(fmt.Errorf("biaslint: --format must be text, json, sarif or csv, not %q", format))
	}
	if err := checkBatchFlags(c); err != nil {
		return err
	}
	failOn := rules.Severity(c.String("fail-on"))
	if failOn.Rank() > 2 {
		return badInput(fmt.Errorf("biaslint: --fail-on must be error, warning or note, not %q", c.String("fail-on")))
	}
	on, err := useColor(c, c.App.Writer)
	if err != nil {
		return err
	}
	run, err := newCheckRun(c)
	if err != nil {
		return err
	}
	switch {
	case len(run.report.Failed()) > 0:
		run.report.ExitCode = exitBadInput // a file could not be judged
	case run.report.AtOrAbove(failOn):
		run.report.ExitCode = exitFindings
	}
	var out bytes.Buffer
	switch format {
	case "json":
		err = report.JSON(&out, &run.report)
	case "sarif":
		err = report.SARIF(&out, &run.report)
	case "csv": // written by writeBatch
	default:
		err = report.Text(&out, &run.report, report.TextOptions{Color: on && c.String("output") == "", Notes: c.Bool("notes"),
			// One board: show its transistors; a batch has the summary table.
			Transistors: len(run.report.Files) == 1})
	}
	if err == nil {
		err = writeBatch(c, &out, &run.report, format)
	}
	if err != nil {
		return badInput(err)
	}
	if err := emit(c, &out); err != nil {
		return err
	}
	_ = run.finish(c, format == "text" && c.String("output") == "" && c.String("summary") != "csv")
	if run.report.ExitCode != exitOK {
		return &statusError{code: run.report.ExitCode}
	}
	return nil
}

// worstCaseOptions reads check's scenario, corner, thermal and Monte Carlo
// flags. The ambient range comes from --ambient-range, else from the first
// rule set's ambient_min and ambient_max parameters, else the default.
func worstCaseOptions(c *cli.Context, set *rules.RuleSet) (checks.Options, error) {
	opt := checks.Options{Scenarios: true, Corners: c.Bool("corners"), Thermal: c.Bool("thermal"),
		MonteCarlo: c.Int("monte-carlo"), Seed: c.Uint64("seed")}
	switch d := checks.Distribution(c.String("distribution")); d {
	case checks.Uniform, checks.Normal:
		opt.Distribution = d
	default:
		return opt, badInput(fmt.Errorf("biaslint: --distribution must be uniform or normal, not %q", c.String("distribution")))
	}
	if opt.MonteCarlo < 0 || opt.MonteCarlo > checks.MaxMonteCarlo {
		return opt, badInput(fmt.Errorf("biaslint: --monte-carlo %d: give a number of runs from 0 to %d", opt.MonteCarlo, checks.MaxMonteCarlo))
	}
	rng := checks.DefaultAmbientRange
	if set != nil {
		if lo, ok := set.Param("ambient_min"); ok {
			rng[0] = lo.Value
		}
		if hi, ok := set.Param("ambient_max"); ok {
			rng[1] = hi.Value
		}
	}
	if c.IsSet("ambient-range") {
		r, err := parseRange(c.String("ambient-range"))
		if err != nil {
			return opt, badInput(err)
		}
		rng = r
	}
	if !(rng[0] <= rng[1]) {
		return opt, badInput(fmt.Errorf("biaslint: ambient range %g:%g C: the minimum is above the maximum", rng[0], rng[1]))
	}
	opt.AmbientRange = &rng
	return opt, nil
}

// parseRange reads MIN:MAX in degrees Celsius.
func parseRange(s string) ([2]float64, error) {
	lo, hi, ok := strings.Cut(s, ":")
	var r [2]float64
	bad := fmt.Errorf("biaslint: --ambient-range %q: write MIN:MAX in C, e.g. --ambient-range -40:85", s)
	if !ok {
		return r, bad
	}
	for i, part := range []string{lo, hi} {
		v, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(part), "C"), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v < -273.15 || v > 1000 {
			return r, bad
		}
		r[i] = v
	}
	if r[0] > r[1] {
		return r, bad
	}
	return r, nil
}

// caseProgress shows a progress bar on stderr while cases are solved, when
// stderr is a terminal and the run has taken over a second.
type caseProgress struct {
	w     io.Writer
	on    bool
	start time.Time
	bar   *progressbar.ProgressBar
}

func newCaseProgress(c *cli.Context) *caseProgress {
	p := &caseProgress{w: c.App.ErrWriter, start: time.Now()}
	if f, ok := p.w.(*os.File); ok {
		p.on = isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd())
	}
	return p
}

// update is checks.Options.Progress.
func (p *caseProgress) update(done, total int) {
	if !p.on || time.Since(p.start) < time.Second {
		return
	}
	if p.bar == nil {
		p.bar = progressbar.NewOptions(total, progressbar.OptionSetWriter(p.w),
			progressbar.OptionSetDescription("solving cases"), progressbar.OptionShowCount(),
			progressbar.OptionClearOnFinish(), progressbar.OptionThrottle(100*time.Millisecond))
	}
	p.bar.ChangeMax(total)
	_ = p.bar.Set(done)
}

// finish clears the bar.
func (p *caseProgress) finish() {
	if p.bar != nil {
		_ = p.bar.Finish()
		_ = p.bar.Clear()
	}
}
