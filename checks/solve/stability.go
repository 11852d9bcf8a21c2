package solve

// This file tests whether a DC operating point is stable and, when it is
// not, finds the stable states on either side of it.
//
// A DC solution says nothing about stability by itself: a cross-coupled
// latch has three, and the middle one (both transistors conducting) is a
// balance that any disturbance tips over. The test uses the simplest
// dynamic model that any real circuit refines: a capacitance C (1 F; the
// value does not matter) from every node, circuit and internal, to ground,
//
//	C·dx/dt = −F(x),
//
// with the branch rows (sources, inductors) algebraic. Near a solution x*
// a disturbance grows as exp(λt) for the roots λ of det(J + λ·C) = 0, J =
// ∂F/∂x at x*. As λ → +∞ the determinant takes the sign it has in a
// passive circuit, where every root is negative; when det J has the other
// sign, det(J + λ·C) changes sign on (0, ∞), so a real λ > 0 exists and the
// point is unstable whatever the node capacitances (the determinant test
// of M. M. Green and A. N. Willson, "How to identify unstable DC operating
// points", IEEE Trans. Circuits Syst. I 39(10), 1992; from memory). An
// even number of positive roots is not detected by the sign; a latch's
// middle state has one.
//
// The stable states are found by following the dynamics from the unstable
// point displaced by ±stateKick along its growing mode (the null vector of
// J + λ·C, by inverse iteration), with backward-Euler steps (a pseudo-
// transient: each step is a solve with every node pulled towards its
// previous voltage through C/h), the step h growing once the state has
// left the unstable point, then a plain solve from where it settled. When
// the steps cannot follow (a regenerative pair whose currents explode with
// the same capacitance on every node), every node is pulled through a
// shunt towards a point further out along the mode and the shunt is
// stepped down to zero (GMIN stepping towards that point). Every loop is
// bounded.

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"
)

// MaxStabilityUnknowns bounds the systems whose stability is tested: the
// test factors dense n×n matrices (two LU factorisations for a stable
// point; for an unstable one also an eigendecomposition, a few seconds at
// this size on the 2-core reference machine).
const MaxStabilityUnknowns = 600

// MethodTransient names a stable state reached by following the
// dynamics from an unstable operating point.
const MethodTransient Method = "pseudo-transient"

const (
	// stateKick is the displacement along the growing mode, V (largest
	// node).
	stateKick = 0.01
	// stateSteps bounds the backward-Euler steps of one side.
	stateSteps = 400
	// stateLeft is how far (largest node, V) the state must be from the
	// unstable point before the step grows.
	stateLeft = 0.05
)

// Stability is the result of the stability test of an operating point.
type Stability struct {
	// Tested is false when the system was too large to test
	// (MaxStabilityUnknowns).
	Tested bool
	// Unstable is true when the operating point has a real growing mode.
	Unstable bool
	// Rate is the growth rate λ of that mode with 1 F on every node, 1/s.
	Rate float64

	x, mode []float64
}

// detSign returns the sign of det(j + sigma·C), C the unit capacitance on
// the first nn unknowns (0 for a singular matrix).
func detSign(j *mat.Dense, sigma float64, nn int) float64 {
	m := mat.DenseCopyOf(j)
	for i := 0; i < nn; i++ {
		m.Set(i, i, m.At(i, i)+sigma)
	}
	var lu mat.LU
	lu.Factorize(m)
	_, sign := lu.LogDet()
	return sign
}

