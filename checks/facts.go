package checks

// This file is the contract between checks (which computes facts) and rules
// (which judges them). Every quantity is SI (V, A, W, Ohm, degrees Celsius
// for temperatures, K/W for thermal resistance). A value that is not known
// (a rating missing from the parts library, a model parameter left at an
// infinite default) is NaN or +Inf as documented per field; rules treat a
// referenced NaN as "could not be judged".
//
// Transistor facts are forward-referenced: for a PNP every junction voltage
// and current is sign-flipped so that a forward-active NPN and a
// forward-active PNP both show vbe > 0, vce > 0, ic > 0, ib > 0 and ie < 0.
// One rule therefore serves both polarities.

import (
	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

// Ratings are the absolute-maximum and characteristic values of a part, as
// the parts library or a *@part annotation gives them. Missing values are NaN.
type Ratings struct {
	// Part is the library entry or annotation the values came from: a
	// registered type with its hFE group ("BC547B"), a class
	// ("small-signal-npn", "generic") or the model an annotation names.
	Part string `expr:"part"`
	// Origin says where the values come from ("parts library: from memory
	// of the type's data sheets; check your maker's", "annotation at
	// board.cir:9:1", ...).
	Origin string `expr:"origin"`
	// Generic is true when the device had no entry of its own and was
	// checked against the conservative generic small-signal class.
	Generic bool `expr:"generic"`
	// VCEO, VCBO, VEBO are the breakdown ratings, V (positive numbers).
	VCEO float64 `expr:"vceo"`
	VCBO float64 `expr:"vcbo"`
	VEBO float64 `expr:"vebo"`
	// ICMax is the maximum continuous collector current, A.
	ICMax float64 `expr:"icmax"`
	// Pd is the total dissipation rating at 25 C ambient, W.
	Pd float64 `expr:"pd"`
	// TjMax is the maximum junction temperature, C.
	TjMax float64 `expr:"tjmax"`
	// RthJA is the junction-to-ambient thermal resistance, K/W.
	RthJA float64 `expr:"rthja"`
	// HFEMin and HFEMax bound the DC current gain spread.
	HFEMin float64 `expr:"hfemin"`
	HFEMax float64 `expr:"hfemax"`
}

// ModelFacts are the Gummel-Poon parameters of the device's model after
// defaults are applied (not temperature-scaled). Infinite defaults (VAF,
// IKF, ...) are +Inf.
type ModelFacts struct {
	IS  float64 `expr:"is"`
	BF  float64 `expr:"bf"`
	NF  float64 `expr:"nf"`
	VAF float64 `expr:"vaf"`
	IKF float64 `expr:"ikf"`
	ISE float64 `expr:"ise"`
	NE  float64 `expr:"ne"`
	BR  float64 `expr:"br"`
	NR  float64 `expr:"nr"`
	VAR float64 `expr:"var"`
	IKR float64 `expr:"ikr"`
	ISC float64 `expr:"isc"`
	NC  float64 `expr:"nc"`
	RB  float64 `expr:"rb"`
	RBM float64 `expr:"rbm"`
	IRB float64 `expr:"irb"`
	RE  float64 `expr:"re"`
	RC  float64 `expr:"rc"`
	EG  float64 `expr:"eg"`
	XTI float64 `expr:"xti"`
	XTB float64 `expr:"xtb"`
}

// TransistorFixed holds the facts of one BJT that are the same in every
// case: names, nets, role, model parameters, ratings and the topology
// facts of the nominal circuit. Every case's Transistor of the device
// shares one TransistorFixed (so a board of many devices and cases stores
// them once); it is written only while the analysis builds it and is read
// only after.
type TransistorFixed struct {
	// Name is the flat hierarchical name as written (X1.Q2).
	Name string `expr:"name"`
	// Model is the model name as written.
	Model string `expr:"model"`
	// Polarity is "npn" or "pnp".
	Polarity string `expr:"polarity"`
	// Collector, Base, Emitter are the flat net names.
	Collector string `expr:"collector"`
	Base      string `expr:"base"`
	Emitter   string `expr:"emitter"`

	// Role is the transistor's role (RoleSwitch, RoleCommonEmitter, ...,
	// see roles.go), decided from the topology and the nominal solve;
	// RoleFrom says how ("annotation", "topology" or "default") and
	// RoleReason why, in plain words ("emitter at ground, base fed by R3
	// from V2 (DC 3.3 V), collector load K1"). Linear is true for the
	// roles that work in forward-active when biased as designed (every
	// role but switch, push-pull, clamp and diode).
	Role       string `expr:"role"`
	RoleFrom   string `expr:"role_from"`
	RoleReason string `expr:"role_reason"`
	Linear     bool   `expr:"linear"`
	// Darlington is true for the output transistor of a Darlington pair
	// (its base on another transistor's emitter of the same polarity,
	// collectors joined). It cannot saturate: its VCE stays about one VBE
	// above its driver's VCE(sat), so a Darlington switch is judged by its
	// driver.
	Darlington bool `expr:"darlington"`

	// Model parameters and ratings.
	GP     ModelFacts `expr:"gp"`
	Rating Ratings    `expr:"rating"`

	// Topology, computed from the circuit graph and by solving.
	// EmitterR is the DC resistance from the emitter to its rail or ground,
	// Ohm (0 when the emitter is tied straight to a rail).
	EmitterR float64 `expr:"emitter_r"`
	// Bleed is true when the base has a DC path to its emitter or rail that
	// does not pass through the drive.
	Bleed bool `expr:"bleed"`
	// StiffDrive is true when a voltage source (or other stiff output)
	// drives the base with no series resistance.
	StiffDrive bool `expr:"stiff_drive"`
	// Drives are the names of the source(s) that drive the base.
	Drives []string `expr:"drives"`
	// OpenJudged is true when some scenario opens a drive of this base,
	// so floating is judged there by solving rather than from Bleed alone.
	OpenJudged bool `expr:"open_judged"`

	// Nearby are the parts around the transistor that set its bias, by
	// role (see nearby.go); findings name them as their cause.
	Nearby []Nearby `expr:"-"`

	// Pos is where the device's line is; Chain the instances that placed it.
	Pos   netlist.Pos        `expr:"-"`
	Chain []netlist.Instance `expr:"-"`
}

// Transistor holds every fact about one BJT in one case (scenario x
// corner): the device's case-independent facts, promoted from the shared
// TransistorFixed (t.Name, t.Rating, ...), and this case's own.
type Transistor struct {
	*TransistorFixed

	// Operating point, forward-referenced (see the file comment).
	VBE float64 `expr:"vbe"`
	VCE float64 `expr:"vce"`
	VCB float64 `expr:"vcb"`
	IC  float64 `expr:"ic"`
	IB  float64 `expr:"ib"`
	IE  float64 `expr:"ie"`
	// Beta is the forced beta IC/IB (NaN when IB is 0).
	Beta float64 `expr:"beta"`
	// Power is the dissipation VCE*IC + VBE*IB, W.
	Power float64 `expr:"power"`
	// Region is "active", "saturation", "cutoff" or "reverse", or
	// RegionNotPhysical in a case whose operating point is not physical.
	Region string `expr:"region"`

	// Ambient is the ambient temperature of this case, C.
	Ambient float64 `expr:"ambient"`
	// PdDerated is the derated dissipation limit at Ambient,
	// Pd(Ta) = min(Pd, (TjMax - Ta)/RthJA), W (linear derating above 25 C,
	// common practice).
	PdDerated float64 `expr:"pd_derated"`
	// Tj is the junction temperature Ta + Power*RthJA, C.
	Tj float64 `expr:"tj"`

	// BaseRth and BaseVth are the Thevenin resistance (Ohm) and open-circuit
	// voltage (V, forward-referenced to the emitter rail) the base sees with
	// the transistor removed.
	BaseRth float64 `expr:"base_rth"`
	BaseVth float64 `expr:"base_vth"`

	// The case this fact set belongs to, for rules that judge only some
	// kinds of case. Swing is true at a point of a signal swing (capacitors
	// held at their operating-point voltages, see scenarios.go) and
	// SwingLevel is the swing source's deviation from its centre there, V
	// (0 outside a swing). DriveOpen is true when the case opens a drive of
	// this base. BaseFloats is true when, in a case that opens a drive of
	// this base, solving shows that nothing else holds it: the Thevenin
	// resistance the base sees exceeds 10 GOhm (see
	// TransistorFixed.OpenJudged). (The flags are kept together at the end
	// of the struct, where they pack into one word.)
	SwingLevel float64 `expr:"swing_level"`

	// hFE spread (cross-case, per drive-level scenario): IC in the "hfe min"
	// and "hfe max" corners of this case's scenario, A (forward-referenced),
	// and ICBetaSpread = |IC(hfe max) - IC(hfe min)| / |IC(nominal corner)|
	// (a share, 0.2 for 20 %). BetaJudged is true only in the nominal-corner
	// case of a scenario whose hFE corners were solved; the other fields
	// are 0 where it is false.
	ICHFEMin     float64 `expr:"ic_at_hfemin"`
	ICHFEMax     float64 `expr:"ic_at_hfemax"`
	ICBetaSpread float64 `expr:"ic_beta_spread"`

	// Electro-thermal facts. Thermal is true when the device temperature
	// comes from the coupled electro-thermal solve (see thermal.go);
	// DeviceTemp is the temperature the device was solved at, C.
	// ThermalGain is the loop gain dP/dTj * RthJA at this case's operating
	// point (dimensionless; 0 when Thermal is false, NaN when RthJA is not
	// known). ThermalRunaway is true when the junction runs away: the loop
	// gain at the fixed point is at or above 1, or there is no fixed point
	// and the loop gain reached 1 on the way up; RunawayTj is the junction
	// temperature from which it ran away, C (the operating Tj when it did
	// not). OverTemperature is true when the junction settles at a stable
	// point (loop gain below 1) above Tj max; Tj is then that point.
	DeviceTemp  float64 `expr:"device_temp"`
	ThermalGain float64 `expr:"thermal_gain"`
	RunawayTj   float64 `expr:"runaway_tj"`

	// Signal clipping, promoted (t.Clips, ...): see Clipping. The analysis
	// never leaves it nil; rules read a nil one as no clipping.
	*Clipping

	// The flags of the groups above.
	Swing           bool `expr:"swing"`
	DriveOpen       bool `expr:"drive_open"`
	BaseFloats      bool `expr:"base_floats"`
	BetaJudged      bool `expr:"beta_judged"`
	Thermal         bool `expr:"thermal"`
	ThermalRunaway  bool `expr:"thermal_runaway"`
	OverTemperature bool `expr:"over_temperature"`
}

// Clipping holds the signal-clipping facts of one transistor over the
// quasi-static swing of one source (cross-case: in a swing case the facts
// of that case's source, elsewhere the worst source). Clips is true when
// the stage, forward-active at the centre of the swing, leaves
// forward-active inside it; ClipSource is the source, ClipLevel the signed
// deviation of the source from its centre at which it leaves (V),
// ClipRegion where it goes ("saturation" or "cutoff"), SwingPeak the
// source's peak deviation (V), SwingGain the small-signal gain
// dV(collector)/dV(source) at the centre, and HeadroomMissing =
// (SwingPeak - |ClipLevel|) * |SwingGain|, the collector swing the stage
// lacks, V. Numbers are 0 where Clips is false. The cases of a transistor
// share one Clipping per source.
type Clipping struct {
	Clips           bool    `expr:"clips"`
	ClipSource      string  `expr:"clip_source"`
	ClipLevel       float64 `expr:"clip_level"`
	ClipRegion      string  `expr:"clip_region"`
	SwingPeak       float64 `expr:"swing_peak"`
	SwingGain       float64 `expr:"swing_gain"`
	HeadroomMissing float64 `expr:"headroom_missing"`
}

// ResistorFixed holds the facts of one resistor that are the same in
// every case, shared by its Resistor facts of every case.
type ResistorFixed struct {
	Name string `expr:"name"`
	// NodeA and NodeB are the flat net names.
	NodeA string `expr:"net_a"`
	NodeB string `expr:"net_b"`
	// Rating is the power rating in W (annotation, board file or the
	// default), and RatingFrom where it came from.
	Rating     float64 `expr:"power_rating"`
	RatingFrom string  `expr:"power_rating_from"`

	Pos   netlist.Pos        `expr:"-"`
	Chain []netlist.Instance `expr:"-"`
}

// Resistor holds the facts about one resistor in one case: the shared
// ResistorFixed, promoted, and this case's values.
type Resistor struct {
	*ResistorFixed
	// R is the resistance, Ohm; V the voltage across it, V; I the current
	// through it, A; Power = V*I, W.
	R     float64 `expr:"r"`
	V     float64 `expr:"v"`
	I     float64 `expr:"i"`
	Power float64 `expr:"power"`
}

// NodeFixed holds the facts of one net that are the same in every case.
type NodeFixed struct {
	Name string `expr:"name"`
	// Pos is the first element line that names the net.
	Pos netlist.Pos `expr:"-"`
}

// Node holds the facts about one net in one case: the shared NodeFixed,
// promoted, and this case's values.
type Node struct {
	*NodeFixed
	// V is the DC voltage to ground, V.
	V float64 `expr:"v"`
	// Peak is the largest magnitude of the node voltage over the case's
	// signal swing (equal to |V| when there is none), V.
	Peak float64 `expr:"peak"`
}

// Case is one solved operating point of a circuit: a scenario (nominal,
// a drive level, a point of a signal swing) at a corner (hFE, ambient,
// supply and resistor tolerances), with every fact computed there.
type Case struct {
	// Scenario names the scenario, e.g. "nominal".
	Scenario string
	// Corner names the corner, "" for nominal values.
	Corner      string
	Ambient     float64
	Transistors []Transistor
	Resistors   []Resistor
	Nodes       []Node
	// Solution is the solved operating point the facts were taken from,
	// kept for the nominal case and the stable states of a circuit with
	// several (Kind "nominal" and "stable state"); nil in the others, whose
	// facts hold what rules judge (a board of many devices and cases
	// would otherwise hold every case's node voltages twice).
	Solution *solve.Result
	// Kind says how the case was made: "nominal", "drive level", "drive
	// open", "swing", "corner" or "monte carlo".
	Kind string
	// Run is the Monte Carlo run number (1-based), 0 for other cases.
	Run int
	// Unjudged, when not empty, says why the case could not be solved
	// (what the solver tried); such a case has no subjects and no
	// Solution, and every other case is judged as usual.
	Unjudged string
	// Unphysical lists the devices whose operating point in this case is
	// not physical (solve.Result.Unphysical); the transistors' currents,
	// voltages, power and temperatures are NaN, and the case has no
	// resistor or net subjects.
	Unphysical []solve.Unphysical
}

// Analysis is everything checks learned about one circuit.
type Analysis struct {
	// Circuit is the flat circuit analysed.
	Circuit *netlist.Circuit
	// Cases holds the nominal case first, then any others.
	Cases []Case
	// Board is what the design says about itself (annotations merged with
	// a board file): ratings, roles, power ratings and waivers.
	Board *board.Settings
	// Notes are located notes and warnings about the analysis (e.g. a
	// device checked against generic ratings).
	Notes []*netlist.Error
	// States is not nil when the first DC solution found was unstable (a
	// circuit with positive feedback): it lists the stable states and the
	// cases that hold them (see states.go).
	States *States
	// Temp is the circuit temperature of the nominal case, C, and
	// TempFrom where it came from (TempFromOption, TempFromNetlist or
	// TempFromAmbient).
	Temp     float64
	TempFrom string
}
