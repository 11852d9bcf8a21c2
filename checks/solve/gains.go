package solve

import (
	"fmt"

	"github.com/biaslint/biaslint/netlist"
)

// SolveGains solves the System at opt (as Solve) and returns, with the
// result, for every transistor in circuit order the change of its own
// dissipation P = VCE·IC + VBE·IB per kelvin when its device temperature
// alone moves by step kelvin (the others held), W/K: the first-order
// response about the solution,
//
//	J·Δx = −Δf,   ΔP = ΔVCE·IC + VCE·ΔIC + ΔVBE·IB + VBE·ΔIB,
//
// where J is the Jacobian at the solution, Δf the change of the
// transistor's terminal currents at fixed junction voltages when it is
// evaluated at T + step, and ΔIC, ΔIB that change plus the Jacobian's
// response to Δx: the derivative dP/dT by the direct method of
// sensitivity analysis (differentiating the converged circuit equations).
// All transistors share one factorisation of J, so the cost is one
// assembly and factorisation plus one sparse pair of triangular solves per
// transistor (SparseLU.SolveSparse: only what the change reaches), instead
// of a Newton solve each.
//
// The solution's own work space is used, internal nodes included.
func (s *System) SolveGains(opt Options, step float64) (*Result, []float64, error) {
	if !(step != 0) || !finite(step) {
		return nil, nil, fmt.Errorf("power gains: the step must be finite and non-zero")
	}
	r, w, x, err := s.solve(opt)
	if err != nil {
		return nil, nil, err
	}
	g, err := s.powerGains(w, x, step)
	s.release(w)
	return r, g, err
}

// powerGains computes SolveGains's gains at the converged x of w.
func (s *System) powerGains(w *work, x []float64, step float64) ([]float64, error) {
	w.evaluate(x, true, false)
	if err := w.assemble(x); err != nil {
		return nil, err
	}
	gains := make([]float64, len(s.bjts))
	dx := make([]float64, s.n)
	b := make([]float64, s.n)
	var rows, set []int
	for j, el := range s.bjts {
		if w.offB != nil && w.offB[j] {
			continue
		}
		hot := *w.bjt[j]
		if err := hot.SetTemp(hot.Temp + step); err != nil {
			return nil, err
		}
		vbe, vbc := w.jb[j][0], w.jb[j][1]
		ev0, ev1 := w.evB[j], hot.Eval(vbe, vbc)
		dic, dib := ev1.IC-ev0.IC, ev1.IB-ev0.IB
		// The device currents enter the KCL rows as +IC (c), +IB (b) and
		// −(IC + IB) (e); the step moves them by Δf, so J·Δx = −Δf.
		c, bb, e := el.inner[0], el.inner[1], el.inner[2]
		rows = rows[:0]
		add := func(i int, v float64) {
			if i >= 0 {
				b[i] += v
				rows = append(rows, i)
			}
		}
		add(c, -dic)
		add(bb, -dib)
		add(e, dic+dib)
		if err := solveFew(w.lin, dx, b, rows, &set); err != nil {
			return nil, err
		}
		// ΔP to first order: the currents move by their temperature
		// change plus the Jacobian times the junction-voltage change.
		el := s.bjts[j]
		dv := func(i int) float64 { return volt(dx, i) }
		dvbe, dvbc := dv(bb)-dv(e), dv(bb)-dv(c)
		dIC := dic + ev0.DICdVBE*dvbe + ev0.DICdVBC*dvbc
		dIB := dib + ev0.DIBdVBE*dvbe + ev0.DIBdVBC*dvbc
		vc, vb, ve := volt(x, el.nodes[0]), volt(x, el.nodes[1]), volt(x, el.nodes[2])
		dVC, dVB, dVE := dv(el.nodes[0]), dv(el.nodes[1]), dv(el.nodes[2])
		dP := (dVC-dVE)*ev0.IC + (vc-ve)*dIC + (dVB-dVE)*ev0.IB + (vb-ve)*dIB
		gains[j] = dP / step
		for _, i := range set {
			dx[i] = 0
		}
	}
	return gains, nil
}

// SolveResponse solves the System at opt (as Solve) and returns, with the
// result, the first-order change of every node voltage (by node key, V
// per A) when currents inject (A, by node name, into the node from
// ground) are added: Δx = J⁻¹·Δb with J the Jacobian at the solution, one
// triangular solve on its factorisation. It is the small-signal response
// (a Thevenin resistance is the response at the node to 1 A into it).
func (s *System) SolveResponse(opt Options, inject map[string]float64) (*Result, map[string]float64, error) {
	r, w, x, err := s.solve(opt)
	if err != nil {
		return nil, nil, err
	}
	w.evaluate(x, true, false)
	if err := w.assemble(x); err != nil {
		return nil, nil, err
	}
	b := make([]float64, s.n)
	for name, v := range inject {
		if i, ok := s.nodeIdx[netlist.Key(name)]; ok && !isGround(name) {
			b[i] += v
		}
	}
	dx := make([]float64, s.n)
	if err := w.lin.Solve(dx, b); err != nil {
		return nil, nil, err
	}
	out := make(map[string]float64, s.nExt+2)
	out[netlist.Ground], out["gnd"] = 0, 0
	for i, nm := range s.nodeNames {
		out[netlist.Key(nm)] = dx[i]
	}
	s.release(w)
	return r, out, nil
}

