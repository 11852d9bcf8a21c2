package plane

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/checks/device"
	"github.com/biaslint/biaslint/checks/solve"
	"github.com/biaslint/biaslint/netlist"
)

// Point is one point of the output plane: VCE in V and IC in A, both
// forward-referenced.
type Point struct {
	VCE float64
	IC  float64
}

// Kind says what sort of case an operating point comes from; the report
// gives each kind its own marker.
type Kind string

// Kinds of case.
const (
	// Nominal is the nominal case: nominal values, no corner.
	Nominal Kind = "nominal"
	// Scenario is another DC state at nominal values: a drive level, an
	// opened drive.
	Scenario Kind = "scenario"
	// Corner is a scenario at a corner (hFE, ambient, supply, tolerances).
	Corner Kind = "corner"
	// MonteCarlo is a Monte Carlo run.
	MonteCarlo Kind = "monte carlo"
	// Swing is a point of a solved signal swing.
	Swing Kind = "swing"
)

// Kinds lists the kinds in legend order.
var Kinds = []Kind{Nominal, Scenario, Corner, MonteCarlo, Swing}

// KindOf classifies case i of an analysis by its checks.Case.Kind; a case
// without one is Nominal when it is the first, Corner when it names a
// corner, and Scenario otherwise.
func KindOf(i int, c checks.Case) Kind {
	switch c.Kind {
	case checks.KindNominal:
		return Nominal
	case checks.KindLevel, checks.KindOpen:
		return Scenario
	case checks.KindCorner:
		return Corner
	case checks.KindMonteCarlo:
		return MonteCarlo
	case checks.KindSwing:
		return Swing
	}
	switch {
	case i == 0:
		return Nominal
	case c.Corner != "":
		return Corner
	}
	return Scenario
}

// Trajectory is the path of the operating point over one source's signal
// swing, in order of the source's level, through the nominal point.
type Trajectory struct {
	// Source names the swing source (the first word of its cases'
	// scenario names).
	Source string
	Points []Point
}

// OpPoint is a transistor's operating point in one case.
type OpPoint struct {
	Point
	Kind Kind
	// Case names the case, "scenario" or "scenario/corner".
	Case string
	// Region is the operating region there; Power the dissipation, W.
	Region string
	Power  float64
	// Level is the swing source's deviation from its centre at a Swing
	// point, V (0 elsewhere).
	Level float64
}

// LoadLine is the DC load line of a transistor's collector-emitter loop.
type LoadLine struct {
	// VOpen is the VCE-axis intercept: the open-circuit voltage the
	// network holds across collector and emitter with the transistor
	// removed, V.
	VOpen float64
	// IShort is the IC-axis intercept: the current the network drives
	// through collector and emitter shorted together, A (+Inf when the
	// loop has no resistance).
	IShort float64
	// R is VOpen/IShort, the loop's Thevenin resistance Rc,th + Re,th
	// when the network is linear, Ohm (0 for a loop without resistance).
	R float64
	// Curve is IC against VCE sampled from (VOpen, 0) to (0, IShort); a
	// straight line for a linear network. For a loop without resistance it
	// holds (VOpen, 0) only: the line is vertical.
	Curve []Point
}

// Segment is one piece of the safe-operating-area outline.
type Segment struct {
	// Limit names the rating the piece comes from: "icmax", "power" or
	// "vceo".
	Limit  string
	Points []Point
}

// SOA is the DC safe operating area the ratings allow.
type SOA struct {
	// ICMax (A), VCEO (V) and Pd (the derated dissipation limit at the
	// ambient, W) are the ratings used; NaN when not known.
	ICMax, VCEO, Pd float64
	// Segments is the outline, from the current limit to the voltage
	// limit; a rating not known gives no segment.
	Segments []Segment
}

// Plane is everything a report draws for one transistor.
type Plane struct {
	// Device is the flat device name; Model its model; Polarity "npn" or
	// "pnp".
	Device, Model, Polarity string
	// Ambient is the nominal case's ambient, C.
	Ambient float64
	// Load is the DC load line, nil when it could not be found; LoadNote
	// then says why.
	Load     *LoadLine
	LoadNote string
	SOA      SOA
	// Saturation is the edge of the saturation region, VCE against IC
	// from 0 to YMax; nil when the model could not be built.
	Saturation []Point
	// Points holds the operating point of every case, in case order.
	Points []OpPoint
	// Swings are the trajectories over each solved signal swing.
	Swings []Trajectory
	// XMax (V) and YMax (A) bound the plotted area (see View).
	XMax, YMax float64
}

