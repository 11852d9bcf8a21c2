package solve

import (
	"fmt"
	"math"
	"slices"
)

// SparseLU is a LinearSolver for large, sparse MNA systems: a sparse LU
// factorisation P·A'·Q = L·U of the equilibrated matrix A' = R·A·C (R, C
// diagonal, as DenseLU) with
//
//   - a fill-reducing column order Q from a minimum-degree ordering of the
//     pattern of A + Aᵀ (Tinney & Walker, "Direct solutions of sparse
//     network equations by optimally ordered triangular factorization",
//     Proc. IEEE 55(11), 1967, scheme 2; the greedy rule that approximate
//     minimum degree refines, Amestoy, Davis & Duff, SIAM J. Matrix Anal.
//     Appl. 17(4), 1996), computed once per pattern (symbolic analysis);
//   - a left-looking numeric factorisation, one column at a time by a
//     sparse triangular solve whose nonzero pattern is found by a depth-
//     first search of the graph of L (Gilbert & Peierls, "Sparse partial
//     pivoting in time proportional to arithmetic operations", SIAM J. Sci.
//     Stat. Comput. 9(5), 1988; as cs_lu in T. A. Davis, Direct Methods for
//     Sparse Linear Systems, SIAM 2006, chapter 6), with threshold partial
//     pivoting: the diagonal is taken when it is at least pivotTol of the
//     largest candidate in its column, else the largest;
//   - a refactorisation that keeps the patterns of L and U and the pivot
//     order and only recomputes the values (the refactor of Davis &
//     Natarajan, "Algorithm 907: KLU, a direct sparse solver for circuit
//     simulation problems", ACM TOMS 37(3), 2010). It is used while a pivot
//     stays at least refactorTol of its column's largest candidate; a pivot
//     that turns smaller starts a fresh pivoting.
//   - a pivot order shared between solvers (PivotOrder, UsePivotOrder):
//     a solver whose pattern is the order's starts every solve (Repivot)
//     from the order's ordering, patterns of L and U and pivots instead
//     of a fresh pivoting, and keeps them only where they are the pivots a
//     fresh pivoting would choose from the same values (refactorExact), so
//     its factors, and every solution, are bit for bit those of a fresh
//     pivoting whichever solver, and whatever solve before, made the order.
//
// The pattern is recorded from the Add calls. An assembly that repeats the
// previous one's sequence of (i, j) costs one comparison per Add; an entry
// never seen before grows the pattern and the next Factor analyses it
// anew. The pattern never shrinks: entries not added stay zero.
//
// Condition is estimated only when a pivot is tiny (below tinyPivot of the
// equilibrated matrix), with the 1-norm estimator of Hager ("Condition
// estimates", SIAM J. Sci. Stat. Comput. 5(2), 1984) as refined by Higham
// (ACM TOMS 14(4), 1988); a matrix whose estimate exceeds MaxCondition,
// or that has no nonzero pivot candidate in a column, is a *SingularError
// naming the unknown of the smallest pivot.
//
// The zero value is ready to use.
type SparseLU struct {
	n int
	// Assembly: the pattern's entries in order of first Add.
	key    map[uint64]int32
	ei, ej []int32
	val    []float64
	// seq is the entry of each Add of the current (and previous) assembly;
	// nadd counts the Adds since Clear.
	seq   []seqAdd
	nadd  int
	grown bool

	// Symbolic analysis: column order and the matrix in compressed
	// columns, column k holding unknown q[k] (rows as in A).
	sym  bool
	q    []int
	ap   []int
	ai   []int
	aent []int32
	ax   []float64

	// Numeric factors. L has a unit diagonal (not stored); its column k
	// holds original row indices. U's column k holds pivot steps J < k in
	// topological order, its diagonal in ud.
	lp, li []int
	lx     []float64
	up, ui []int
	ux     []float64
	ud     []float64
	pinv   []int // original row -> step, -1 if not yet pivotal
	prow   []int // step -> original row
	piv    bool  // the factors hold a pivot order that may be reused
	rs, cs []float64
	ok     bool

	// Work space.
	x            []float64
	xi, st, pst  []int
	mark         []int
	stamp        int
	w, y         []float64
	rowm         []float64
	inq          []bool    // SolveSparse: step queued
	ys, ws       []float64 // SolveSparse's work, all zero between calls
	heap         minHeap   // SolveSparse's queue, kept for its storage
	touched      []int     // SolveSparse's forward steps, likewise
	factorsFresh int       // factorisations with fresh pivoting (statistics)
	refactors    int       // value-only refactorisations (statistics)
	reused       int       // solves started from the shared order (statistics)

	// ppos[k] is where step k's pivot row stands among the other
	// candidates of column k (the rows of L's column k, in the order
	// factor met them): its tie-break, for refactorExact.
	ppos []int
	// order is the shared starting order (UsePivotOrder), nil for none;
	// adopted says that analyse found the pattern equal to the order's and
	// took its column order and compressed columns; atOrder that the
	// patterns of L and U and the pivots are the order's (no fresh
	// pivoting since they were copied); restart that the next Factor
	// starts a solve (Repivot).
	order   *PivotOrder
	adopted bool
	atOrder bool
	restart bool
}

