package device

import "math"

// Region is the operating region of a bipolar transistor.
type Region string

// Operating regions, named for the forward-referenced junction biases.
const (
	Active     Region = "active"     // B-E forward, B-C reverse or only weakly forward
	Saturation Region = "saturation" // both junctions forward
	Cutoff     Region = "cutoff"     // neither junction forward
	Reverse    Region = "reverse"    // B-C forward, B-E not: reverse-active
)

// Thresholds of Classify. Voltages are forward-referenced: multiplied by
// the polarity sign, so that a forward-biased junction is positive for NPN
// and PNP alike.
const (
	// OnVoltage is the forward junction voltage from which a junction counts
	// as conducting: 0.4 V, where a small silicon junction (IS ≈ 1e-14 A)
	// carries about 50 nA, a thousandth of typical bias currents.
	OnVoltage = 0.4
	// SatVCE is the forward collector-emitter voltage at or below which a
	// transistor with a conducting B-E junction counts as saturated even if
	// its B-C junction is under OnVoltage: 0.2 V, the order of a small
	// transistor's VCE(sat).
	SatVCE = 0.2
	// CutoffCurrent is the forward collector current below which a
	// transistor counts as cut off even with B-E at or above OnVoltage:
	// 1 nA.
	CutoffCurrent = 1e-9
)

// Classify returns the operating region of a transistor of polarity p from
// its terminal quantities vbe = V(B)−V(E), vbc = V(B)−V(C) and ic, the
// current into the collector. With forward-referenced vbe, vbc, vce =
// vbe − vbc and ic:
//
//	saturation  vbe ≥ OnVoltage and (vbc ≥ OnVoltage or vce ≤ SatVCE)
//	reverse     vbc ≥ OnVoltage and vbe < OnVoltage
//	cutoff      vbe < OnVoltage (and vbc < OnVoltage), or ic < CutoffCurrent
//	active      otherwise: vbe ≥ OnVoltage, vbc < OnVoltage, vce > SatVCE, ic ≥ CutoffCurrent
func Classify(p Polarity, vbe, vbc, ic float64) Region {
	return classify(p, vbe, vbc, ic, OnVoltage, OnVoltage)
}

// Region classifies the transistor's operating point like Classify, with
// the on-thresholds moved with the device temperature so that a junction
// counts as conducting from the same current at any temperature: the B-E
// threshold is the voltage at which the ideal B-E current IS(T)·(exp(v/(NF·vt(T))) − 1)
// equals what it carries at OnVoltage at the model's TNOM (likewise B-C
// with NR). At TNOM the thresholds are OnVoltage; they fall about 2 mV/K
// as IS rises (Nagel 1975 scaling), so a hot junction that conducts is not
// taken for one in cut-off.
func (b *BJT) Region(vbe, vbc, ic float64) Region {
	return classify(b.Polarity, vbe, vbc, ic, b.onBE, b.onBC)
}

// onThreshold returns the junction voltage at which a junction of
// emission-scaled thermal voltage nvt and saturation current is carries
// the current ion.
func onThreshold(nvt, is, ion float64) float64 {
	v := nvt * math.Log1p(ion/is)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return OnVoltage
	}
	return v
}

func classify(p Polarity, vbe, vbc, ic, onBE, onBC float64) Region {
	s := p.Sign()
	vbe, vbc, ic = s*vbe, s*vbc, s*ic
	beOn, bcOn := vbe >= onBE, vbc >= onBC
	switch {
	case beOn && (bcOn || vbe-vbc <= SatVCE):
		return Saturation
	case bcOn:
		return Reverse
	case !beOn || ic < CutoffCurrent:
		return Cutoff
	}
	return Active
}
