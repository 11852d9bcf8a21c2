package board

import (
	"fmt"
	"os"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
)

// A board file is YAML of this shape (every section optional):
//
//	ambient: 40            # C, the ambient the board runs in
//	parts:                 # ratings by model name
//	  MYNPN: {vceo: 40, vcbo: 60, vebo: 6, icmax: 200m, pd: 500m,
//	          tjmax: 150, rthja: 250, hfemin: 100, hfemax: 300}
//	devices:               # settings by flat element name
//	  Q4: {role: switch}
//	  RLOAD: {power_rating: 1, tol: 1%}
//	  VMCU: {driver: yes}
//	waivers:
//	  - {rule: floating-base, device: Q7, reason: "held off by U3's pull-down"}
//
// Numbers may carry SPICE or RKM suffixes ("200m", "4k7"); a trailing '%'
// divides by 100.

// MaxFileSize caps a board file's size in bytes.
const MaxFileSize = 4 << 20

// Load reads a board file. Device names are checked against c when c is
// not nil. Problems are located errors (file:line:col).
func Load(path string, c *netlist.Circuit) (*Settings, error) {
	src, err := ReadFile(path)
	if err != nil {
		return nil, err
	}
	return Parse(path, src, c)
}

// ReadFile reads a board file's text, refusing one over MaxFileSize, so a
// batch can read it once and Parse it against each circuit.
func ReadFile(path string) ([]byte, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("%s: error: cannot read board file: %v", path, unwrapPathErr(err))
	}
	if fi.Size() > MaxFileSize {
		return nil, fmt.Errorf("%s: error: board file is %d bytes, over the %d-byte limit", path, fi.Size(), MaxFileSize)
	}
	// A regular file only, never blocking, and no more than the limit
	// (a device reports no size).
	src, err := netlist.ReadRegular(path, MaxFileSize)
	if err != nil {
		return nil, fmt.Errorf("%s: error: cannot read board file: %v", path, unwrapPathErr(err))
	}
	if len(src) > MaxFileSize {
		return nil, fmt.Errorf("%s: error: board file is over the %d-byte limit", path, MaxFileSize)
	}
	return src, nil
}

func unwrapPathErr(err error) error {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err
	}
	return err
}