// seqAdd is one Add of an assembly: its entry and the entry's (i, j) as
// i<<32 | j, so that an Add repeating the previous assembly's is told by
// one comparison.
type seqAdd struct {
	id uint64
	e  int32
}

// PivotOrder is the symbolic analysis and pivot order of one SparseLU
// factorisation: the pattern it belongs to, the column order, the matrix's
// compressed columns, the patterns of L and U and the pivot rows. It is
// not changed once made, so solvers on any number of goroutines may share
// it (UsePivotOrder).
type PivotOrder struct {
	n int
	// keys are the pattern's entries, row<<32 | column, sorted: the
	// identity a solver's pattern must have to use the order.
	keys             []uint64
	q, ap, ai        []int
	lp, li, up, ui   []int
	prow, pinv, ppos []int
}

// Size returns the number of unknowns and of pattern entries of the
// order's matrix.
func (o *PivotOrder) Size() (n, entries int) { return o.n, len(o.keys) }

// Threshold partial pivoting: a fresh factorisation takes the diagonal
// when it is at least pivotTol of the largest candidate in its column; a
// refactorisation keeps the old pivot while it is at least refactorTol of
// the largest candidate.
const (
	pivotTol    = 0.1
	refactorTol = 1e-3
	// tinyPivot is the pivot magnitude, of the equilibrated matrix (every
	// row and column scaled to a largest entry of 1), below which the
	// condition number is estimated.
	tinyPivot = 1e-8
)

// NewSparseLU returns an empty SparseLU.
func NewSparseLU() *SparseLU { return &SparseLU{} }

// Clear implements LinearSolver.
func (f *SparseLU) Clear(n int) {
	f.ok = false
	if n != f.n || f.key == nil {
		*f = SparseLU{n: n, key: map[uint64]int32{}, factorsFresh: f.factorsFresh, refactors: f.refactors,
			reused: f.reused, order: f.order}
		return
	}
	f.seq = f.seq[:f.nadd]
	f.nadd = 0
	for i := range f.val {
		f.val[i] = 0
	}
}

// Repivot makes the next Factor start a solve: it chooses its pivots
// afresh (the ordering of the pattern is kept), or, when the solver uses a
// shared PivotOrder whose pattern is its own, starts from that order and
// keeps it only where a fresh pivoting would choose the same pivots.
// System.Solve calls it once per solve, so a solution depends only on
// that solve's matrices, not on what the solver factored before.
func (f *SparseLU) Repivot() { f.piv, f.restart = false, true }

// PivotOrder returns the symbolic analysis and pivot order of the last
// factorisation, for other solvers of the same pattern (UsePivotOrder), or
// nil when there is none.
func (f *SparseLU) PivotOrder() *PivotOrder {
	if !f.sym || f.grown || !f.piv || f.n == 0 {
		return nil
	}
	c := func(a []int) []int { return append([]int(nil), a...) }
	return &PivotOrder{n: f.n, keys: f.sortedKeys(), q: c(f.q), ap: c(f.ap), ai: c(f.ai),
		lp: c(f.lp), li: c(f.li), up: c(f.up), ui: c(f.ui), prow: c(f.prow), pinv: c(f.pinv), ppos: c(f.ppos)}
}

