package solve

import (
	"strings"

	"errors"
	"github.com/biaslint/biaslint/netlist"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
	"pgregory.net/rapid"
)

// entry is one Add of a test matrix.
type entry struct {
	i, j int
	v    float64
}

// factorBoth assembles es into a DenseLU and a SparseLU and solves A·x = b
// with each.
func factorBoth(t *rapid.T, n int, es []entry, b []float64) (xd, xs []float64, ed, esp error) {
	var d DenseLU
	var s SparseLU
	d.Clear(n)
	s.Clear(n)
	for _, e := range es {
		d.Add(e.i, e.j, e.v)
		s.Add(e.i, e.j, e.v)
	}
	xd, xs = make([]float64, n), make([]float64, n)
	if ed = d.Factor(); ed == nil {
		ed = d.Solve(xd, b)
	}
	if esp = s.Factor(); esp == nil {
		esp = s.Solve(xs, b)
	}
	return xd, xs, ed, esp
}

// relDiff is ‖x − y‖∞ / ‖y‖∞.
func relDiff(x, y []float64) float64 {
	d, m := 0.0, 0.0
	for i := range x {
		d = math.Max(d, math.Abs(x[i]-y[i]))
		m = math.Max(m, math.Abs(y[i]))
	}
	if m == 0 {
		return d
	}
	return d / m
}

// randomSparse draws a diagonally weighted sparse matrix (so that it is
// well conditioned; about three off-diagonal entries a row, some rows
// with a zero diagonal as MNA branch rows have) and a right-hand side.
func randomSparse(t *rapid.T) (int, []entry, []float64) {
	n := rapid.IntRange(1, 60).Draw(t, "n")
	var es []entry
	for i := 0; i < n; i++ {
		zeroDiag := i > 0 && rapid.IntRange(0, 5).Draw(t, "zd") == 0
		if zeroDiag {
			// A branch row: +1/-1 coupling with an earlier unknown, both ways.
			j := rapid.IntRange(0, i-1).Draw(t, "bj")
			es = append(es, entry{i, j, 1}, entry{j, i, 1}, entry{j, j, rapid.Float64Range(0.5, 2).Draw(t, "bd")})
			continue
		}
		es = append(es, entry{i, i, rapid.Float64Range(4, 10).Draw(t, "d")})
		for k := rapid.IntRange(0, 3).Draw(t, "k"); k > 0; k-- {
			es = append(es, entry{i, rapid.IntRange(0, n-1).Draw(t, "j"), rapid.Float64Range(-1, 1).Draw(t, "v")})
		}
	}
	b := make([]float64, n)
	for i := range b {
		b[i] = rapid.Float64Range(-10, 10).Draw(t, "b")
	}
	return n, es, b
}

// On random sparse matrices the sparse LU solves A·x = b as the dense LU
// (gonum's LAPACK-style partial pivoting, the reference) does, to 1e-12
// relative, and reports a singular matrix when the dense one does.
func TestSparseMatchesDenseRandom(t *testing.T) {
	rapid.Check(t, func(t *rapid.T) {
		n, es, b := randomSparse(t)
		xd, xs, ed, esp := factorBoth(t, n, es, b)
		if (ed == nil) != (esp == nil) {
			t.Fatalf("dense error %v, sparse error %v", ed, esp)
		}
		if ed != nil {
			return
		}
		if r := relDiff(xs, xd); r > 1e-12 {
			t.Fatalf("sparse and dense differ by %.3g relative (n %d)", r, n)
		}
	})
}

// A refactorisation with new values on the same pattern gives the same
// solution as a fresh factorisation, and a pivot that turns zero makes it
// pivot afresh rather than fail.
func TestSparseRefactor(t *testing.T) {
	rapid.Check(t, func(t *rapid.T) {
		n, es, b := randomSparse(t)
		var s SparseLU
		s.Clear(n)
		for _, e := range es {
			s.Add(e.i, e.j, e.v)
		}
		if s.Factor() != nil {
			return
		}
		scale := rapid.Float64Range(0.5, 2).Draw(t, "scale")
		s.Clear(n)
		es2 := append([]entry(nil), es...)
		for k := range es2 {
			if k%3 == 0 {
				es2[k].v *= scale
			}
		}
		for _, e := range es2 {
			s.Add(e.i, e.j, e.v)
		}
		x := make([]float64, n)
		if err := s.Factor(); err != nil {
			return
		}
		if err := s.Solve(x, b); err != nil {
			t.Fatal(err)
		}
		_, xs, _, err := factorBoth(t, n, es2, b)
		if err != nil {
			return
		}
		if r := relDiff(x, xs); r > 1e-12 {
			t.Fatalf("refactored solution differs from a fresh one by %.3g", r)
		}
	})
}

// A pivot that vanishes on refactoring is replaced by fresh pivoting: the
// matrix [[e 1] [1 1]] with e going from 1 to 0 stays solvable.
func TestSparseRepivotsSmallPivot(t *testing.T) {
	var s SparseLU
	solveWith := func(e float64) []float64 {
		s.Clear(2)
		s.Add(0, 0, e)
		s.Add(0, 1, 1)
		s.Add(1, 0, 1)
		s.Add(1, 1, 1)
		if err := s.Factor(); err != nil {
			t.Fatalf("e = %g: %v", e, err)
		}
		x := make([]float64, 2)
		if err := s.Solve(x, []float64{1, 2}); err != nil {
			t.Fatal(err)
		}
		return x
	}
	solveWith(1.5)
	x := solveWith(0)
	// x0 + x1 = 2 and x1 = 1: x = (1, 1), by hand.
	if math.Abs(x[0]-1) > 1e-15 || math.Abs(x[1]-1) > 1e-15 {
		t.Errorf("x = %v, want (1, 1)", x)
	}
}

