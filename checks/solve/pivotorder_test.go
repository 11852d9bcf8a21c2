package solve

import (
	"io/fs"
	"math"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
	"pgregory.net/rapid"
)

// uniqueEntries sums the entries of es with the same (i, j), in order of
// first appearance, so that assembling them in any order gives the same
// values bit for bit.
func uniqueEntries(es []entry) []entry {
	at := map[[2]int]int{}
	var out []entry
	for _, e := range es {
		if k, ok := at[[2]int{e.i, e.j}]; ok {
			out[k].v += e.v
			continue
		}
		at[[2]int{e.i, e.j}] = len(out)
		out = append(out, e)
	}
	return out
}

// factorSolve assembles es into f (after Repivot, as System.Solve starts a
// solve) and solves for b.
func factorSolve(f *SparseLU, n int, es []entry, b []float64) ([]float64, error) {
	f.Clear(n)
	f.Repivot()
	for _, e := range es {
		f.Add(e.i, e.j, e.v)
	}
	if err := f.Factor(); err != nil {
		return nil, err
	}
	x := make([]float64, n)
	return x, f.Solve(x, b)
}

// A solver started from another solver's pivot order, on perturbed values
// assembled in another order, gives the bits of a fresh pivoting (a solver
// of its own, assembled like the order's maker) and agrees with the dense
// LU to 1e-12 relative; most draws keep the order.
func TestPivotOrderReuse(t *testing.T) {
	kept, drawn := 0, 0
	rapid.Check(t, func(t *rapid.T) {
		n, es, b := randomSparse(t)
		es = uniqueEntries(es)
		var maker SparseLU
		if _, err := factorSolve(&maker, n, es, b); err != nil {
			return
		}
		o := maker.PivotOrder()
		if o == nil {
			t.Fatal("no pivot order after a successful factorisation")
		}
		if on, oe := o.Size(); on != n || oe != len(es) {
			t.Fatalf("order of %d unknowns and %d entries, want %d and %d", on, oe, n, len(es))
		}
		user := &SparseLU{}
		user.UsePivotOrder(o)
		for round := 0; round < 3; round++ {
			es2 := append([]entry(nil), es...)
			spread := rapid.Float64Range(0, 0.5).Draw(t, "spread")
			for k := range es2 {
				es2[k].v *= 1 + spread*rapid.Float64Range(-1, 1).Draw(t, "dv")
			}
			shuffled := append([]entry(nil), es2...)
			for k := len(shuffled) - 1; k > 0; k-- {
				m := rapid.IntRange(0, k).Draw(t, "perm")
				shuffled[k], shuffled[m] = shuffled[m], shuffled[k]
			}
			var fresh SparseLU
			xf, ef := factorSolve(&fresh, n, es2, b)
			reused := user.reused
			xu, eu := factorSolve(user, n, shuffled, b)
			if (ef == nil) != (eu == nil) {
				t.Fatalf("fresh pivoting error %v, with the order %v", ef, eu)
			}
			if ef != nil {
				continue
			}
			if !user.adopted {
				t.Fatal("the order was not taken on the same pattern")
			}
			drawn++
			if user.reused > reused {
				kept++
			}
			for i := range xf {
				if math.Float64bits(xf[i]) != math.Float64bits(xu[i]) {
					t.Fatalf("x[%d] = %v with the order, %v with a fresh pivoting", i, xu[i], xf[i])
				}
			}
			xd, _, ed, _ := factorBoth(t, n, es2, b)
			if ed == nil {
				if r := relDiff(xu, xd); r > 1e-12 {
					t.Fatalf("with the order, sparse and dense differ by %.3g relative", r)
				}
			}
		}
	})
	if kept < drawn/2 {
		t.Errorf("the order was kept in %d of %d solves", kept, drawn)
	}
	t.Logf("order kept in %d of %d solves", kept, drawn)
}

