package board

import (
	"math"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// fuzzNetlist is a small legal board the fuzzed annotations and board
// files talk about: a transistor, resistors, a supply and a drive, one
// subcircuit instance.
const fuzzNetlist = `Fuzz board
VCC vcc 0 12
VIN in 0 PULSE(0 5 0 1u 1u 1m 2m)
RB in b 4.7k
RC vcc c 1k
Q1 c b 0 QGEN
X1 vcc 0 LOAD
.subckt LOAD a k
RL a k 10k
.ends
.model QGEN NPN (IS=1e-14 BF=200)
`

func fuzzCircuit(t *testing.T, extra string) *netlist.Circuit {
	t.Helper()
	opts := &netlist.LoadOptions{ReadFile: netlist.NoFiles, MaxElements: 200}
	d, _ := netlist.Parse("fuzz.cir", []byte(fuzzNetlist+extra), opts)
	c, _ := netlist.Flatten(d)
	if c == nil {
		t.Fatal("Flatten returned no circuit")
	}
	return c
}

// checkSettings tests what any Settings must hold: every rating and
// setting unknown (NaN) or a finite number in range, every entry and
// waiver located.
func checkSettings(t *testing.T, s *Settings) {
	t.Helper()
	if s == nil {
		return
	}
	if !math.IsNaN(s.Ambient) && (math.IsInf(s.Ambient, 0) || s.Ambient < -273.15) {
		t.Errorf("ambient %g", s.Ambient)
	}
	for k, p := range s.Parts {
		for _, key := range RatingKeys {
			if v := *p.field(key); !math.IsNaN(v) && (math.IsInf(v, 0) || v < 0) {
				t.Errorf("part %s: %s = %g", k, key, v)
			}
		}
	}
	for k, d := range s.Devices {
		for _, v := range []float64{d.Power, d.Tol, d.Amplitude} {
			if !math.IsNaN(v) && (math.IsInf(v, 0) || v < 0) {
				t.Errorf("device %s: setting %g", k, v)
			}
		}
		if d.Role != "" && d.Role != "switch" && d.Role != "linear" {
			t.Errorf("device %s: role %q", k, d.Role)
		}
	}
	for _, w := range s.Waivers {
		if w.Rule == "" || w.Device == "" || !w.Pos.IsValid() {
			t.Errorf("waiver %+v", w)
		}
	}
}

// checkLocated tests that every diagnostic names file with a line.
func checkLocated(t *testing.T, l *netlist.ErrorList, file string) {
	t.Helper()
	if l == nil {
		return
	}
	for _, e := range l.List {
		if e.Pos.File != file || !e.Pos.IsValid() || e.Msg == "" {
			t.Errorf("diagnostic not located in %s: %q", file, e)
		}
	}
}

// FuzzAnnotations appends fuzzed comment annotations to a legal netlist
// and reads them: the netlist reader's annotation parser, then
// FromCircuit. No panic; every warning located in the netlist; every
// setting finite or unknown.
func FuzzAnnotations(f *testing.F) {
	for _, s := range []string{
		"*@part QGEN vceo=40 icmax=200m pd=625m\n",
		"*@device Q1 role=switch\n*@device RC power_rating=0.5 tol=1%\n*@device VIN driver=yes\n",
		"*@waive floating-base Q1 the driver has a pull-down\n",
		"*@part QGEN vceo=1.2.3k hfemin=-5 rthja=NaN tjmax=1e999\n",
		"*@device X1.RL power_rating=1\n*@device nosuch role=linear\n",
		"*@waive\n*@\n*@part\n*@device Q1 role\n*@device Q1 =switch\n",
		"*@part \"QGEN\" vceo=\"40\n*@waive x * reason with = signs and \"quotes\"\n",
		".subckt S a\n*@device RX power_rating=2\nRX a 0 1k\n.ends\nX2 vcc S\n",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, extra string) {
		if len(extra) > 4096 {
			return
		}
		c := fuzzCircuit(t, extra)
		for _, a := range c.Annotations {
			if a.Pos.File != "fuzz.cir" || !a.Pos.IsValid() || len(a.ArgPos) != len(a.Args) {
				t.Fatalf("annotation %+v", a)
			}
		}
		s, errs := FromCircuit(c)
		if s == nil || errs == nil {
			t.Fatal("FromCircuit returned nil")
		}
		if errs.Err() != nil {
			t.Errorf("FromCircuit reports errors, not warnings: %v", errs.Err())
		}
		checkLocated(t, errs, "fuzz.cir")
		checkSettings(t, s)
	})
}

// FuzzBoardFile reads fuzzed board-file YAML for the fuzz netlist: no
// panic; an error is a located list; a result holds only finite settings.
func FuzzBoardFile(f *testing.F) {
	for _, s := range []string{
		"ambient: 40\nparts:\n  QGEN: {vceo: 40, vcbo: 60, vebo: 6, icmax: 200m, pd: 500m, tjmax: 150, rthja: 250, hfemin: 100, hfemax: 300}\n",
		"devices:\n  Q1: {role: switch}\n  RC: {power_rating: 1, tol: 1%}\n  VIN: {driver: yes}\n  X1.RL: {power_rating: 250m}\n",
		"waivers:\n  - {rule: floating-base, device: Q1, reason: \"held off by the driver\"}\n",
		"ambient: .nan\nparts:\n  QGEN: {vceo: .inf, pd: -1}\n",
		"parts: [1, 2]\ndevices: 3\nwaivers: {a: b}\n",
		"a: &x [*x]\n",
		"ambient: [40]\nparts:\n  QGEN: {vceo: {a: 1}}\ndevices:\n  Q1: [role]\n",
		"\t- bad\n",
		"ambient: 1e999\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, src []byte) {
		if len(src) > 1<<16 {
			return
		}
		c := fuzzCircuit(t, "")
		for _, circ := range []*netlist.Circuit{c, nil} {
			s, err := Parse("board.yaml", src, circ)
			if err != nil {
				l := netlist.AsErrorList(err)
				if l == nil {
					t.Fatalf("error is not an error list: %v", err)
				}
				checkLocated(t, l, "board.yaml")
				if strings.TrimSpace(err.Error()) == "" {
					t.Fatal("empty error")
				}
				continue
			}
			if s == nil {
				t.Fatal("no settings and no error")
			}
			checkSettings(t, s)
		}
	})
}
