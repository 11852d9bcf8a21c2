package solve

import (
	"math"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// SolveGains gives dP/dT of each transistor, the others held, as solving
// again with that one device temperature moved by 1 mK does (the
// definition, by a forward difference of full Newton solves at tight
// tolerances): to 0.2 % or 1e-12 W/K, on boards with emitter followers,
// a stiff-biased power stage, switches and series resistances.
func TestSolveGainsMatchResolving(t *testing.T) {
	for _, f := range []string{"../../testdata/check/power-over-rating.bad.cir", "../../testdata/check/thermal-runaway.bad.cir", "../../rulesets/demo/bench-logger.cir", "../../testdata/op/field-amp.cir"} {
		c, err := netlist.Read(f, nil)
		if err != nil {
			t.Fatal(err)
		}
		s, err := Prepare(c)
		if err != nil {
			t.Fatal(err)
		}
		for _, temp := range []float64{25, 70, 140} {
			dt := map[string]float64{}
			for _, q := range s.bjts {
				dt[netlist.Key(q.e.Name)] = temp
			}
			o := Options{RelTol: 1e-10, VNTol: 1e-13, DeviceTemp: dt}
			r0, g, err := s.SolveGains(o, 1e-3)
			if err != nil {
				t.Fatal(err)
			}
			for j, q := range s.bjts {
				d2 := map[string]float64{}
				for k, v := range dt {
					d2[k] = v
				}
				d2[netlist.Key(q.e.Name)] = temp + 1e-3
				o2 := o
				o2.DeviceTemp, o2.Guess = d2, r0
				r1, err := s.Solve(o2)
				if err != nil {
					t.Fatal(err)
				}
				fd := (r1.BJTs[j].Power - r0.BJTs[j].Power) / 1e-3
				if d := math.Abs(g[j] - fd); d > 2e-3*math.Abs(fd) && d > 1e-12 {
					t.Errorf("%s at %g C, %s: dP/dT %.6g W/K, re-solving gives %.6g", f, temp, q.e.Name, g[j], fd)
				}
			}
		}
	}
}

// The response of a divider's midpoint to a current into it is the
// parallel resistance R1·R2/(R1 + R2) (Thevenin's theorem): 8245.6 Ohm
// for 47 kOhm and 10 kOhm, with a transistor removed from the node.
func TestSolveResponseIsTheveninResistance(t *testing.T) {
	b := newBuilder()
	npnModel(b, nil)
	b.V("VCC", "vcc", "0", 12)
	b.R("R1", "vcc", "b", 47e3)
	b.R("R2", "b", "0", 10e3)
	b.R("RC", "vcc", "c", 4.7e3)
	b.Q("Q1", "c", "b", "0", "qn")
	s, err := Prepare(b.c)
	if err != nil {
		t.Fatal(err)
	}
	r, dv, err := s.SolveResponse(Options{Remove: []string{"Q1"}}, map[string]float64{"b": 1})
	if err != nil {
		t.Fatal(err)
	}
	// The leak LeakR to ground at the base is in parallel too.
	want := 1 / (1/47e3 + 1/10e3 + 1/LeakR)
	if math.Abs(dv["b"]-want) > 1e-9*want {
		t.Errorf("response %.6f Ohm, want %.6f", dv["b"], want)
	}
	if v := r.V("b"); math.Abs(v-12*10e3/57e3) > 1e-6 {
		t.Errorf("V(b) = %g, want the divider's 2.105 V", v)
	}
}

// SolveSensitivities gives dIC/d ln R and dIB/d ln R of every transistor
// as re-solving with the resistor moved by 1e-6 of its value does (the
// definition, forward difference at tight tolerances): to 0.5 %, or within
// the difference's own rounding (1e-5 of the transistor's current), on
// the demo board and the field amplifier (hierarchy, controlled sources).
func TestSolveSensitivitiesMatchResolving(t *testing.T) {
	for _, f := range []string{"../../rulesets/demo/bench-logger.cir", "../../testdata/op/field-amp.cir"} {
		c, err := netlist.Read(f, nil)
		if err != nil {
			t.Fatal(err)
		}
		s, err := Prepare(c)
		if err != nil {
			t.Fatal(err)
		}
		var names []string
		for _, el := range s.elems {
			if el.kind == 'R' && !el.short {
				names = append(names, el.e.Name)
			}
		}
		o := Options{RelTol: 1e-11, VNTol: 1e-14}
		r0, sens, dv, err := s.SolveSensitivities(o, names)
		if err != nil {
			t.Fatal(err)
		}
		checked := 0
		for i, name := range names {
			el := s.byKey[netlist.Key(name)]
			v := el.value
			if err := s.SetValue(name, v*(1+1e-6)); err != nil {
				t.Fatal(err)
			}
			o2 := o
			o2.Guess = r0
			r1, err := s.Solve(o2)
			if err != nil {
				t.Fatal(err)
			}
			if err := s.SetValue(name, v); err != nil {
				t.Fatal(err)
			}
			for k, v := range r0.Voltages() {
				fd := (r1.V(k) - v) / 1e-6
				if d := math.Abs(dv[i][k] - fd); d > 5e-3*math.Abs(fd) && d > 1e-5*math.Abs(v)+1e-9 {
					t.Errorf("%s, %s: dV(%s)/dlnR %.6g V, re-solving %.6g", f, name, k, dv[i][k], fd)
				}
			}
			got := map[int]Sensitivity{}
			for _, d := range sens[i] {
				got[d.BJT] = d
			}
			for j := range s.bjts {
				fdC := (r1.BJTs[j].IC - r0.BJTs[j].IC) / 1e-6
				fdB := (r1.BJTs[j].IB - r0.BJTs[j].IB) / 1e-6
				g := got[j]
				floor := 1e-5*math.Abs(r0.BJTs[j].IC) + 1e-12
				if d := math.Abs(g.DIC - fdC); d > 5e-3*math.Abs(fdC) && d > floor {
					t.Errorf("%s, %s on %s: dIC/dlnR %.6g A, re-solving %.6g", f, name, s.bjts[j].e.Name, g.DIC, fdC)
				}
				if d := math.Abs(g.DIB - fdB); d > 5e-3*math.Abs(fdB) && d > floor {
					t.Errorf("%s, %s on %s: dIB/dlnR %.6g A, re-solving %.6g", f, name, s.bjts[j].e.Name, g.DIB, fdB)
				}
				checked++
			}
		}
		if checked < 9 {
			t.Errorf("%s: only %d pairs compared", f, checked)
		}
	}
}