// UsePivotOrder makes o (nil for none) the order every later solve
// (Repivot) starts from, when the pattern is o's: same size and the same
// set of entries, compared exactly at the next analysis. A solver of
// another pattern ignores it and pivots afresh. The column order and the
// compressed columns are then o's, so a fresh pivoting (where the order
// does not hold) also gives the same bits on every solver using o.
func (f *SparseLU) UsePivotOrder(o *PivotOrder) {
	if o == f.order {
		return
	}
	f.order, f.sym, f.adopted, f.atOrder, f.piv = o, false, false, false, false
}

// sortedKeys returns the pattern's entries, row<<32 | column, sorted.
func (f *SparseLU) sortedKeys() []uint64 {
	keys := make([]uint64, len(f.ei))
	for e := range f.ei {
		keys[e] = uint64(f.ei[e])<<32 | uint64(f.ej[e])
	}
	slices.Sort(keys)
	return keys
}

// Add implements LinearSolver. Indices out of range are ignored.
func (f *SparseLU) Add(i, j int, v float64) {
	if i < 0 || j < 0 || i >= f.n || j >= f.n {
		return
	}
	k := f.nadd
	f.nadd++
	id := uint64(i)<<32 | uint64(j)
	if k < len(f.seq) {
		if a := f.seq[k]; a.id == id {
			f.val[a.e] += v
			return
		}
	}
	e, ok := f.key[id]
	if !ok {
		e = int32(len(f.val))
		f.key[id] = e
		f.ei, f.ej, f.val = append(f.ei, int32(i)), append(f.ej, int32(j)), append(f.val, 0)
		f.grown = true
	}
	f.val[e] += v
	if k < len(f.seq) {
		f.seq[k] = seqAdd{id, e}
	} else {
		f.seq = append(f.seq, seqAdd{id, e})
	}
}

// Pattern returns the number of entries in the recorded pattern and in
// the factors L and U (their diagonals included).
func (f *SparseLU) Pattern() (a, lu int) {
	return len(f.val), len(f.li) + len(f.ui) + 2*f.n
}

// Factor implements LinearSolver.
func (f *SparseLU) Factor() error {
	f.ok = false
	n := f.n
	if n == 0 {
		f.ok = true
		return nil
	}
	if f.grown || !f.sym {
		f.analyse()
	}
	if err := f.equilibrate(); err != nil {
		return err
	}
	done, from := false, 0
	switch {
	case f.restart:
		f.restart, f.piv = false, false
		if f.adopted {
			f.loadOrder()
			from = f.refactorExact()
			done = from == n
			if done {
				f.reused++
			}
		}
	case f.piv:
		done = f.refactor()
		if done {
			f.refactors++
		}
	}
	if !done {
		if err := f.factor(from); err != nil {
			return err
		}
		f.factorsFresh++
	}
	// Condition, only when a pivot is tiny.
	small, at := math.Inf(1), -1
	for k, d := range f.ud {
		if a := math.Abs(d); a < small {
			small, at = a, k
		}
	}
	if small < tinyPivot {
		f.ok = true
		c := f.condest()
		if c > MaxCondition || math.IsNaN(c) {
			f.ok = false
			return &SingularError{Cond: c, Index: f.q[at]}
		}
	}
	f.ok = true
	return nil
}

