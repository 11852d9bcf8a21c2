package solve

import "gonum.org/v1/gonum/mat"

// denseSink assembles MNA stamps into a dense matrix and a right-hand side.
type denseSink struct {
	m   *mat.Dense
	rhs []float64
}

func (d *denseSink) a(i, j int, v float64) {
	if i >= 0 && j >= 0 {
		d.m.Set(i, j, d.m.At(i, j)+v)
	}
}

func (d *denseSink) b(i int, v float64) {
	if i >= 0 {
		d.rhs[i] += v
	}
}

func (d *denseSink) mag(int, float64) {}

// jacobian evaluates every device at x, without junction limiting, and
// returns the Jacobian ∂F/∂x of F(x) = A·x − b + i(x) there: the matrix of
// a Newton step taken at x.
func (w *work) jacobian(x []float64) *mat.Dense {
	n := w.s.n
	w.evaluate(x, true, false)
	d := &denseSink{m: mat.NewDense(n, n, nil), rhs: make([]float64, n)}
	w.stampLinear(d)
	w.stampDevices(d, x, true)
	w.stampPoly(d, x, true)
	return d.m
}

// residual evaluates every device at x, without junction limiting, and
// returns F(x) = A·x − b + i(x).
func (w *work) residual(x []float64) []float64 {
	n := w.s.n
	w.evaluate(x, true, false)
	r := &residualSink{x: x, r: make([]float64, n), m: make([]float64, n)}
	w.stampLinear(r)
	w.stampDevices(r, x, false)
	w.stampPoly(r, x, false)
	return r.r
}
