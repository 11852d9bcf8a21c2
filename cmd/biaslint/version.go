package main

import (
	"fmt"
	"runtime/debug"
	"strings"

	"github.com/urfave/cli/v2"
)

// buildInfo is what the binary knows about its own build: the module
// version the go command stamped (a tag, a pseudo-version, or "(devel)"),
// and the version-control commit, time and dirty flag of the tree it was
// built from (absent under "go test" and when built outside a checkout).
type buildInfo struct {
	Version  string
	Commit   string
	Time     string
	Modified bool
	Go       string
}

// readBuildInfo reads the build information of the running binary.
func readBuildInfo() buildInfo {
	b := buildInfo{Version: "(devel)"}
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return b
	}
	b.Go = info.GoVersion
	if v := info.Main.Version; v != "" {
		b.Version = v
	}
	for _, s := range info.Settings {
		switch s.Key {
		case "vcs.revision":
			b.Commit = s.Value
		case "vcs.time":
			b.Time = s.Value
		case "vcs.modified":
			b.Modified = s.Value == "true"
		}
	}
	return b
}

// toolVersion is the version written into reports (SARIF driver, HTML
// footer): the module version, "(devel)" for a build from a working tree
// without one.
func toolVersion() string { return readBuildInfo().Version }

// String is the one-line answer of "biaslint version": the module version,
// then the commit (12 hex digits), its time and whether the tree had
// uncommitted changes, and the Go release.
func (b buildInfo) String() string {
	s := "biaslint " + b.Version
	var detail []string
	if b.Commit != "" {
		c := b.Commit
		if len(c) > 12 {
			c = c[:12]
		}
		c = "commit " + c
		if b.Time != "" {
			c += " of " + b.Time
		}
		if b.Modified {
			c += " with uncommitted changes"
		}
		detail = append(detail, c)
	} else {
		detail = append(detail, "commit unknown")
	}
	if b.Go != "" {
		detail = append(detail, "built with "+b.Go)
	}
	return s + " (" + strings.Join(detail, ", ") + ")"
}

func versionCommand() *cli.Command {
	return &cli.Command{
		Name:  "version",
		Usage: "print biaslint's version and the commit it was built from",
		Action: func(c *cli.Context) error {
			if c.NArg() > 0 {
				return badInput(fmt.Errorf("biaslint version: takes no arguments"))
			}
			fmt.Fprintln(c.App.Writer, readBuildInfo())
			return nil
		},
	}
}
