package main

// The project file: a team commits biaslint.yaml once, at the top of its
// repository or in a board's folder, and plain "biaslint check" in any
// folder below it uses the rule sets, parts library, board file, --fail-on,
// ambient and corner settings it names. Every key is the name of a check
// flag; a flag given on the command line wins over the file.

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"

	"github.com/urfave/cli/v2"
	"go.yaml.in/yaml/v3"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/rulesets"
)

// ProjectFile is the name of the project file searched for.
const ProjectFile = "biaslint.yaml"

// maxProjectFile bounds the project file's size in bytes.
const maxProjectFile = 1 << 20

// projectFilesKey holds, in the app's metadata, the project file's
// "files": the netlists, folders or globs to check when no FILE is given.
const projectFilesKey = "project-files"

// projectFiles returns the project file's "files", if any.
func projectFiles(c *cli.Context) []string {
	v, _ := c.App.Metadata[projectFilesKey].([]string)
	return v
}

// maxProjectLevels bounds the folders searched upward from the current one.
const maxProjectLevels = 64

var (
	configFlag = &cli.StringFlag{
		Name:  "config",
		Usage: "read the project settings from `FILE` instead of the " + ProjectFile + " found from the current folder upward",
	}
	noConfigFlag = &cli.BoolFlag{
		Name:  "no-config",
		Usage: "ignore any " + ProjectFile + " project file",
	}
)

// projectKeys are the keys a project file may hold: check's flags that
// describe the project rather than one run. pathKeys hold file names,
// resolved against the project file's folder.
var (
	projectKeys = []string{"files", "ruleset", "set", "only", "skip", "parts", "board", "fail-on", "ambient",
		"ambient-range", "corners", "thermal", "monte-carlo", "seed", "distribution",
		"include-dir", "file-timeout", "file-memory", "file-elements", "file-mib"}
	pathKeys = map[string]bool{"files": true, "parts": true, "board": true, "include-dir": true}
)

// findProjectFile looks for ProjectFile in dir and its parents, stopping
// after the first folder that is a repository root (holds .git), at the
// file-system root, or after maxProjectLevels folders. It returns "" when
// there is none.
func findProjectFile(dir string) (string, error) {
	abs, err := filepath.Abs(dir)
	if err != nil {
		return "", err
	}
	for range maxProjectLevels {
		p := filepath.Join(abs, ProjectFile)
		if fi, err := os.Stat(p); err == nil && !fi.IsDir() {
			return p, nil
		}
		if _, err := os.Stat(filepath.Join(abs, ".git")); err == nil {
			return "", nil // the repository root: do not look above it
		}
		parent := filepath.Dir(abs)
		if parent == abs {
			return "", nil
		}
		abs = parent
	}
	return "", nil
}

// projectSetting is one key of the project file: its values as flag
// values, and where it was written.
type projectSetting struct {
	key    string
	values []string
	pos    netlist.Pos
}