// analyse orders the pattern and builds its compressed columns: the
// shared order's, when the pattern is the order's, else its own.
func (f *SparseLU) analyse() {
	n := f.n
	nz := len(f.val)
	f.adopted, f.atOrder = false, false
	if o := f.order; o != nil && o.n == n && slices.Equal(o.keys, f.sortedKeys()) {
		f.q, f.ap, f.ai = append(f.q[:0], o.q...), append(f.ap[:0], o.ap...), append(f.ai[:0], o.ai...)
		f.aent, f.ax = make([]int32, nz), make([]float64, nz)
		for k := 0; k < n; k++ {
			for p := f.ap[k]; p < f.ap[k+1]; p++ {
				f.aent[p] = f.key[uint64(f.ai[p])<<32|uint64(f.q[k])]
			}
		}
		f.adopted = true
	} else {
		f.q = minimumDegree(n, f.ei, f.ej)
		pos := make([]int, n) // unknown -> column
		for k, j := range f.q {
			pos[j] = k
		}
		cnt := make([]int, n+1)
		for _, j := range f.ej {
			cnt[pos[j]+1]++
		}
		for k := 0; k < n; k++ {
			cnt[k+1] += cnt[k]
		}
		f.ap = append([]int(nil), cnt...)
		f.ai, f.aent, f.ax = make([]int, nz), make([]int32, nz), make([]float64, nz)
		next := cnt[:n]
		for e := range f.val {
			k := pos[f.ej[e]]
			p := next[k]
			next[k]++
			f.ai[p], f.aent[p] = int(f.ei[e]), int32(e)
		}
	}
	f.x, f.w, f.y = make([]float64, n), make([]float64, n), make([]float64, n)
	f.inq = make([]bool, n)
	f.xi, f.st, f.pst, f.mark = make([]int, n), make([]int, n), make([]int, n), make([]int, n)
	f.pinv, f.prow = make([]int, n), make([]int, n)
	f.rs, f.cs, f.rowm = make([]float64, n), make([]float64, n), make([]float64, n)
	f.lp, f.up, f.ud = make([]int, n+1), make([]int, n+1), make([]float64, n)
	f.ppos = make([]int, n)
	f.stamp = 0
	f.sym, f.grown, f.piv = true, false, false
}

// equilibrate scales the rows, then the columns, to a largest magnitude
// of 1 and fills ax; a zero (or non-finite) row or column is singular.
func (f *SparseLU) equilibrate() error {
	n := f.n
	for i := range f.rowm {
		f.rowm[i] = 0
	}
	for e, v := range f.val {
		a := math.Abs(v)
		if i := f.ei[e]; a > f.rowm[i] || a != a {
			f.rowm[i] = a
		}
	}
	for i, m := range f.rowm {
		if m == 0 || math.IsNaN(m) || math.IsInf(m, 0) {
			return &SingularError{Cond: math.Inf(1), Index: i}
		}
		f.rs[i] = 1 / m
	}
	for k := 0; k < n; k++ {
		m := 0.0
		for p := f.ap[k]; p < f.ap[k+1]; p++ {
			v := f.val[f.aent[p]] * f.rs[f.ai[p]]
			f.ax[p] = v
			if a := math.Abs(v); a > m {
				m = a
			}
		}
		if m == 0 {
			return &SingularError{Cond: math.Inf(1), Index: f.q[k]}
		}
		f.cs[f.q[k]] = 1 / m
		for p := f.ap[k]; p < f.ap[k+1]; p++ {
			f.ax[p] /= m
		}
	}
	return nil
}