// Bounds of the loop resistance, Ohm: above highR the loop has no
// resistive path (a current source or an open terminal), below lowR it has
// no resistance at all (both terminals on rails).
const (
	highR = 1e10
	lowR  = 1e-3
)

// curvePoints is the number of intervals the load line is sampled in.
const curvePoints = 20

// probeCurrent is the test current, A, that measures the loop resistance
// before the sweep.
const probeCurrent = 1e-6

// LoadLineOf finds the DC load line of transistor name in c (see the
// package comment). opt is used for every solve (temperature, device
// temperatures); the transistor's own entry in opt.DeviceTemp is ignored.
func LoadLineOf(c *netlist.Circuit, name string, opt solve.Options) (LoadLine, error) {
	q := c.Element(name)
	if q == nil || q.Kind != 'Q' || len(q.Nodes) < 3 {
		return LoadLine{}, fmt.Errorf("%s is not a transistor of the circuit", name)
	}
	pnp := false
	if m := c.Models[q.Model]; m != nil && m.Type == netlist.PNP {
		pnp = true
	}
	col, emit := q.Nodes[0], q.Nodes[2]
	// The forward direction of the loop: into the collector and out of the
	// emitter of an NPN, the reverse for a PNP.
	hi, lo := col, emit
	if pnp {
		hi, lo = emit, col
	}
	without := func(extra *netlist.Element) *netlist.Circuit { return solve.Without(c, q, extra) }
	vfwd := func(r *solve.Result) float64 {
		return r.V(netlist.Key(hi)) - r.V(netlist.Key(lo))
	}

	// Open circuit, then a small test current: VOpen and the resistance.
	src := &netlist.Element{Kind: 'I', Name: "I#plane", Nodes: []string{hi, lo},
		Source: &netlist.Source{DC: 0, HasDC: true}, Pos: q.Pos}
	open, err := solve.Prepare(without(src))
	if err != nil {
		return LoadLine{}, fmt.Errorf("the circuit without %s cannot be solved: %v", q.Name, err)
	}
	r0, err := open.Solve(opt)
	if err != nil {
		return LoadLine{}, fmt.Errorf("the circuit without %s cannot be solved: %v", q.Name, err)
	}
	v0 := vfwd(r0)
	if !(v0 > 0) || math.IsInf(v0, 0) {
		return LoadLine{}, fmt.Errorf("with %s removed its collector-emitter network holds %.3g V across it, no forward voltage", q.Name, v0)
	}
	if err := open.SetValue("I#plane", probeCurrent); err != nil {
		return LoadLine{}, err
	}
	g := opt
	g.Guess = r0
	r1, err := open.Solve(g)
	if err != nil {
		return LoadLine{}, fmt.Errorf("the circuit without %s cannot be solved with a test current: %v", q.Name, err)
	}
	rest := (v0 - vfwd(r1)) / probeCurrent
	switch {
	case rest > highR || math.IsNaN(rest):
		return LoadLine{}, fmt.Errorf("the collector-emitter loop of %s has no resistive path (a current source or an open terminal sets the current)", q.Name)
	case rest < lowR:
		return LoadLine{VOpen: v0, IShort: math.Inf(1), R: 0, Curve: []Point{{VCE: v0}}}, nil
	}

	// Sweep a voltage source in the transistor's place from VOpen to 0.
	vs := &netlist.Element{Kind: 'V', Name: "V#plane", Nodes: []string{hi, lo},
		Source: &netlist.Source{DC: v0, HasDC: true}, Pos: q.Pos}
	sys, err := solve.Prepare(without(vs))
	if err != nil {
		return LoadLine{}, fmt.Errorf("the circuit without %s cannot be solved with a test voltage: %v", q.Name, err)
	}
	ll := LoadLine{VOpen: v0}
	var prev *solve.Result
	for k := 0; k <= curvePoints; k++ {
		v := v0 * float64(curvePoints-k) / curvePoints
		if err := sys.SetValue("V#plane", v); err != nil {
			return LoadLine{}, err
		}
		o := opt
		o.Guess = prev
		r, err := sys.Solve(o)
		if err != nil {
			break // keep the part of the curve found
		}
		prev = r
		// The branch current flows into the source's + terminal: the
		// current the network drives into the transistor's place.
		ic, _ := r.I("V#plane")
		ll.Curve = append(ll.Curve, Point{VCE: v, IC: ic})
	}
	if len(ll.Curve) < 2 || ll.Curve[len(ll.Curve)-1].VCE != 0 {
		return LoadLine{}, fmt.Errorf("the circuit without %s could not be solved along the load line", q.Name)
	}
	ll.IShort = ll.Curve[len(ll.Curve)-1].IC
	if !(ll.IShort > 0) {
		return LoadLine{}, fmt.Errorf("the collector-emitter loop of %s drives no forward current when shorted", q.Name)
	}
	ll.R = ll.VOpen / ll.IShort
	return ll, nil
}