// A solver whose pattern is not the order's (an entry more, or other
// size) ignores the order and pivots afresh.
func TestPivotOrderOtherPattern(t *testing.T) {
	es := []entry{{0, 0, 4}, {0, 1, 1}, {1, 0, 1}, {1, 1, 4}, {1, 2, 1}, {2, 1, 1}, {2, 2, 4}}
	b := []float64{1, 2, 3}
	var maker SparseLU
	if _, err := factorSolve(&maker, 3, es, b); err != nil {
		t.Fatal(err)
	}
	o := maker.PivotOrder()
	var user SparseLU
	user.UsePivotOrder(o)
	more := append(append([]entry(nil), es...), entry{0, 2, 0.5})
	x, err := factorSolve(&user, 3, more, b)
	if err != nil {
		t.Fatal(err)
	}
	if user.adopted || user.reused != 0 {
		t.Fatal("order used on another pattern")
	}
	xd, _, _, _ := factorBoth(nil, 3, more, b)
	if r := relDiff(x, xd); r > 1e-12 {
		t.Errorf("differs from dense by %.3g", r)
	}
	var bigger SparseLU
	bigger.UsePivotOrder(o)
	if _, err := factorSolve(&bigger, 4, append(append([]entry(nil), es...), entry{3, 3, 1}), []float64{1, 2, 3, 4}); err != nil || bigger.adopted {
		t.Fatalf("err %v, adopted %v: an order of 3 unknowns on 4", err, bigger.adopted)
	}
}

// A perturbation that makes a pivot of the order small gives a fresh
// pivoting for that solve: on the tridiagonal [[4 1 0] [1 4 1] [0 1 4]]
// the order pivots on the diagonal; with A[0][0] = 1e-10 (tiny) or 0.01
// (0.04 of its column's largest after equilibration, by hand: below
// pivotTol, though above refactorTol, where a refactorisation within a
// solve would keep it) the diagonal pivot of unknown 0
// is no longer the one a fresh pivoting picks, so it pivots afresh, solves
// to 1e-12 of the dense LU, and the next solve starts from the order
// again.
func TestPivotOrderSmallPivot(t *testing.T) {
	tri := func(a00 float64) []entry {
		return []entry{{0, 0, a00}, {0, 1, 1}, {1, 0, 1}, {1, 1, 4}, {1, 2, 1}, {2, 1, 1}, {2, 2, 4}}
	}
	b := []float64{1, 2, 3}
	var maker SparseLU
	if _, err := factorSolve(&maker, 3, tri(4), b); err != nil {
		t.Fatal(err)
	}
	var user SparseLU
	user.UsePivotOrder(maker.PivotOrder())
	for _, a00 := range []float64{1e-10, 0.01} {
		fresh, reused := user.factorsFresh, user.reused
		x, err := factorSolve(&user, 3, tri(a00), b)
		if err != nil {
			t.Fatalf("A[0][0] = %g: %v", a00, err)
		}
		if user.reused != reused || user.factorsFresh != fresh+1 {
			t.Errorf("A[0][0] = %g: the order was kept (reused %d -> %d, fresh %d -> %d)", a00, reused, user.reused, fresh, user.factorsFresh)
		}
		xd, _, _, _ := factorBoth(nil, 3, tri(a00), b)
		if r := relDiff(x, xd); r > 1e-12 {
			t.Errorf("A[0][0] = %g: differs from dense by %.3g", a00, r)
		}
		reused = user.reused
		if _, err := factorSolve(&user, 3, tri(3.5), b); err != nil || user.reused != reused+1 {
			t.Errorf("A[0][0] = 3.5 after %g: err %v, order not kept", a00, err)
		}
	}
}