// factor is the Gilbert-Peierls factorisation with threshold partial
// pivoting (Davis 2006, cs_lu), from step k0 on: the steps before k0 are
// kept as they are (refactorExact leaves them as factor makes them).
func (f *SparseLU) factor(k0 int) error {
	n := f.n
	f.li, f.lx, f.ui, f.ux = f.li[:f.lp[k0]], f.lx[:f.lp[k0]], f.ui[:f.up[k0]], f.ux[:f.up[k0]]
	if k0 == 0 {
		for i := range f.pinv {
			f.pinv[i] = -1
		}
	} else {
		for K := k0; K < n; K++ {
			f.pinv[f.prow[K]] = -1
		}
	}
	f.piv, f.atOrder = false, false
	for k := k0; k < n; k++ {
		f.lp[k], f.up[k] = len(f.li), len(f.ui)
		f.stamp++
		top := n
		for p := f.ap[k]; p < f.ap[k+1]; p++ {
			if i := f.ai[p]; f.mark[i] != f.stamp {
				top = f.dfs(i, top)
			}
		}
		for p := f.ap[k]; p < f.ap[k+1]; p++ {
			f.x[f.ai[p]] = f.ax[p]
		}
		for px := top; px < n; px++ {
			j := f.xi[px]
			J := f.pinv[j]
			if J < 0 {
				continue
			}
			xj := f.x[j]
			for p := f.lp[J]; p < f.lp[J+1]; p++ {
				f.x[f.li[p]] -= f.lx[p] * xj
			}
		}
		ipiv, big := -1, -1.0
		for px := top; px < n; px++ {
			i := f.xi[px]
			if f.pinv[i] < 0 {
				if a := math.Abs(f.x[i]); a > big || a != a {
					big, ipiv = a, i
				}
			} else {
				f.ui = append(f.ui, f.pinv[i])
				f.ux = append(f.ux, f.x[i])
			}
		}
		if ipiv < 0 || !(big > 0) || math.IsInf(big, 0) {
			for px := top; px < n; px++ {
				f.x[f.xi[px]] = 0
			}
			return &SingularError{Cond: math.Inf(1), Index: f.q[k]}
		}
		if d := f.q[k]; f.pinv[d] < 0 && f.mark[d] == f.stamp && math.Abs(f.x[d]) >= pivotTol*big {
			ipiv = d
		}
		pivot := f.x[ipiv]
		f.ud[k] = pivot
		f.pinv[ipiv], f.prow[k] = k, ipiv
		for px := top; px < n; px++ {
			i := f.xi[px]
			if i == ipiv {
				f.ppos[k] = len(f.li) - f.lp[k]
			}
			if f.pinv[i] < 0 {
				f.li = append(f.li, i)
				f.lx = append(f.lx, f.x[i]/pivot)
			}
			f.x[i] = 0
		}
	}
	f.lp[n], f.up[n] = len(f.li), len(f.ui)
	f.piv = true
	return nil
}

// dfs pushes onto xi[..top) the rows reached from row j in the graph of
// L, in topological order (Davis 2006, cs_dfs, without recursion).
func (f *SparseLU) dfs(j, top int) int {
	head := 0
	f.st[0] = j
	for head >= 0 {
		j = f.st[head]
		J := f.pinv[j]
		if f.mark[j] != f.stamp {
			f.mark[j] = f.stamp
			f.pst[head] = 0
			if J >= 0 {
				f.pst[head] = f.lp[J]
			}
		}
		done := true
		if J >= 0 {
			for p, end := f.pst[head], f.lp[J+1]; p < end; p++ {
				i := f.li[p]
				if f.mark[i] == f.stamp {
					continue
				}
				f.pst[head] = p + 1
				head++
				f.st[head] = i
				done = false
				break
			}
		}
		if done {
			head--
			top--
			f.xi[top] = j
		}
	}
	return top
}

// eliminate computes column k of the factors with the patterns and pivots
// they hold: it scatters column k of the matrix into x, applies the
// columns of L that U's column k names (storing U's values) and returns
// the pivot. x is left nonzero only at the rows of L's column k.
func (f *SparseLU) eliminate(k int) float64 {
	for p := f.ap[k]; p < f.ap[k+1]; p++ {
		f.x[f.ai[p]] = f.ax[p]
	}
	for p := f.up[k]; p < f.up[k+1]; p++ {
		J := f.ui[p]
		j := f.prow[J]
		xj := f.x[j]
		f.ux[p] = xj
		f.x[j] = 0
		for r := f.lp[J]; r < f.lp[J+1]; r++ {
			f.x[f.li[r]] -= f.lx[r] * xj
		}
	}
	pr := f.prow[k]
	pivot := f.x[pr]
	f.x[pr] = 0
	return pivot
}

