package device

import "math"

// Physical constants, exact by the 2019 redefinition of the SI base units
// (CODATA 2018 values).
const (
	// Boltzmann is the Boltzmann constant k, J/K.
	Boltzmann = 1.380649e-23
	// Charge is the elementary charge q, C.
	Charge = 1.602176634e-19
	// ZeroCelsius is 0 °C in kelvin.
	ZeroCelsius = 273.15
)

// ThermalVoltage returns the thermal voltage vt = k·T/q in volts at the
// absolute temperature t in kelvin.
func ThermalVoltage(t float64) float64 { return Boltzmann * t / Charge }

// Kelvin converts a temperature in degrees Celsius to kelvin.
func Kelvin(celsius float64) float64 { return celsius + ZeroCelsius }

// maxExpArg is the exponent beyond which junction exponentials are continued
// by their tangent line, so that no evaluation overflows. exp(80) ≈ 5.5e34;
// at NF = 1 and 300 K the limit is a junction voltage of about 2.07 V, far
// beyond any operating point and beyond what junction limiting lets Newton
// iterates reach.
const maxExpArg = 80

// limExp returns exp(x) and its derivative for x ≤ maxExpArg, and beyond it
// the tangent line e·(1 + x − maxExpArg) with slope e = exp(maxExpArg).
// The result is always finite for finite x, continuous with a continuous
// first derivative; arguments beyond 1e200 (no physical meaning) are
// clamped there.
func limExp(x float64) (e, de float64) {
	if x > maxExpArg {
		x = math.Min(x, 1e200)
		m := math.Exp(maxExpArg)
		return m * (1 + x - maxExpArg), m
	}
	e = math.Exp(x)
	return e, e
}

// junction returns the ideal junction current isat·(exp(v/nvt) − 1) and its
// conductance d/dv, with the exponential guarded by limExp. A zero isat gives
// zero current and conductance.
func junction(isat, v, nvt float64) (i, g float64) {
	if isat == 0 {
		return 0, 0
	}
	e, de := limExp(v / nvt)
	return isat * (e - 1), isat * de / nvt
}

// Vcrit returns the critical voltage of a junction with emission-scaled
// thermal voltage nvt = n·vt and saturation current isat,
//
//	vcrit = nvt · ln(nvt / (√2 · isat)),
//
// the voltage at which the junction's exponential has its minimum radius of
// curvature (Nagel 1975). Junction limiting acts only above it.
func Vcrit(nvt, isat float64) float64 {
	return nvt * math.Log(nvt/(math.Sqrt2*isat))
}

// PNJLim limits the new Newton iterate vnew of a junction voltage given the
// previous (limited) value vold, as published for SPICE2 (Nagel 1975): above
// vcrit, a step of more than 2·nvt is replaced by the step that the
// logarithm of the junction current would take,
//
//	vold > 0:  vnew' = vold + nvt·ln(1 + (vnew − vold)/nvt)   (vcrit if the argument ≤ 0)
//	vold ≤ 0:  vnew' = nvt·ln(vnew/nvt)
//
// Non-positive iterates are never limited (they cannot run away upward).
// It reports whether vnew was changed.
func PNJLim(vnew, vold, nvt, vcrit float64) (float64, bool) {
	if vnew <= vcrit || vnew <= 0 || math.Abs(vnew-vold) <= 2*nvt {
		return vnew, false
	}
	if vold > 0 {
		arg := 1 + (vnew-vold)/nvt
		if arg > 0 {
			return vold + nvt*math.Log(arg), true
		}
		return vcrit, true
	}
	return nvt * math.Log(vnew/nvt), true
}
