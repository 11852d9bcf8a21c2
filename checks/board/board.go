// Package board gathers what a design says about its own parts beyond the
// netlist: transistor ratings, device roles, resistor power ratings,
// tolerances and waivers. The data comes from netlist comment annotations
// (*@part, *@device, *@waive), which any simulator ignores, and from an
// optional sidecar YAML board file with the same content. Annotations and
// the board file merge; where both set the same key, the board file wins
// (it is the reviewer's copy), and a note says so.
package board

import (
	"math"
	"sort"
	"strings"

	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
)

// Part holds ratings given for one model name. Values not given are NaN.
// Units: V, A, W, degrees Celsius, K/W.
type Part struct {
	Model                                                     string
	VCEO, VCBO, VEBO, ICMax, Pd, TjMax, RthJA, HFEMin, HFEMax float64
	Pos                                                       netlist.Pos
}

// NewPart returns a Part with every rating unknown (NaN).
func NewPart(model string, pos netlist.Pos) *Part {
	n := math.NaN()
	return &Part{Model: model, VCEO: n, VCBO: n, VEBO: n, ICMax: n, Pd: n, TjMax: n, RthJA: n, HFEMin: n, HFEMax: n, Pos: pos}
}

// field returns a pointer to the rating called key, or nil.
func (p *Part) field(key string) *float64 {
	switch key {
	case "vceo":
		return &p.VCEO
	case "vcbo":
		return &p.VCBO
	case "vebo":
		return &p.VEBO
	case "icmax":
		return &p.ICMax
	case "pd":
		return &p.Pd
	case "tjmax":
		return &p.TjMax
	case "rthja":
		return &p.RthJA
	case "hfemin":
		return &p.HFEMin
	case "hfemax":
		return &p.HFEMax
	}
	return nil
}

// RatingKeys are the keys a part entry takes, in documentation order.
var RatingKeys = []string{"vceo", "vcbo", "vebo", "icmax", "pd", "tjmax", "rthja", "hfemin", "hfemax"}

// Device holds settings for one element, keyed by its flat name.
type Device struct {
	// Name is the flat element name as written (X1.RCOIL).
	Name string
	// Role is one of Roles, "linear" (a linear stage of the kind the
	// topology shows), or "" (not set).
	Role string
	// Power is a resistor's power rating, W (NaN when not set).
	Power float64
	// Tol is a relative tolerance (0.05 for 5 %), NaN when not set.
	Tol float64
	// Driver marks a source as a drive (a controller pin that can let go)
	// rather than a supply rail.
	Driver bool
	// Amplitude is the signal amplitude (peak, V or A) for an AC source
	// with no waveform, NaN when not set.
	Amplitude float64
	Pos       netlist.Pos
}

// Roles are the transistor roles an annotation or board file may set; the
// checks package classifies transistors into the same roles. "linear" is
// accepted besides them: a linear stage whose kind the topology decides.
var Roles = []string{"switch", "common-emitter", "follower", "diff-pair", "mirror-reference",
	"mirror-output", "current-source", "push-pull", "vbe-multiplier", "clamp", "diode"}

func validRole(r string) bool {
	if r == "linear" {
		return true
	}
	for _, x := range Roles {
		if x == r {
			return true
		}
	}
	return false
}

// NewDevice returns a Device with nothing set.
func NewDevice(name string, pos netlist.Pos) *Device {
	n := math.NaN()
	return &Device{Name: name, Power: n, Tol: n, Amplitude: n, Pos: pos}
}

// DeviceKeys are the keys a device entry takes.
var DeviceKeys = []string{"role", "power_rating", "tol", "driver", "amplitude"}

// renamedKey returns the current name of a device key that was renamed
// ("power" is now "power_rating": the fact power is a dissipation) and
// the note that says so, or key and "" when it was not renamed.
func renamedKey(key string) (string, string) {
	if key == "power" {
		return "power_rating", `"power" is now called "power_rating" (a resistor's power rating, W); rename it`
	}
	return key, ""
}

// Waiver accepts one rule's findings on one device, with a reason. Device
// "*" waives the rule on every device.
type Waiver struct {
	Rule, Device, Reason string
	Pos                  netlist.Pos
	// External is true for a waiver of the board file, false for a
	// *@waive annotation in the netlist.
	External bool
}

// Settings is everything a board says about itself.
type Settings struct {
	// Parts by netlist.Key of the model name.
	Parts map[string]*Part
	// Devices by netlist.Key of the flat element name.
	Devices map[string]*Device
	Waivers []Waiver
	// Ambient is the board file's ambient temperature, C (NaN when not set).
	Ambient float64
	// Notes are the board file's located notes (old key names still read).
	Notes []*netlist.Error
}

// New returns empty Settings.
func New() *Settings {
	return &Settings{Parts: map[string]*Part{}, Devices: map[string]*Device{}, Ambient: math.NaN()}
}

