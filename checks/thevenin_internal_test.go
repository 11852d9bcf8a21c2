package checks

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"testing"

	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

// The base Thevenin source solved on the local part of the board (up to
// the rails) equals the one solved on the whole board, to 1e-9 relative
// (1 nV, 1 mOhm): on the demo and every netlist of testdata/check and
// testdata/op.
func TestLocalTheveninMatchesWholeBoard(t *testing.T) {
	files, _ := filepath.Glob("../testdata/check/*.cir")
	more, _ := filepath.Glob("../testdata/op/*.cir")
	files = append(append(files, more...), "../rulesets/demo/bench-logger.cir")
	local := 0
	// And a board of eight stages on one rail, two of them PNP, one with
	// a follower on its collector: every transistor's part is local.
	src := "stages\nVCC vcc 0 12\n.model N NPN(IS=5f BF=180 VAF=80 RB=50)\n.model P PNP(IS=5f BF=120)\n"
	for i := 0; i < 8; i++ {
		if i%4 == 3 {
			src += fmt.Sprintf("R1_%d vcc b%d 10k\nR2_%d b%d 0 47k\nRC%d c%d 0 4.7k\nRE%d vcc e%d 1k\nQ%d c%d b%d e%d P\n", i, i, i, i, i, i, i, i, i, i, i, i)
			continue
		}
		src += fmt.Sprintf("R1_%d vcc b%d 47k\nR2_%d b%d 0 10k\nRC%d vcc c%d 4.7k\nRE%d e%d 0 1k\nQ%d c%d b%d e%d N\nQF%d vcc c%d f%d N\nRF%d f%d 0 3.3k\n", i, i, i, i, i, i, i, i, i, i, i, i, i, i, i, i, i)
	}
	for _, f := range append(files, "stages") {
		var c *netlist.Circuit
		var err error
		if f == "stages" {
			c, err = netlist.ReadSource("stages.cir", []byte(src), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
			if err != nil {
				t.Fatal(err)
			}
		} else if c, err = netlist.Read(f, nil); err != nil {
			continue
		}
		a, err := newAnalyzer(c, Options{})
		if err != nil {
			continue
		}
		a.g = newGraph(c, a.board)
		if a.templates() != nil {
			continue
		}
		a.pool = newPool(a)
		nom, err := a.sys.Solve(solve.Options{Temp: solve.Temp(a.temp)})
		if err != nil {
			continue
		}
		w := a.pool.workers[0]
		for j, q := range a.bjts {
			lc := a.localCircuit(q, nom)
			if lc == nil {
				continue
			}
			sys, err := solve.Prepare(lc)
			if err != nil {
				t.Errorf("%s %s: local circuit: %v", f, q.Name, err)
				continue
			}
			local++
			r1, v1 := theveninOn(context.Background(), sys, q, a.tmpl[j].Polarity, nil, a.temp, nom)
			r2, v2 := w.thevenin(j, nil, a.temp, nom)
			same := func(x, y float64) bool {
				return x == y || (math.IsNaN(x) && math.IsNaN(y)) || math.Abs(x-y) <= 1e-9*math.Max(1e-3, math.Abs(y))
			}
			if !same(r1, r2) || !same(v1, v2) {
				t.Errorf("%s %s: local Rth %.12g Vth %.12g, whole board %.12g %.12g", f, q.Name, r1, v1, r2, v2)
			}
		}
	}
	if local < 16 {
		t.Errorf("only %d transistors had a local circuit", local)
	}
}