// readProjectFile parses a project file. Unknown keys, values of the
// wrong shape and YAML errors are located errors.
func readProjectFile(path, shown string) ([]projectSetting, error) {
	// A regular file only, never blocking (a link in a repository could
	// point at a FIFO or a device).
	src, err := netlist.ReadRegular(path, maxProjectFile)
	if err != nil {
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return nil, fmt.Errorf("%s: error: cannot read project file: %v", shown, err)
	}
	if len(src) > maxProjectFile {
		return nil, fmt.Errorf("%s:1:1: error: project file is larger than the limit of %d bytes", shown, maxProjectFile)
	}
	var errs netlist.ErrorList
	var root yaml.Node
	if err := yaml.Unmarshal(src, &root); err != nil {
		pos, msg := rulesets.YAMLError(shown, err)
		if !pos.IsValid() {
			pos.Line, pos.Col = 1, 1
		}
		errs.Add(pos, "project file: "+msg)
		return nil, errs.Err()
	}
	if len(root.Content) == 0 {
		return nil, nil // an empty file sets nothing
	}
	doc := root.Content[0]
	at := func(n *yaml.Node) netlist.Pos { return netlist.Pos{File: shown, Line: n.Line, Col: n.Column} }
	if doc.Kind != yaml.MappingNode {
		errs.Add(at(doc), "project file: expected a mapping of settings (keys: "+strings.Join(projectKeys, ", ")+")")
		return nil, errs.Err()
	}
	dir := filepath.Dir(shown)
	var out []projectSetting
	seen := map[string]bool{}
	for i := 0; i+1 < len(doc.Content); i += 2 {
		k, v := doc.Content[i], doc.Content[i+1]
		key := k.Value
		if !slices.Contains(projectKeys, key) {
			msg := fmt.Sprintf("project file: unknown key %q (known: %s)", key, strings.Join(projectKeys, ", "))
			if near := nearest(key, projectKeys); near != "" {
				msg += fmt.Sprintf("; did you mean %q?", near)
			}
			errs.Add(at(k), msg)
			continue
		}
		if seen[key] {
			errs.Addf(at(k), "project file: %s is set twice", key)
			continue
		}
		seen[key] = true
		s := projectSetting{key: key, pos: at(k)}
		scalar := func(n *yaml.Node) (string, bool) {
			if n.Kind != yaml.ScalarNode || n.Value == "" {
				errs.Addf(at(n), "project file: %s: expected a single value", key)
				return "", false
			}
			return n.Value, true
		}
		switch {
		case key == "set":
			if v.Kind != yaml.MappingNode {
				errs.Add(at(v), "project file: set: expected a mapping of parameter names to values (vceo_share: 80%)")
				continue
			}
			for j := 0; j+1 < len(v.Content); j += 2 {
				if val, ok := scalar(v.Content[j+1]); ok {
					s.values = append(s.values, v.Content[j].Value+"="+val)
				}
			}
		case v.Kind == yaml.SequenceNode && (key == "files" || key == "ruleset" || key == "only" || key == "skip" || key == "include-dir"):
			for _, item := range v.Content {
				if val, ok := scalar(item); ok {
					s.values = append(s.values, val)
				}
			}
		default:
			val, ok := scalar(v)
			if !ok {
				continue
			}
			s.values = []string{val}
		}
		// File names are relative to the project file's folder; a built-in
		// rule set is named without a slash or .yaml, as for --ruleset.
		for j, val := range s.values {
			isFile := pathKeys[key] || key == "ruleset" &&
				(strings.ContainsAny(val, `/\`) || strings.HasSuffix(val, ".yaml") || strings.HasSuffix(val, ".yml"))
			if isFile && !filepath.IsAbs(val) {
				s.values[j] = filepath.Join(dir, filepath.FromSlash(val))
			}
			// The project file travels with the netlists (a pull request
			// can change it): it may name files and folders of its own tree
			// only, links resolved, so it cannot make the check read (and
			// quote) a file elsewhere on the machine.
			if isFile && !insideFolder(s.values[j], dir) {
				errs.Addf(at(v), "project file: %s %s is outside the project file's folder; a file or folder outside it can only be named with --%s on the command line", key, val, key)
			}
			if msg := loosensBudget(key, val); msg != "" {
				errs.Addf(at(v), "project file: %s", msg)
			}
		}
		out = append(out, s)
	}
	if err := errs.Err(); err != nil {
		return nil, err
	}
	return out, nil
}

// displayPath shows an absolute path relative to the current folder when
// that is shorter to read.
func displayPath(abs string) string {
	wd, err := os.Getwd()
	if err != nil {
		return abs
	}
	if rel, err := filepath.Rel(wd, abs); err == nil && len(rel) < len(abs) {
		return rel
	}
	return abs
}

// applyProjectFile is the Before hook of the commands that take project
// settings: it finds the project file (or reads --config FILE), and sets
// each flag the command has and the command line did not set. For --set,
// a parameter named on the command line keeps its command-line value.
// projectDirKey is the App.Metadata key of the project file's folder (rule
// sets may extend files inside it).
const projectDirKey = "project-dir"

func applyProjectFile(c *cli.Context) error {
	if c.Bool("no-config") {
		if c.IsSet("config") {
			return badInput(errors.New("biaslint: --config and --no-config contradict each other; give one"))
		}
		return nil
	}
	path := c.String("config")
	shown := path
	if path == "" {
		found, err := findProjectFile(".")
		if err != nil || found == "" {
			return nil
		}
		path, shown = found, displayPath(found)
	}
	settings, err := readProjectFile(path, shown)
	if err != nil {
		return badInput(err)
	}
	if c.App.Metadata == nil {
		c.App.Metadata = map[string]any{}
	}
	c.App.Metadata[projectDirKey] = filepath.Dir(shown)
	has := map[string]bool{}
	for _, f := range c.Command.Flags {
		for _, n := range f.Names() {
			has[n] = true
		}
	}
	given := map[string]bool{}
	for _, kv := range c.StringSlice("set") {
		k, _, _ := strings.Cut(kv, "=")
		given[strings.TrimSpace(k)] = true
	}
	for _, s := range settings {
		if s.key == "files" {
			// The netlists to check when the command line names none.
			if c.App.Metadata == nil {
				c.App.Metadata = map[string]any{}
			}
			c.App.Metadata[projectFilesKey] = s.values
			continue
		}
		if !has[s.key] || (s.key != "set" && c.IsSet(s.key)) {
			continue
		}
		for _, v := range s.values {
			if s.key == "set" {
				if k, _, _ := strings.Cut(v, "="); given[k] {
					continue
				}
			}
			if err := c.Set(s.key, v); err != nil {
				return badInput(fmt.Errorf("%s: error: project file: %s: %q: %v", s.pos, s.key, v, err))
			}
		}
	}
	return nil
}

// projectFileTemplate is the project file init writes, naming the files
// it writes beside it.
func projectFileTemplate() string {
	keys := append([]string(nil), projectKeys...)
	sort.Strings(keys)
	return `# The biaslint project file, written by 'biaslint init'.
#
# 'biaslint check', 'report', 'plot', 'rules' and 'explain' read it when
# they run in this folder or any folder below it (up to the repository
# root, the folder holding .git), so a team commits it once and CI runs
# plain 'biaslint check' (on the files named below, or on those given). --config FILE reads another one,
# --no-config none. A flag on the command line wins over this file.
#
# Every key is a flag of 'biaslint check' (see 'biaslint help check');
# file names are relative to this file's folder. Known keys:
#   ` + strings.Join(keys, ", ") + `

# files: [boards/]           # what plain 'biaslint check' checks
ruleset: [` + initRuleSetFile + `]
board: ` + initBoardFile + `
fail-on: error

# parts: parts.yaml           # an extra parts library
# ambient: 40                 # C; default the board file's, else 25
# ambient-range: "0:70"       # C, the temperature corners
# corners: true               # hFE, ambient, supply and resistor corners
# thermal: true               # solve at the junction temperature
# monte-carlo: 0              # runs; seed: 1; distribution: uniform
# set:
#   vceo_share: 80%
# skip: [no-emitter-degeneration]
`
}

// insideFolder reports whether path lies in dir or below it, both with
// their symbolic links resolved (a path that does not exist is judged as
// written).
func insideFolder(path, dir string) bool {
	real := func(p string) string {
		a, err := filepath.Abs(p)
		if err != nil {
			return p
		}
		if r, err := filepath.EvalSymlinks(a); err == nil {
			return r
		}
		return a
	}
	rel, err := filepath.Rel(real(dir), real(path))
	return err == nil && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator)) && !filepath.IsAbs(rel)
}
