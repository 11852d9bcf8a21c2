package checks

import (
	"fmt"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks/board"
	"github.com/biaslint/biaslint/netlist"
)

// cellRoles are the roles of one generated board cell (see boardCells), in
// the order its transistors are written.
var cellRoles = []string{
	RoleSwitch, RoleSwitch, // NPN from a controller pin, PNP high side after it
	RoleCommonEmitter, RoleFollower, // degenerated stage and its follower
	RoleDiffPair, RoleDiffPair, RoleCurrentSource, // pair with a current-source tail
	RoleMirrorRef, RoleMirrorOut, // two-transistor mirror
	RoleVBEMultiplier, RolePushPull, RolePushPull, // class-AB output
	RoleFollower, RoleClamp, // follower with a current limiter, normally off
}

// boardCells writes a generated board of n cells sharing the supplies,
// each the 14 transistors of cellRoles with their own nets (prefix cK_).
func boardCells(n int) string {
	var b strings.Builder
	b.WriteString("generated board\nVCC vcc 0 12\nVEE vee 0 -12\n")
	for k := 0; k < n; k++ {
		p := fmt.Sprintf("c%d_", k)
		r := strings.NewReplacer("@", p)
		b.WriteString(r.Replace(`V@PIN @pin 0 DC 3.3
R@1 @pin @b1 4.7k
R@2 @b1 0 47k
Q@1 @c1 @b1 0 CN
R@3 @b2 @c1 2.2k
R@4 vcc @b2 10k
Q@2 @heat @b2 vcc CP
R@HEAT @heat 0 240
V@S @sig 0 SIN(0 10m 1k)
C@IN @sig @b3 10u
R@5 vcc @b3 82k
R@6 @b3 0 15k
R@C3 vcc @c3 4.7k
R@E3 @e3 0 1k
Q@3 @c3 @b3 @e3 CN
Q@4 vcc @c3 @e4 CN
R@E4 @e4 0 3.3k
R@B5 0 @b5 1k
R@B6 0 @b6 1k
R@C5 vcc @c5 10k
R@C6 vcc @c6 10k
Q@5 @c5 @b5 @tail CN
Q@6 @c6 @b6 @tail CN
Q@7 @tail @b7 @e7 CN
R@7 0 @b7 10k
R@8 @b7 vee 2.2k
R@E7 @e7 vee 1.5k
R@REF vcc @ref 10k
Q@8 @ref @ref 0 CN
Q@9 @mo @ref 0 CN
R@L9 vcc @mo 4.7k
R@11 vcc @a 2.2k
R@12 @a @m 1k
R@13 @m @bn 1k
Q@10 @a @m @bn CN
R@14 @bn vee 2.2k
Q@11 vcc @a @en CN
R@EN @en @out 10
Q@12 vee @bn @ep CP
R@EP @ep @out 10
R@LO @out 0 1k
R@15 vcc @b13 10k
R@16 @b13 0 10k
Q@13 vcc @b13 @e13 CN
R@S @e13 @o13 10
R@L13 @o13 0 1k
Q@14 @b13 @e13 @o13 CN
`))
	}
	b.WriteString(".model CN NPN (IS=1e-14 BF=200)\n.model CP PNP (IS=1e-14 BF=180)\n.end\n")
	return b.String()
}

// classifyBoard reads a generated board and returns what classify needs:
// the graph, the transistors, their polarities and a nominal solve that
// has every transistor conducting 1 mA (the switches saturated) except
// each cell's clamp (off).
func classifyBoard(tb testing.TB, cells int) (*graph, []*netlist.Element, []string, []nominalOp, *board.Settings) {
	tb.Helper()
	c, err := netlist.ReadSource("gen.cir", []byte(boardCells(cells)), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err != nil {
		tb.Fatal(err)
	}
	b, _ := board.FromCircuit(c)
	var bjts []*netlist.Element
	var pol []string
	var ops []nominalOp
	for _, e := range c.Elements {
		if e.Kind != 'Q' {
			continue
		}
		bjts = append(bjts, e)
		p := "npn"
		if m := c.Models[netlist.Key(e.Model)]; m != nil && m.Type == netlist.PNP {
			p = "pnp"
		}
		pol = append(pol, p)
		op := nominalOp{known: true, ic: 1e-3, vbe: 0.65, region: "active"}
		if strings.HasSuffix(e.Name, "_1") || strings.HasSuffix(e.Name, "_2") {
			op.region = "saturation" // the pin switch and its high-side switch are on
		}
		if strings.HasSuffix(e.Name, "14") {
			op = nominalOp{known: true, ic: 1e-12, vbe: 0.05, region: "cutoff"}
		}
		ops = append(ops, op)
	}
	return newGraph(c, b), bjts, pol, ops, b
}

// Every transistor of a generated board gets its cell's role, however
// many cells there are: the index does not mix up cells that share the
// supplies.
func TestClassifyGeneratedBoard(t *testing.T) {
	for _, cells := range []int{1, 15} {
		g, bjts, pol, ops, b := classifyBoard(t, cells)
		out := classify(g, bjts, pol, ops, b)
		for j, r := range out {
			if want := cellRoles[j%len(cellRoles)]; r.role != want || r.reason == "" {
				t.Errorf("%d cells: %s: role %s (%s: %s), want %s", cells, bjts[j].Name, r.role, r.from, r.reason, want)
			}
		}
	}
}

func benchClassify(b *testing.B, transistors int) {
	g, bjts, pol, ops, bs := classifyBoard(b, (transistors+len(cellRoles)-1)/len(cellRoles))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		// The whole of role classification: the graph with its rails,
		// controller pins and drive components, and the roles.
		g := newGraph(g.c, bs)
		classify(g, bjts, pol, ops, bs)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(bjts)), "ns/transistor")
}

