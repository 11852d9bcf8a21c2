// Package solve finds the DC operating point of a flat netlist.Circuit.
//
// The circuit is written in modified nodal analysis (MNA): one unknown per
// node voltage (ground excluded) and one branch-current unknown per element
// that fixes a voltage (V, L, E, H and zero-ohm resistors). At DC an
// inductor is a zero-volt branch and a capacitor is open. Node rows state
// Kirchhoff's current law, Σ currents leaving the node = 0; branch rows
// state the element's voltage equation. Diodes and transistors (package
// device) are linearised about the current iterate and the system
//
//	F(x) = A·x − b + i(x) = 0
//
// is solved by Newton-Raphson with junction-voltage limiting. If plain
// Newton fails, GMIN stepping (a conductance from every node to ground,
// shrunk step by step) and then source stepping (every independent source
// ramped from zero) are tried; every schedule is bounded.
//
// Convergence needs both a settled update, for every unknown
//
//	|Δv| ≤ RELTOL·max(|v|,|v'|) + VNTOL  (node voltages)
//	|Δi| ≤ RELTOL·max(|i|,|i'|) + ABSTOL (branch currents)
//
// and Kirchhoff's law met at every node, |Σ i| ≤ ABSTOL + 64·ε·Σ|i| (the
// second term is the rounding floor of the sum, ε the float64 epsilon),
// with no junction voltage limited in the last step.
//
// Before anything is solved, Prepare checks the circuit's structure and
// reports every problem as a located error naming the elements: nodes
// without a DC path to ground, loops of voltage sources and shorts, bad
// values, missing models and controlling sources.
//
// A zero-ohm resistor is read as a short (a zero-volt branch, like an
// inductor). A zero-ohm resistor across a voltage source therefore closes a
// loop of voltage sources and shorts, which is an error.
//
// The linear solve sits behind LinearSolver. Each System owns a SparseLU
// (minimum-degree ordering once per pattern, Gilbert-Peierls factorisation
// with threshold pivoting, value-only refactorisation across Newton steps);
// DenseLU (gonum's LU) is kept as a reference. Options.Remove, Open and
// Inject change the circuit for one solve without changing its pattern,
// and SolveGains and SolveResponse give first-order sensitivities on the
// factorisation of a converged solve.
package solve
