package main

import (
	"errors"
	"fmt"
	"io/fs"
	"os"

	"github.com/urfave/cli/v2"
)

// Files that init writes into the current directory.
const (
	initRuleSetFile = "biaslint-team.yaml"
	initBoardFile   = "board.yaml"
)

// initRuleSet is the starter team rule set init writes.
const initRuleSet = `# A team rule set for biaslint, written by 'biaslint init'.
#
# It starts from the built-in default rules (extends: default) and changes
# only what is written here. The project file biaslint.yaml beside it
# names it, so plain 'biaslint check board.cir' uses it; elsewhere use
#
#     biaslint check --ruleset biaslint-team.yaml board.cir
#
# 'biaslint rules --ruleset biaslint-team.yaml' lists the result, and
# 'biaslint rules --facts' the names a rule's expressions can use.
#
# Sections (all optional except name):
#   parameters  thresholds by name; a value may carry a unit ("1 V", "10mA")
#               or be a percentage ("80%"). A parameter of the default set
#               keeps its unit; only its value changes here.
#   disable     ids of default rules to switch off
#   levels      a default rule's level: error, warning or note
#   rules       new rules (or a default rule's id, to replace that rule)

name: team
description: Our design guidelines, on top of the biaslint default rules.
extends: default

parameters:
  # Derating: keep VCE at most 80 % of VCEO and the dissipation at most
  # 60 % of the derated limit Pd(Ta) (derating margins of this kind are
  # common practice for long-life designs; set your own).
  vceo_share: {value: 80%, doc: "VCE at most 80 % of VCEO (team derating)."}
  pd_share: {value: 60%, doc: "Power at most 60 % of Pd(Ta) (team derating)."}
  # A new parameter for the rule below.
  tj_limit:
    value: 100
    unit: C
    doc: Highest junction temperature our boards allow in any case (team guideline).

# disable: [unlimited-base-drive]
# levels:
#   floating-base: error

rules:
  # An example rule. 'when' is true for a violation; 'value' and 'limit'
  # give the report its "value against limit"; {EXPR:UNIT} placeholders in
  # the message print through biaslint's engineering notation.
  - id: tj-over-limit
    level: warning
    subject: transistor
    when: tj > param.tj_limit
    measure: tj - param.tj_limit
    value: tj
    limit: param.tj_limit
    unit: C
    message: >-
      {name} runs its junction at about {tj:C}, {tj - param.tj_limit:K}
      above our limit of {param.tj_limit:C} ({power:W} at {ambient:C} ambient)
    rationale: >-
      Our guideline keeps junctions well below their rating so that parts
      last; failure rates rise steeply with temperature (common practice).
    fix: Reduce the dissipation, or give the part more copper or a heat sink.
`

// initBoard is the board-file template init writes; the key set follows
// checks/board (ambient, parts, devices, waivers).
const initBoard = `## A board file for biaslint, written by 'biaslint init'.
##
## It says what the netlist cannot: the ambient the board runs in, the
## ratings of its parts, the role of a transistor, the power rating of a
## resistor, and waivers with their reasons. The project file
## biaslint.yaml beside it names it, so plain 'biaslint check board.cir'
## uses it; elsewhere use
##
##     biaslint check --board board.yaml board.cir
##
## Lines starting with a single '#' are examples: remove the '# ' to use
## them, and put your own names in (devices must exist in the netlist, as
## flat names such as X1.Q2). Numbers may carry SPICE or RKM suffixes
## ("200m", "4k7"); a trailing % divides by 100.

## Ambient temperature in C, for derating and junction temperature.
ambient: 25

## Ratings by model name (absolute maxima and the hFE spread).
# parts:
#   MYNPN: {vceo: 40, vcbo: 60, vebo: 6, icmax: 200m, pd: 500m, tjmax: 150, rthja: 250, hfemin: 100, hfemax: 300}

## Settings by device: a transistor's role (switch or linear), a
## resistor's power rating and tolerance, a source that drives (driver).
# devices:
#   Q1: {role: linear}
#   RLOAD: {power_rating: 1, tol: 1%}
#   VMCU: {driver: yes}

## Waivers: a finding accepted on purpose, with the reason a reviewer reads.
# waivers:
#   - {rule: floating-base, device: Q7, reason: "held off by U3's pull-down"}
`

func initCommand() *cli.Command {
	return &cli.Command{
		Name:  "init",
		Usage: "write a project file (" + ProjectFile + "), a starter team rule set (" + initRuleSetFile + ") and a board-file template (" + initBoardFile + ") here",
		Description: "Refuses, writing nothing, when any of the files already exists. All three are commented. " +
			ProjectFile + " names the other two, and check, report, plot, rules and explain pick it up in this folder " +
			"and every folder below it (up to the repository root), so plain 'biaslint check' uses them.",
		Action: runInit,
	}
}

func runInit(c *cli.Context) error {
	if c.NArg() > 0 {
		return badInput(errors.New("biaslint init: takes no arguments; it writes into the current directory"))
	}
	files := []struct{ name, text string }{{ProjectFile, projectFileTemplate()}, {initRuleSetFile, initRuleSet}, {initBoardFile, initBoard}}
	for _, f := range files {
		if _, err := os.Lstat(f.name); err == nil {
			return badInput(fmt.Errorf("biaslint init: %s already exists; nothing written (move it away to start afresh)", f.name))
		} else if !errors.Is(err, fs.ErrNotExist) {
			return badInput(fmt.Errorf("biaslint init: %s: %v", f.name, err))
		}
	}
	var written []string
	for _, f := range files {
		// O_EXCL: never overwrite, even a file that appeared just now.
		w, err := os.OpenFile(f.name, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if err == nil {
			written = append(written, f.name)
			_, err = w.WriteString(f.text)
			if cerr := w.Close(); err == nil {
				err = cerr
			}
		}
		if err != nil {
			for _, p := range written {
				os.Remove(p)
			}
			return badInput(fmt.Errorf("biaslint init: cannot write %s: %v", f.name, err))
		}
	}
	fmt.Fprintf(c.App.Writer, "wrote %s, %s and %s\n", ProjectFile, initRuleSetFile, initBoardFile)
	fmt.Fprintf(c.App.Writer, "%s names the other two; 'biaslint check' picks it up in this folder and the folders below it\n"+
		"(up to the repository root), so the team rule set and the board file apply without flags.\n", ProjectFile)
	return nil
}