// hyperbolaPoints is the number of points the power hyperbola is sampled at.
const hyperbolaPoints = 48

// Boundary is the safe-operating-area outline of ratings icmax (A), vceo
// (V) and the derated power limit pd (W), any of them NaN when not known:
//
//	IC = ICmax             for 0 ≤ VCE ≤ Pd/ICmax
//	IC = Pd/VCE            for Pd/ICmax ≤ VCE ≤ VCEO
//	VCE = VCEO             for 0 ≤ IC ≤ Pd/VCEO
//
// (the rectangle ICmax by VCEO when the hyperbola does not cut it). vmax
// (V) and imax (A) stand in for an unknown VCEO and ICmax, so a known
// limit is drawn across the whole plotted area. The hyperbola is sampled
// at geometrically spaced VCE.
func Boundary(icmax, vceo, pd, vmax, imax float64) []Segment {
	known := func(x float64) bool { return x >= 0 && !math.IsInf(x, 1) }
	ic, vc := icmax, vceo
	if !known(ic) {
		ic = imax
	}
	if !known(vc) {
		vc = vmax
	}
	if !(ic > 0) || !(vc > 0) {
		return nil
	}
	var segs []Segment
	add := func(limit string, pts ...Point) { segs = append(segs, Segment{Limit: limit, Points: pts}) }
	if !known(pd) || pd/ic >= vc {
		if known(icmax) {
			add("icmax", Point{0, ic}, Point{vc, ic})
		}
		if known(vceo) {
			add("vceo", Point{vc, ic}, Point{vc, 0})
		}
		return segs
	}
	if pd == 0 {
		add("power", Point{0, 0}, Point{vc, 0})
		return segs
	}
	knee := pd / ic
	if known(icmax) {
		add("icmax", Point{0, ic}, Point{knee, ic})
	}
	pts := make([]Point, hyperbolaPoints)
	for j := range pts {
		v := knee * math.Pow(vc/knee, float64(j)/(hyperbolaPoints-1))
		if j == hyperbolaPoints-1 {
			v = vc
		}
		pts[j] = Point{v, pd / v}
	}
	add("power", pts...)
	if known(vceo) {
		add("vceo", Point{vc, pd / vc}, Point{vc, 0})
	}
	return segs
}

// edgePoints is the number of intervals the saturation edge is sampled in.
const edgePoints = 32

// SaturationEdge is the edge of the saturation region of transistor b from
// IC = 0 to imax (A), as VCE (terminal) against IC:
//
//	VCE(IC) = max(SatVCE, NF·vt·ln(1 + IC/IS) − OnVoltage) + IC·(RC + RE)
//
// with the parameters scaled to the device temperature (see the package
// comment). Left of it device.Classify calls the transistor saturated.
func SaturationEdge(b *device.BJT, imax float64) []Point {
	if b == nil || !(imax > 0) || math.IsInf(imax, 0) {
		return nil
	}
	p := &b.Scaled
	pts := make([]Point, 0, edgePoints+1)
	for k := 0; k <= edgePoints; k++ {
		ic := imax * float64(k) / edgePoints
		vbe := p.NF * b.VT * math.Log1p(ic/p.IS)
		v := math.Max(device.SatVCE, vbe-device.OnVoltage) + ic*(p.RC+p.RE)
		pts = append(pts, Point{VCE: v, IC: ic})
	}
	return pts
}

