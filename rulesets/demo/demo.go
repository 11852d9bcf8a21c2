// Package demo embeds the demonstration netlist that `biaslint ... --demo`
// runs on: a small invented bench-logger board with NPN and PNP stages.
package demo

import _ "embed"

// Name is the file name the demo netlist is reported under.
const Name = "bench-logger.cir"

// Netlist is the demo board's netlist text.
//
//go:embed bench-logger.cir
var Netlist []byte
