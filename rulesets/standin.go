package rulesets

import (
	"fmt"
	"math"
	"strings"

	"github.com/biaslint/biaslint/netlist"
)

// Stand-in model constants (common practice, not a maker's data): the
// base-emitter voltage a small-signal or power transistor shows at the
// current its hFE is specified at, V, and the Early voltage, V.
const (
	standInVBE = 0.68
	standInVAF = 100
	// standInTemp is the temperature, °C, the stand-in's IS is set at
	// (SPICE's default TNOM).
	standInTemp = 27
)

// StandIn returns a generic Gummel-Poon model for a registered type that
// a netlist names without defining it (netlist.LoadOptions.StandIn), and
// a note that says what it is. It is made from the type's entry alone:
//
//	BF  = √(hFE min · hFE max), the geometric middle of the hFE range
//	      (of the hFE group the name selects, BC547B), or hFE min when no
//	      maximum is known, or 100;
//	IS  = IC / exp(VBE/VT), so that VBE = 0.68 V at the current IC the hFE
//	      range is given at (hfe_ic; 1 mA when not given), VT = kT/q at
//	      27 °C;
//	VAF = 100 V;
//
// every other parameter at its SPICE default (no series resistances, no
// high-current roll-off). The figures are rules of thumb (common
// practice), so the note asks for the maker's model where the currents
// matter. ok is false for a name that is no registered type.
func (l *Library) StandIn(name string) (m *netlist.Model, note string, ok bool) {
	p, ok := l.LookupType(name)
	if !ok {
		return nil, "", false
	}
	typ := netlist.NPN
	switch strings.ToLower(p.Polarity) {
	case "npn":
	case "pnp":
		typ = netlist.PNP
	default:
		return nil, "", false
	}
	bf, from := 100.0, "no hFE range known"
	switch {
	case p.HFEMin > 0 && p.HFEMax >= p.HFEMin && !math.IsInf(p.HFEMax, 0):
		bf, from = math.Sqrt(p.HFEMin*p.HFEMax), fmt.Sprintf("the middle of hFE %g-%g", p.HFEMin, p.HFEMax)
	case p.HFEMin > 0 && !math.IsInf(p.HFEMin, 0):
		bf, from = p.HFEMin, fmt.Sprintf("hFE min %g", p.HFEMin)
	}
	ic := 1e-3
	if p.HFEIC > 0 && !math.IsInf(p.HFEIC, 0) {
		ic = p.HFEIC
	}
	const k, q = 1.380649e-23, 1.602176634e-19 // SI 2019 exact values
	vt := k * (standInTemp + 273.15) / q
	is := ic / math.Expm1(standInVBE/vt)
	m = &netlist.Model{Name: p.Name, Local: p.Name, Type: typ,
		Params: map[string]float64{"IS": is, "BF": bf, "VAF": standInVAF}}
	note = fmt.Sprintf("a generic %s model for the %s type is used (BF %.3g, %s; IS %.3g A, for VBE %.2f V at %s; VAF %g V: common practice, not the maker's model), so its currents are estimates; add the maker's .model card where they matter",
		strings.ToUpper(p.Polarity), p.Name, bf, from, is, standInVBE, amps(ic), float64(standInVAF))
	return m, note, true
}

// amps writes a current with an SI prefix: 10 mA, 150 mA, 1 A.
func amps(i float64) string {
	switch {
	case i >= 1:
		return fmt.Sprintf("%g A", i)
	case i >= 1e-3:
		return fmt.Sprintf("%g mA", math.Round(i*1e6)/1e3)
	default:
		return fmt.Sprintf("%g uA", math.Round(i*1e9)/1e3)
	}
}
