package device

import "math"

// This file tells whether an evaluation used the device equations as they
// are. Eval continues each junction exponential by its tangent beyond the
// argument maxExpArg (limExp), so that no iterate overflows; an operating
// point whose junctions sit beyond it satisfies the continued equations,
// not the device's, and is not physical: the real exponential law gives a
// current larger by exp(x − maxExpArg)/(1 + x − maxExpArg). A device
// equation added to Eval must add its exponent here.

// Exact reports whether Eval(vbe, vbc) evaluates every junction
// exponential exactly (each argument at most maxExpArg).
func (b *BJT) Exact(vbe, vbc float64) bool {
	sg := b.Polarity.Sign()
	ve, vc := sg*vbe, sg*vbc
	p := &b.Scaled
	ok := within(p.IS, ve, p.NF*b.VT) && within(p.IS, vc, p.NR*b.VT)
	return ok && within(p.ISE, ve, p.NE*b.VT) && within(p.ISC, vc, p.NC*b.VT)
}

// Exact reports whether Eval(vd) evaluates every exponential exactly.
func (d *Diode) Exact(vd float64) bool {
	p := &d.Scaled
	nvt := p.N * d.VT
	if !within(p.IS, vd, nvt) {
		return false
	}
	return math.IsInf(p.BV, 1) || p.IBV == 0 || -(vd+p.BV)/nvt <= maxExpArg
}

// ExcessCurrent is how much more current, A, the real exponential law
// gives than Eval's continuation for a junction of saturation current isat
// at voltage v with emission-scaled thermal voltage nvt: zero within the
// exact range, +Inf when it overflows.
func ExcessCurrent(isat, v, nvt float64) float64 {
	x := v / nvt
	if isat == 0 || x <= maxExpArg {
		return 0
	}
	e, _ := limExp(x)
	return isat * (math.Exp(x) - e)
}

// within reports whether the exponential of a junction of saturation
// current isat at voltage v is in the exact range.
func within(isat, v, nvt float64) bool { return isat == 0 || v/nvt <= maxExpArg }
