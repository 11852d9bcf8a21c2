package netlist

// This file holds the Deck: the statements of a netlist as written, with
// includes resolved, before parameters are evaluated and subcircuits are
// flattened.

// Word is one word of a statement as written, with its position.
type Word struct {
	Text string
	Pos  Pos
}

// Value is a numeric field as written: a number with an optional SPICE
// suffix ("4k7", "10MEG"), a parameter name ("rload"), or an expression
// ("{2*rload}", Braced). It is evaluated when the deck is flattened, in the
// parameter scope of each instance.
type Value struct {
	Text   string
	Braced bool
	Pos    Pos
}

// String returns the value as written.
func (v Value) String() string {
	if v.Braced {
		return "{" + v.Text + "}"
	}
	return v.Text
}

// short returns the value as written, shortened for messages.
func (v Value) short() string {
	t := token{kind: tWord, text: v.Text}
	if v.Braced {
		t.kind = tExpr
	}
	return t.String()
}

// Param is one name=value pair: an instance parameter, a model parameter, a
// .param definition, a subcircuit default or an option.
type Param struct {
	Name  Word
	Value Value
}

// ElementStmt is one element line. Which fields are set depends on Kind:
//
//	R, C, L:    Nodes (2), Value
//	V, I:       Nodes (2), Source
//	D:          Nodes (2), Model, Area (optional)
//	Q:          Nodes (3), Extra: [substrate] model [area], resolved against
//	            the models in scope when flattening
//	E, G:       Nodes (4), Value (gain)
//	F, H:       Nodes (2), Control, Value (gain)
//	X:          Nodes (the ports), Subckt
//
// Params holds the name=value pairs of the line (m=2, area=2, tc1=1e-3, and
// an X line's parameter overrides).
type ElementStmt struct {
	Kind    Kind
	Name    Word
	Nodes   []Word
	Value   *Value
	Model   Word
	Extra   []Value
	Area    *Value
	Control Word
	Subckt  Word
	Params  []Param
	Source  *SourceStmt
	// Poly is the POLY(n) form of an E, F, G or H line (nil otherwise);
	// the controlling node pairs of E and G follow the output nodes in
	// Nodes.
	Poly *PolyStmt
	Pos  Pos
}

// PolyStmt is the polynomial part of a controlled source line as written:
// the dimension, the controlling voltage sources of F and H, and the
// coefficients.
type PolyStmt struct {
	N        int
	Controls []Word
	Coeffs   []Value
	Pos      Pos
}

// SourceStmt is the value part of an independent V or I source line as
// written. Nil fields were not written.
type SourceStmt struct {
	DC      *Value
	ACMag   *Value
	ACPhase *Value
	// Wave is the waveform kind ("" if none) and WaveArgs its arguments.
	Wave     WaveKind
	WaveArgs []Value
	WavePos  Pos
}

// ModelStmt is a .model card. Type is lower case ("npn", "pnp", "d", or any
// other type as written, which is kept but not solved).
type ModelStmt struct {
	Name   Word
	Type   string
	Params []Param
	Pos    Pos
}

// Subckt is a subcircuit definition, or (Name empty) the top level of the
// deck. Models, parameters and nested definitions belong to the scope they
// are written in.
type Subckt struct {
	Name        Word
	Ports       []Word
	Params      []Param // defaults from the .subckt line
	Elements    []*ElementStmt
	Models      []*ModelStmt
	Subckts     []*Subckt
	ParamDefs   []Param // .param lines in the body, in order
	Annotations []Annotation
	Parent      *Subckt
	Pos         Pos

	models  map[string]*ModelStmt
	subckts map[string]*Subckt
	names   map[string]Pos
}

// Deck is a parsed netlist with every include read in place.
type Deck struct {
	// File is the top-level file name as given.
	File     string
	Title    string
	TitlePos Pos
	// Top is the top level: its elements, models, parameters and
	// subcircuit definitions.
	Top *Subckt
	// Temps are the temperatures of .temp lines (degrees Celsius), in order.
	Temps []Value
	// Options are the .options settings in order; a bare flag reads as 1.
	Options []Param
	// Globals are the node names of .global lines.
	Globals []Word
	// Files lists every file read, the top file first.
	Files []string
	// Diagnostics holds the errors, warnings and notes found while reading.
	Diagnostics ErrorList

	opts LoadOptions
	// libSections counts the .lib sections seen (and skipped, since the
	// file was read whole).
	libSections int
}

// Notes returns the warnings and notes found while reading the deck.
func (d *Deck) Notes() []*Error { return d.Diagnostics.Notes() }

// lookupModel finds the model visible from s by key, searching enclosing
// definitions outwards. It returns the model and the definition holding it.
func (s *Subckt) lookupModel(k string) (*ModelStmt, *Subckt) {
	for d := s; d != nil; d = d.Parent {
		if m := d.models[k]; m != nil {
			return m, d
		}
	}
	return nil, nil
}

// lookupSubckt finds the definition visible from s by key.
func (s *Subckt) lookupSubckt(k string) *Subckt {
	for d := s; d != nil; d = d.Parent {
		if c := d.subckts[k]; c != nil {
			return c
		}
	}
	return nil
}

// displayName is the subcircuit's name for messages, shortened.
func (s *Subckt) displayName() verbatim {
	if s.Name.Text == "" {
		return "the top level"
	}
	return verbatim("subcircuit " + short(s.Name.Text))
}

// LibraryOnly reports whether the deck holds definitions and no circuit:
// no element at top level, but subcircuit definitions, models, parameters
// or .lib sections (read directly or through includes). Such a file is a
// library for other netlists to include, not a board to check.
func (d *Deck) LibraryOnly() bool {
	t := d.Top
	if t == nil || len(t.Elements) > 0 {
		return false
	}
	return len(t.Subckts) > 0 || len(t.Models) > 0 || len(t.ParamDefs) > 0 || d.libSections > 0
}
