package checks

import (
	"math"
	"strings"
	"testing"
)

// A base tied straight to an ideal 3.3 V source with no RB or RE in the
// model has no finite operating point: the transistor is marked not
// physical, with no current, power or temperature figure, and a warning
// says why. An LED without RS across the same kind of rail marks only the
// LED: the rail holds its node, so a transistor elsewhere keeps its facts.
func TestNotPhysicalFacts(t *testing.T) {
	a := analyze(t, `stiff base
VCC vcc 0 12
VMCU b 0 3.3
RL vcc c 1k
Q1 c b 0 N1
.model N1 NPN (IS=1e-14 BF=100)
.end
`)
	nom := a.Cases[0]
	q := nom.Transistors[0]
	if len(nom.Unphysical) != 1 || q.Region != RegionNotPhysical || !math.IsNaN(q.IB) || !math.IsNaN(q.Power) || !math.IsNaN(q.Tj) {
		t.Errorf("stiff base: unphysical %v, region %q, IB %g, power %g, Tj %g; want Q1 not physical with NaN figures",
			nom.Unphysical, q.Region, q.IB, q.Power, q.Tj)
	}
	warned := false
	for _, n := range a.Notes {
		warned = warned || strings.Contains(n.Msg, "not physical") && strings.Contains(n.Msg, "Q1")
	}
	if !warned {
		t.Errorf("no warning names Q1's point as not physical: %v", a.Notes)
	}

	b := analyze(t, `LED across the rail
VCC vcc 0 5
DLED vcc 0 LED
R1 vcc b 82k
R2 b 0 15k
RC vcc c 2.2k
RE e 0 100
Q1 c b e N1
.model LED D (IS=1e-20 N=1.6)
.model N1 NPN (IS=1e-14 BF=200)
.end
`)
	nom = b.Cases[0]
	q = nom.Transistors[0]
	if len(nom.Unphysical) != 1 || nom.Unphysical[0].Device != "DLED" || q.Region != "active" || math.IsNaN(q.IC) || len(nom.Resistors) == 0 {
		t.Errorf("LED across the rail: unphysical %v, Q1 region %q IC %g, %d resistors; want only DLED marked, Q1 judged",
			nom.Unphysical, q.Region, q.IC, len(nom.Resistors))
	}
}
