package main

import (
	"fmt"
	"sort"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/rulesets"
)

// Shell completion: "biaslint completion bash|zsh|fish" prints a script
// that completes command names, each command's flags, the fixed choices of
// a flag (formats, severities, built-in rule sets) and file names. The
// scripts are generated from the commands' own flag lists, so they follow
// the CLI as it grows.

func completionCommand() *cli.Command {
	return &cli.Command{
		Name:      "completion",
		Usage:     "print a shell completion script for bash, zsh or fish",
		ArgsUsage: "bash|zsh|fish",
		Description: "bash:  source <(biaslint completion bash)   (or save it under ~/.local/share/bash-completion/completions/biaslint)\n" +
			"   zsh:   source <(biaslint completion zsh)    (after compinit; or save it as _biaslint in a directory of $fpath)\n" +
			"   fish:  biaslint completion fish > ~/.config/fish/completions/biaslint.fish",
		Action: func(c *cli.Context) error {
			if c.NArg() != 1 {
				return badInput(fmt.Errorf("biaslint completion: name one shell: bash, zsh or fish"))
			}
			model := completionModel(c.App)
			var s string
			switch shell := c.Args().First(); shell {
			case "bash":
				s = bashCompletion(model)
			case "zsh":
				s = zshCompletion(model)
			case "fish":
				s = fishCompletion(model)
			default:
				return badInput(fmt.Errorf("biaslint completion: %q is not a shell biaslint completes; name bash, zsh or fish", shell))
			}
			_, err := fmt.Fprint(c.App.Writer, s)
			return err
		},
	}
}

// compFlag is one flag as the completion scripts see it.
type compFlag struct {
	Names []string // long name first, then aliases
	Usage string
	// Value: the flag takes a value; Choices are its fixed values, File
	// that the value is a file name.
	Value   bool
	Choices []string
	File    bool
}

// compCommand is one command with its flags; Files is true when it takes
// file arguments.
type compCommand struct {
	Name, Usage string
	Flags       []compFlag
	Files       bool
	Words       []string // fixed argument words (completion's shells, help's commands)
}

// flagChoices are the fixed values of flags, by command ("" for any).
func flagChoices(cmd, flag string) []string {
	switch flag {
	case "format":
		if cmd == "op" {
			return []string{"text", "json"}
		}
		return []string{"text", "json", "sarif", "csv"}
	case "summary":
		return []string{"auto", "table", "csv", "none"}
	case "fail-on":
		return []string{"error", "warning", "note"}
	case "color":
		return []string{"auto", "always", "never"}
	case "distribution":
		return []string{"uniform", "normal"}
	case "ruleset":
		return rulesets.Names() // or a file: both are offered
	case "rev", "demo-rev":
		return []string{"A", "B"}
	}
	return nil
}

// completionModel lists the app's visible commands and their flags.
func completionModel(app *cli.App) []compCommand {
	var out []compCommand
	var names []string
	for _, cmd := range app.Commands {
		if !cmd.Hidden {
			names = append(names, cmd.Name)
		}
	}
	for _, cmd := range app.Commands {
		if cmd.Hidden {
			continue
		}
		cc := compCommand{Name: cmd.Name, Usage: cmd.Usage}
		switch cmd.Name {
		case "check", "op", "report", "plot":
			cc.Files = true
		case "completion":
			cc.Words = []string{"bash", "zsh", "fish"}
		case "help":
			cc.Words = names
		}
		for _, f := range cmd.Flags {
			df, ok := f.(cli.DocGenerationFlag)
			if !ok {
				continue
			}
			_, isBool := f.(*cli.BoolFlag)
			names := append([]string(nil), f.Names()...)
			sort.SliceStable(names, func(i, j int) bool { return len(names[i]) > len(names[j]) })
			usage := df.GetUsage()
			cf := compFlag{Names: names, Usage: usage, Value: !isBool}
			if cf.Value {
				cf.Choices = flagChoices(cmd.Name, names[0])
				cf.File = strings.Contains(usage, "`FILE`")
				if names[0] == "ruleset" {
					cf.File = true
				}
			}
			cf.Usage = strings.ReplaceAll(cf.Usage, "`", "")
			cc.Flags = append(cc.Flags, cf)
		}
		cc.Flags = append(cc.Flags, compFlag{Names: []string{"help", "h"}, Usage: "show help"})
		out = append(out, cc)
	}
	return out
}

// dash writes a flag name as typed: "--name" or "-n".
func dash(name string) string {
	if len(name) == 1 {
		return "-" + name
	}
	return "--" + name
}

