// Package device holds the DC models of the semiconductor devices biaslint
// solves: the Gummel-Poon bipolar transistor and the junction diode, with the
// temperature scaling, junction-voltage limiting and operating-region
// classification the solver needs.
//
// The equations follow the SPICE2 formulation of L. W. Nagel, "SPICE2: A
// computer program to simulate semiconductor circuits", UCB/ERL M520 (1975),
// of the model of H. K. Gummel and H. C. Poon, "An integral charge control
// model of bipolar transistors", Bell Syst. Tech. J. 49 (1970). Only the DC
// part is modelled: charges, capacitances and transit times are ignored, and
// so are the parameters that set them.
//
// All quantities are SI: volts, amperes, siemens, ohms, kelvin inside; model
// and circuit temperatures are given in degrees Celsius, as netlists write
// them.
package device
