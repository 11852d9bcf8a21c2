package netlist

// This file holds the flat circuit: the output of Flatten and the input of
// the checks package. Everything in it is SI units; names are kept as
// written, and compared case-insensitively through Key.

import "strings"

// Ground is the canonical name of the reference node. "gnd" and the global
// "gnd!" in any case are read as Ground (IsGround).
const Ground = "0"

// IsGround reports whether a node name is the reference node: 0, gnd or
// gnd! in any case. Schematic editors write all three; one netlist may mix
// them, and they are one node.
func IsGround(name string) bool {
	switch Key(name) {
	case Ground, "gnd", "gnd!":
		return true
	}
	return false
}

// Key folds a name for case-insensitive lookup.
func Key(name string) string { return strings.ToLower(name) }

// Kind is an element's device letter, upper case: 'R', 'C', 'L', 'V', 'I',
// 'D', 'Q', 'E', 'F', 'G', 'H'. (X instances are flattened away.)
type Kind byte

// Instance is one step of the chain of subcircuit instances that placed an
// element: the instance name as written (X1) and where that instance line is.
type Instance struct {
	Name   string
	Subckt string
	Pos    Pos
}

// Element is one flat circuit element.
type Element struct {
	Kind Kind
	// Name is the hierarchical name: instance path joined with '.', the
	// element's own name last, as written (X1.Q2).
	Name string
	// Nodes are the hierarchical node names, in the element's node order
	// (R: n+ n-; Q: c b e [s]; D: anode cathode; E, G: out+ out- in+ in-;
	// F, H: out+ out-). Ground is always Ground.
	Nodes []string
	// Value is the resistance (ohm), capacitance (F), inductance (H), or the
	// gain of a controlled source (E: V/V, F: A/A, G: A/V (S), H: V/A (ohm)).
	Value float64
	// Model is the model key (see Circuit.Models) of a D or Q element.
	Model string
	// Area is the area factor of a D or Q element (default 1), already
	// multiplied by the instance multiplier m.
	Area float64
	// Params are further instance parameters (lower-case keys), e.g. "m",
	// "temp", "dtemp", "tc1".
	Params map[string]float64
	// Source holds the value of an independent V or I source.
	Source *Source
	// Control is the flat name of the controlling voltage source of an F or
	// H element (the first one of a POLY element).
	Control string
	// ValueText and ValuePos are the main value as written on the element
	// line and where it starts, when it is a literal number (10k, 4k7,
	// 2.2e3); ValueText is "" when the value is an expression, a parameter
	// name or not written.
	ValueText string
	ValuePos  Pos
	// Poly, when not nil, makes an E, F, G or H element a SPICE2
	// polynomial source of PolyN controlling values: the controlling
	// voltages V(Nodes[2+2k]) - V(Nodes[3+2k]) of E and G, or the branch
	// currents of the voltage sources Controls[k] of F and H. Poly holds
	// the coefficients p0, p1, ... over the products of the controlling
	// values in the SPICE2 order (see PolyTerms); Value is not used.
	Poly     []float64
	PolyN    int
	Controls []string
	// Pos is where the element's line starts in its own file.
	Pos Pos
	// Chain lists the instances that placed the element, outermost first;
	// empty at top level.
	Chain []Instance
}

// WaveKind names a transient waveform of an independent source.
type WaveKind string

// Waveform kinds.
const (
	WaveSin   WaveKind = "sin"
	WavePulse WaveKind = "pulse"
	WavePWL   WaveKind = "pwl"
	WaveExp   WaveKind = "exp"
)

// Waveform is a source's transient description with its arguments in SI
// units, in the order SPICE writes them:
//
//	SIN(VO VA FREQ TD THETA PHASE)
//	PULSE(V1 V2 TD TR TF PW PER)
//	PWL(T1 V1 T2 V2 ...)
//	EXP(V1 V2 TD1 TAU1 TD2 TAU2)
type Waveform struct {
	Kind WaveKind
	Args []float64
	Pos  Pos
}

// Source is the value of an independent voltage or current source.
type Source struct {
	// DC is the DC value: the DC term if given, else the waveform's value at
	// t = 0, else 0.
	DC float64
	// HasDC reports whether a DC term was written.
	HasDC bool
	// ACMag and ACPhase (degrees) are the small-signal AC term; HasAC
	// reports whether it was written.
	ACMag, ACPhase float64
	HasAC          bool
	// Wave is the transient waveform, or nil.
	Wave *Waveform
}

// ModelType is the type of a .model card.
type ModelType string

// Model types biaslint solves.
const (
	NPN   ModelType = "npn"
	PNP   ModelType = "pnp"
	Diode ModelType = "d"
)

