package rules

import (
	"math"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
)

// Facts of our own invention for the tests. Ratings are those of the
// small-signal NPN class of rulesets/parts.yaml (typical of the TO-92
// class, from memory): VCEO 40 V, VCBO 60 V, VEBO 6 V, ICmax 200 mA,
// Pd 625 mW, Tj,max 150 C, RthJA 200 K/W, hFE 100-300.
func smallSignalRating() checks.Ratings {
	return checks.Ratings{Part: "small-signal-npn", Origin: "test", VCEO: 40, VCBO: 60, VEBO: 6,
		ICMax: 0.2, Pd: 0.625, TjMax: 150, RthJA: 200, HFEMin: 100, HFEMax: 300}
}

// derive fills the facts that follow from the others: VCB = VCE - VBE,
// IE = -(IC + IB), beta = IC/IB, P = VCE*IC + VBE*IB, the derated limit
// Pd(Ta) = min(Pd, (Tj,max - Ta)/RthJA) and Tj = Ta + P*RthJA (linear
// derating, common practice; see checks/facts.go).
func derive(t checks.Transistor) checks.Transistor {
	t.VCB = t.VCE - t.VBE
	t.IE = -(t.IC + t.IB)
	t.Beta = math.NaN()
	if t.IB != 0 {
		t.Beta = t.IC / t.IB
	}
	t.Power = t.VCE*t.IC + t.VBE*t.IB
	t.PdDerated = math.Min(t.Rating.Pd, (t.Rating.TjMax-t.Ambient)/t.Rating.RthJA)
	t.Tj = t.Ambient + t.Power*t.Rating.RthJA
	return t
}

// linearQ is a healthy degenerated common-emitter stage: IC = 1 mA,
// VCE = 5 V, VBE = 0.65 V (about 0.6-0.7 V at ~1 mA in a small silicon BJT,
// common practice), hFE 200, RE = 1 kOhm.
func linearQ() checks.Transistor {
	return derive(checks.Transistor{TransistorFixed: &checks.TransistorFixed{Name: "Q1", Model: "GEN_NPN_SS", Polarity: "npn", Collector: "c1", Base: "b1", Emitter: "e1", Role: checks.RoleCommonEmitter, RoleFrom: "topology", Linear: true, Rating: smallSignalRating(), EmitterR: 1000, Bleed: true, Pos: netlist.Pos{File: "amp.cir", Line: 10, Col: 1}}, VBE: 0.65, VCE: 5, IC: 1e-3, IB: 5e-6, Region: "active", Ambient: 25, BaseRth: 10e3, BaseVth: 1.7})
}

// switchQ is a hard-saturated switch: IC = 20 mA with IB = 2 mA, forced
// beta 10 (the common-practice target), VCE(sat) 0.1 V, a bleed resistor.
func switchQ() checks.Transistor {
	return derive(checks.Transistor{TransistorFixed: &checks.TransistorFixed{Name: "Q2", Model: "GEN_NPN_SS", Polarity: "npn", Collector: "c2", Base: "b2", Emitter: "0", Role: checks.RoleSwitch, RoleFrom: "pulse drive", Rating: smallSignalRating(), EmitterR: 0, Bleed: true, Drives: []string{"Vdrv"}, Pos: netlist.Pos{File: "amp.cir", Line: 20, Col: 1}}, VBE: 0.8, VCE: 0.1, IC: 20e-3, IB: 2e-3, Region: "saturation", Ambient: 25, BaseRth: 2.2e3, BaseVth: 4.2})
}

// okResistor carries 25 mW against a 250 mW rating.
func okResistor() checks.Resistor {
	return checks.Resistor{ResistorFixed: &checks.ResistorFixed{Name: "R1", NodeA: "vcc", NodeB: "c1", Rating: 0.25, RatingFrom: "default", Pos: netlist.Pos{File: "amp.cir", Line: 5, Col: 1}}, R: 1000, V: 5, I: 5e-3, Power: 25e-3}
}

// okNode is a 12 V DC rail, within the ES1 limits of IEC 62368-1 (60 V DC,
// from memory).
func okNode() checks.Node {
	return checks.Node{NodeFixed: &checks.NodeFixed{Name: "vcc", Pos: netlist.Pos{File: "amp.cir", Line: 3, Col: 1}}, V: 12, Peak: 12}
}

// analysis wraps cases into an Analysis.
func analysis(cases ...checks.Case) *checks.Analysis { return &checks.Analysis{Cases: cases} }

func oneCase(ts []checks.Transistor, rs []checks.Resistor, ns []checks.Node) checks.Case {
	return checks.Case{Scenario: "nominal", Ambient: 25, Transistors: ts, Resistors: rs, Nodes: ns}
}