// Parse reads board-file text; file names it in positions.
func Parse(file string, src []byte, c *netlist.Circuit) (*Settings, error) {
	errs := &netlist.ErrorList{}
	s := New()
	var doc yaml.Node
	if err := yaml.Unmarshal(src, &doc); err != nil {
		errs.Add(yamlErrPos(file, err), "board file is not valid YAML: "+yamlErrMsg(err))
		return nil, errs.Err()
	}
	at := func(n *yaml.Node) netlist.Pos { return netlist.Pos{File: file, Line: n.Line, Col: n.Column} }
	if len(doc.Content) == 0 {
		return s, nil
	}
	root := doc.Content[0]
	if root.Kind != yaml.MappingNode {
		errs.Add(at(root), "a board file is a mapping with the keys ambient, parts, devices, waivers")
		return nil, errs.Err()
	}
	for i := 0; i+1 < len(root.Content); i += 2 {
		k, v := root.Content[i], root.Content[i+1]
		switch k.Value {
		case "ambient":
			t, err := units.Parse(v.Value)
			if v.Kind != yaml.ScalarNode || err != nil || t < -273.15 {
				errs.Addf(at(v), "ambient: %q is not a temperature in C", v.Value)
				continue
			}
			s.Ambient = t
		case "parts":
			eachEntry(v, at, errs, "parts", func(name string, pos netlist.Pos, m *yaml.Node) {
				p := NewPart(name, pos)
				eachKey(m, at, errs, func(key string, kpos netlist.Pos, val *yaml.Node) {
					f := p.field(key)
					if f == nil {
						errs.Addf(kpos, "part %s: unknown key %q (known: %s)", name, key, strings.Join(RatingKeys, ", "))
						return
					}
					x, err := units.Parse(val.Value)
					if val.Kind != yaml.ScalarNode || err != nil || x < 0 {
						errs.Addf(at(val), "part %s: %s: %q is not a non-negative value", name, key, val.Value)
						return
					}
					*f = x
				})
				s.mergePart(p, errs)
			})
		case "devices":
			eachEntry(v, at, errs, "devices", func(name string, pos netlist.Pos, m *yaml.Node) {
				kind := netlist.Kind('?')
				if c != nil {
					el := c.Element(name)
					if el == nil {
						errs.Addf(pos, "devices: %s is not in the circuit %s", name, c.File)
						return
					}
					name, kind = el.Name, el.Kind
				}
				d := NewDevice(name, pos)
				eachKey(m, at, errs, func(key string, kpos netlist.Pos, val *yaml.Node) {
					if kind == '?' && (key == "role" || key == "driver") {
						kind = map[string]netlist.Kind{"role": 'Q', "driver": 'V'}[key]
					}
					key, note := renamedKey(key)
					if note != "" {
						errs.Notef(kpos, "device %s: %s", name, note)
					}
					if msg := d.set(key, val.Value, kind); msg != "" {
						errs.Addf(kpos, "device %s: %s", name, msg)
					}
				})
				s.mergeDevice(d, errs)
			})
		case "waivers":
			if v.Kind != yaml.SequenceNode {
				errs.Add(at(v), "waivers: expected a list of {rule, device, reason}")
				continue
			}
			for _, w := range v.Content {
				var wv Waiver
				wv.Pos = at(w)
				eachKey(w, at, errs, func(key string, kpos netlist.Pos, val *yaml.Node) {
					switch key {
					case "rule":
						wv.Rule = strings.ToLower(val.Value)
					case "device":
						wv.Device = val.Value
					case "reason":
						wv.Reason = val.Value
					default:
						errs.Addf(kpos, "waiver: unknown key %q (known: rule, device, reason)", key)
					}
				})
				switch {
				case wv.Rule == "" || wv.Device == "":
					errs.Add(wv.Pos, "waiver needs a rule and a device")
				case strings.TrimSpace(wv.Reason) == "":
					errs.Addf(wv.Pos, "waiver of %s on %s gives no reason; a waiver must say why", wv.Rule, wv.Device)
				default:
					wv.External = true
					s.Waivers = append(s.Waivers, wv)
				}
			}
		default:
			errs.Addf(at(k), "unknown key %q in board file (known: ambient, parts, devices, waivers)", k.Value)
		}
	}
	if err := errs.Err(); err != nil {
		return nil, err
	}
	s.Notes = errs.Notes()
	return s, nil
}

// eachEntry calls f for every name: mapping pair of a section.
func eachEntry(v *yaml.Node, at func(*yaml.Node) netlist.Pos, errs *netlist.ErrorList, section string, f func(string, netlist.Pos, *yaml.Node)) {
	if v.Kind != yaml.MappingNode {
		errs.Addf(at(v), "%s: expected a mapping of names to settings", section)
		return
	}
	for i := 0; i+1 < len(v.Content); i += 2 {
		f(v.Content[i].Value, at(v.Content[i]), v.Content[i+1])
	}
}

// eachKey calls f for every key: value pair of a mapping node.
func eachKey(m *yaml.Node, at func(*yaml.Node) netlist.Pos, errs *netlist.ErrorList, f func(string, netlist.Pos, *yaml.Node)) {
	if m.Kind != yaml.MappingNode {
		errs.Addf(at(m), "expected a mapping of key: value settings")
		return
	}
	for i := 0; i+1 < len(m.Content); i += 2 {
		f(strings.ToLower(m.Content[i].Value), at(m.Content[i]), m.Content[i+1])
	}
}

// yamlErrPos pulls the line out of a yaml.v3 error message ("yaml: line 3: ...").
func yamlErrPos(file string, err error) netlist.Pos {
	p := netlist.Pos{File: file, Line: 1, Col: 1}
	msg := err.Error()
	if i := strings.Index(msg, "line "); i >= 0 {
		var n int
		if _, e := fmt.Sscanf(msg[i:], "line %d", &n); e == nil && n > 0 {
			p.Line = n
		}
	}
	return p
}

func yamlErrMsg(err error) string {
	msg := strings.TrimPrefix(err.Error(), "yaml: ")
	if i := strings.Index(msg, ": "); i >= 0 && strings.HasPrefix(msg, "line ") {
		msg = msg[i+2:]
	}
	return msg
}
