package main

import (
	"bytes"
	"fmt"
	"strings"
	"text/tabwriter"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/rules"
	"github.com/biaslint/biaslint/rules/report"
)

func rulesCommand() *cli.Command {
	return &cli.Command{
		Name:  "rules",
		Usage: "list the active rules and parameters, after extends and overrides",
		Flags: []cli.Flag{rulesetFlag, setFlag, outputFlag, configFlag, noConfigFlag,
			&cli.BoolFlag{Name: "facts", Usage: "list the facts rule expressions can use, per subject, instead"}},
		Before: applyProjectFile,
		Action: func(c *cli.Context) error {
			var out bytes.Buffer
			if c.Bool("facts") {
				writeFacts(&out)
				return emit(c, &out)
			}
			rs, err := loadRuleSets(c)
			if err != nil {
				return err
			}
			writeRuleSet(&out, rs)
			return emit(c, &out)
		},
	}
}

func writeRuleSet(w *bytes.Buffer, rs *rules.RuleSet) {
	fmt.Fprintf(w, "rule set %s (%s)\n", rs.Name, rs.File)
	if len(rs.Extends) > 0 {
		fmt.Fprintf(w, "  extends %s\n", strings.Join(rs.Extends, " > "))
	}
	if rs.Description != "" {
		fmt.Fprintf(w, "  %s\n", strings.Join(strings.Fields(rs.Description), " "))
	}
	w.WriteString("\nrules\n")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  id\tlevel\tsubject\tparameters\tfrom")
	for _, r := range rs.Rules {
		ps := "-"
		if len(r.Params) > 0 {
			ps = strings.Join(r.Params, ", ")
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%s\n", r.ID, r.Severity, r.Subject, ps, r.Set)
	}
	tw.Flush()
	if len(rs.Disabled) > 0 {
		fmt.Fprintf(w, "  switched off: %s\n", strings.Join(rs.Disabled, ", "))
	}
	w.WriteString("\nparameters\n")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  name\tvalue\tset by\tmeaning")
	for _, p := range rs.Params {
		from := p.From
		if p.Pos.IsValid() {
			from += " " + p.Pos.String()
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\n", p.Name, p.String(), from, firstLine(p.Doc))
	}
	tw.Flush()
}

// firstLine is a parameter's doc cut to its first sentence, for the
// one-line tables.
func firstLine(s string) string { return report.FirstSentence(s) }

func writeFacts(w *bytes.Buffer) {
	for _, s := range []rules.Subject{rules.SubjectTransistor, rules.SubjectResistor, rules.SubjectNet} {
		fmt.Fprintf(w, "%s facts\n", s)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		for _, f := range rules.Facts(s) {
			fmt.Fprintf(tw, "  %s\t%s\n", f.Name, f.Type)
		}
		tw.Flush()
		w.WriteString("\n")
	}
	w.WriteString("Parameters of the rule set are written param.NAME.\n")
}

func explainCommand() *cli.Command {
	return &cli.Command{
		Name:      "explain",
		Usage:     "print a rule's rationale, condition and fix",
		ArgsUsage: "RULE",
		Flags:     []cli.Flag{rulesetFlag, setFlag, outputFlag, configFlag, noConfigFlag},
		Before:    applyProjectFile,
		Action: func(c *cli.Context) error {
			if c.NArg() != 1 {
				return badInput(fmt.Errorf("biaslint explain: name one rule id (see 'biaslint rules')"))
			}
			id := c.Args().First()
			rs, err := loadRuleSets(c)
			if err != nil {
				return err
			}
			if r := rs.Rule(id); r != nil {
				var out bytes.Buffer
				writeExplain(&out, rs, r)
				return emit(c, &out)
			}
			return badInput(fmt.Errorf("biaslint explain: no rule %q in the rule set (see 'biaslint rules')", id))
		},
	}
}

func writeExplain(w *bytes.Buffer, rs *rules.RuleSet, r *rules.Rule) {
	fmt.Fprintf(w, "%s  (%s, judges each %s; defined in %s at %s)\n\n", r.ID, r.Severity, r.Subject, r.Set, r.Pos)
	section := func(title, text string) {
		if strings.TrimSpace(text) == "" {
			return
		}
		fmt.Fprintf(w, "%s\n", title)
		for _, line := range wrap(strings.Join(strings.Fields(text), " "), 76) {
			fmt.Fprintf(w, "  %s\n", line)
		}
		w.WriteString("\n")
	}
	section("why", r.Rationale)
	if r.Applies != "" {
		section("applies to", r.Applies)
	}
	section("fires when", r.When)
	if r.Value != "" && r.Limit != "" {
		section("value against limit", r.Value+"  against  "+r.Limit+unitSuffix(r.Unit))
	}
	section("fix", r.Fix)
	if len(r.Related) > 0 {
		section("names as its cause", strings.Join(r.Related, ", "))
	}
	if len(r.Params) > 0 {
		fmt.Fprintf(w, "parameters\n")
		for _, name := range r.Params {
			if p, ok := rs.Param(name); ok {
				fmt.Fprintf(w, "  %s = %s\n", p.Name, p.String())
				for _, line := range wrap(strings.Join(strings.Fields(p.Doc), " "), 74) {
					fmt.Fprintf(w, "    %s\n", line)
				}
			}
		}
	}
}

func unitSuffix(u string) string {
	if u == "" {
		return ""
	}
	return " (" + u + ")"
}

// wrap breaks text into lines of at most width bytes at spaces.
func wrap(s string, width int) []string {
	var lines []string
	line := ""
	for _, word := range strings.Fields(s) {
		if line != "" && len(line)+1+len(word) > width {
			lines = append(lines, line)
			line = ""
		}
		if line != "" {
			line += " "
		}
		line += word
	}
	if line != "" {
		lines = append(lines, line)
	}
	return lines
}