// refactor recomputes the values of L and U with the patterns and pivots
// of the last factorisation; false when a pivot has become too small.
func (f *SparseLU) refactor() bool {
	n := f.n
	for k := 0; k < n; k++ {
		pivot := f.eliminate(k)
		big := 0.0
		for r := f.lp[k]; r < f.lp[k+1]; r++ {
			if a := math.Abs(f.x[f.li[r]]); a > big || a != a {
				big = a
			}
		}
		if a := math.Abs(pivot); !(a > 0) || math.IsInf(a, 0) || a < refactorTol*big || math.IsNaN(big) {
			for r := f.lp[k]; r < f.lp[k+1]; r++ {
				f.x[f.li[r]] = 0
			}
			f.piv = false
			return false
		}
		f.ud[k] = pivot
		for r := f.lp[k]; r < f.lp[k+1]; r++ {
			i := f.li[r]
			f.lx[r] = f.x[i] / pivot
			f.x[i] = 0
		}
	}
	return true
}

// loadOrder copies the shared order's patterns of L and U and its pivots
// into the factors (the column order and compressed columns are already
// the order's: f.adopted), unless they still hold them.
func (f *SparseLU) loadOrder() {
	if f.atOrder {
		return
	}
	o := f.order
	f.lp, f.li, f.up, f.ui = append(f.lp[:0], o.lp...), append(f.li[:0], o.li...), append(f.up[:0], o.up...), append(f.ui[:0], o.ui...)
	f.prow, f.pinv, f.ppos = append(f.prow[:0], o.prow...), append(f.pinv[:0], o.pinv...), append(f.ppos[:0], o.ppos...)
	f.lx, f.ux = grow(f.lx, len(f.li)), grow(f.ux, len(f.ui))
	f.atOrder = true
}

// grow returns a of length n, reusing its storage.
func grow(a []float64, n int) []float64 {
	if cap(a) >= n {
		return a[:n]
	}
	return make([]float64, n)
}

// refactorExact is refactor for the first factorisation of a solve that
// starts from the shared order, with factor's own pivot rule in place of
// the looser refactorTol test: column by column it keeps the order's pivot
// only if factor, given the same values, would choose that row (the
// diagonal when it is at least pivotTol of the largest candidate, else the
// first of the largest in the order factor meets the candidates, ppos).
// With the same column order, compressed columns and pivots, factor's
// patterns of L and U and its order of operations are the order's, so the
// factors are bit for bit those of a fresh pivoting. It returns false at
// the first column where the pivot differs (or a value is not finite), and
// factor then pivots afresh from that column on, the columns before it
// being already what it would make; n when every pivot holds.
func (f *SparseLU) refactorExact() int {
	n := f.n
	for k := 0; k < n; k++ {
		pivot := f.eliminate(k)
		a0 := math.Abs(pivot)
		lo, mid, hi := f.lp[k], f.lp[k]+f.ppos[k], f.lp[k+1]
		pr, d := f.prow[k], f.q[k]
		ok := a0 > 0 && !math.IsInf(a0, 0)
		big, before, after, ad := a0, -1.0, -1.0, -1.0
		for r := lo; r < hi && ok; r++ {
			i := f.li[r]
			a := math.Abs(f.x[i])
			if a != a || math.IsInf(a, 0) {
				ok = false
				break
			}
			big = math.Max(big, a)
			if r < mid {
				before = math.Max(before, a)
			} else {
				after = math.Max(after, a)
			}
			if i == d {
				ad = a
			}
		}
		if ok {
			if pr == d {
				ok = a0 >= pivotTol*big
			} else {
				ok = a0 > before && a0 >= after && !(ad >= 0 && ad >= pivotTol*a0)
			}
		}
		if !ok {
			for r := lo; r < hi; r++ {
				f.x[f.li[r]] = 0
			}
			f.piv = false
			return k
		}
		f.ud[k] = pivot
		for r := lo; r < hi; r++ {
			i := f.li[r]
			f.lx[r] = f.x[i] / pivot
			f.x[i] = 0
		}
	}
	f.piv = true
	return n
}

// Solve implements LinearSolver.
func (f *SparseLU) Solve(x, b []float64) error {
	if !f.ok {
		return fmt.Errorf("solve without a successful factorisation")
	}
	if len(x) != f.n || len(b) != f.n {
		return fmt.Errorf("solve: vector lengths %d, %d for a %d×%d matrix", len(x), len(b), f.n, f.n)
	}
	if f.n == 0 {
		return nil
	}
	for i, v := range b {
		f.y[i] = v * f.rs[i]
	}
	f.solveScaled(f.y, f.w)
	for k, j := range f.q {
		x[j] = f.w[k] * f.cs[j]
	}
	return nil
}

