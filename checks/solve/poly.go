package solve

import (
	"math"

	"github.com/biaslint/biaslint/netlist"
)

// This file stamps the SPICE2 polynomial controlled sources (POLY(n) on E,
// F, G and H). Their output is a nonlinear function of the controlling
// values,
//
//	f(x) = Σ_k p_k · Π_{i ∈ T_k} x_i        (terms T_k: netlist.PolyTerms)
//
// so, like a junction, each is linearised about the present iterate x0 for
// Newton-Raphson: f(x) ≈ f(x0) + Σ_i ∂f/∂x_i · (x_i − x0_i), with the
// Jacobian ∂f/∂x_i = Σ_k p_k · Σ_{positions of i in T_k} Π_{other} x.

// polySource is a prepared polynomial.
type polySource struct {
	coef  []float64
	terms [][]int
	// ctl are the controlling unknowns: node pairs (E, G: ctl[2i] − ctl[2i+1],
	// −1 = ground) or branch currents (F, H: ctl[i]).
	ctl []int
	// x and df are scratch for the controlling values and the gradient,
	// suf for the partial products of one term.
	x, df, suf []float64
}

func newPolySource(e *netlist.Element) *polySource {
	n := e.PolyN
	return &polySource{coef: e.Poly, terms: netlist.PolyTerms(n, len(e.Poly)),
		x: make([]float64, n), df: make([]float64, n)}
}

// values sets p.x from the unknowns x.
func (p *polySource) values(kind netlist.Kind, x []float64) {
	for i := range p.x {
		if kind == 'E' || kind == 'G' {
			p.x[i] = volt(x, p.ctl[2*i]) - volt(x, p.ctl[2*i+1])
		} else {
			p.x[i] = x[p.ctl[i]]
		}
	}
}

// eval returns f(p.x) and leaves ∂f/∂x_i in p.df, and the sum of the
// magnitudes of the terms (for the residual's rounding floor).
func (p *polySource) eval() (f, mag float64) {
	for i := range p.df {
		p.df[i] = 0
	}
	for k, t := range p.terms {
		c := p.coef[k]
		// ∂/∂x_i of c·Π x: for each position j, c times the product of
		// the others, from the products before j (pre) and after j
		// (suffix, in p.suf), in time linear in the degree.
		if cap(p.suf) < len(t)+1 {
			p.suf = make([]float64, len(t)+1)
		}
		suf := p.suf[:len(t)+1]
		suf[len(t)] = 1
		for j := len(t) - 1; j >= 0; j-- {
			suf[j] = suf[j+1] * p.x[t[j]]
		}
		prod := c * suf[0]
		f += prod
		mag += math.Abs(prod)
		pre := c
		for j, i := range t {
			p.df[i] += pre * suf[j+1]
			pre *= p.x[i]
		}
	}
	return f, mag
}

// stampPoly stamps every polynomial source at x: linearised (lin) for a
// Newton step, or its value at x for the residual.
func (w *work) stampPoly(k sink, x []float64, lin bool) {
	for _, el := range w.s.polys {
		p := el.poly
		p.values(el.kind, x)
		f, mag := p.eval()
		// Constant part of the linearisation: f(x0) − Σ ∂f/∂x_i · x0_i.
		c := f
		if lin {
			for i, g := range p.df {
				c -= g * p.x[i]
			}
		}
		n := el.nodes
		// stampIn adds Σ ∂f/∂x_i · x_i into row r with sign s.
		stampIn := func(r int, s float64) {
			for i, g := range p.df {
				if el.kind == 'E' || el.kind == 'G' {
					k.a(r, p.ctl[2*i], s*g)
					k.a(r, p.ctl[2*i+1], -s*g)
				} else {
					k.a(r, p.ctl[i], s*g)
				}
			}
		}
		switch el.kind {
		case 'E', 'H':
			// V(out+) − V(out−) − f(x) = 0.
			branch(k, n[0], n[1], el.br)
			if lin {
				stampIn(el.br, -1)
			}
			k.b(el.br, c)
			k.mag(el.br, mag)
		case 'G', 'F':
			// Current f(x) from out+ through the source to out−.
			if lin {
				stampIn(n[0], 1)
				stampIn(n[1], -1)
			}
			k.b(n[0], -c)
			k.b(n[1], c)
			k.mag(n[0], mag)
			k.mag(n[1], mag)
		}
	}
}
