package device

import (
	"fmt"
	"math"
	"strings"

	"github.com/biaslint/biaslint/netlist"
)

// Options are the circuit-wide settings a device model needs besides its
// own parameters.
type Options struct {
	// TNom is the nominal temperature, °C, of models that do not set TNOM
	// (SPICE-class default 27 °C).
	TNom float64
	// GMin is GMIN, S: GMIN·v is added inside each pn junction's current
	// (the ideal B-E and B-C currents of a transistor, a diode's current),
	// as SPICE3 places it, so that no junction is ever an open circuit
	// (SPICE-class default 1e-12 S). Zero adds none.
	GMin float64
}

// DefaultOptions returns TNom = 27 °C and GMin = 1e-12 S.
func DefaultOptions() Options { return Options{TNom: 27, GMin: 1e-12} }

// reader fetches model parameters by canonical upper-case name and records
// the first invalid one.
type reader struct {
	m   *netlist.Model
	err error
}

func (r *reader) get(name string, def float64) float64 {
	if r.m == nil || r.m.Params == nil {
		return def
	}
	v, ok := r.m.Params[name]
	if !ok {
		return def
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		r.fail("%s = %g is not a finite number", name, v)
		return def
	}
	return v
}

// positive reads a parameter that must be > 0.
func (r *reader) positive(name string, def float64) float64 {
	v := r.get(name, def)
	if v <= 0 {
		r.fail("%s = %g must be positive", name, v)
		return def
	}
	return v
}

// nonNegative reads a parameter that must be ≥ 0.
func (r *reader) nonNegative(name string, def float64) float64 {
	v := r.get(name, def)
	if v < 0 {
		r.fail("%s = %g must not be negative", name, v)
		return def
	}
	return v
}

// infinite reads a voltage or current that is +Inf when absent or zero, as
// SPICE reads VAF, VAR, IKF, IKR and BV; negative values are errors.
func (r *reader) infinite(name string) float64 {
	v := r.get(name, 0)
	switch {
	case v < 0:
		r.fail("%s = %g must not be negative (0 or absent means none)", name, v)
		return math.Inf(1)
	case v == 0:
		return math.Inf(1)
	}
	return v
}

func (r *reader) fail(format string, args ...any) {
	if r.err != nil {
		return
	}
	name := "<nil>"
	if r.m != nil {
		name = r.m.Name
	}
	r.err = fmt.Errorf("model %s: %s", name, fmt.Sprintf(format, args...))
}

// checkInstance validates the area factor, the device and nominal
// temperatures (°C) and the GMIN of an instance of the named model, and returns
// the temperatures in kelvin.
func checkInstance(model string, area, tempC, tnomC float64, opt Options) (t, tnom float64, err error) {
	if !(area > 0) || math.IsInf(area, 0) {
		return 0, 0, fmt.Errorf("area factor %g must be a positive finite number", area)
	}
	if !(opt.GMin >= 0) || math.IsInf(opt.GMin, 0) {
		return 0, 0, fmt.Errorf("GMIN %g must be a non-negative finite conductance", opt.GMin)
	}
	t, tnom = Kelvin(tempC), Kelvin(tnomC)
	if !(t > 0) || math.IsInf(t, 0) {
		return 0, 0, fmt.Errorf("device temperature %g °C is below absolute zero or not finite", tempC)
	}
	if !(tnom > 0) || math.IsInf(tnom, 0) {
		return 0, 0, fmt.Errorf("model %s: nominal temperature TNOM = %g °C is below absolute zero or not finite", model, tnomC)
	}
	return t, tnom, nil
}

// satFactor returns the temperature factor of a saturation current with
// emission coefficient n, as SPICE2 scales IS (Nagel 1975):
//
//	IS(T)/IS(Tnom) = exp( ((T/Tnom − 1)·EG/vt(T) + XTI·ln(T/Tnom)) / n ).
//
// EG is taken as a constant (its own temperature dependence is ignored).
func satFactor(t, tnom, eg, xti, n float64) float64 {
	vt := ThermalVoltage(t)
	return math.Exp(((t/tnom-1)*eg/vt + xti*math.Log(t/tnom)) / n)
}

func upper(t netlist.ModelType) string { return strings.ToUpper(string(t)) }