// On every solvable netlist in testdata, a System started from another
// System's pivot order (the nominal solve's) gives the same Result, bit for
// bit, as a System of its own, for a changed value and for a transistor
// removed (the Thevenin facts' solve).
func TestSystemPivotOrderSameBits(t *testing.T) {
	compared := 0
	for _, f := range testdataNetlists(t) {
		c, err := netlist.Read(f, nil)
		if err != nil {
			continue
		}
		nominal, err := Prepare(c)
		if err != nil {
			continue
		}
		r0, err := nominal.Solve(Options{})
		if err != nil {
			continue
		}
		var variants []Options
		var setR string
		for _, el := range c.Elements {
			if el.Kind == 'R' && el.Value != 0 && setR == "" {
				setR = el.Name
			}
			if el.Kind == 'Q' && len(variants) == 0 {
				variants = append(variants, Options{Remove: []string{el.Name}, Guess: r0})
			}
		}
		variants = append(variants, Options{Guess: r0}, Options{})
		user, _ := Prepare(c)
		own, _ := Prepare(c)
		// own's first assembly is a plain solve, as nominal's was.
		if _, err := own.Solve(Options{}); err != nil {
			t.Fatal(err)
		}
		user.UsePivotOrder(nominal.PivotOrder())
		for _, o := range variants {
			for _, sys := range []*System{user, own} {
				if setR != "" {
					if err := sys.SetValue(setR, 1.1*c.Element(setR).Value); err != nil {
						t.Fatal(err)
					}
				}
			}
			ru, eu := user.Solve(o)
			ro, eo := own.Solve(o)
			if (eu == nil) != (eo == nil) || (eu != nil && eu.Error() != eo.Error()) {
				t.Fatalf("%s: error %v with the order, %v without", f, eu, eo)
			}
			if !reflect.DeepEqual(ru, ro) {
				t.Fatalf("%s %v: results differ with the order", f, o.Remove)
			}
			compared++
		}
		if user.lin.reused == 0 && !strings.Contains(f, "bad") {
			t.Logf("%s: the order was never kept", f)
		}
	}
	if compared < 40 {
		t.Errorf("only %d solves compared", compared)
	}
	t.Logf("%d solves compared", compared)
}

// testdataNetlists lists the netlists of testdata and the demo board.
func testdataNetlists(t *testing.T) []string {
	var files []string
	err := filepath.WalkDir("../../testdata", func(p string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() && (strings.HasSuffix(p, ".cir") || strings.HasSuffix(p, ".sp")) {
			files = append(files, p)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return append(files, "../../rulesets/demo/bench-logger.cir")
}

// With values drawn from {±1, ±0.5} (as MNA branch rows and equal
// resistors give) and weak diagonals, candidates of equal magnitude are
// common and off-diagonal pivots the rule: a solver
// started from an order made on other values picks, column by column, the
// same pivot rows as a fresh pivoting does (the first of the largest in
// the order factor meets them), and gives the same bits.
func TestPivotOrderTies(t *testing.T) {
	vals := []float64{1, -1, 0.5, -0.5}
	rapid.Check(t, func(t *rapid.T) {
		n := rapid.IntRange(2, 12).Draw(t, "n")
		var es []entry
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				switch {
				case i == j && rapid.IntRange(0, 2).Draw(t, "dz") > 0:
					// A weak diagonal, below pivotTol of the column.
					es = append(es, entry{i, j, 0.01 * vals[rapid.IntRange(0, 3).Draw(t, "v")]})
				case rapid.IntRange(0, 2).Draw(t, "nz") == 0:
					es = append(es, entry{i, j, vals[rapid.IntRange(0, 3).Draw(t, "v")]})
				}
			}
		}
		b := make([]float64, n)
		for i := range b {
			b[i] = float64(i + 1)
		}
		other := append([]entry(nil), es...)
		for k := range other {
			other[k].v *= rapid.Float64Range(0.5, 2).Draw(t, "scale")
		}
		var maker SparseLU
		if _, err := factorSolve(&maker, n, other, b); err != nil {
			return
		}
		var user, fresh SparseLU
		// fresh is assembled as maker was, so it has maker's structure.
		fresh.Clear(n)
		for _, e := range other {
			fresh.Add(e.i, e.j, 0)
		}
		user.UsePivotOrder(maker.PivotOrder())
		xf, ef := factorSolve(&fresh, n, es, b)
		xu, eu := factorSolve(&user, n, es, b)
		if (ef == nil) != (eu == nil) {
			t.Fatalf("fresh error %v, with the order %v", ef, eu)
		}
		if ef != nil {
			return
		}
		if !reflect.DeepEqual(fresh.prow, user.prow) {
			t.Fatalf("pivot rows %v with the order, %v fresh", user.prow, fresh.prow)
		}
		for i := range xf {
			if math.Float64bits(xf[i]) != math.Float64bits(xu[i]) {
				t.Fatalf("x[%d] = %v with the order, %v fresh", i, xu[i], xf[i])
			}
		}
	})
}
