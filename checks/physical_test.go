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

// A case without an operating point is kept without subjects and says why;
// the nominal case and every other case are judged.
func TestUnjudgedCase(t *testing.T) {
	c := circuit(t, `pulse typed as 1e15 V
VCC vcc 0 12
VDRV drv 0 PULSE(0 1e15 0 1n 1n 1m 2m)
RX drv x 1e-15
DX x 0 DX
RB drv b 10k
Q1 c b 0 N1
RC vcc c 1k
.model DX D (IS=1e-14 N=0.01)
.model N1 NPN (IS=1e-14 BF=200 VAF=100)
.end
`)
	a, err := Analyze(c, Options{Scenarios: true, Corners: true})
	if err != nil {
		t.Fatalf("Analyze: %v", err)
	}
	judged, unjudged := 0, 0
	for _, cs := range a.Cases {
		switch {
		case cs.Unjudged != "":
			unjudged++
			if len(cs.Transistors) > 0 || cs.Solution != nil || !strings.Contains(cs.Unjudged, "tried") {
				t.Errorf("case %s/%s: unjudged %q with %d transistors", cs.Scenario, cs.Corner, cs.Unjudged, len(cs.Transistors))
			}
		default:
			judged++
		}
	}
	if a.Cases[0].Unjudged != "" || unjudged == 0 || judged < 2 {
		t.Errorf("%d cases judged, %d unjudged (nominal %q); want the nominal and others judged, some not", judged, unjudged, a.Cases[0].Unjudged)
	}
}