// solveScaled solves A'·z = y for z in step order (z[k] is unknown q[k])
// into w; y is overwritten.
func (f *SparseLU) solveScaled(y, w []float64) {
	n := f.n
	for k := 0; k < n; k++ {
		yk := y[f.prow[k]]
		w[k] = yk
		if yk == 0 {
			continue
		}
		for p := f.lp[k]; p < f.lp[k+1]; p++ {
			y[f.li[p]] -= f.lx[p] * yk
		}
	}
	for k := n - 1; k >= 0; k-- {
		w[k] /= f.ud[k]
		if wk := w[k]; wk != 0 {
			for p := f.up[k]; p < f.up[k+1]; p++ {
				w[f.ui[p]] -= f.ux[p] * wk
			}
		}
	}
}

// solveScaledT solves A'ᵀ·y = c, c given by unknown (c[j] for unknown j),
// into y by original row; v is work space.
func (f *SparseLU) solveScaledT(c, y, v []float64) {
	n := f.n
	for k := 0; k < n; k++ {
		s := c[f.q[k]]
		for p := f.up[k]; p < f.up[k+1]; p++ {
			s -= f.ux[p] * v[f.ui[p]]
		}
		v[k] = s / f.ud[k]
	}
	for k := n - 1; k >= 0; k-- {
		s := v[k]
		for p := f.lp[k]; p < f.lp[k+1]; p++ {
			s -= f.lx[p] * v[f.pinv[f.li[p]]]
		}
		v[k] = s
	}
	for k := 0; k < n; k++ {
		y[f.prow[k]] = v[k]
	}
}

// condest estimates the 1-norm condition number of the equilibrated
// matrix, ‖A'‖₁·‖A'⁻¹‖₁, with Hager's method in Higham's form (at most
// five iterations, and Higham's alternative vector as a safeguard).
func (f *SparseLU) condest() float64 {
	n := f.n
	norm := 0.0
	for k := 0; k < n; k++ {
		s := 0.0
		for p := f.ap[k]; p < f.ap[k+1]; p++ {
			s += math.Abs(f.ax[p])
		}
		norm = math.Max(norm, s)
	}
	// inv applies A'⁻¹ to a vector by row into out by unknown.
	tmp := make([]float64, n)
	z := make([]float64, n)
	inv := func(in, out []float64) {
		copy(tmp, in)
		f.solveScaled(tmp, z)
		for k, j := range f.q {
			out[j] = z[k]
		}
	}
	xv := make([]float64, n)
	yv := make([]float64, n)
	sg := make([]float64, n)
	zt := make([]float64, n)
	for i := range xv {
		xv[i] = 1 / float64(n)
	}
	est := 0.0
	last := -1
	for it := 0; it < 5; it++ {
		inv(xv, yv)
		s := 0.0
		for _, v := range yv {
			s += math.Abs(v)
		}
		if math.IsNaN(s) || math.IsInf(s, 0) {
			return math.Inf(1)
		}
		if it > 0 && s <= est {
			break
		}
		est = s
		for i, v := range yv {
			sg[i] = 1
			if v < 0 {
				sg[i] = -1
			}
		}
		f.solveScaledT(sg, zt, z)
		j, zmax, ztx := 0, -1.0, 0.0
		for i, v := range zt {
			ztx += v * xv[i]
			if a := math.Abs(v); a > zmax {
				zmax, j = a, i
			}
		}
		if it > 0 && (zmax <= ztx || j == last) {
			break
		}
		last = j
		for i := range xv {
			xv[i] = 0
		}
		xv[j] = 1
	}
	// Higham's alternative: x_i = (-1)^i (1 + i/(n-1)).
	for i := range xv {
		s := 1.0
		if i%2 == 1 {
			s = -1
		}
		d := 1.0
		if n > 1 {
			d = 1 + float64(i)/float64(n-1)
		}
		xv[i] = s * d
	}
	inv(xv, yv)
	s := 0.0
	for _, v := range yv {
		s += math.Abs(v)
	}
	est = math.Max(est, 2*s/(3*float64(n)))
	return norm * est
}

