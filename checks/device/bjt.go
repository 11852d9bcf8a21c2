package device

import (
	"fmt"
	"math"

	"github.com/biaslint/biaslint/netlist"
)

// Polarity is the type of a bipolar transistor: NPN or PNP.
type Polarity int

// Transistor polarities. The value is the sign that maps terminal
// quantities to the forward-referenced (NPN-sense) quantities the model
// equations are written in.
const (
	NPN Polarity = 1
	PNP Polarity = -1
)

// Sign returns +1 for NPN and −1 for PNP.
func (p Polarity) Sign() float64 {
	if p == PNP {
		return -1
	}
	return 1
}

// String returns "npn" or "pnp".
func (p Polarity) String() string {
	if p == PNP {
		return "pnp"
	}
	return "npn"
}

// BJTParams are the DC Gummel-Poon parameters of a bipolar transistor model,
// in SI units with temperatures in °C. Infinite VAF, VAR, IKF and IKR are
// held as +Inf.
type BJTParams struct {
	IS   float64 // transport saturation current, A (default 1e-16)
	BF   float64 // ideal maximum forward beta (default 100)
	NF   float64 // forward emission coefficient (default 1)
	VAF  float64 // forward Early voltage, V (default none: +Inf)
	IKF  float64 // forward beta high-current knee, A (default none: +Inf)
	ISE  float64 // base-emitter leakage saturation current, A (default 0)
	NE   float64 // base-emitter leakage emission coefficient (default 1.5)
	BR   float64 // ideal maximum reverse beta (default 1)
	NR   float64 // reverse emission coefficient (default 1)
	VAR  float64 // reverse Early voltage, V (default none: +Inf)
	IKR  float64 // reverse beta high-current knee, A (default none: +Inf)
	ISC  float64 // base-collector leakage saturation current, A (default 0)
	NC   float64 // base-collector leakage emission coefficient (default 2)
	RB   float64 // zero-bias base resistance, ohm (default 0)
	RBM  float64 // minimum base resistance at high current, ohm (default RB)
	IRB  float64 // current where the base resistance falls halfway to RBM, A (default none: +Inf)
	RE   float64 // emitter resistance, ohm (default 0)
	RC   float64 // collector resistance, ohm (default 0)
	EG   float64 // energy gap for the temperature dependence of IS, eV (default 1.11)
	XTI  float64 // temperature exponent of IS (default 3)
	XTB  float64 // forward and reverse beta temperature exponent (default 0)
	TNOM float64 // temperature at which the parameters were measured, °C (default 27)
}

// DefaultBJTParams returns the SPICE-class defaults listed in BJTParams,
// with TNOM = 27 °C.
func DefaultBJTParams() BJTParams {
	inf := math.Inf(1)
	return BJTParams{
		IS: 1e-16, BF: 100, NF: 1, VAF: inf, IKF: inf, ISE: 0, NE: 1.5,
		BR: 1, NR: 1, VAR: inf, IKR: inf, ISC: 0, NC: 2, IRB: inf,
		EG: 1.11, XTI: 3, XTB: 0, TNOM: 27,
	}
}

// BJTParamsOf reads the DC Gummel-Poon parameters of m. Absent parameters
// take their defaults, with TNOM defaulting to tnom (°C); parameters the DC
// model does not use (capacitances, transit times, noise) are ignored. RBM
// defaults to RB (a constant base resistance). VAF, VAR, IKF, IKR and IRB
// of zero mean "none", as in SPICE. Out-of-range values are an error.
func BJTParamsOf(m *netlist.Model, tnom float64) (BJTParams, error) {
	d := DefaultBJTParams()
	r := &reader{m: m}
	p := BJTParams{
		IS:   r.positive("IS", d.IS),
		BF:   r.positive("BF", d.BF),
		NF:   r.positive("NF", d.NF),
		VAF:  r.infinite("VAF"),
		IKF:  r.infinite("IKF"),
		ISE:  r.nonNegative("ISE", d.ISE),
		NE:   r.positive("NE", d.NE),
		BR:   r.positive("BR", d.BR),
		NR:   r.positive("NR", d.NR),
		VAR:  r.infinite("VAR"),
		IKR:  r.infinite("IKR"),
		ISC:  r.nonNegative("ISC", d.ISC),
		NC:   r.positive("NC", d.NC),
		RB:   r.nonNegative("RB", d.RB),
		IRB:  r.infinite("IRB"),
		RE:   r.nonNegative("RE", d.RE),
		RC:   r.nonNegative("RC", d.RC),
		EG:   r.positive("EG", d.EG),
		XTI:  r.get("XTI", d.XTI),
		XTB:  r.get("XTB", d.XTB),
		TNOM: r.get("TNOM", tnom),
	}
	p.RBM = r.nonNegative("RBM", p.RB)
	return p, r.err
}

