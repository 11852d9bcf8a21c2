package main

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/fatih/color"
	"github.com/mattn/go-isatty"
	"github.com/urfave/cli/v2"
)

// Flags shared by several commands.
var (
	colorFlag = &cli.StringFlag{
		Name:  "color",
		Value: "auto",
		Usage: "colour in text output: auto (only on a terminal, and not when NO_COLOR is set to anything but the empty string), always, never",
	}
	formatFlagUsage = "output format"
	outputFlag      = &cli.StringFlag{
		Name:    "output",
		Aliases: []string{"o"},
		Usage:   "write the report to `FILE` (atomically: a failed run leaves nothing half-written)",
	}
	tempFlag = &cli.StringFlag{
		Name:  "temp",
		Usage: "circuit temperature in `C` (overrides .temp and .options temp=)",
	}
)

// tempOf reads a temperature flag in degrees Celsius; nil when not given.
func tempOf(c *cli.Context, name string) (*float64, error) {
	if !c.IsSet(name) {
		return nil, nil
	}
	v, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(c.String(name)), "C"), 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v < -273.15 || v > 1000 {
		return nil, badInput(fmt.Errorf("biaslint: --%s %q is not a temperature in C (e.g. --%s 40)", name, c.String(name), name))
	}
	return &v, nil
}

// useColor decides whether text output is coloured: --color always/never
// win; auto colours only a terminal and honours NO_COLOR.
func useColor(c *cli.Context, w io.Writer) (bool, error) {
	switch c.String("color") {
	case "always":
		return true, nil
	case "never":
		return false, nil
	case "auto", "":
		f, ok := w.(*os.File)
		return autoColor(os.Getenv("NO_COLOR"), ok && (isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd()))), nil
	}
	return false, badInput(fmt.Errorf("biaslint: --color must be auto, always or never, not %q", c.String("color")))
}

// autoColor is --color auto: colour on a terminal, unless NO_COLOR is set
// to anything but the empty string (no-color.org: an empty NO_COLOR
// does not count). --color always still wins over NO_COLOR.
func autoColor(noColor string, terminal bool) bool {
	return terminal && noColor == ""
}

// palette returns colour functions that are identity when colour is off.
type palette struct {
	on bool
}

func (p palette) paint(attr []color.Attribute, s string) string {
	if !p.on {
		return s
	}
	c := color.New(attr...)
	c.EnableColor()
	return c.Sprint(s)
}

func (p palette) bold(s string) string  { return p.paint([]color.Attribute{color.Bold}, s) }
func (p palette) dim(s string) string   { return p.paint([]color.Attribute{color.Faint}, s) }
func (p palette) red(s string) string   { return p.paint([]color.Attribute{color.FgRed, color.Bold}, s) }
func (p palette) amber(s string) string { return p.paint([]color.Attribute{color.FgYellow}, s) }
func (p palette) blue(s string) string  { return p.paint([]color.Attribute{color.FgCyan}, s) }
func (p palette) green(s string) string { return p.paint([]color.Attribute{color.FgGreen}, s) }

// emit writes a finished report: to stdout, or atomically to --output FILE
// (a temporary file in the same directory, then a rename), so that a run
// that fails leaves no truncated report behind.
func emit(c *cli.Context, report *bytes.Buffer) error {
	path := c.String("output")
	if path == "" {
		_, err := c.App.Writer.Write(report.Bytes())
		return err
	}
	return writeAtomic(path, report.Bytes())
}

// writeAtomic writes data to path through a temporary file and a rename.
func writeAtomic(path string, data []byte) error {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp*")
	if err != nil {
		// The temporary file's random name would only confuse: name the
		// report's path and the reason.
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return badInput(fmt.Errorf("biaslint: cannot write %s: %v", path, err))
	}
	name := tmp.Name()
	// CreateTemp makes the file private (0600); a report is an ordinary
	// file, readable as any other the user writes (umask applies as usual
	// to the directory, not here).
	werr := tmp.Chmod(0o644)
	if werr == nil {
		_, werr = tmp.Write(data)
	}
	cerr := tmp.Close()
	if werr == nil {
		werr = cerr
	}
	if werr == nil {
		werr = os.Rename(name, path)
	}
	if werr != nil {
		os.Remove(name)
		var le *os.LinkError
		if errors.As(werr, &le) {
			werr = le.Err
		}
		return badInput(fmt.Errorf("biaslint: cannot write %s: %v", path, werr))
	}
	return nil
}
