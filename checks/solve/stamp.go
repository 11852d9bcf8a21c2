package solve

import "math"

// sink receives MNA stamps: matrix entries and right-hand-side terms.
// Index −1 is ground and is dropped.
type sink interface {
	a(i, j int, v float64)
	b(i int, v float64)
	// mag records the magnitude of terms already summed into a
	// right-hand-side value (for the residual's rounding floor).
	mag(i int, v float64)
}

// matrixSink assembles into a LinearSolver and a right-hand side.
type matrixSink struct {
	lin LinearSolver
	rhs []float64
}

func (m *matrixSink) a(i, j int, v float64) {
	if i >= 0 && j >= 0 {
		m.lin.Add(i, j, v)
	}
}

func (m *matrixSink) b(i int, v float64) {
	if i >= 0 {
		m.rhs[i] += v
	}
}

func (m *matrixSink) mag(int, float64) {}

// residualSink evaluates r = A·x − b row by row, and the magnitude of the
// terms of each row (for the rounding floor of the residual test).
type residualSink struct {
	x, r, m []float64
}

func (s *residualSink) a(i, j int, v float64) {
	if i >= 0 && j >= 0 {
		t := v * s.x[j]
		s.r[i] += t
		s.m[i] += math.Abs(t)
	}
}

func (s *residualSink) b(i int, v float64) {
	if i >= 0 {
		s.r[i] -= v
		s.m[i] += math.Abs(v)
	}
}

func (s *residualSink) mag(i int, v float64) {
	if i >= 0 {
		s.m[i] += v
	}
}

// conductance stamps g between nodes p and n.
func conductance(k sink, p, n int, g float64) {
	k.a(p, p, g)
	k.a(n, n, g)
	k.a(p, n, -g)
	k.a(n, p, -g)
}

// branch stamps a branch current unknown br flowing from p through the
// element to n: +i in KCL row p, −i in row n, and V(p) − V(n) in the branch
// row (the caller adds the rest of the branch equation).
func branch(k sink, p, n, br int) {
	k.a(p, br, 1)
	k.a(n, br, -1)
	k.a(br, p, 1)
	k.a(br, n, -1)
}

