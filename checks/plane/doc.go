// Package plane computes the geometry of a bipolar transistor's output
// plane, collector current IC against collector-emitter voltage VCE, as a
// review report draws it: the DC load line the collector and emitter
// networks impose, the safe operating area the ratings allow, the edge of
// saturation, and the transistor's operating point in every solved case.
// It computes numbers only; drawing them is the report's job.
//
// All quantities are SI (V, A, W, Ohm) and forward-referenced like the
// facts of package checks: for a PNP, VCE is V(E) − V(C) and IC the current
// out of the collector, so both polarities occupy the first quadrant.
//
// # Load line
//
// With the transistor removed, the network seen between collector and
// emitter is, when linear, a Thevenin source
//
//	VCE = VOpen − R·IC,   R = Rc,th + Re,th
//
// (the base current neglected, IE ≈ IC, as the textbook load line takes
// it). LoadLineOf finds it by solving the whole circuit with a test current
// source IC in place of the transistor (flowing into the collector node's
// side and out of the emitter's, with the base held only by a 1 TOhm leak):
// VOpen is VCE at IC = 0, and R the slope measured half-way to the IC-axis
// intercept IShort = VOpen/R. It also samples the curve VCE(IC) at test
// currents from 0 to IShort, which is the straight line for a linear
// network and shows the bend where other devices load the network.
//
// # Safe operating area
//
// Boundary is the DC safe-operating-area outline from the ratings: the
// current limit IC = ICmax, the dissipation hyperbola IC = Pd(Ta)/VCE with
// the derated power limit Pd(Ta), and the voltage limit VCE = VCEO. (The
// second-breakdown region of a datasheet's SOA is not modelled.)
//
// # Saturation edge
//
// SaturationEdge is the locus where package device's region classification
// changes from forward-active to saturation: the internal VCE equals the
// larger of device.SatVCE and VBE(IC) − device.OnVoltage (the collector-base
// junction reaching OnVoltage), with VBE(IC) = NF·vt·ln(1 + IC/IS) from the
// ideal forward diode law of the Gummel-Poon model (Gummel & Poon 1970), plus
// the ohmic drop IC·(RC + RE) in the terminal resistances.
package plane
