package device

import (
	"fmt"
	"math"

	"github.com/biaslint/biaslint/netlist"
)

// DiodeParams are the DC parameters of a junction diode model, SI units,
// temperatures in °C.
type DiodeParams struct {
	IS   float64 // saturation current, A (default 1e-14)
	N    float64 // emission coefficient (default 1)
	RS   float64 // series resistance, ohm (default 0)
	BV   float64 // reverse breakdown voltage, V, positive (default none: +Inf)
	IBV  float64 // reverse current at VD = −BV, A (default 1e-3)
	ISR  float64 // recombination saturation current, A (default 0: none)
	NR   float64 // recombination emission coefficient (default 2)
	IKF  float64 // high-injection knee current, A (default none: +Inf)
	VJ   float64 // junction potential of the recombination generation factor, V (default 1)
	M    float64 // grading coefficient of the generation factor (default 0.5)
	EG   float64 // energy gap, eV (default 1.11)
	XTI  float64 // temperature exponent of IS (default 3)
	TNOM float64 // nominal temperature, °C (default 27)
}

// DefaultDiodeParams returns the SPICE-class defaults listed in DiodeParams.
func DefaultDiodeParams() DiodeParams {
	return DiodeParams{IS: 1e-14, N: 1, RS: 0, BV: math.Inf(1), IBV: 1e-3, ISR: 0, NR: 2, IKF: math.Inf(1),
		VJ: 1, M: 0.5, EG: 1.11, XTI: 3, TNOM: 27}
}

// DiodeParamsOf reads the DC diode parameters of m. Absent parameters take
// their defaults (TNOM defaults to tnom, °C); a BV or IKF of zero means
// none. Parameters the DC model does not use (TT, CJO, FC, KF, AF) are
// ignored; VJ and M enter the DC current only through the recombination
// term, when ISR is given.
func DiodeParamsOf(m *netlist.Model, tnom float64) (DiodeParams, error) {
	d := DefaultDiodeParams()
	r := &reader{m: m}
	p := DiodeParams{
		IS:   r.positive("IS", d.IS),
		N:    r.positive("N", d.N),
		RS:   r.nonNegative("RS", d.RS),
		BV:   r.infinite("BV"),
		IBV:  r.positive("IBV", d.IBV),
		ISR:  r.nonNegative("ISR", d.ISR),
		NR:   r.positive("NR", d.NR),
		IKF:  r.infinite("IKF"),
		VJ:   r.positive("VJ", d.VJ),
		M:    r.nonNegative("M", d.M),
		EG:   r.positive("EG", d.EG),
		XTI:  r.get("XTI", d.XTI),
		TNOM: r.get("TNOM", tnom),
	}
	return p, r.err
}

// Diode is a junction diode instance at one temperature.
type Diode struct {
	// Params are the model parameters as read, defaults filled in.
	Params DiodeParams
	Area   float64
	// Temp is the device temperature, °C.
	Temp float64
	// Scaled are the parameters at Temp and Area (Nagel 1975):
	//
	//	IS  = Area · IS  · exp( ((T/Tnom − 1)·EG/vt(T) + XTI·ln(T/Tnom)) / N )
	//	ISR = Area · ISR · exp( ((T/Tnom − 1)·EG/vt(T) + XTI·ln(T/Tnom)) / NR )
	//	IBV, IKF times Area;  RS = RS / Area
	//
	// BV is not temperature scaled.
	Scaled DiodeParams
	// VT is the thermal voltage at Temp, V.
	VT float64
	// GMin is the conductance inside the junction current, S (GMIN·vd is
	// added to the diode current, as SPICE3 does).
	GMin float64

	vcrit, vcritBV float64
}

// NewDiode returns the diode of model m (type d) with the given area factor
// at device temperature tempC (°C).
func NewDiode(m *netlist.Model, area, tempC float64, opt Options) (*Diode, error) {
	if m == nil {
		return nil, fmt.Errorf("no model")
	}
	if m.Type != netlist.Diode {
		return nil, fmt.Errorf("model %s is of type %s, not D", m.Name, upper(m.Type))
	}
	p, err := DiodeParamsOf(m, opt.TNom)
	if err != nil {
		return nil, err
	}
	t, tnom, err := checkInstance(m.Name, area, tempC, p.TNOM, opt)
	if err != nil {
		return nil, err
	}
	s := p
	s.IS = area * p.IS * satFactor(t, tnom, p.EG, p.XTI, p.N)
	s.IBV = area * p.IBV
	s.ISR = area * p.ISR * satFactor(t, tnom, p.EG, p.XTI, p.NR)
	s.IKF = area * p.IKF
	s.RS = p.RS / area
	if !(s.IS > 0) || math.IsInf(s.IS, 0) {
		return nil, fmt.Errorf("model %s: saturation current at %g °C is out of range (IS %s)", m.Name, tempC, rangeText(s.IS))
	}
	vt := ThermalVoltage(t)
	nvt := s.N * vt
	return &Diode{Params: p, Area: area, Temp: tempC, Scaled: s, VT: vt, GMin: opt.GMin,
		vcrit: Vcrit(nvt, s.IS), vcritBV: Vcrit(nvt, s.IBV)}, nil
}