// Stability tests the operating point r of s, solved with opt (the same
// temperatures), for a real growing mode.
func (s *System) Stability(opt Options, r *Result) (Stability, error) {
	if s.n > MaxStabilityUnknowns || r == nil {
		return Stability{}, nil
	}
	w, err := s.newWork(opt)
	if err != nil {
		return Stability{}, err
	}
	x, _ := s.guess(r)
	if !w.newton(x, false, w.st.maxIter) {
		return Stability{}, fmt.Errorf("stability test: the operating point does not solve again from itself")
	}
	st := Stability{Tested: true, x: x}
	j := w.jacobian(x)
	nn := s.nNodes
	s0, sInf := detSign(j, 0, nn), detSign(j, bigShunt(j), nn)
	if s0 == 0 || sInf == 0 || s0 == sInf {
		return st, nil
	}
	st.Unstable = true
	st.Rate, st.mode = growingMode(j, nn)
	return st, nil
}

// growingMode returns the fastest real growing mode of C·dx/dt = −J·x: the
// largest real λ > 0 with (J + λ·C)·v = 0, and v scaled so that its
// largest node component is 1 in magnitude. The finite roots λ are −1/κ
// for the nonzero eigenvalues κ of K = J⁻¹·C (a standard eigenproblem;
// the zero eigenvalues of K belong to the algebraic branch rows). It
// returns 0, nil when J is singular or no such root is found.
func growingMode(j *mat.Dense, nn int) (float64, []float64) {
	n, _ := j.Dims()
	var lu mat.LU
	lu.Factorize(j)
	c := mat.NewDense(n, n, nil)
	for i := 0; i < nn; i++ {
		c.Set(i, i, 1)
	}
	k := mat.NewDense(n, n, nil)
	if err := lu.SolveTo(k, false, c); err != nil {
		var cond mat.Condition
		if !errors.As(err, &cond) {
			return 0, nil
		}
	}
	var eig mat.Eigen
	if !eig.Factorize(k, mat.EigenRight) {
		return 0, nil
	}
	vals := eig.Values(nil)
	best, at := 0.0, -1
	scale := 0.0
	for _, v := range vals {
		scale = math.Max(scale, cmplx.Abs(v))
	}
	for i, v := range vals {
		// A real negative κ: λ = −1/κ > 0.
		if real(v) < 0 && math.Abs(imag(v)) <= 1e-9*math.Abs(real(v)) && -real(v) > 1e-12*scale {
			if l := -1 / real(v); l > best {
				best, at = l, i
			}
		}
	}
	if at < 0 {
		return 0, nil
	}
	var vecs mat.CDense
	eig.VectorsTo(&vecs)
	mode := make([]float64, n)
	big := 0.0
	for i := 0; i < n; i++ {
		mode[i] = real(vecs.At(i, at))
		if i < nn {
			big = math.Max(big, math.Abs(mode[i]))
		}
	}
	if !(big > 0) {
		return 0, nil
	}
	for i := range mode {
		mode[i] /= big
	}
	return best, mode
}

// StableStates follows the dynamics from the unstable operating point of
// st (from Stability with the same opt) to either side and returns the
// distinct stable states reached, each a solved operating point of s whose
// Method is MethodTransient. A side that does not settle on a stable state
// is left out.
func (s *System) StableStates(opt Options, st Stability) ([]*Result, error) {
	if !st.Unstable || st.mode == nil {
		return nil, nil
	}
	var out []*Result
	var xs [][]float64
	for _, side := range []float64{1, -1} {
		w, err := s.newWork(opt)
		if err != nil {
			return nil, err
		}
		x := append([]float64(nil), st.x...)
		for i := range x {
			x[i] += side * stateKick * st.mode[i]
		}
		if !w.follow(x, st.x, st.mode, st.Rate) {
			continue
		}
		if far(x, st.x, s.nNodes) < stateKick {
			continue // fell back onto the unstable point
		}
		dup := false
		for _, y := range xs {
			dup = dup || far(x, y, s.nNodes) < 1e-3
		}
		if dup {
			continue
		}
		w.evaluate(x, true, false)
		r := s.verified(w, x, MethodTransient)
		if !r.Physical() {
			continue // a state only the continued exponentials allow
		}
		xs = append(xs, append([]float64(nil), x...))
		out = append(out, r)
	}
	return out, nil
}