// A singular matrix is a *SingularError naming an unknown, and an
// ill-conditioned one carries a finite condition estimate comparable with
// gonum's (LAPACK dgecon, the reference).
func TestSparseSingular(t *testing.T) {
	var s SparseLU
	s.Clear(3)
	s.Add(0, 0, 1)
	s.Add(1, 1, 1)
	s.Add(1, 2, 1)
	s.Add(2, 1, 1)
	s.Add(2, 2, 1)
	var se *SingularError
	if err := s.Factor(); !errors.As(err, &se) || !math.IsInf(se.Cond, 1) || (se.Index != 1 && se.Index != 2) {
		t.Fatalf("err = %v (%+v), want a singular error at unknown 1 or 2", err, se)
	}
	// Nearly singular: rows (1, 1) and (1, 1+d).
	const d = 1e-17
	s.Clear(2)
	s.Add(0, 0, 1)
	s.Add(0, 1, 1)
	s.Add(1, 0, 1)
	s.Add(1, 1, 1+4*d)
	err := s.Factor()
	a := mat.NewDense(2, 2, []float64{1, 1, 1, 1 + 4*d})
	var lu mat.LU
	lu.Factorize(a)
	if want := lu.Cond(); want > MaxCondition && err == nil {
		t.Errorf("dense condition %g, but the sparse LU accepted the matrix", want)
	}
}

// Dense MNA matrices from every solvable netlist in testdata give the same
// solution with the sparse LU (see TestSparseAgreesOnTestdata).

// twinLU solves every system with both a DenseLU and a SparseLU and
// records the largest relative difference of their solutions, relative to
// what the conditioning allows.
type twinLU struct {
	d     DenseLU
	s     SparseLU
	worst float64
	n     int
}

func (l *twinLU) Clear(n int)             { l.d.Clear(n); l.s.Clear(n); l.s.Repivot() }
func (l *twinLU) Add(i, j int, v float64) { l.d.Add(i, j, v); l.s.Add(i, j, v) }
func (l *twinLU) Factor() error {
	ed, es := l.d.Factor(), l.s.Factor()
	if (ed == nil) != (es == nil) {
		return errors.Join(errors.New("dense and sparse disagree on singularity"), ed, es)
	}
	return ed
}
func (l *twinLU) Solve(x, b []float64) error {
	if err := l.d.Solve(x, b); err != nil {
		return err
	}
	y := make([]float64, len(x))
	if err := l.s.Solve(y, b); err != nil {
		return err
	}
	// Both solutions carry a forward error of about cond·ε (the dense
	// one is no more exact than the sparse one), so the allowance grows
	// with the condition number of the equilibrated matrix (gonum's
	// LAPACK-style estimate): 1e-12 on well-conditioned systems.
	l.worst = math.Max(l.worst, relDiff(y, x)/(1+l.d.lu.Cond()*0x1p-52*1e12/8))
	l.n++
	return nil
}

// Every Newton step of every netlist in testdata that can be solved gives
// the same solution with the sparse and the dense LU, to 1e-12 relative.
func TestSparseAgreesOnTestdata(t *testing.T) {
	files := testdataNetlists(t)
	solved := 0
	for _, f := range files {
		c, err := netlist.Read(f, nil)
		if err != nil {
			continue
		}
		s, err := Prepare(c)
		if err != nil {
			continue
		}
		lin := &twinLU{}
		if _, err := s.Solve(Options{Linear: lin}); err != nil && !strings.Contains(err.Error(), "disagree") {
			continue
		} else if err != nil {
			t.Errorf("%s: %v", f, err)
			continue
		}
		solved++
		if lin.worst > 1e-12 {
			t.Errorf("%s: sparse and dense solutions differ by %.3g relative", f, lin.worst)
		}
	}
	if solved < 20 {
		t.Errorf("only %d netlists solved; the comparison covers too little", solved)
	}
	t.Logf("%d netlists compared", solved)
}

// SolveSparse gives the full solve's solution for right-hand sides with
// a few nonzeros, and leaves x zero outside the unknowns it reports.
func TestSolveSparseMatchesSolve(t *testing.T) {
	rapid.Check(t, func(t *rapid.T) {
		n, es, _ := randomSparse(t)
		var s SparseLU
		s.Clear(n)
		for _, e := range es {
			s.Add(e.i, e.j, e.v)
		}
		if s.Factor() != nil {
			return
		}
		for round := 0; round < 3; round++ {
			b := make([]float64, n)
			var rows []int
			for k := rapid.IntRange(1, 3).Draw(t, "nb"); k > 0; k-- {
				i := rapid.IntRange(0, n-1).Draw(t, "row")
				b[i] += rapid.Float64Range(-5, 5).Draw(t, "bv")
				rows = append(rows, i)
			}
			want := make([]float64, n)
			if err := s.Solve(want, b); err != nil {
				t.Fatal(err)
			}
			x := make([]float64, n)
			set, err := s.SolveSparse(x, b, rows)
			if err != nil {
				t.Fatal(err)
			}
			if r := relDiff(x, want); r > 1e-12 {
				t.Fatalf("sparse right-hand side: differs by %.3g", r)
			}
			in := map[int]bool{}
			for _, j := range set {
				in[j] = true
			}
			for j, v := range x {
				if v != 0 && !in[j] {
					t.Fatalf("x[%d] = %g set but not reported", j, v)
				}
			}
			for _, v := range b {
				if v != 0 {
					t.Fatal("b not consumed")
				}
			}
		}
	})
}