// View returns the plotted area for a transistor: XMax (V) and YMax (A)
// are 1.1 times the largest of the load line's intercepts and the
// operating points, widened to take in VCEO and ICmax when they are within
// four times that (so a rating far beyond the bias does not squash the
// plot; the report states the margins in figures). With nothing to go by
// they are 1 V and 1 mA.
func View(ll *LoadLine, pts []OpPoint, icmax, vceo float64) (xmax, ymax float64) {
	fin := func(x float64) bool { return x > 0 && !math.IsInf(x, 0) }
	if ll != nil {
		if fin(ll.VOpen) {
			xmax = ll.VOpen
		}
		if fin(ll.IShort) {
			ymax = ll.IShort
		}
	}
	for _, p := range pts {
		if fin(p.VCE) {
			xmax = math.Max(xmax, p.VCE)
		}
		if fin(p.IC) {
			ymax = math.Max(ymax, p.IC)
		}
	}
	if xmax == 0 {
		xmax = 1
	}
	if ymax == 0 {
		ymax = 1e-3
	}
	if fin(vceo) && vceo <= 4*xmax {
		xmax = math.Max(xmax, vceo)
	}
	if fin(icmax) && icmax <= 4*ymax {
		ymax = math.Max(ymax, icmax)
	}
	return 1.1 * xmax, 1.1 * ymax
}

// trajectories groups the Swing points by source (the first word of the
// case name) in order of first appearance, each sorted by level and
// passing through the nominal point at level 0.
func trajectories(pts []OpPoint) []Trajectory {
	var nominal *OpPoint
	for i := range pts {
		if pts[i].Kind == Nominal {
			nominal = &pts[i]
			break
		}
	}
	var out []Trajectory
	index := map[string]int{}
	levels := map[string][]OpPoint{}
	for _, p := range pts {
		if p.Kind != Swing {
			continue
		}
		src, _, _ := strings.Cut(p.Case, " ")
		if _, ok := index[src]; !ok {
			index[src] = len(out)
			out = append(out, Trajectory{Source: src})
			if nominal != nil {
				levels[src] = append(levels[src], OpPoint{Point: nominal.Point})
			}
		}
		levels[src] = append(levels[src], p)
	}
	for i := range out {
		l := levels[out[i].Source]
		sort.SliceStable(l, func(a, b int) bool { return l[a].Level < l[b].Level })
		for _, p := range l {
			out[i].Points = append(out[i].Points, p.Point)
		}
	}
	return out
}

// caseName names a case the way findings do: "scenario" or
// "scenario/corner".
func caseName(c checks.Case) string {
	if c.Corner == "" {
		return c.Scenario
	}
	return c.Scenario + "/" + c.Corner
}

// Of computes the plane of transistor name in an analysis: its operating
// point in every case, the load line at the nominal case's device
// temperatures, the safe operating area from its ratings and the nominal
// case's derated power, and the saturation edge at its nominal
// temperature. A load line that cannot be found leaves Load nil with the
// reason in LoadNote; a transistor not in the analysis is an error.
func Of(an *checks.Analysis, name string) (Plane, error) {
	return OfContext(context.Background(), an, name)
}

// OfContext is Of whose load-line solves stop when ctx is done
// (solve.Options.Context; nil for never): the plane is then returned
// without a load line, with the reason in LoadNote.
func OfContext(ctx context.Context, an *checks.Analysis, name string) (Plane, error) {
	if an == nil || len(an.Cases) == 0 || an.Circuit == nil {
		return Plane{}, fmt.Errorf("no analysis")
	}
	return of(ctx, an, name, checks.NewLocalizer(an.Circuit))
}

// sameDevice returns the facts of t's device in case cs, or nil. The
// cases of an analysis list the transistors in one order and share each
// device's TransistorFixed, so the slot of t in the nominal case is tried
// first; otherwise the case is searched by name.
func sameDevice(cs *checks.Case, slot int, t *checks.Transistor) *checks.Transistor {
	if slot >= 0 && slot < len(cs.Transistors) && cs.Transistors[slot].TransistorFixed == t.TransistorFixed {
		return &cs.Transistors[slot]
	}
	key := netlist.Key(t.Name)
	for k := range cs.Transistors {
		if netlist.Key(cs.Transistors[k].Name) == key {
			return &cs.Transistors[k]
		}
	}
	return nil
}

