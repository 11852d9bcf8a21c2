package checks

// This file makes the Monte Carlo runs. Each run draws every resistor and
// every rail (a DC voltage source that is not a drive) within its
// tolerance t:
//
//	uniform: value * (1 + t*u),       u uniform on [-1, 1]
//	normal:  value * (1 + t*z/3),     z standard normal, |z| <= 3
//
// so that the tolerance is the 3-sigma limit of the normal distribution
// (common practice), truncated there: a part outside its tolerance is
// rejected by its maker. hFE and temperature are not drawn; they are
// corners. Runs are at the nominal scenario, solved like the nominal case.
//
// Run i (1-based) draws from a PCG generator seeded with (Seed, i), in
// netlist order of the elements, so a run's values depend only on the seed
// and the run number: the same seed gives the same bits whatever the
// number of workers and whatever order they finish in.

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/biaslint/biaslint/netlist"
)

// Distribution is the distribution of Monte Carlo draws.
type Distribution string

// Distributions.
const (
	Uniform Distribution = "uniform"
	Normal  Distribution = "normal"
)

// MaxMonteCarlo bounds the number of Monte Carlo runs.
const MaxMonteCarlo = 1000000

// monteCarlo lists the runs.
func (a *analyzer) monteCarlo(nominal caseOut) []caseSpec {
	var els []*netlist.Element
	var tol []float64
	for _, el := range a.c.Elements {
		switch {
		case el.Kind == 'R' && len(el.Nodes) == 2 && el.Value != 0:
			els, tol = append(els, el), append(tol, a.tolerance(el, a.opt.Tolerances.Resistor))
		case el.Kind == 'V' && !isDriveSource(el, a.board) && el.Source != nil && el.Source.DC != 0:
			els, tol = append(els, el), append(tol, a.tolerance(el, a.opt.Tolerances.Supply))
		}
	}
	n := a.opt.MonteCarlo
	out := make([]caseSpec, 0, n)
	for i := 1; i <= n; i++ {
		rng := rand.New(rand.NewPCG(a.opt.Seed, uint64(i)))
		sp := caseSpec{scenario: "nominal", corner: fmt.Sprintf("monte carlo run %d", i), kind: KindMonteCarlo,
			run: i, ambient: a.ambient, temp: a.temp, thermal: a.opt.Thermal, guess: 0, group: -1}
		for k, el := range els {
			x := a.draw(rng)
			key := netlist.Key(el.Name)
			sp.set = append(sp.set, setting{key, a.nominal[key] * (1 + tol[k]*x)})
		}
		out = append(out, sp)
	}
	return out
}

// draw returns one relative deviation in [-1, 1].
func (a *analyzer) draw(rng *rand.Rand) float64 {
	if a.opt.Distribution == Normal {
		// Bounded: the chance of 64 draws beyond 3 sigma is below 1e-150.
		for i := 0; i < 64; i++ {
			if z := rng.NormFloat64(); math.Abs(z) <= 3 {
				return z / 3
			}
		}
		return 0
	}
	return 2*rng.Float64() - 1
}