// shortUsage is a flag's usage cut to its first clause, for the
// one-line descriptions zsh and fish show.
func shortUsage(s string) string {
	for _, sep := range []string{"; ", " (", ": "} {
		if i := strings.Index(s, sep); i > 0 {
			s = s[:i]
		}
	}
	return s
}

func bashCompletion(cmds []compCommand) string {
	var b strings.Builder
	b.WriteString("# bash completion for biaslint, written by 'biaslint completion bash'.\n")
	b.WriteString("# Load it with:  source <(biaslint completion bash)\n\n")
	b.WriteString("_biaslint() {\n")
	b.WriteString("    local cur prev cmd i\n")
	b.WriteString("    cur=${COMP_WORDS[COMP_CWORD]}\n")
	b.WriteString("    prev=${COMP_WORDS[COMP_CWORD-1]}\n")
	b.WriteString("    cmd=\n")
	b.WriteString("    for ((i = 1; i < COMP_CWORD; i++)); do\n")
	b.WriteString("        case ${COMP_WORDS[i]} in\n")
	b.WriteString("        -*) ;;\n")
	b.WriteString("        *) cmd=${COMP_WORDS[i]}; break ;;\n")
	b.WriteString("        esac\n")
	b.WriteString("    done\n")
	b.WriteString("    COMPREPLY=()\n")
	b.WriteString("    case $cmd in\n")
	var names []string
	for _, c := range cmds {
		names = append(names, c.Name)
	}
	fmt.Fprintf(&b, "    '')\n        COMPREPLY=($(compgen -W '%s --help --version' -- \"$cur\"))\n        ;;\n", strings.Join(names, " "))
	for _, c := range cmds {
		fmt.Fprintf(&b, "    %s)\n", c.Name)
		var valued []string
		b.WriteString("        case $prev in\n")
		for _, f := range c.Flags {
			if !f.Value {
				continue
			}
			var pats []string
			for _, n := range f.Names {
				pats = append(pats, dash(n))
			}
			valued = append(valued, pats...)
			fmt.Fprintf(&b, "        %s)\n", strings.Join(pats, "|"))
			switch {
			case len(f.Choices) > 0 && f.File:
				fmt.Fprintf(&b, "            COMPREPLY=($(compgen -W '%s' -- \"$cur\") $(compgen -f -- \"$cur\"))\n", strings.Join(f.Choices, " "))
			case len(f.Choices) > 0:
				fmt.Fprintf(&b, "            COMPREPLY=($(compgen -W '%s' -- \"$cur\"))\n", strings.Join(f.Choices, " "))
			case f.File:
				b.WriteString("            COMPREPLY=($(compgen -f -- \"$cur\"))\n")
			}
			b.WriteString("            return ;;\n")
		}
		b.WriteString("        esac\n")
		var all []string
		for _, f := range c.Flags {
			for _, n := range f.Names {
				if len(n) > 1 {
					all = append(all, dash(n))
				}
			}
		}
		fmt.Fprintf(&b, "        if [[ $cur == -* ]]; then\n            COMPREPLY=($(compgen -W '%s' -- \"$cur\"))\n", strings.Join(all, " "))
		switch {
		case c.Files:
			b.WriteString("        else\n            COMPREPLY=($(compgen -f -- \"$cur\"))\n")
		case len(c.Words) > 0:
			fmt.Fprintf(&b, "        else\n            COMPREPLY=($(compgen -W '%s' -- \"$cur\"))\n", strings.Join(c.Words, " "))
		}
		b.WriteString("        fi\n        ;;\n")
	}
	b.WriteString("    esac\n")
	b.WriteString("}\n")
	b.WriteString("complete -o filenames -F _biaslint biaslint\n")
	return b.String()
}

// zshQuote makes s safe inside a single-quoted zsh word and inside an
// _arguments description (no brackets or colons).
func zshQuote(s string) string {
	s = strings.NewReplacer("'", "", "[", "(", "]", ")", ":", " -", "\\", "/").Replace(s)
	return s
}