// VariableRB reports whether the base resistance depends on the bias: RB
// is set and RBM differs from it or IRB is given.
func (p *BJTParams) VariableRB() bool {
	return p.RB > 0 && (p.RBM != p.RB || !math.IsInf(p.IRB, 1))
}

// BJT is a Gummel-Poon bipolar transistor instance at one temperature.
type BJT struct {
	Polarity Polarity
	// Params are the model parameters as read, defaults filled in.
	Params BJTParams
	// Area is the area factor.
	Area float64
	// Temp is the device temperature, °C.
	Temp float64
	// Scaled are the parameters in effect at Temp and Area:
	//
	//	IS  = Area · IS · f1,            f1 = exp((T/Tnom − 1)·EG/vt(T)) · (T/Tnom)^XTI
	//	ISE = Area · ISE · f1^(1/NE) · (T/Tnom)^(−XTB)
	//	ISC = Area · ISC · f1^(1/NC) · (T/Tnom)^(−XTB)
	//	BF, BR  times (T/Tnom)^XTB
	//	IKF, IKR, IRB times Area;  RB, RBM, RE, RC divided by Area
	//
	// (Nagel 1975; EG itself is held constant). The others equal Params.
	Scaled BJTParams
	// VT is the thermal voltage k·T/q at Temp, V.
	VT float64
	// GMin is the conductance placed inside each junction current, S
	// (the SPICE3 convention; see Eval).
	GMin float64

	vcritBE, vcritBC float64
	// onBE, onBC are the on-thresholds of Region at Temp, V.
	onBE, onBC float64
	// model is the model's name, for errors (AtTemp).
	model string
}

// NewBJT returns the transistor of model m (type npn or pnp) with area
// factor area at device temperature tempC (°C). opt.TNom is the nominal
// temperature of a model without TNOM.
func NewBJT(m *netlist.Model, area, tempC float64, opt Options) (*BJT, error) {
	if m == nil {
		return nil, fmt.Errorf("no model")
	}
	var pol Polarity
	switch m.Type {
	case netlist.NPN:
		pol = NPN
	case netlist.PNP:
		pol = PNP
	default:
		return nil, fmt.Errorf("model %s is of type %s, not NPN or PNP", m.Name, upper(m.Type))
	}
	p, err := BJTParamsOf(m, opt.TNom)
	if err != nil {
		return nil, err
	}
	b := new(BJT)
	if err := makeBJT(b, m.Name, pol, p, area, tempC, opt); err != nil {
		return nil, err
	}
	return b, nil
}

// AtTemp returns a copy of transistor b at device temperature tempC (°C):
// what NewBJT of b's model, area and options gives at tempC, bit for bit,
// without reading the model again (its parameters are b.Params). SetTemp
// moves b itself, as a solve whose temperatures change while the models
// do not (the self-heating loop) does.
func (b *BJT) AtTemp(tempC float64) (*BJT, error) {
	if b == nil {
		return nil, fmt.Errorf("no transistor")
	}
	c := *b
	if err := c.SetTemp(tempC); err != nil {
		return nil, err
	}
	return &c, nil
}

