package main

import (
	"bytes"
	"fmt"
	"os"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rules"
	"github.com/biaslint/biaslint/rules/report"
	"github.com/biaslint/biaslint/rulesets"
)

// version is the tool version written into SARIF reports.
const version = "0.1.0"

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
		Usage: "extra parts library `FILE` (YAML); its entries take precedence over the built-in classes",
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
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "format", Aliases: []string{"f"}, Value: "text", Usage: formatFlagUsage + ": text, json or sarif"},
			&cli.StringFlag{Name: "fail-on", Value: "error", Usage: "exit with status 1 when a finding at or above this severity is left: error, warning or note"},
			rulesetFlag, setFlag,
			&cli.StringSliceFlag{Name: "only", Usage: "judge only these rule `IDS` (comma-separated or repeated)"},
			&cli.StringSliceFlag{Name: "skip", Usage: "do not judge these rule `IDS` (comma-separated or repeated)"},
			partsFlag, boardFlag, ambientFlag, tempFlag,
			&cli.BoolFlag{Name: "notes", Usage: "also print the notes about reading the input"},
			colorFlag, outputFlag, demoFlag,
		},
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
	var out []*rules.RuleSet
	for _, ref := range refs {
		// --set names a parameter of any of the sets; each set takes the
		// overrides it knows.
		rs, err := rules.Load(ref, rules.LoadOptions{})
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
			if rs, err = rules.Load(ref, rules.LoadOptions{Set: mine}); err != nil {
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
	return rules.Combine(out...), nil
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
	src, err := os.ReadFile(path)
	if err != nil {
		return nil, badInput(fmt.Errorf("%s: cannot read parts library: %v", path, err))
	}
	user, err := rulesets.LoadParts(path, src)
	if err != nil {
		return nil, badInput(err)
	}
	return &rulesets.Library{Entries: append(append([]rulesets.PartRatings(nil), user.Entries...), lib.Entries...)}, nil
}

// checkRun is the shared part of check and report: read, analyse and judge
// every input.
type checkRun struct {
	set    *rules.RuleSet
	report report.Report
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
	inputs, err := inputsOf(c)
	if err != nil {
		return nil, err
	}
	run := &checkRun{set: set}
	run.report.Version = version
	run.report.RuleSet = set
	opt := checks.Options{Parts: parts}
	if opt.Ambient, err = tempOf(c, "ambient"); err != nil {
		return nil, err
	}
	if opt.Temp, err = tempOf(c, "temp"); err != nil {
		return nil, err
	}
	var problems []string
	for _, in := range inputs {
		f, err := run.one(c, in, opt)
		if err != nil {
			problems = append(problems, err.Error())
			continue
		}
		run.report.Files = append(run.report.Files, f)
	}
	if len(problems) > 0 {
		return nil, badInput(fmt.Errorf("%s", strings.Join(problems, "\n")))
	}
	if len(run.report.Files) > 0 && run.report.Files[0].Analysis != nil && len(run.report.Files[0].Analysis.Cases) > 0 {
		run.report.Ambient = run.report.Files[0].Analysis.Cases[0].Ambient
	}
	return run, nil
}

// one checks a single netlist.
func (run *checkRun) one(c *cli.Context, in input, opt checks.Options) (report.File, error) {
	circ, err := in.read()
	if err != nil {
		return report.File{}, err
	}
	if path := c.String("board"); path != "" {
		b, err := board.Load(path, circ)
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
		waivers = append(waivers, rules.Waiver{Rule: w.Rule, Device: w.Device, Reason: w.Reason, Pos: w.Pos})
	}
	findings = rules.ApplyWaivers(findings, waivers, run.set.RuleIDs())
	notes := append(append([]*netlist.Error(nil), circ.Notes...), an.Notes...)
	return report.File{Path: circ.File, Title: circ.Title, Analysis: an, Findings: findings, Notes: notes}, nil
}

func runCheck(c *cli.Context) error {
	format := c.String("format")
	switch format {
	case "text", "json", "sarif":
	default:
		return badInput(fmt.Errorf("biaslint: --format must be text, json or sarif, not %q", format))
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
	var out bytes.Buffer
	switch format {
	case "json":
		err = report.JSON(&out, &run.report)
	case "sarif":
		err = report.SARIF(&out, &run.report)
	default:
		err = report.Text(&out, &run.report, report.TextOptions{Color: on && c.String("output") == "", Notes: c.Bool("notes")})
	}
	if err != nil {
		return badInput(err)
	}
	if err := emit(c, &out); err != nil {
		return err
	}
	if run.report.AtOrAbove(failOn) {
		return &statusError{code: exitFindings}
	}
	return nil
}
