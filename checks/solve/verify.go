package solve

import (
	"fmt"
	"math"

	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
)

// This file checks a converged operating point against the device
// equations as they are. Newton converges on the KCL residual of the
// equations it solves, in which every junction exponential is continued by
// its tangent beyond a large argument (device.Exact). At such a point the
// real exponential law gives a current larger than the solved one by many
// orders of magnitude, so Kirchhoff's current law fails at the junction's
// nodes by that much: the point is not physical. It happens where nothing
// limits a junction's current: a stiff source straight on a base with no
// series resistance in the model (RB, RE, RS). With series resistances the
// junction voltage settles where the resistances drop the rest and the
// point is physical. A transistor junction held beyond the band gap is not
// physical either (aboveGap), though its exponential is still exact.

// Unphysical says why one device's operating point is not physical.
type Unphysical struct {
	Device string
	Pos    netlist.Pos
	// Why explains, naming the junction, its voltage and the current the
	// real exponential law would add there.
	Why string
}

// Physical reports whether every device's operating point satisfies the
// device equations as they are (see Unphysical).
func (r *Result) Physical() bool { return len(r.Unphysical) == 0 }

// verify fills r.Unphysical for the devices of the converged x whose
// junctions lie beyond the exact range of their exponentials.
func (s *System) verify(w *work, x []float64, r *Result) {
	for j, el := range s.bjts {
		b := w.bjt[j]
		vbe, vbc := w.junctions(j, x)
		sg, p := b.Polarity.Sign(), &b.Scaled
		if b.Exact(vbe, vbc) {
			if u, bad := aboveGap(el, sg*vbe, sg*vbc, p); bad {
				r.Unphysical = append(r.Unphysical, u)
			}
			continue
		}
		be := device.ExcessCurrent(p.IS, sg*vbe, p.NF*b.VT)/p.BF + device.ExcessCurrent(p.ISE, sg*vbe, p.NE*b.VT)
		bc := device.ExcessCurrent(p.IS, sg*vbc, p.NR*b.VT)/p.BR + device.ExcessCurrent(p.ISC, sg*vbc, p.NC*b.VT)
		junction, v, excess := "base-emitter", vbe, be
		if bc > be {
			junction, v, excess = "base-collector", vbc, bc
		}
		limits := "nothing in the circuit limits its current and the model has no series resistance (RB, RE, RC)"
		if p.RB > 0 || p.RE > 0 || p.RC > 0 {
			limits = "nothing in the circuit or the model's series resistances limits its current enough"
		}
		r.Unphysical = append(r.Unphysical, Unphysical{Device: el.e.Name, Pos: el.e.Pos,
			Why: fmt.Sprintf("%s: the %s junction is held at %s, where the exponential law of the device gives %s more base current than any solution can carry (Kirchhoff's current law fails at the base by that much); %s",
				el.e.Name, junction, units.Format(v, "V"), excessText(excess), limits)})
	}
	for j, el := range s.diodes {
		d := w.dio[j]
		vd := w.diodeV(j, x)
		if d.Exact(vd) {
			continue
		}
		excess := device.ExcessCurrent(d.Scaled.IS, vd, d.Scaled.N*d.VT)
		limits := "nothing in the circuit limits its current and the model has no series resistance (RS)"
		if d.Scaled.RS > 0 {
			limits = "nothing in the circuit limits its current enough"
		}
		r.Unphysical = append(r.Unphysical, Unphysical{Device: el.e.Name, Pos: el.e.Pos,
			Why: fmt.Sprintf("%s: the junction is held at %s, where the exponential law of the device gives %s more current than any solution can carry (Kirchhoff's current law fails at its terminals by that much); %s",
				el.e.Name, units.Format(vd, "V"), excessText(excess), limits)})
	}
}

// aboveGap reports a transistor whose internal junction is forward biased
// beyond its emission coefficient times the band gap EG (the B-E junction
// above NF·EG, the B-C one above NR·EG). A junction's built-in potential is
// below the band gap Eg/q (S. M. Sze, Physics of Semiconductor Devices,
// from memory), so there the barrier is gone and the exponential law of the
// model no longer describes it: the current is set by the bulk series
// resistances, which a model without RB, RE and RC leaves out. Such a point
// satisfies the model's equations at currents no device carries (1.8 V
// straight on the base of a small-signal part gives about 1e16 A).
func aboveGap(el *elem, ve, vc float64, p *device.BJTParams) (Unphysical, bool) {
	junction, v := "", 0.0
	switch {
	case ve > p.NF*p.EG:
		junction, v = "base-emitter", ve
	case vc > p.NR*p.EG:
		junction, v = "base-collector", vc
	default:
		return Unphysical{}, false
	}
	limits := "nothing in the circuit limits its current and the model has no series resistance (RB, RE, RC) to do so"
	if p.RB > 0 || p.RE > 0 || p.RC > 0 {
		limits = "nothing in the circuit or the model's series resistances limits its current enough"
	}
	return Unphysical{Device: el.e.Name, Pos: el.e.Pos,
		Why: fmt.Sprintf("%s: the %s junction is held %s forward, beyond the band gap (EG %s) up to which its exponential law holds; %s",
			el.e.Name, junction, units.Format(v, "V"), units.Format(p.EG, "V"), limits)}, true
}

// excessText prints a current that may be beyond float64.
func excessText(i float64) string {
	if math.IsInf(i, 0) || math.IsNaN(i) || i > 1e300 {
		return "more than 1e300 A"
	}
	return fmt.Sprintf("%.3g A", i)
}