// Model is a .model card. Params holds every parameter given, keyed by the
// canonical upper-case name (aliases such as VA for VAF already folded).
type Model struct {
	// Name is the model's flat name: its own name, prefixed with the
	// instance path when it is defined inside a subcircuit (X1.QMOD).
	Name string
	// Local is the name as written on the .model card (QMOD).
	Local  string
	Type   ModelType
	Params map[string]float64
	// Text holds parameters whose values are words rather than numbers
	// (vendor fields such as MFG=...), keyed like Params, values as written.
	Text map[string]string
	Pos  Pos
}

// Annotation is a comment annotation "*@kind args..." attached to the
// circuit, e.g. "*@part 2N_GEN vceo=40" or "*@device Q1 role=switch".
// Args are the positional words; KV the key=value pairs (keys lower case,
// values as written); ArgPos and KVPos locate each.
type Annotation struct {
	Kind   string
	Args   []string
	ArgPos []Pos
	KV     map[string]string
	KVPos  map[string]Pos
	// Text is everything after the kind, as written (a waiver's reason).
	Text string
	Pos  Pos
	// Scope is the instance path of the subcircuit whose body held the
	// annotation ("" at top level, "X1" inside X1), so device names in it
	// can be made hierarchical.
	Scope string
}

// Options are the circuit-wide settings read from .temp and .options.
type Options struct {
	// Temp is the circuit temperature in degrees Celsius (default 27).
	Temp float64
	// TempSet reports whether .temp or .options temp= set it.
	TempSet bool
	// Temps lists every temperature of the .temp lines, degrees Celsius, in
	// order; Temp is the first.
	Temps []float64
	// TNom is the nominal temperature of model parameters, degrees Celsius
	// (default 27).
	TNom float64
	// GMin is the junction conductance GMIN, S (default 1e-12), which the
	// device models add inside each junction current as SPICE3 does.
	GMin float64
	// Others keeps every other option, lower-case keys.
	Others map[string]float64
}

// DefaultOptions returns the SPICE-class defaults: TEMP = TNOM = 27 C,
// GMIN = 1e-12 S.
func DefaultOptions() Options {
	return Options{Temp: 27, TNom: 27, GMin: 1e-12, Others: map[string]float64{}}
}

// Circuit is a flattened netlist: every element at top level with its
// hierarchical name, every model it uses, and the options and annotations.
type Circuit struct {
	// File is the top-level file name as given.
	File  string
	Title string
	// Elements in netlist order (depth-first through instances).
	Elements []*Element
	// Models by key. A model defined inside a subcircuit is keyed by its
	// scoped name ("x1.qmod"); top-level models by Key(name).
	Models      map[string]*Model
	Options     Options
	Annotations []Annotation
	// Notes are the warnings and notes found while reading (never errors).
	Notes []*Error
}

// Element returns the element with the given flat name (case-insensitive), or nil.
func (c *Circuit) Element(name string) *Element {
	k := Key(name)
	for _, e := range c.Elements {
		if Key(e.Name) == k {
			return e
		}
	}
	return nil
}

// PolyTerms returns, for a SPICE2 polynomial of n controlling values
// x[0..n-1] with m coefficients, the variables multiplied in each term:
// term k is p_k times the product of x[i] over i in PolyTerms(n, m)[k].
// The order is the one published for SPICE2 (Nagel 1975; the SPICE2 user's
// guide): the constant, then the terms of degree 1, 2, 3, ... and within a
// degree the index lists i1 <= i2 <= ... in lexicographic order. For n = 2
// (x = fa, fb):
//
//	p0 + p1·fa + p2·fb + p3·fa² + p4·fa·fb + p5·fb² + p6·fa³ + p7·fa²·fb + ...
//
// and for n = 3: p0 + p1·fa + p2·fb + p3·fc + p4·fa² + p5·fa·fb + p6·fa·fc
// + p7·fb² + p8·fb·fc + p9·fc² + p10·fa³ + ...
func PolyTerms(n, m int) [][]int {
	out := make([][]int, 0, m)
	for d := 0; len(out) < m; d++ {
		idx := make([]int, d)
		for {
			out = append(out, append(make([]int, 0, d), idx...))
			if len(out) == m || n <= 0 {
				break
			}
			// Next index list of degree d in lexicographic order.
			i := d - 1
			for i >= 0 && idx[i] == n-1 {
				i--
			}
			if i < 0 {
				break
			}
			idx[i]++
			for j := i + 1; j < d; j++ {
				idx[j] = idx[i]
			}
		}
		if n <= 0 {
			break
		}
	}
	return out
}