// stampLinear stamps every linear element, the series resistances of the
// devices and the GMIN-stepping shunts. Independent sources are scaled by
// w.lambda.
func (w *work) stampLinear(k sink) {
	for _, el := range w.s.elems {
		n := el.nodes
		off := uint8(0)
		if w.off != nil {
			off = w.off[el.idx]
		}
		if off == offRemoved {
			// Held by leaks; a removed resistor keeps its place in the
			// pattern with zeros.
			for t, p := range n {
				if t < 3 {
					k.a(p, p, 1/LeakR)
				}
			}
			if el.kind == 'R' {
				conductance(k, n[0], n[1], 0)
			}
			continue
		}
		if el.poly != nil {
			continue // nonlinear: stampPoly
		}
		switch el.kind {
		case 'R':
			if el.short {
				branch(k, n[0], n[1], el.br)
			} else {
				conductance(k, n[0], n[1], 1/el.value)
			}
		case 'L':
			branch(k, n[0], n[1], el.br)
		case 'V':
			// An opened source is a LeakR resistor in its place and a
			// branch current of zero; the entries of both forms are
			// stamped either way (as zeros), so the pattern is the same.
			if off == offOpen {
				k.a(n[0], el.br, 0)
				k.a(n[1], el.br, 0)
				k.a(el.br, n[0], 0)
				k.a(el.br, n[1], 0)
				k.a(el.br, el.br, 1)
				conductance(k, n[0], n[1], 1/LeakR)
				break
			}
			branch(k, n[0], n[1], el.br)
			k.a(el.br, el.br, 0)
			conductance(k, n[0], n[1], 0)
			k.b(el.br, w.lambda*el.value)
		case 'I':
			if off == offOpen {
				break
			}
			// SPICE: the source current flows from n+ through the source to n−.
			k.b(n[0], -w.lambda*el.value)
			k.b(n[1], w.lambda*el.value)
		case 'G':
			// Current gm·(V(in+) − V(in−)) from out+ through the source to out−.
			g := el.value
			k.a(n[0], n[2], g)
			k.a(n[0], n[3], -g)
			k.a(n[1], n[2], -g)
			k.a(n[1], n[3], g)
		case 'E':
			// V(out+) − V(out−) − mu·(V(in+) − V(in−)) = 0.
			branch(k, n[0], n[1], el.br)
			k.a(el.br, n[2], -el.value)
			k.a(el.br, n[3], el.value)
		case 'F':
			// Current beta·I(ctl) from out+ through the source to out−.
			k.a(n[0], el.ctl, el.value)
			k.a(n[1], el.ctl, -el.value)
		case 'H':
			// V(out+) − V(out−) − r·I(ctl) = 0.
			branch(k, n[0], n[1], el.br)
			k.a(el.br, el.ctl, -el.value)
		}
	}
	for i, el := range w.s.diodes {
		if r := w.dio[i].Scaled.RS; r > 0 {
			conductance(k, el.nodes[0], el.inner[0], 1/r)
		}
	}
	for i, el := range w.s.bjts {
		b := w.bjt[i]
		p := &b.Scaled
		for t, r := range [3]float64{p.RC, p.RB, p.RE} {
			if t == 1 && b.Params.VariableRB() {
				continue // bias-dependent: stamped with the device (baseResistor)
			}
			if r > 0 {
				conductance(k, el.nodes[t], el.inner[t], 1/r)
			}
		}
	}
	for i, v := range w.inject {
		k.b(i, w.lambda*v)
	}
	for _, i := range w.s.leaks {
		k.a(i, i, w.st.gmin)
	}
	// The shunts are stamped (as zeros) in every solve, so that the
	// matrix pattern does not depend on whether GMIN stepping ran.
	for i := 0; i < w.s.nNodes; i++ {
		k.a(i, i, w.gshunt)
		if w.pull != nil && w.gshunt > 0 {
			// A pseudo-transient step: the shunt pulls towards the
			// previous state (see stability.go).
			k.b(i, w.gshunt*w.pull[i])
		}
	}
}

// volt returns the voltage of node i (−1 = ground) in x.
func volt(x []float64, i int) float64 {
	if i < 0 {
		return 0
	}
	return x[i]
}

// junctions returns the internal junction voltages of transistor j in x.
func (w *work) junctions(j int, x []float64) (vbe, vbc float64) {
	in := w.s.bjts[j].inner
	vb := volt(x, in[1])
	return vb - volt(x, in[2]), vb - volt(x, in[0])
}

// diodeV returns the internal junction voltage of diode j in x.
func (w *work) diodeV(j int, x []float64) float64 {
	el := w.s.diodes[j]
	return volt(x, el.inner[0]) - volt(x, el.nodes[1])
}

// stampDevices stamps the devices linearised at their last evaluation
// (w.evB, w.evD at w.jb, w.jd) when lin is true; when lin is false it
// stamps only the evaluated currents, for the residual at x, together with
// the rounding scale of each device current: the magnitude of its terms
// plus |∂i/∂v|·|v|, the current that one rounding of the node voltages
// moves.
func (w *work) stampDevices(k sink, x []float64, lin bool) {
	for j, el := range w.s.bjts {
		ev := &w.evB[j]
		vbe, vbc := w.jb[j][0], w.jb[j][1]
		c, b, e := el.inner[0], el.inner[1], el.inner[2]
		t := terminals{c, b, e}
		bjtRow(k, c, 1, t, ev.IC, ev.DICdVBE, ev.DICdVBC, vbe, vbc, lin)
		bjtRow(k, b, 1, t, ev.IB, ev.DIBdVBE, ev.DIBdVBC, vbe, vbc, lin)
		// The emitter row carries −(IC + IB).
		bjtRow(k, e, -1, t, ev.IC+ev.IB, ev.DICdVBE+ev.DIBdVBE, ev.DICdVBC+ev.DIBdVBC, vbe, vbc, lin)
		if !lin {
			g := math.Abs(ev.DICdVBE) + math.Abs(ev.DICdVBC) + math.Abs(ev.DIBdVBE) + math.Abs(ev.DIBdVBC)
			m := ev.Mag + g*(math.Abs(volt(x, c))+math.Abs(volt(x, b))+math.Abs(volt(x, e)))
			for _, i := range [3]int{c, b, e} {
				k.mag(i, m)
			}
		}
		if w.bjt[j].Params.VariableRB() {
			w.baseResistor(k, j, x, lin)
		}
	}
	for j, el := range w.s.diodes {
		i, g := w.evD[j][0], w.evD[j][1]
		a, c := el.inner[0], el.nodes[1]
		if lin {
			conductance(k, a, c, g)
		}
		ieq := i
		if lin {
			ieq -= g * w.jd[j]
		}
		k.b(a, -ieq)
		k.b(c, ieq)
		if !lin {
			m := w.dio[j].Scaled.IS + g*(math.Abs(volt(x, a))+math.Abs(volt(x, c)))
			k.mag(a, m)
			k.mag(c, m)
		}
	}
}