// solveFew solves A·x = b for a right-hand side that is zero but at rows,
// with a sparse triangular solve when lin is a SparseLU, else a full one.
// It leaves b zero and lists in *set the unknowns of x it set (the caller
// zeroes them before the next call).
func solveFew(lin LinearSolver, x, b []float64, rows []int, set *[]int) error {
	if sp, ok := lin.(*SparseLU); ok {
		got, err := sp.SolveSparse(x, b, rows)
		*set = got
		return err
	}
	if err := lin.Solve(x, b); err != nil {
		return err
	}
	for _, i := range rows {
		b[i] = 0
	}
	*set = (*set)[:0]
	for i := range x {
		*set = append(*set, i)
	}
	return nil
}

// Sensitivity is the first-order change of one transistor's collector and
// base currents (as BJTOp.IC and IB, A) per unit relative change of a
// resistor, d/d ln R.
type Sensitivity struct {
	// BJT is the transistor's index in circuit order (Result.BJTs).
	BJT      int
	DIC, DIB float64
}

// SolveSensitivities solves the System at opt (as Solve) and returns, with
// the result, for each named resistor the first-order changes of the
// transistor currents that a relative change of its resistance causes,
// by the direct method on the factorisation of the converged Jacobian:
// J·Δx = −∂F/∂ln R, whose right-hand side is the resistor's current at
// its two nodes, one sparse triangular solve pair each. Transistors a
// resistor does not reach are left out (their change is zero to first
// order). dv[i] holds, by node key, the node voltages resistor i moves
// (V per unit d ln R; the others are unchanged to first order). A name
// that is not a resistor of non-zero value is an error.
func (s *System) SolveSensitivities(opt Options, names []string) (r *Result, sens [][]Sensitivity, dv []map[string]float64, err error) {
	r, w, x, err := s.solve(opt)
	if err != nil {
		return nil, nil, nil, err
	}
	w.evaluate(x, true, false)
	if err := w.assemble(x); err != nil {
		return nil, nil, nil, err
	}
	// The transistors at each unknown (their internal terminals).
	at := make(map[int][]int, 3*len(s.bjts))
	for j, el := range s.bjts {
		for t, u := range el.inner {
			if u >= 0 && (t == 0 || u != el.inner[t-1]) {
				at[u] = append(at[u], j)
			}
		}
	}
	out := make([][]Sensitivity, len(names))
	dv = make([]map[string]float64, len(names))
	dx := make([]float64, s.n)
	b := make([]float64, s.n)
	seen := make([]int, len(s.bjts))
	var rows, set []int
	for i, name := range names {
		el := s.byKey[netlist.Key(name)]
		if el == nil || el.kind != 'R' || el.short {
			return nil, nil, nil, fmt.Errorf("sensitivities: %s is not a resistor of non-zero value", name)
		}
		p, n := el.nodes[0], el.nodes[1]
		cur := (volt(x, p) - volt(x, n)) / el.value
		rows = rows[:0]
		if p >= 0 {
			b[p] += cur
			rows = append(rows, p)
		}
		if n >= 0 {
			b[n] -= cur
			rows = append(rows, n)
		}
		if err := solveFew(w.lin, dx, b, rows, &set); err != nil {
			return nil, nil, nil, err
		}
		dv[i] = map[string]float64{}
		for _, u := range set {
			if u < s.nExt && dx[u] != 0 {
				dv[i][netlist.Key(s.nodeNames[u])] = dx[u]
			}
		}
		for _, u := range set {
			for _, j := range at[u] {
				if seen[j] == i+1 {
					continue
				}
				seen[j] = i + 1
				in := s.bjts[j].inner
				dvb := volt(dx, in[1])
				dvbe, dvbc := dvb-volt(dx, in[2]), dvb-volt(dx, in[0])
				ev := &w.evB[j]
				out[i] = append(out[i], Sensitivity{BJT: j,
					DIC: ev.DICdVBE*dvbe + ev.DICdVBC*dvbc,
					DIB: ev.DIBdVBE*dvbe + ev.DIBdVBC*dvbc})
			}
		}
		for _, u := range set {
			dx[u] = 0
		}
	}
	s.release(w)
	return r, out, dv, nil
}