// SolveSparse solves A·x = b for a right-hand side with few nonzeros (b
// holds values by row, rows lists where they may be nonzero) and returns
// the unknowns it set: x is zero except at them. The work is in
// proportion to the entries of L and U the solution reaches (Gilbert &
// Peierls 1988: the nonzeros of a triangular solve with a sparse right-
// hand side are the reach of its pattern), pruned where a value is
// exactly zero, instead of in proportion to the whole factorisation. x
// and b have length n; b is consumed (left zero).
func (f *SparseLU) SolveSparse(x, b []float64, rows []int) ([]int, error) {
	if !f.ok {
		return nil, fmt.Errorf("solve without a successful factorisation")
	}
	if len(x) != f.n || len(b) != f.n {
		return nil, fmt.Errorf("solve: vector lengths %d, %d for a %d×%d matrix", len(x), len(b), f.n, f.n)
	}
	if len(f.ys) != f.n {
		f.ys, f.ws = make([]float64, f.n), make([]float64, f.n)
	}
	y, w := f.ys, f.ws // kept all zero between calls
	// Forward: steps in increasing order, a step queued when its row
	// becomes nonzero.
	lo := f.heap[:0]
	for _, i := range rows {
		if i < 0 || i >= f.n {
			continue
		}
		y[i] += b[i] * f.rs[i]
		b[i] = 0
		if k := f.pinv[i]; !f.inq[k] {
			f.inq[k] = true
			lo.push(k)
		}
	}
	touched := f.touched[:0]
	for lo.len() > 0 {
		k := lo.pop()
		f.inq[k] = false
		r := f.prow[k]
		yk := y[r]
		y[r] = 0
		w[k] = yk
		touched = append(touched, k)
		if yk == 0 {
			continue
		}
		for p := f.lp[k]; p < f.lp[k+1]; p++ {
			i := f.li[p]
			y[i] -= f.lx[p] * yk
			if s := f.pinv[i]; !f.inq[s] {
				f.inq[s] = true
				lo.push(s)
			}
		}
	}
	// Backward: steps in decreasing order.
	hi := lo[:0]
	for _, k := range touched {
		if w[k] != 0 && !f.inq[k] {
			f.inq[k] = true
			hi.push(-k)
		}
	}
	var set []int
	for hi.len() > 0 {
		k := -hi.pop()
		f.inq[k] = false
		wk := w[k] / f.ud[k]
		w[k] = 0
		j := f.q[k]
		x[j] = wk * f.cs[j]
		set = append(set, j)
		if wk == 0 {
			continue
		}
		for p := f.up[k]; p < f.up[k+1]; p++ {
			J := f.ui[p]
			w[J] -= f.ux[p] * wk
			if !f.inq[J] {
				f.inq[J] = true
				hi.push(-J)
			}
		}
	}
	for _, k := range touched {
		w[k] = 0
	}
	f.heap, f.touched = hi, touched
	return set, nil
}

// minHeap is a binary min-heap of ints.
type minHeap []int

func (h *minHeap) len() int { return len(*h) }

func (h *minHeap) push(v int) {
	*h = append(*h, v)
	a := *h
	for i := len(a) - 1; i > 0; {
		p := (i - 1) / 2
		if a[p] <= a[i] {
			break
		}
		a[p], a[i] = a[i], a[p]
		i = p
	}
}

func (h *minHeap) pop() int {
	a := *h
	v := a[0]
	n := len(a) - 1
	a[0] = a[n]
	a = a[:n]
	for i := 0; ; {
		l, r, m := 2*i+1, 2*i+2, i
		if l < n && a[l] < a[m] {
			m = l
		}
		if r < n && a[r] < a[m] {
			m = r
		}
		if m == i {
			break
		}
		a[m], a[i] = a[i], a[m]
		i = m
	}
	*h = a
	return v
}