// BenchmarkRoles200 and BenchmarkRoles2000 classify every transistor of a
// generated board of about 200 and 2000 transistors (14 per cell, all
// sharing the supplies); time per transistor should stay flat.
func BenchmarkRoles200(b *testing.B)  { benchClassify(b, 200) }
func BenchmarkRoles2000(b *testing.B) { benchClassify(b, 2000) }

// The reason names the parts that decided the role, and an annotation
// wins over the topology; role=linear keeps the linear role found.
func TestRoleReasonAndAnnotation(t *testing.T) {
	src := `relay from a pin, and a follower annotated
VCC vcc 0 12
V2 pin 0 DC 3.3
R3 pin b 1k
R4 b 0 10k
RK1 vcc c 400
Q1 c b 0 N
R5 vcc b2 10k
R6 b2 0 10k
Q2 vcc b2 e2 N
RE2 e2 0 1k
Q3 vcc b2 e3 N
RE3 e3 0 1k
*@device Q2 role=linear
*@device Q3 role=clamp
.model N NPN (BF=200)
`
	a := analyze(t, src)
	for _, tc := range []struct{ name, role, from, reason string }{
		{"Q1", RoleSwitch, "topology", "emitter at ground, base fed by R3 from V2 (DC 3.30 V), collector load RK1"},
		{"Q2", RoleFollower, "annotation", "annotation at t.cir:14:1; topology agrees: collector at vcc, output at the emitter (net e2, load RE2 to ground)"},
		{"Q3", RoleClamp, "annotation", "annotation at t.cir:15:1"},
	} {
		q := transistor(t, a, tc.name)
		if q.Role != tc.role || q.RoleFrom != tc.from || q.RoleReason != tc.reason {
			t.Errorf("%s: %s (%s) %q; want %s (%s) %q", tc.name, q.Role, q.RoleFrom, q.RoleReason, tc.role, tc.from, tc.reason)
		}
	}
	if q := transistor(t, a, "Q3"); q.Linear {
		t.Errorf("Q3 annotated clamp is linear")
	}
}

// A plain DC source is a controller pin only when its net reaches bases
// and nothing else through resistors and capacitors.
func TestPinNet(t *testing.T) {
	const tail = "RL vcc c 1k\nQ1 c b 0 N\n.model N NPN\n"
	for _, tc := range []struct {
		name, src string
		pin       bool
	}{
		{"base resistor", "VCC vcc 0 5\nVP p 0 3.3\nRB p b 1k\n" + tail, true},
		{"pull-down and RC filter", "VCC vcc 0 5\nVP p 0 3.3\nRPD p 0 100k\nR1 p f 1k\nC1 f 0 1n\nR2 f b 1k\n" + tail, true},
		{"straight on the base", "VCC vcc 0 5\nVP b 0 0.7\n" + tail, false},
		{"also feeds a collector", "VCC vcc 0 5\nVP p 0 3.3\nRB p b 1k\nR2 p c2 1k\nQ2 c2 b 0 N\n" + tail, false},
		{"also feeds a diode", "VCC vcc 0 5\nVP p 0 3.3\nRB p b 1k\nD1 p x DD\nRX x 0 1k\n.model DD D\n" + tail, false},
		{"a supply with a divider and an emitter resistor", "VCC vcc 0 5\nVP p 0 3.3\nR1 p b 10k\nR2 b 0 10k\nRE e p 1k\nRC vcc c 1k\nQ1 c b e N\n.model N NPN\n", false},
		{"not on ground", "VCC vcc 0 5\nVP p vcc 3.3\nRB p b 1k\n" + tail, false},
		// A PNP high-side switch: its pull-up goes to the supply its
		// emitter sits on, which the pin's walk stops at as at ground.
		{"PNP with a pull-up to its emitter supply", "VBAT vbat 0 12\nVP p 0 0\nRB p b 4.4k\nRPU vbat b 10k\nQ1 c b vbat P\nRL c 0 220\n.model P PNP\n", true},
		// A resistor chain from the pin to a supply that feeds no
		// transistor's collector or emitter is not stopped there.
		{"resistor to another source's net", "VCC vcc 0 5\nVX x 0 2\nVP p 0 3.3\nRB p b 1k\nRX p x 1k\n" + tail, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := circuit(t, "pin test\n"+tc.src)
			b, _ := board.FromCircuit(c)
			g := newGraph(c, b)
			var vp *netlist.Element
			for _, e := range c.Elements {
				if e.Name == "VP" {
					vp = e
				}
			}
			got := g.pin["p"] == vp || g.pin["b"] == vp
			if got != tc.pin {
				t.Errorf("VP is a pin: %v, want %v", got, tc.pin)
			}
			if got && g.rail["p"] {
				t.Errorf("a pin's net is a rail")
			}
		})
	}
}

// A transistor that is off with its base resistor to ground is not a
// clamp because other emitters sit on ground too: the resistor must be
// one another transistor's emitter feeds (as in a current limiter).
func TestOffIsNotClampByRail(t *testing.T) {
	a := analyze(t, "jig\nVCC vcc 0 5\nRL vcc out 1k\nQ1 out b 0 N\nQ2 out b 0 N\nRS b 0 1k\n.model N NPN\n")
	for _, name := range []string{"Q1", "Q2"} {
		if q := transistor(t, a, name); q.Role != RoleCommonEmitter {
			t.Errorf("%s: %s (%s), want common-emitter", name, q.Role, q.RoleReason)
		}
	}
}