// Device returns the settings of the named element, or nil.
func (s *Settings) Device(name string) *Device { return s.Devices[netlist.Key(name)] }

// Part returns the ratings given for the named model, or nil.
func (s *Settings) Part(model string) *Part { return s.Parts[netlist.Key(model)] }

// PartFor returns the ratings given for a model, or nil. Ratings given
// for the model's own name as written on its .model card (MYSW) match it
// wherever it is defined, at top level or inside any subcircuit; ratings
// given for its flat hierarchical name (X1.MYSW) match that one model and
// win, value by value, over those for its own name.
func (s *Settings) PartFor(m *netlist.Model) *Part {
	if m == nil {
		return nil
	}
	full := s.Parts[netlist.Key(m.Name)]
	var own *Part
	if m.Local != "" && netlist.Key(m.Local) != netlist.Key(m.Name) {
		own = s.Parts[netlist.Key(m.Local)]
	}
	if full == nil || own == nil {
		if full != nil {
			return full
		}
		return own
	}
	merged := *own
	merged.Model, merged.Pos = full.Model, full.Pos
	for _, k := range RatingKeys {
		if v := *full.field(k); !math.IsNaN(v) {
			*merged.field(k) = v
		}
	}
	return &merged
}

// UnmatchedParts lists, sorted by name, the parts given ratings that match
// no model of c by its flat or its own name (see PartFor).
func (s *Settings) UnmatchedParts(c *netlist.Circuit) []*Part {
	used := map[string]bool{}
	for _, m := range c.Models {
		used[netlist.Key(m.Name)] = true
		if m.Local != "" {
			used[netlist.Key(m.Local)] = true
		}
	}
	var out []*Part
	for _, k := range sortedKeys(s.Parts) {
		if !used[k] {
			out = append(out, s.Parts[k])
		}
	}
	return out
}

// FromCircuit reads the *@part, *@device and *@waive annotations of a flat
// circuit. Annotations inside a subcircuit name devices of that subcircuit:
// "*@device RCOIL power_rating=0.5" in the body of X1 sets X1.RCOIL. Problems are
// warnings in the returned list; an annotation of another kind is a note.
func FromCircuit(c *netlist.Circuit) (*Settings, *netlist.ErrorList) {
	s := New()
	errs := &netlist.ErrorList{}
	for i := range c.Annotations {
		a := &c.Annotations[i]
		switch a.Kind {
		case "part":
			s.partAnnotation(a, errs)
		case "device":
			s.deviceAnnotation(c, a, errs)
		case "waive":
			s.waiveAnnotation(a, errs)
		default:
			errs.Warnf(a.Pos, "unknown annotation *@%s (known: *@part, *@device, *@waive)", a.Kind)
		}
	}
	return s, errs
}

func scoped(scope, name string) string {
	if scope == "" {
		return name
	}
	return scope + "." + name
}

func (s *Settings) partAnnotation(a *netlist.Annotation, errs *netlist.ErrorList) {
	if len(a.Args) != 1 {
		errs.Warnf(a.Pos, "*@part takes one model name and key=value ratings, e.g. *@part MYNPN vceo=40 icmax=200m; annotation ignored")
		return
	}
	p := NewPart(a.Args[0], a.Pos)
	for _, k := range sortedKeys(a.KV) {
		f := p.field(k)
		if f == nil {
			errs.Warnf(a.KVPos[k], "*@part %s: unknown key %q (known: %s)", p.Model, k, strings.Join(RatingKeys, ", "))
			continue
		}
		v, err := units.Parse(a.KV[k])
		if err != nil || v < 0 {
			errs.Warnf(a.KVPos[k], "*@part %s: %s=%s is not a non-negative value", p.Model, k, a.KV[k])
			continue
		}
		*f = v
	}
	s.mergePart(p, errs)
}

func (s *Settings) mergePart(p *Part, errs *netlist.ErrorList) {
	key := netlist.Key(p.Model)
	old := s.Parts[key]
	if old == nil {
		s.Parts[key] = p
		return
	}
	for _, k := range RatingKeys {
		nv := *p.field(k)
		if math.IsNaN(nv) {
			continue
		}
		if ov := *old.field(k); !math.IsNaN(ov) && ov != nv {
			errs.Notef(p.Pos, "part %s: %s=%g replaces %g given at %s", p.Model, k, nv, ov, old.Pos)
		}
		*old.field(k) = nv
	}
}