// SetTemp is AtTemp in place: it moves b to device temperature tempC
// (°C), or leaves it as it was and returns the error AtTemp would.
func (b *BJT) SetTemp(tempC float64) error {
	if b == nil {
		return fmt.Errorf("no transistor")
	}
	if sameFloat(tempC, b.Temp) {
		return nil
	}
	return makeBJT(b, b.model, b.Polarity, b.Params, b.Area, tempC, Options{TNom: b.Params.TNOM, GMin: b.GMin})
}

// sameFloat reports whether a and b are the same bits.
func sameFloat(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

// makeBJT sets *b to the transistor of the parameters p, as read from
// model name of polarity pol, scaled to area and tempC (°C) (see
// BJT.Scaled). On an error *b is left as it was.
func makeBJT(b *BJT, name string, pol Polarity, p BJTParams, area, tempC float64, opt Options) error {
	t, tnom, err := checkInstance(name, area, tempC, p.TNOM, opt)
	if err != nil {
		return err
	}
	s := p
	f1 := satFactor(t, tnom, p.EG, p.XTI, 1)
	bfac := math.Pow(t/tnom, p.XTB)
	s.IS = area * p.IS * f1
	s.ISE = area * p.ISE * satFactor(t, tnom, p.EG, p.XTI, p.NE) / bfac
	s.ISC = area * p.ISC * satFactor(t, tnom, p.EG, p.XTI, p.NC) / bfac
	s.BF = p.BF * bfac
	s.BR = p.BR * bfac
	s.IKF = area * p.IKF
	s.IKR = area * p.IKR
	s.IRB = area * p.IRB
	s.RB = p.RB / area
	s.RBM = p.RBM / area
	s.RE = p.RE / area
	s.RC = p.RC / area
	if !(s.IS > 0) || math.IsInf(s.IS, 0) || math.IsInf(s.ISE, 0) || math.IsInf(s.ISC, 0) {
		return fmt.Errorf("model %s: saturation currents at %g °C are out of range (IS %s)", name, tempC, rangeText(s.IS))
	}
	vt := ThermalVoltage(t)
	// The current each junction carries at OnVoltage at TNOM.
	isNom, vtNom := area*p.IS, ThermalVoltage(tnom)
	*b = BJT{Polarity: pol, Params: p, Area: area, Temp: tempC, Scaled: s, VT: vt, GMin: opt.GMin, model: name,
		vcritBE: Vcrit(s.NF*vt, s.IS),
		vcritBC: Vcrit(s.NR*vt, s.IS),
		onBE:    onThreshold(s.NF*vt, s.IS, isNom*math.Expm1(OnVoltage/(p.NF*vtNom))),
		onBC:    onThreshold(s.NR*vt, s.IS, isNom*math.Expm1(OnVoltage/(p.NR*vtNom))),
	}
	return nil
}

// BJTEval is the DC state of a transistor at given junction voltages, in
// terminal quantities (currents into the terminals, voltages V(B)−V(E) and
// V(B)−V(C) at the internal junctions).
type BJTEval struct {
	IC, IB float64 // current into the collector and into the base, A
	// The conductance Jacobian, S.
	DICdVBE, DICdVBC float64
	DIBdVBE, DIBdVBC float64
	// QB is the normalised base charge.
	QB float64
	// RBB is the base resistance in effect, ohm (0 without RB), and
	// DRBBdVBE, DRBBdVBC its derivatives with respect to the junction
	// voltages, ohm/V (zero for a constant RB).
	RBB, DRBBdVBE, DRBBdVBC float64
	// Mag is the sum of the magnitudes of the terms that make up IC and
	// IB, A: IC and IB cannot be computed more accurately than about
	// machine epsilon times Mag (in saturation IC is a small difference
	// of large currents).
	Mag float64
}

// IE returns the current into the emitter, −(IC + IB).
func (e BJTEval) IE() float64 { return -(e.IC + e.IB) }

// Eval returns the collector and base currents and their Jacobian at the
// internal junction voltages vbe = V(B')−V(E') and vbc = V(B')−V(C').
// In forward-referenced quantities (multiplied by the polarity sign, so
// that an NPN and a PNP read alike) the Gummel-Poon DC equations are
//
//	Ibe = IS·(exp(vbe/(NF·vt)) − 1) + GMIN·vbe
//	Ibc = IS·(exp(vbc/(NR·vt)) − 1) + GMIN·vbc
//	Ile = ISE·(exp(vbe/(NE·vt)) − 1)       Ilc = ISC·(exp(vbc/(NC·vt)) − 1)
//	q1 = 1/(1 − vbc/VAF − vbe/VAR)         q2 = Ibe/IKF + Ibc/IKR
//	qb = q1/2 · (1 + √(1 + 4·q2))
//	IC = (Ibe − Ibc)/qb − Ibc/BR − Ilc
//	IB = Ibe/BF + Ile + Ibc/BR + Ilc
//
// GMIN sits inside the two ideal junction currents, as SPICE3 places it
// (a GMIN·v term added to each junction's diode current, not a separate
// conductance across the terminals), so it is carried through qb and the
// betas like the junction current itself: in cut-off at VBE = 0 and
// VCB = V the collector leaks (IS + GMIN·V)·(1/qb + 1/BR).
//
// The base resistance between the base terminal and the internal base is
// (SPICE2, Nagel 1975; Massobrio & Antognetti, Semiconductor Device
// Modeling with SPICE, ch. 2)
//
//	rbb = RBM + (RB − RBM)/qb                                without IRB
//	rbb = RBM + 3·(RB − RBM)·(tan z − z)/(z·tan² z)          with IRB, where
//	z   = (−1 + √(1 + 144·IB/(π²·IRB))) / ((24/π²)·√(IB/IRB))
//
// (IB the base current above, taken as zero when negative; z runs from 0
// to π/2 as IB grows, so rbb falls from RB to RBM). RBM defaults to RB.
//
// The exponentials are continued linearly beyond a large argument, and
// where 1 − vbc/VAF − vbe/VAR falls below 0.05 q1 is continued by its
// tangent, so Eval is finite for every finite input.
func (b *BJT) Eval(vbe, vbc float64) BJTEval {
	sg := b.Polarity.Sign()
	ve, vc := sg*vbe, sg*vbc
	p := &b.Scaled
	vt := b.VT
	ibe, gbe := junction(p.IS, ve, p.NF*vt)
	ibc, gbc := junction(p.IS, vc, p.NR*vt)
	ibe, gbe = ibe+b.GMin*ve, gbe+b.GMin
	ibc, gbc = ibc+b.GMin*vc, gbc+b.GMin
	ile, gle := junction(p.ISE, ve, p.NE*vt)
	ilc, glc := junction(p.ISC, vc, p.NC*vt)

	// q1 = 1/d with d = 1 − vc/VAF − ve/VAR.
	const dmin = 0.05
	d := 1 - vc/p.VAF - ve/p.VAR
	var q1, dq1dd float64
	if d >= dmin {
		q1 = 1 / d
		dq1dd = -q1 * q1
	} else {
		q1 = 1/dmin + (dmin-d)/(dmin*dmin)
		dq1dd = -1 / (dmin * dmin)
	}
	dq1ve := dq1dd * (-1 / p.VAR)
	dq1vc := dq1dd * (-1 / p.VAF)

	q2 := ibe/p.IKF + ibc/p.IKR
	var sq, dsqve, dsqvc float64
	if arg := 1 + 4*q2; arg > 0 {
		sq = math.Sqrt(arg)
		dsqve = 2 * gbe / p.IKF / sq
		dsqvc = 2 * gbc / p.IKR / sq
	}
	qb := q1 * (1 + sq) / 2
	dqbve := dq1ve*(1+sq)/2 + q1*dsqve/2
	dqbvc := dq1vc*(1+sq)/2 + q1*dsqvc/2

	it := (ibe - ibc) / qb
	ic := it - ibc/p.BR - ilc
	ib := ibe/p.BF + ile + ibc/p.BR + ilc
	ev := BJTEval{
		IC:      sg * ic,
		IB:      sg * ib,
		DICdVBE: (gbe - it*dqbve) / qb,
		DICdVBC: (-gbc-it*dqbvc)/qb - gbc/p.BR - glc,
		DIBdVBE: gbe/p.BF + gle,
		DIBdVBC: gbc/p.BR + glc,
		QB:      qb,
		Mag: math.Abs(ibe)/qb + math.Abs(ibc)/qb + math.Abs(ibe)/p.BF + 2*math.Abs(ibc)/p.BR +
			math.Abs(ile) + 2*math.Abs(ilc),
	}
	if p.RB > 0 {
		var dve, dvc float64
		ev.RBB, dve, dvc = b.baseResistance(qb, dqbve, dqbvc, ib, ev.DIBdVBE, ev.DIBdVBC)
		ev.DRBBdVBE, ev.DRBBdVBC = sg*dve, sg*dvc
	}
	return ev
}

// baseResistance returns rbb and its derivatives with respect to the
// forward-referenced junction voltages, from qb or from the base current
// ib (forward-referenced) and their derivatives; see Eval.
func (b *BJT) baseResistance(qb, dqbve, dqbvc, ib, dibve, dibvc float64) (r, dve, dvc float64) {
	p := &b.Scaled
	if !b.Params.VariableRB() {
		return p.RB, 0, 0
	}
	span := p.RB - p.RBM
	if math.IsInf(p.IRB, 1) {
		f := span / (qb * qb)
		return p.RBM + span/qb, -f * dqbve, -f * dqbvc
	}
	x := ib / p.IRB
	if !(x > 0) {
		return p.RB, 0, 0
	}
	f, dfdx := irbLaw(x)
	return p.RBM + 3*span*f, 3 * span * dfdx * dibve / p.IRB, 3 * span * dfdx * dibvc / p.IRB
}

// irbLaw returns f = (tan z − z)/(z·tan² z) with z(x) of the IRB law at
// x = IB/IRB > 0 (see Eval), and df/dx. f runs from 1/3 at x → 0 to 0 as
// x → ∞. z is computed as (a/c)·√x/(1 + √(1 + a·x)), a = 144/π², c =
// 24/π², which equals the published form without its cancellation at
// small x; below z = 1e-3 f is its series 1/3 − 4z²/45.
func irbLaw(x float64) (f, dfdx float64) {
	const a = 144 / (math.Pi * math.Pi)
	const c = 24 / (math.Pi * math.Pi)
	s := math.Sqrt(x)
	r := math.Sqrt(1 + a*x)
	z := a / c * s / (1 + r)
	dzdx := a / c * ((1+r)/(2*s) - s*a/(2*r)) / ((1 + r) * (1 + r))
	var dfdz float64
	if z < 1e-3 {
		f, dfdz = 1.0/3-4*z*z/45, -8*z/45
	} else {
		t := math.Tan(z)
		num, den := t-z, z*t*t
		f = num / den
		dnum := t * t
		dden := t*t + 2*z*t*(1+t*t)
		dfdz = (dnum*den - num*dden) / (den * den)
	}
	return f, dfdz * dzdx
}

// Limit applies junction-voltage limiting (PNJLim) to both junctions of a
// Newton iterate: vbe and vbc are the new internal junction voltages, vbeOld
// and vbcOld the previous limited ones, all in terminal sense. The B-E
// junction uses NF·vt and the B-C junction NR·vt with their critical
// voltages. It reports whether either was changed.
func (b *BJT) Limit(vbe, vbc, vbeOld, vbcOld float64) (float64, float64, bool) {
	sg := b.Polarity.Sign()
	p := &b.Scaled
	ve, l1 := PNJLim(sg*vbe, sg*vbeOld, p.NF*b.VT, b.vcritBE)
	vc, l2 := PNJLim(sg*vbc, sg*vbcOld, p.NR*b.VT, b.vcritBC)
	return sg * ve, sg * vc, l1 || l2
}

// Initial returns the junction voltages (terminal sense) at which Newton
// first linearises the transistor: the B-E junction at its critical
// voltage and the B-C junction at zero, as SPICE2 starts its junctions.
func (b *BJT) Initial() (vbe, vbc float64) {
	return b.Polarity.Sign() * b.vcritBE, 0
}