// far returns the largest difference of the first nn entries of x and y.
func far(x, y []float64, nn int) float64 {
	d := 0.0
	for i := 0; i < nn; i++ {
		d = math.Max(d, math.Abs(x[i]-y[i]))
	}
	return d
}

// follow integrates C·dx/dt = −F(x) from x by backward-Euler steps until
// a plain solve from the state reached lands on a stable solution away from
// the unstable point x0, and leaves that solution in x. The first step is
// h = 0.5/rate, so the growing mode of x0 roughly doubles per step; a step
// whose solve fails is retried with a quarter of h (the growth rate rises
// with the junction currents), and once the state is stateLeft from x0
// the step doubles after each success and a plain solve is tried from it.
func (w *work) follow(x, x0, mode []float64, rate float64) bool {
	side := make([]float64, len(x))
	copy(side, x)
	defer func() { w.gshunt, w.pull = 0, nil }()
	h := 0.5 / rate
	pull := make([]float64, len(x))
	xn := make([]float64, len(x))
	for step := 0; step < stateSteps; step++ {
		copy(pull, x)
		copy(xn, x)
		w.gshunt, w.pull = 1/h, pull
		if !w.newton(xn, false, stepIter) {
			h /= 4
			if h*rate < 1e-15 {
				break
			}
			continue
		}
		copy(x, xn)
		if far(x, x0, w.s.nNodes) <= stateLeft {
			continue
		}
		h *= 2
		w.gshunt, w.pull = 0, nil
		copy(xn, x)
		if w.newton(xn, false, w.st.maxIter) && far(xn, x0, w.s.nNodes) > stateKick && w.stable(xn) {
			copy(x, xn)
			return true
		}
	}
	// The dynamics ran into currents the steps cannot follow (a
	// regenerative switch with the same capacitance on every node): pull
	// every node towards a point further out along the mode through a
	// shunt that is stepped down to zero (GMIN stepping towards that point
	// rather than towards ground), for a few distances.
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := 0; i < w.s.nNodes; i++ {
		lo, hi = math.Min(lo, x0[i]), math.Max(hi, x0[i])
	}
	lo, hi = math.Min(lo, 0), math.Max(hi, 0)
	sg := sideOf(side, x0, mode)
	target := make([]float64, len(x))
	for _, dist := range []float64{0.3, 1, 3, 10} {
		for i := range target {
			target[i] = x0[i] + sg*dist*mode[i]
			if i < w.s.nNodes {
				target[i] = math.Max(lo, math.Min(hi, target[i]))
			}
		}
		copy(xn, target)
		w.gshunt, w.pull = 0, target
		ok, _ := w.gminStepping(xn, false)
		w.pull = nil
		if ok && far(xn, x0, w.s.nNodes) > stateKick && w.stable(xn) {
			copy(x, xn)
			return true
		}
	}
	return false
}

// sideOf returns the sign of the projection of x − x0 on the mode.
func sideOf(x, x0, mode []float64) float64 {
	p := 0.0
	for i := range mode {
		p += (x[i] - x0[i]) * mode[i]
	}
	if p < 0 {
		return -1
	}
	return 1
}

// stable applies the determinant test to the solution x.
func (w *work) stable(x []float64) bool {
	j := w.jacobian(x)
	return detSign(j, 0, w.s.nNodes) == detSign(j, bigShunt(j), w.s.nNodes)
}

// bigShunt returns a node capacitance (times rate) that dominates every
// entry of j: det(j + bigShunt·C) has the sign of a passive circuit.
func bigShunt(j *mat.Dense) float64 {
	n, _ := j.Dims()
	big := 0.0
	for i := 0; i < n; i++ {
		for k := 0; k < n; k++ {
			big = math.Max(big, math.Abs(j.At(i, k)))
		}
	}
	return 1e3 * math.Max(big, 1)
}