// terminals are the (internal) collector, base and emitter unknowns.
type terminals struct{ c, b, e int }

// bjtRow stamps into KCL row `row` the current sign·I, with I(vbe, vbc)
// linearised by its derivatives dbe, dbc about (vbe0, vbc0), where vbe =
// V(b) − V(e) and vbc = V(b) − V(c). Without lin only sign·I is stamped.
func bjtRow(k sink, row int, sign float64, t terminals, i, dbe, dbc, vbe0, vbc0 float64, lin bool) {
	ieq := i
	if lin {
		k.a(row, t.b, sign*(dbe+dbc))
		k.a(row, t.e, -sign*dbe)
		k.a(row, t.c, -sign*dbc)
		ieq -= dbe*vbe0 + dbc*vbc0
	}
	k.b(row, -sign*ieq)
}

// baseResistor stamps the bias-dependent base resistance of transistor j
// (device.BJT.Eval: rbb from qb, or the IRB law from IB): the current
// i = (V(b) − V(b'))/rbb(vbe', vbc') from the base terminal b to the
// internal base b', linearised as
//
//	i ≈ gx·u + u0·(∂gx/∂vbe·(vbe − vbe0) + ∂gx/∂vbc·(vbc − vbc0)),   gx = 1/rbb,
//
// with u = V(b) − V(b') and ∂gx/∂v = −gx²·∂rbb/∂v, the junction voltages
// taken at their last evaluation. Without lin only i is stamped, with its
// rounding scale.
func (w *work) baseResistor(k sink, j int, x []float64, lin bool) {
	el, ev := w.s.bjts[j], &w.evB[j]
	bx, bi := el.nodes[1], el.inner[1]
	c, e := el.inner[0], el.inner[2]
	u := volt(x, bx) - volt(x, bi)
	gx := 1 / ev.RBB
	dbe, dbc := -gx*gx*ev.DRBBdVBE, -gx*gx*ev.DRBBdVBC
	i := gx * u
	ieq := i
	if lin {
		conductance(k, bx, bi, gx)
		// u0·∂gx/∂v terms: vbe = V(b') − V(e'), vbc = V(b') − V(c').
		for _, r := range [2]struct {
			row  int
			sign float64
		}{{bx, 1}, {bi, -1}} {
			k.a(r.row, bi, r.sign*u*(dbe+dbc))
			k.a(r.row, e, -r.sign*u*dbe)
			k.a(r.row, c, -r.sign*u*dbc)
		}
		vbe0, vbc0 := w.jb[j][0], w.jb[j][1]
		ieq = -u * (dbe*vbe0 + dbc*vbc0)
	}
	k.b(bx, -ieq)
	k.b(bi, ieq)
	if !lin {
		m := math.Abs(i) + gx*(math.Abs(volt(x, bx))+math.Abs(volt(x, bi)))
		k.mag(bx, m)
		k.mag(bi, m)
	}
}
