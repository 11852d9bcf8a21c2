// Package demo embeds the demonstration netlists that `biaslint ...
// --demo` runs on: two revisions of a small invented bench-logger board
// with NPN and PNP stages. Revision A carries five mistakes of different
// kinds, each explained with a hand estimate in its comments; revision B
// is the same board with the fixes, on which the default rule set finds
// nothing.
package demo

import (
	_ "embed"
	"fmt"
	"strings"
)

// Revision is one built-in revision of the demo board.
type Revision struct {
	// ID is the revision letter ("A", "B"); Name the file name it is
	// reported under; About says what the revision shows.
	ID, Name, About string
	Netlist         []byte
}

var (
	//go:embed bench-logger-rev-a.cir
	revA []byte
	//go:embed bench-logger.cir
	revB []byte
)

// Revisions are the demo board's revisions, the first revision first.
var Revisions = []Revision{
	{ID: "A", Name: "bench-logger-rev-a.cir", About: "the first layout, with five mistakes to find", Netlist: revA},
	{ID: "B", Name: "bench-logger.cir", About: "the corrected board, with no findings", Netlist: revB},
}

// First is the revision --demo runs when none is named: the one with the
// mistakes.
func First() Revision { return Revisions[0] }

// Lookup returns the revision with the given ID (any case).
func Lookup(id string) (Revision, error) {
	var ids []string
	for _, r := range Revisions {
		if strings.EqualFold(r.ID, id) {
			return r, nil
		}
		ids = append(ids, r.ID)
	}
	return Revision{}, fmt.Errorf("no demo revision %q (the demo board has revisions %s)", id, strings.Join(ids, " and "))
}