// Eval returns the current from anode to cathode through the junction and
// its conductance at junction voltage vd. With the extended junction-diode
// DC equations of SPICE-class simulators (from memory: a normal current
// with a high-injection factor, a recombination current with a generation
// factor, and reverse breakdown)
//
//	Inrm = IS·(exp(vd/(N·vt)) − 1)          Kinj = √(IKF/(IKF + Inrm))    (1 without IKF)
//	Irec = ISR·(exp(vd/(NR·vt)) − 1)        Kgen = ((1 − vd/VJ)² + 0.005)^(M/2)
//	I = Inrm·Kinj + Irec·Kgen − IBV·(exp(−(vd + BV)/(N·vt)) − exp(−BV/(N·vt))) + GMIN·vd
//
// Well above IKF the normal current grows as √(IKF·Inrm), with twice the
// emission coefficient (high injection). The recombination term is
// present only when ISR is set, the breakdown term only when BV is set
// (it carries IBV at vd = −BV and vanishes at vd = 0). Exponentials are
// guarded as in BJT.Eval.
func (d *Diode) Eval(vd float64) (i, g float64) {
	p := &d.Scaled
	nvt := p.N * d.VT
	i, g = junction(p.IS, vd, nvt)
	if !math.IsInf(p.IKF, 1) {
		// Kinj = √(IKF/(IKF + Inrm)); Inrm ≥ −IS keeps the sum positive
		// while IS < IKF, and it is floored for the rest.
		s := math.Max(p.IKF+i, 1e-3*p.IKF)
		k := math.Sqrt(p.IKF / s)
		dk := 0.0
		if p.IKF+i > 1e-3*p.IKF {
			dk = -k / (2 * s)
		}
		i, g = i*k, g*k+i*dk*g
	}
	if p.ISR > 0 {
		ir, gr := junction(p.ISR, vd, p.NR*d.VT)
		u := 1 - vd/p.VJ
		w := u*u + 0.005
		kg := math.Pow(w, p.M/2)
		dkg := p.M / 2 * kg / w * 2 * u * (-1 / p.VJ)
		i += ir * kg
		g += gr*kg + ir*dkg
	}
	if !math.IsInf(p.BV, 1) {
		e, de := limExp(-(vd + p.BV) / nvt)
		i -= p.IBV * (e - math.Exp(-p.BV/nvt))
		g += p.IBV * de / nvt
	}
	return i + d.GMin*vd, g + d.GMin
}

// Limit applies junction limiting to a new Newton iterate vd given the
// previous limited value vdOld. Near and beyond breakdown (vd below
// min(0, −BV + 10·N·vt)) the breakdown exponential is limited instead, by
// PNJLim on the mirrored voltage −(vd + BV).
func (d *Diode) Limit(vd, vdOld float64) (float64, bool) {
	p := &d.Scaled
	nvt := p.N * d.VT
	if !math.IsInf(p.BV, 1) && vd < math.Min(0, -p.BV+10*nvt) {
		u, lim := PNJLim(-(vd + p.BV), -(vdOld + p.BV), nvt, d.vcritBV)
		return -(u + p.BV), lim
	}
	return PNJLim(vd, vdOld, nvt, d.vcrit)
}

// Initial returns the junction voltage at which Newton first linearises the
// diode: its critical voltage.
func (d *Diode) Initial() float64 { return d.vcrit }

// rangeText describes a scaled value for a message without printing NaN
// or Inf: "overflows", "is not a number", or "= 1e-300".
func rangeText(v float64) string {
	switch {
	case math.IsNaN(v):
		return "is not a number"
	case math.IsInf(v, 0):
		return "overflows"
	case v == 0:
		return "underflows to 0"
	}
	return fmt.Sprintf("= %g", v)
}
