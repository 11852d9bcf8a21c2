package solve

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// LinearSolver assembles and solves the square linear system A·x = b of
// one Newton step. The MNA assembly only calls Clear and Add, so a sparse
// implementation can record the pattern from them and reuse its ordering
// from one step (and one solve) to the next.
type LinearSolver interface {
	// Clear sets the matrix to the n×n zero matrix.
	Clear(n int)
	// Add adds v to the element at row i, column j (0 ≤ i, j < n).
	Add(i, j int, v float64)
	// Factor factors the assembled matrix. It returns a *SingularError if
	// the matrix is singular or too ill-conditioned to solve.
	Factor() error
	// Solve sets x to the solution of A·x = b with the last factorisation.
	// x and b have length n and may not overlap.
	Solve(x, b []float64) error
}

// MaxCondition is the largest condition-number estimate, after row
// equilibration, that DenseLU accepts: beyond it no digit of the solution
// can be trusted (gonum's mat.ConditionTolerance).
const MaxCondition = mat.ConditionTolerance

// SingularError reports a matrix that cannot be factored usefully.
type SingularError struct {
	// Cond is the estimated condition number (+Inf when a pivot is zero).
	Cond float64
	// Index is the unknown with the smallest pivot: the one least
	// determined by the equations, or −1 if unknown.
	Index int
	// Name names Index ("V(out)", "I(V1)") when the solver knows it.
	Name string
}

func (e *SingularError) Error() string {
	what := "the circuit equations are singular"
	if !math.IsInf(e.Cond, 1) {
		what = fmt.Sprintf("the circuit equations are too ill-conditioned to solve (condition number %.3g)", e.Cond)
	}
	if e.Name != "" {
		what += "; least determined unknown: " + e.Name
	}
	return what
}

// DenseLU is a LinearSolver with a dense matrix and gonum's LU
// factorisation with partial pivoting. The matrix is equilibrated before
// factoring, A' = R·A·C with R and C diagonal: each row divided by its
// largest magnitude, then each column likewise, so that node rows in
// siemens, branch rows of unit coefficients and currents of any size are
// compared fairly in the condition estimate. The zero value is ready to
// use.
type DenseLU struct {
	n     int
	a     *mat.Dense
	lu    mat.LU
	scale []float64 // R
	col   []float64 // C
	bs    *mat.VecDense
	xs    *mat.VecDense
	ok    bool
}

// NewDenseLU returns an empty DenseLU.
func NewDenseLU() *DenseLU { return &DenseLU{} }

// Clear implements LinearSolver.
func (d *DenseLU) Clear(n int) {
	d.ok = false
	if d.a == nil || d.n != n {
		d.n = n
		d.scale = make([]float64, n)
		d.col = make([]float64, n)
		if n == 0 {
			d.a, d.bs, d.xs = nil, nil, nil
			return
		}
		d.a = mat.NewDense(n, n, nil)
		d.bs = mat.NewVecDense(n, nil)
		d.xs = mat.NewVecDense(n, nil)
		return
	}
	d.a.Zero()
}

// Add implements LinearSolver. Indices out of range are ignored.
func (d *DenseLU) Add(i, j int, v float64) {
	if i < 0 || j < 0 || i >= d.n || j >= d.n {
		return
	}
	d.a.Set(i, j, d.a.At(i, j)+v)
}

// Factor implements LinearSolver.
func (d *DenseLU) Factor() error {
	d.ok = false
	if d.n == 0 {
		d.ok = true
		return nil
	}
	// Equilibrate on the raw row-major storage: this runs at every Newton
	// iteration, and At/Set with their bounds checks cost as much as the
	// factorisation itself on small systems.
	raw := d.a.RawMatrix()
	for i := 0; i < d.n; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+d.n]
		m := 0.0
		for _, v := range row {
			if v < 0 {
				v = -v
			}
			if v > m || v != v { // v != v: NaN
				m = v
			}
		}
		if m == 0 || math.IsNaN(m) || math.IsInf(m, 0) {
			return &SingularError{Cond: math.Inf(1), Index: i}
		}
		d.scale[i] = 1 / m
		for j := range row {
			row[j] /= m
		}
	}
	for j := 0; j < d.n; j++ {
		d.col[j] = 0
	}
	for i := 0; i < d.n; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+d.n]
		for j, v := range row {
			if v < 0 {
				v = -v
			}
			if v > d.col[j] {
				d.col[j] = v
			}
		}
	}
	for j := 0; j < d.n; j++ {
		if d.col[j] == 0 {
			return &SingularError{Cond: math.Inf(1), Index: j}
		}
	}
	for i := 0; i < d.n; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+d.n]
		for j := range row {
			row[j] /= d.col[j]
		}
	}
	for j := 0; j < d.n; j++ {
		d.col[j] = 1 / d.col[j]
	}
	d.lu.Factorize(d.a)
	cond := d.lu.Cond()
	if cond > MaxCondition || math.IsNaN(cond) {
		return &SingularError{Cond: cond, Index: d.weakest()}
	}
	d.ok = true
	return nil
}

// weakest returns the column of U with the smallest diagonal magnitude.
// Partial pivoting permutes rows only, so column j is unknown j.
func (d *DenseLU) weakest() int {
	var u mat.TriDense
	d.lu.UTo(&u)
	best, idx := math.Inf(1), -1
	for j := 0; j < d.n; j++ {
		if v := math.Abs(u.At(j, j)); v < best {
			best, idx = v, j
		}
	}
	return idx
}

// Solve implements LinearSolver.
func (d *DenseLU) Solve(x, b []float64) error {
	if !d.ok {
		return fmt.Errorf("solve without a successful factorisation")
	}
	if len(x) != d.n || len(b) != d.n {
		return fmt.Errorf("solve: vector lengths %d, %d for a %d×%d matrix", len(x), len(b), d.n, d.n)
	}
	if d.n == 0 {
		return nil
	}
	for i, v := range b {
		d.bs.SetVec(i, v*d.scale[i])
	}
	if err := d.lu.SolveVecTo(d.xs, false, d.bs); err != nil {
		return &SingularError{Cond: d.lu.Cond(), Index: -1}
	}
	for i := range x {
		x[i] = d.xs.AtVec(i) * d.col[i]
	}
	return nil
}