func zshCompletion(cmds []compCommand) string {
	var b strings.Builder
	b.WriteString("#compdef biaslint\n")
	b.WriteString("# zsh completion for biaslint, written by 'biaslint completion zsh'.\n")
	b.WriteString("# Load it with:  source <(biaslint completion zsh)   (after compinit)\n\n")
	b.WriteString("_biaslint() {\n")
	b.WriteString("    local -a commands\n")
	b.WriteString("    commands=(\n")
	for _, c := range cmds {
		fmt.Fprintf(&b, "        '%s:%s'\n", c.Name, zshQuote(c.Usage))
	}
	b.WriteString("    )\n")
	b.WriteString("    if (( CURRENT == 2 )); then\n")
	b.WriteString("        _describe -t commands 'biaslint command' commands\n")
	b.WriteString("        return\n")
	b.WriteString("    fi\n")
	b.WriteString("    local cmd=$words[2]\n")
	b.WriteString("    shift words\n")
	b.WriteString("    (( CURRENT-- ))\n")
	b.WriteString("    case $cmd in\n")
	for _, c := range cmds {
		fmt.Fprintf(&b, "    %s)\n        _arguments -s \\\n", c.Name)
		for _, f := range c.Flags {
			action := ""
			if f.Value {
				switch {
				case len(f.Choices) > 0 && f.File:
					action = fmt.Sprintf(`:value:_alternative "names:built-in:(%s)" "files:file:_files"`, strings.Join(f.Choices, " "))
				case len(f.Choices) > 0:
					action = fmt.Sprintf(":value:(%s)", strings.Join(f.Choices, " "))
				case f.File:
					action = ":file:_files"
				default:
					action = ":value: "
				}
			}
			for _, n := range f.Names {
				fmt.Fprintf(&b, "            '%s[%s]%s' \\\n", dash(n), zshQuote(shortUsage(f.Usage)), action)
			}
		}
		switch {
		case c.Files:
			b.WriteString("            '*:netlist:_files'\n")
		case len(c.Words) > 0:
			fmt.Fprintf(&b, "            '1:argument:(%s)'\n", strings.Join(c.Words, " "))
		default:
			b.WriteString("            '*:argument: '\n")
		}
		b.WriteString("        ;;\n")
	}
	b.WriteString("    esac\n")
	b.WriteString("}\n")
	b.WriteString("if [[ $zsh_eval_context[-1] == loadautofunc ]]; then\n")
	b.WriteString("    _biaslint \"$@\"\n")
	b.WriteString("else\n")
	b.WriteString("    compdef _biaslint biaslint\n")
	b.WriteString("fi\n")
	return b.String()
}

// fishQuote makes s safe inside a single-quoted fish word.
func fishQuote(s string) string {
	return strings.NewReplacer(`\`, `\\`, "'", `\'`).Replace(s)
}

func fishCompletion(cmds []compCommand) string {
	var b strings.Builder
	b.WriteString("# fish completion for biaslint, written by 'biaslint completion fish'.\n")
	b.WriteString("# Save it as ~/.config/fish/completions/biaslint.fish\n\n")
	b.WriteString("complete -c biaslint -f\n")
	var names []string
	for _, c := range cmds {
		names = append(names, c.Name)
	}
	none := "not __fish_seen_subcommand_from " + strings.Join(names, " ")
	fmt.Fprintf(&b, "complete -c biaslint -n '%s' -l version -d 'print the version and commit'\n", none)
	fmt.Fprintf(&b, "complete -c biaslint -n '%s' -s h -l help -d 'show help'\n", none)
	for _, c := range cmds {
		fmt.Fprintf(&b, "complete -c biaslint -n '%s' -a %s -d '%s'\n", none, c.Name, fishQuote(c.Usage))
	}
	for _, c := range cmds {
		cond := "__fish_seen_subcommand_from " + c.Name
		for _, f := range c.Flags {
			var parts []string
			for _, n := range f.Names {
				if len(n) == 1 {
					parts = append(parts, "-s "+n)
				} else {
					parts = append(parts, "-l "+n)
				}
			}
			line := fmt.Sprintf("complete -c biaslint -n '%s' %s", cond, strings.Join(parts, " "))
			if f.Value {
				switch {
				case len(f.Choices) > 0 && f.File:
					line += fmt.Sprintf(" -r -F -a '%s'", strings.Join(f.Choices, " "))
				case len(f.Choices) > 0:
					line += fmt.Sprintf(" -x -a '%s'", strings.Join(f.Choices, " "))
				case f.File:
					line += " -r -F"
				default:
					line += " -x"
				}
			}
			line += fmt.Sprintf(" -d '%s'\n", fishQuote(shortUsage(f.Usage)))
			b.WriteString(line)
		}
		switch {
		case c.Files:
			fmt.Fprintf(&b, "complete -c biaslint -n '%s' -F\n", cond)
		case len(c.Words) > 0:
			fmt.Fprintf(&b, "complete -c biaslint -n '%s' -a '%s'\n", cond, strings.Join(c.Words, " "))
		}
	}
	return b.String()
}
