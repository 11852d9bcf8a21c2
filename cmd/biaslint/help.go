package main

import (
	"fmt"
	"strings"

	"github.com/urfave/cli/v2"
)

// helpCommand answers "biaslint help" (the overview) and "biaslint help
// COMMAND" (that command's flags and arguments).
func helpCommand() *cli.Command {
	return &cli.Command{
		Name:      "help",
		Usage:     "show the commands, or one command's flags and arguments",
		ArgsUsage: "[COMMAND]",
		Action: func(c *cli.Context) error {
			switch c.NArg() {
			case 0:
				return cli.ShowAppHelp(c)
			case 1:
				name := c.Args().First()
				if cmd := c.App.Command(name); cmd != nil {
					cli.HelpPrinter(c.App.Writer, cli.CommandHelpTemplate, cmd)
					return nil
				}
				return unknownCommand(c.App, name, "biaslint help")
			}
			return badInput(fmt.Errorf("biaslint help: name at most one command"))
		},
	}
}

// noCommand is the app's action: without arguments it shows the overview;
// a first word that is no command is a usage error naming the nearest one.
func noCommand(c *cli.Context) error {
	if c.NArg() == 0 {
		return cli.ShowAppHelp(c)
	}
	return unknownCommand(c.App, c.Args().First(), "biaslint")
}

// unknownCommand is the error for a word that names no command, with the
// nearest command by edit distance when one is close enough to be a typo.
func unknownCommand(app *cli.App, word, who string) error {
	var names []string
	for _, cmd := range app.Commands {
		if !cmd.Hidden {
			names = append(names, cmd.Name)
		}
	}
	msg := fmt.Sprintf("%s: %q is not a command", who, word)
	if near := nearest(word, names); near != "" {
		msg += fmt.Sprintf("; did you mean %q?", near)
	}
	msg += " (commands: " + strings.Join(names, ", ") + "; see 'biaslint help')"
	return badInput(fmt.Errorf("%s", msg))
}

// nearest returns the candidate with the smallest edit distance to word
// (ties to the earlier candidate), or "" when even that one differs in
// more than a third of its letters (at least 1, at most 3 edits), so that
// an unrelated word gets no suggestion.
func nearest(word string, candidates []string) string {
	best, bestD := "", -1
	w := strings.ToLower(word)
	for _, c := range candidates {
		d := editDistance(w, c)
		if bestD < 0 || d < bestD {
			best, bestD = c, d
		}
	}
	if best == "" {
		return ""
	}
	allowed := min(max(len([]rune(best))/3, 1), 3)
	if bestD > allowed {
		return ""
	}
	return best
}

// editDistance is the optimal-string-alignment distance between a and b:
// the least number of insertions, deletions, substitutions of one rune
// and transpositions of two adjacent runes that turn a into b (the
// Levenshtein distance, with the commonest typo, two letters swapped,
// costing 1 rather than 2). It fills the usual dynamic-programming table
// three rows at a time: O(len(a)·len(b)) time. The inputs are a
// command-line word and a command name; a word is cut at 64 runes, which
// keeps the work bounded.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	if len(ra) > 64 {
		ra = ra[:64]
	}
	n := len(rb)
	prev2, prev, row := make([]int, n+1), make([]int, n+1), make([]int, n+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		row[0] = i
		for j := 1; j <= n; j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			row[j] = min(prev[j]+1, row[j-1]+1, prev[j-1]+cost)
			if i > 1 && j > 1 && ra[i-1] == rb[j-2] && ra[i-2] == rb[j-1] {
				row[j] = min(row[j], prev2[j-2]+1)
			}
		}
		prev2, prev, row = prev, row, prev2
	}
	return prev[n]
}