func (s *Settings) deviceAnnotation(c *netlist.Circuit, a *netlist.Annotation, errs *netlist.ErrorList) {
	if len(a.Args) != 1 {
		errs.Warnf(a.Pos, "*@device takes one device name and key=value settings, e.g. *@device Q1 role=switch; annotation ignored")
		return
	}
	name := scoped(a.Scope, a.Args[0])
	el := c.Element(name)
	if el == nil {
		errs.Warnf(a.ArgPos[0], "*@device names %s, which is not in the circuit", name)
		return
	}
	d := NewDevice(el.Name, a.Pos)
	for _, k := range sortedKeys(a.KV) {
		key, note := renamedKey(k)
		if note != "" {
			errs.Notef(a.KVPos[k], "*@device %s: %s", el.Name, note)
		}
		if msg := d.set(key, a.KV[k], el.Kind); msg != "" {
			errs.Warnf(a.KVPos[k], "*@device %s: %s", el.Name, msg)
		}
	}
	s.mergeDevice(d, errs)
}

// set applies one key=value to d and returns a problem description, or "".
func (d *Device) set(key, val string, kind netlist.Kind) string {
	num := func() (float64, bool) {
		v, err := units.Parse(strings.TrimSuffix(val, "%"))
		if err != nil || v < 0 {
			return 0, false
		}
		if strings.HasSuffix(val, "%") {
			v /= 100
		}
		return v, true
	}
	switch key {
	case "role":
		r := strings.ToLower(val)
		if !validRole(r) {
			return "role=" + val + " must be one of " + strings.Join(Roles, ", ") + " or linear"
		}
		if kind != 'Q' {
			return "role applies to transistors only"
		}
		d.Role = r
	case "power_rating":
		v, ok := num()
		if !ok || v == 0 {
			return "power_rating=" + val + " is not a positive power rating in W"
		}
		d.Power = v
	case "tol":
		v, ok := num()
		if !ok || v >= 1 {
			return "tol=" + val + " is not a tolerance (write 5% or 0.05)"
		}
		d.Tol = v
	case "driver":
		switch strings.ToLower(val) {
		case "yes", "true", "1":
			d.Driver = true
		case "no", "false", "0":
			d.Driver = false
		default:
			return "driver=" + val + " must be yes or no"
		}
		if kind != 'V' && kind != 'I' {
			return "driver applies to sources only"
		}
	case "amplitude":
		v, ok := num()
		if !ok {
			return "amplitude=" + val + " is not a peak value"
		}
		d.Amplitude = v
	default:
		return "unknown key " + `"` + key + `"` + " (known: " + strings.Join(DeviceKeys, ", ") + ")"
	}
	return ""
}

func (s *Settings) mergeDevice(d *Device, errs *netlist.ErrorList) {
	key := netlist.Key(d.Name)
	old := s.Devices[key]
	if old == nil {
		s.Devices[key] = d
		return
	}
	if d.Role != "" {
		old.Role = d.Role
	}
	if !math.IsNaN(d.Power) {
		old.Power = d.Power
	}
	if !math.IsNaN(d.Tol) {
		old.Tol = d.Tol
	}
	if !math.IsNaN(d.Amplitude) {
		old.Amplitude = d.Amplitude
	}
	old.Driver = old.Driver || d.Driver
}

func (s *Settings) waiveAnnotation(a *netlist.Annotation, errs *netlist.ErrorList) {
	if len(a.Args) < 2 || a.Args[0] == "" || a.Args[1] == "" {
		errs.Warnf(a.Pos, "*@waive takes a rule id, a device name and a reason, e.g. *@waive floating-base Q3 base held by the driver's pull-down; annotation ignored")
		return
	}
	// The reason is the text as written after the rule and device words
	// (key=value pairs and quotes in it are part of the reason).
	reason := strings.TrimSpace(skipFields(a.Text, 2))
	if reason == "" {
		errs.Warnf(a.Pos, "*@waive %s %s gives no reason; a waiver must say why, so it is ignored", a.Args[0], a.Args[1])
		return
	}
	dev := a.Args[1]
	if dev != "*" {
		dev = scoped(a.Scope, dev)
	}
	s.Waivers = append(s.Waivers, Waiver{Rule: strings.ToLower(a.Args[0]), Device: dev, Reason: reason, Pos: a.Pos})
}

// skipFields returns s after its first n blank-separated fields.
func skipFields(s string, n int) string {
	for ; n > 0; n-- {
		s = strings.TrimLeft(s, " \t")
		i := strings.IndexAny(s, " \t")
		if i < 0 {
			return ""
		}
		s = s[i:]
	}
	return s
}

// Merge lays o over s: o's parts, devices and ambient win; waivers add up.
// Notes about replaced values go to errs.
func (s *Settings) Merge(o *Settings, errs *netlist.ErrorList) {
	if o == nil {
		return
	}
	for _, k := range sortedKeys(o.Parts) {
		s.mergePart(o.Parts[k], errs)
	}
	for _, k := range sortedKeys(o.Devices) {
		s.mergeDevice(o.Devices[k], errs)
	}
	s.Waivers = append(s.Waivers, o.Waivers...)
	if !math.IsNaN(o.Ambient) {
		s.Ambient = o.Ambient
	}
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
