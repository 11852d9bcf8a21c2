package checks

// This file bounds the memory an analysis holds (Options.MemoryLimit).
// The analysis stores, per case, one Transistor, Resistor and Node fact
// set per device and net, and, until the case's facts are taken, its
// solution; the case-independent facts and the workers' prepared systems
// are held once. Before the workers are made, and before each group of
// cases is solved, the memory of everything planned so far is estimated
// from the exact sizes of these structures; an analysis whose estimate
// exceeds the limit stops there with a *MemoryError, so a file that would
// take more than its share of a machine is refused before it is solved,
// not after.

import (
	"fmt"
	"runtime"
	"unsafe"

	"github.com/biaslint/biaslint/checks/solve"
)

// MemoryError is the error of an analysis whose estimated memory exceeds
// Options.MemoryLimit. Need is the estimate and Limit the limit, bytes;
// Cases the number of cases planned when it was refused.
type MemoryError struct {
	Need, Limit int64
	Cases       int
}

func (e *MemoryError) Error() string {
	cases := "1 case"
	if e.Cases != 1 {
		cases = fmt.Sprintf("%d cases", e.Cases)
	}
	return fmt.Sprintf("checking it would hold about %s for %s, more than the limit of %s",
		MiB(e.Need), cases, MiB(e.Limit))
}

// MiB writes a byte count in mebibytes, rounded up ("12 MiB").
func MiB(b int64) string { return fmt.Sprintf("%d MiB", (b+(1<<20)-1)>>20) }

// Sizes of the stored structures, bytes (exact, from the Go types).
const (
	transistorBytes = int64(unsafe.Sizeof(Transistor{}))
	resistorBytes   = int64(unsafe.Sizeof(Resistor{}))
	nodeBytes       = int64(unsafe.Sizeof(Node{}))
	caseBytes       = int64(unsafe.Sizeof(Case{}))
	bjtOpBytes      = int64(unsafe.Sizeof(solve.BJTOp{}))
	diodeOpBytes    = int64(unsafe.Sizeof(solve.DiodeOp{}))
	nodeVBytes      = int64(unsafe.Sizeof(solve.NodeVoltage{}))
	branchBytes     = int64(unsafe.Sizeof(solve.BranchCurrent{}))
	fixedBytes      = int64(unsafe.Sizeof(TransistorFixed{}))
	resFixedBytes   = int64(unsafe.Sizeof(ResistorFixed{}))
	nodeFixedBytes  = int64(unsafe.Sizeof(NodeFixed{}))
)

// systemBytesPerEntry is the memory of a worker's prepared system per
// element and unknown, bytes: element records, device instances and
// their evaluations, the Newton buffers and the sparse LU's pattern and
// values with their fill. Measured on boards of 25, 400 and 2000
// divider-biased stages (heap in use after preparing the workers, per
// system, divided by elements + unknowns): 850-980, 520 and 460 B; the
// largest, rounded up.
const systemBytesPerEntry = 1024

// memoryNeed estimates the bytes the analysis holds with cases cases
// planned: the per-case facts and solutions (a solution is held until
// its case's facts are taken, so at the peak both are), the shared facts,
// and the workers' systems.
func (a *analyzer) memoryNeed(cases int) int64 {
	nq, nr, nn := int64(len(a.bjts)), int64(a.countResistors()), int64(len(a.firstPos))
	nd := int64(0)
	for _, el := range a.c.Elements {
		if el.Kind == 'D' {
			nd++
		}
	}
	perCase := caseBytes + nq*transistorBytes + nr*resistorBytes + nn*nodeBytes
	perCase += nq*bjtOpBytes + nd*diodeOpBytes + nn*nodeVBytes + int64(len(a.c.Elements))*branchBytes/4
	shared := nq*2*fixedBytes + nr*resFixedBytes + nn*nodeFixedBytes
	workers := int64(a.workers) // besides a.sys
	if a.pool != nil {
		workers = int64(len(a.pool.workers))
	}
	unknowns := nn + int64(len(a.c.Elements))/4
	if a.sys != nil {
		unknowns = int64(a.sys.Size())
	}
	system := (int64(len(a.c.Elements)) + unknowns) * systemBytesPerEntry
	return int64(cases)*perCase + shared + (workers+1)*system
}

// countResistors is the number of two-node resistors (the resistor
// subjects of a case).
func (a *analyzer) countResistors() int {
	if a.resFixed != nil {
		return a.nres
	}
	n := 0
	for _, el := range a.c.Elements {
		if el.Kind == 'R' && len(el.Nodes) == 2 {
			n++
		}
	}
	return n
}

// workerCount is the number of workers Analyze makes (as newPool).
func workerCount(opt Options) int {
	if opt.Workers > 0 {
		return opt.Workers
	}
	return runtime.GOMAXPROCS(0)
}

// fits returns a *MemoryError when holding cases cases would exceed
// Options.MemoryLimit (none when it is 0).
func (a *analyzer) fits(cases int) error {
	if a.opt.MemoryLimit <= 0 {
		return nil
	}
	if need := a.memoryNeed(cases); need > a.opt.MemoryLimit {
		return &MemoryError{Need: need, Limit: a.opt.MemoryLimit, Cases: cases}
	}
	return nil
}
