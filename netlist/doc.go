// Package netlist reads SPICE-syntax netlists into a flat Circuit.
//
// Reading has two steps, each its own function:
//
//	d, err := netlist.Load("board.cir", nil)  // or Parse(name, src, opts)
//	c, err := netlist.Flatten(d)
//	c, err := netlist.Read("board.cir", nil)  // both at once
//
// Parse turns text into a Deck: the statements as written, with positions
// and with every .include and .lib read in place. Flatten evaluates
// parameters and expands subcircuit instances into a Circuit whose elements
// carry hierarchical names (X1.Q2), their own file:line:col and the chain
// of instances that placed them. Errors are returned as an error holding an
// *ErrorList (AsErrorList); notes and warnings are kept in
// Deck.Diagnostics and Circuit.Notes. Every function returns its result
// even when it reports errors, as complete as the input allows.
//
// # Syntax read
//
// The first line is the title, unless it starts with '.' (a library file
// that opens with .subckt or .model), "*@" (an annotation) or '+'; a blank
// first line is an empty title and a first line "* text" gives the title
// "text". After it: '*' comment lines; ';' and "$ " inline comments; '+'
// continuation lines; blanks, tabs and commas as separators; spaces around
// '='; CRLF line ends and a UTF-8 byte order mark; {expr} and 'expr'
// expressions; "quoted" file names. Keywords and names are case-insensitive
// and printed as first written. Node names may hold / - + _ # ! and
// parenthesised parts after a dash as exporters write them (Net-(R1-Pad2)).
// Names ending in '!' and names on .global lines are global; 0, gnd and
// gnd! (any case, also when listed on .global) are one node, ground. Text after .end is ignored with a note.
//
// Elements: R C L (value, name=value with r= c= l= value=, {expr} or a
// parameter name), V I (DC value, dc(v), dc=v, a plain value, AC [mag
// [phase]] with a missing magnitude read as 1 as SPICE3 does, ac=mag or
// ac=mag,phase, SIN (or SINE) PULSE PWL EXP with or without parentheses;
// Rser= Rpar= Cpar= are ignored with an alert), D, Q
// (three or four nodes, optional area, instance parameters such as m=2 or
// area=2; the area factor is multiplied by m), E G (out+ out- in+ in- gain,
// or out+ out- POLY(n) with n control node pairs, each optionally written
// (a,b), and the coefficients), F H (out+ out- Vname gain, or out+ out-
// POLY(n) V1..Vn and the coefficients) and X (ports, subcircuit name,
// [params:] name=value overrides). POLY coefficients follow the SPICE2
// order (PolyTerms); a lone coefficient of POLY(1) is the gain. Dot statements: .model (NPN, PNP, D; other types
// are kept and noted, and an element using one is an error), .subckt/.ends
// (nested, with [params:] defaults), .param (scoped to its subcircuit),
// .include/.inc (a name that matches a file only without regard to letter
// case is read with a note), .lib FILE SECTION with .lib SECTION ... .endl
// blocks, .temp (several temperatures: Options.Temps), .options (TEMP, TNOM
// and GMIN are read; every other option, whatever its value, is ignored
// with a note), .global, .title and .end. Analysis and output statements
// (.tran .ac .dc .op .print .plot .probe .save .meas .four .noise .ic
// .nodeset ...) and .control ... .endc blocks are skipped silently; other
// dot statements are noted and ignored.
//
// Model parameters are keyed by their canonical upper-case name, with the
// aliases SPICE-class readers accept folded (VA = VAF, VB = VAR, IK = IKF
// and the others listed in models.go); parameters the device equations do
// not use are kept and noted once per model card, and word values such as
// MFG=... go to Model.Text.
//
// Values take SPICE suffixes and IEC 60062 RKM codes (see package units; a
// value read as an RKM code gets a note, since classic readers read 4k7 as
// 4k). Where a value's letters change its meaning in a way people often
// get wrong (1M on a resistor is one milliohm, 4.7x drops the x, 1F on a
// resistor is a femtoohm, 10uH on a capacitor), the value is read as SPICE
// reads it with an alert (Error.Alert), directly or through the parameter
// it names (letters.go). Expressions use github.com/expr-lang/expr with the functions sqrt,
// exp, log (natural), ln, log10, abs, min, max, pow, pwr, sin, cos, tan,
// asin, acos, atan, atan2, sinh, cosh, tanh, floor, ceil, int, round, sgn,
// hypot and the constant pi; number literals inside take suffixes too
// ({2*1k} = 2000).
//
// Comment annotations "*@kind args k=v ..." become Annotations; their
// meaning is checked by their users, only their shape here.
//
// # Limits
//
// LoadOptions bounds the work one input can cause: 16 MiB per file, 64 MiB
// for a netlist with all its includes (a file included again counted
// again), 1 MiB per line, includes nested 16 deep, subcircuit instances and
// definitions nested 32 deep, 200000 flat elements, POLY(n) with n at most
// 20 and at most 200 coefficients; expressions are at most 4096 bytes
// with parentheses nested at most 64 deep, and parameters may refer to each
// other at most 200 deep. An ErrorList keeps MaxErrors errors and counts the
// rest. ReadFile in LoadOptions replaces os.ReadFile, so tests and fuzzing
// can sandbox or disable includes.
//
// # Include policy
//
// .include and .lib read only files inside the top file's folder and the
// folders of LoadOptions.IncludeDirs: the path is joined and cleaned (a
// ".." that leaves the folders is refused), and with the default reader the
// links of the file and of the folders are resolved and the check made
// again. Only regular files are opened, non-blocking, so a FIFO, a device,
// a socket or a folder is a located error and never blocks. A refused
// include names the path as written and how to allow it
// (LoadOptions.IncludeHint); nothing of the refused file is read.
//
// # Messages repeat little of the input
//
// A message quotes at most 24 bytes of any name, value or line (cut with
// "..."), whatever file it is in, and a file that is not a netlist at all
// (binary, or most of its lines unreadable as netlist lines) gets one error
// for the file and nothing of it is quoted or read (quote.go).
package netlist