// of is Of with the circuit's Localizer: the load line is solved on the
// part of the board that taking the transistor out can change (the rest
// is held by the rails), so plotting every transistor of a large board
// costs in proportion to the board, not to its square. ctx stops its
// solves (nil for never).
func of(ctx context.Context, an *checks.Analysis, name string, loc *checks.Localizer) (Plane, error) {
	nom := an.Cases[0]
	var t *checks.Transistor
	slot := -1
	key := netlist.Key(name)
	for i := range nom.Transistors {
		if netlist.Key(nom.Transistors[i].Name) == key {
			t, slot = &nom.Transistors[i], i
		}
	}
	if t == nil {
		return Plane{}, fmt.Errorf("no transistor %s in %s", name, an.Circuit.File)
	}
	pl := Plane{Device: t.Name, Model: t.Model, Polarity: t.Polarity, Ambient: nom.Ambient}
	for i := range an.Cases {
		cs := &an.Cases[i]
		x := sameDevice(cs, slot, t)
		if x == nil || math.IsNaN(x.VCE) || math.IsNaN(x.IC) {
			continue // not in this case, or a case that is not physical
		}
		op := OpPoint{Point: Point{x.VCE, x.IC}, Kind: KindOf(i, *cs), Case: caseName(*cs), Region: x.Region, Power: x.Power}
		if op.Kind == Swing {
			op.Level = x.SwingLevel
		}
		pl.Points = append(pl.Points, op)
	}
	pl.Swings = trajectories(pl.Points)

	opt := solve.Options{DeviceTemp: map[string]float64{}, Context: ctx}
	devTemp := nom.Ambient
	if r := nom.Solution; r != nil {
		opt.Temp = solve.Temp(r.Temp)
		devTemp = r.Temp
		for _, b := range r.BJTs {
			opt.DeviceTemp[netlist.Key(b.Name)] = b.Temp
			if netlist.Key(b.Name) == netlist.Key(t.Name) {
				devTemp = b.Temp
			}
		}
		for _, d := range r.Diodes {
			opt.DeviceTemp[netlist.Key(d.Name)] = d.Temp
		}
	}
	circ := an.Circuit
	if part := loc.Part(circ.Element(t.Name), nom.Solution); part != nil {
		circ = part
	}
	if ll, err := LoadLineOf(circ, t.Name, opt); err != nil {
		pl.LoadNote = err.Error()
	} else {
		pl.Load = &ll
	}

	r := t.Rating
	pl.SOA = SOA{ICMax: r.ICMax, VCEO: r.VCEO, Pd: t.PdDerated}
	pl.XMax, pl.YMax = View(pl.Load, pl.Points, r.ICMax, r.VCEO)
	pl.SOA.Segments = Boundary(r.ICMax, r.VCEO, t.PdDerated, pl.XMax, pl.YMax)

	if el := an.Circuit.Element(t.Name); el != nil {
		area := el.Area
		if !(area > 0) {
			area = 1
		}
		b, err := device.NewBJT(an.Circuit.Models[el.Model], area, devTemp, device.Options{TNom: an.Circuit.Options.TNom, GMin: solve.DefaultGMin})
		if err == nil {
			pl.Saturation = SaturationEdge(b, pl.YMax)
		}
	}
	return pl, nil
}

// All computes the plane of every transistor of the nominal case, in
// order.
func All(an *checks.Analysis) []Plane { return AllContext(context.Background(), an) }

// AllContext is All that stops when ctx is done (nil for never): the
// planes made so far are returned, and ctx.Err() says it stopped.
func AllContext(ctx context.Context, an *checks.Analysis) []Plane {
	if an == nil || len(an.Cases) == 0 {
		return nil
	}
	if an.Circuit == nil {
		return nil
	}
	loc := checks.NewLocalizer(an.Circuit)
	var out []Plane
	for _, t := range an.Cases[0].Transistors {
		if ctx != nil && ctx.Err() != nil {
			break
		}
		if pl, err := of(ctx, an, t.Name, loc); err == nil {
			out = append(out, pl)
		}
	}
	return out
}
