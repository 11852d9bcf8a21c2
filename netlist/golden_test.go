package netlist

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/netlist")

// goldenDir holds the golden tests: each NAME.cir is read with Read and the
// flat circuit and every diagnostic are compared with NAME.golden.
const goldenDir = "../testdata/netlist"

// sandbox returns LoadOptions that read files below dir only, with file
// names relative to dir, so positions in golden files do not depend on where
// the tree is checked out. The line limit is lowered to 4096 bytes so a
// golden test can exceed it.
func sandbox(dir string) *LoadOptions {
	return &LoadOptions{
		ReadFile: func(name string) ([]byte, error) {
			if filepath.IsAbs(name) || strings.HasPrefix(filepath.Clean(name), "..") {
				return nil, fmt.Errorf("outside the test directory: %s", name)
			}
			return os.ReadFile(filepath.Join(dir, name))
		},
		ReadDir: func(name string) ([]string, error) {
			ents, err := os.ReadDir(filepath.Join(dir, name))
			var out []string
			for _, e := range ents {
				out = append(out, e.Name())
			}
			return out, err
		},
		MaxLineLength: 4096,
	}
}

func num(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

// dump writes a circuit and a diagnostic list in a stable text form.
func dump(c *Circuit, err error) string {
	var b strings.Builder
	p := func(format string, args ...any) { fmt.Fprintf(&b, format, args...) }
	p("title: %q\n", c.Title)
	o := c.Options
	p("options: temp=%s tempset=%v tnom=%s gmin=%s", num(o.Temp), o.TempSet, num(o.TNom), num(o.GMin))
	if len(o.Temps) > 0 {
		var t []string
		for _, x := range o.Temps {
			t = append(t, num(x))
		}
		p(" temps=[%s]", strings.Join(t, " "))
	}
	for _, k := range sortedKeys(o.Others) {
		p(" %s=%s", k, num(o.Others[k]))
	}
	p("\n")
	for _, k := range c.SortedModelKeys() {
		m := c.Models[k]
		p("model %s name=%s type=%s @%s\n", k, m.Name, m.Type, m.Pos)
		if len(m.Params) > 0 {
			p("   ")
			for _, n := range sortedKeys(m.Params) {
				p(" %s=%s", n, num(m.Params[n]))
			}
			p("\n")
		}
		if len(m.Text) > 0 {
			p("    text:")
			for _, n := range sortedKeys(m.Text) {
				p(" %s=%q", n, m.Text[n])
			}
			p("\n")
		}
	}
	for _, e := range c.Elements {
		p("%c %s [%s]", e.Kind, e.Name, strings.Join(e.Nodes, " "))
		switch e.Kind {
		case 'R', 'C', 'L', 'E', 'G':
			p(" value=%s", num(e.Value))
		case 'F', 'H':
			p(" control=%s value=%s", e.Control, num(e.Value))
		case 'D', 'Q':
			p(" model=%s area=%s", e.Model, num(e.Area))
		}
		p(" @%s\n", e.Pos)
		if len(e.Params) > 0 {
			p("    params:")
			for _, k := range sortedKeys(e.Params) {
				p(" %s=%s", k, num(e.Params[k]))
			}
			p("\n")
		}
		if e.Poly != nil {
			var a []string
			for _, x := range e.Poly {
				a = append(a, num(x))
			}
			p("    poly(%d) coefficients %s", e.PolyN, strings.Join(a, " "))
			if len(e.Controls) > 0 {
				p(" controls %s", strings.Join(e.Controls, " "))
			}
			p("\n")
		}
		if s := e.Source; s != nil {
			p("    dc=%s hasdc=%v", num(s.DC), s.HasDC)
			if s.HasAC {
				p(" ac=%s/%s", num(s.ACMag), num(s.ACPhase))
			}
			if w := s.Wave; w != nil {
				var a []string
				for _, x := range w.Args {
					a = append(a, num(x))
				}
				p(" wave=%s(%s)@%s", w.Kind, strings.Join(a, " "), w.Pos)
			}
			p("\n")
		}
		if len(e.Chain) > 0 {
			var ch []string
			for _, in := range e.Chain {
				ch = append(ch, fmt.Sprintf("%s(%s)@%s", in.Name, in.Subckt, in.Pos))
			}
			p("    chain: %s\n", strings.Join(ch, " > "))
		}
	}
	for _, a := range c.Annotations {
		p("annotation %s scope=%q args=%q", a.Kind, a.Scope, a.Args)
		for _, k := range sortedKeys(a.KV) {
			p(" %s=%q@%s", k, a.KV[k], a.KVPos[k])
		}
		p(" text=%q @%s\n", a.Text, a.Pos)
	}
	p("diagnostics:\n")
	if l := AsErrorList(err); l != nil {
		for _, e := range l.List {
			if e.Severity == SevError {
				p("  %s\n", e)
			}
		}
		if l.Dropped() > 0 {
			p("  (and %d more errors)\n", l.Dropped())
		}
	}
	for _, e := range c.Notes {
		if e.Alert {
			p("  %s [alert]\n", e)
			continue
		}
		p("  %s\n", e)
	}
	return b.String()
}

func TestGolden(t *testing.T) {
	inputs, err := filepath.Glob(filepath.Join(goldenDir, "*.cir"))
	if err != nil || len(inputs) == 0 {
		t.Fatalf("no golden inputs in %s: %v", goldenDir, err)
	}
	for _, in := range inputs {
		name := filepath.Base(in)
		t.Run(strings.TrimSuffix(name, ".cir"), func(t *testing.T) {
			c, err := Read(name, sandbox(goldenDir))
			got := dump(c, err)
			golden := strings.TrimSuffix(in, ".cir") + ".golden"
			if *update {
				if err := os.WriteFile(golden, []byte(got), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(golden)
			if err != nil {
				t.Fatalf("%v (run go test ./netlist -update)", err)
			}
			if got != string(want) {
				t.Errorf("%s differs from %s:\n%s", name, golden, diff(string(want), got))
			}
		})
	}
}

// diff shows the first differing lines of want and got.
func diff(want, got string) string {
	w, g := strings.Split(want, "\n"), strings.Split(got, "\n")
	var b strings.Builder
	shown := 0
	for i := 0; i < max(len(w), len(g)) && shown < 10; i++ {
		var a, c string
		if i < len(w) {
			a = w[i]
		}
		if i < len(g) {
			c = g[i]
		}
		if a != c {
			fmt.Fprintf(&b, "line %d:\n  want %s\n  got  %s\n", i+1, a, c)
			shown++
		}
	}
	return b.String()
}
