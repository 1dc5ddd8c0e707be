package whatif

import (
	"fmt"
	"sort"
	"strings"

	"capcycle/analyze/model"
	"capcycle/analyze/units"
)

// Part is one value of the circuit that a what-if may change.
type Part struct {
	Name   string // as written in --set and --vary, e.g. "hold"
	Unit   string // unit symbol for parsing and printing ("F", "Ω", "V", "A", "W/m²")
	Series string // E-series its standard values come from ("E6" for capacitors, "E12" for resistors; "" for none)
	Doc    string
	get    func(c *model.Circuit) float64
	set    func(c *model.Circuit, v float64)
}

// parts lists every part by name.
var parts = map[string]*Part{
	"cap": {Name: "cap", Unit: "F", Series: "E6", Doc: "storage capacitance",
		get: func(c *model.Circuit) float64 { return c.Storage.CapF },
		set: func(c *model.Circuit, v float64) { c.Storage.CapF = v }},
	"hold": {Name: "hold", Unit: "F", Series: "E6", Doc: "hold capacitance of a hold-capacitor trigger",
		get: func(c *model.Circuit) float64 { return c.Trigger.HoldF },
		set: func(c *model.Circuit, v float64) { c.Trigger.HoldF = v }},
	"on": {Name: "on", Unit: "V", Doc: "trigger turn-on voltage",
		get: func(c *model.Circuit) float64 { return c.Trigger.OnV },
		set: func(c *model.Circuit, v float64) { c.Trigger.OnV = v }},
	"off": {Name: "off", Unit: "V", Doc: "trigger release voltage (node, or hold voltage for a hold trigger)",
		get: func(c *model.Circuit) float64 { return c.Trigger.OffV },
		set: func(c *model.Circuit, v float64) { c.Trigger.OffV = v }},
	"load": {Name: "load", Unit: "Ω", Series: "E12", Doc: "load resistance (motor: armature resistance)",
		get: func(c *model.Circuit) float64 { return c.Load.Ohm },
		set: func(c *model.Circuit, v float64) { c.Load.Ohm = v }},
	"leak": {Name: "leak", Unit: "Ω", Doc: "capacitor leakage resistance",
		get: func(c *model.Circuit) float64 { return c.Storage.LeakOhm },
		set: func(c *model.Circuit, v float64) { c.Storage.LeakOhm = v }},
	"probe": {Name: "probe", Unit: "Ω", Series: "E12", Doc: "probe divider total resistance",
		get: func(c *model.Circuit) float64 { return c.ProbeOhm },
		set: func(c *model.Circuit, v float64) { c.ProbeOhm = v }},
	"iq": {Name: "iq", Unit: "A", Doc: "supervisor quiescent current",
		get: func(c *model.Circuit) float64 { return c.Supervisor.QuiescentA },
		set: func(c *model.Circuit, v float64) { c.Supervisor.QuiescentA = v }},
	"period": {Name: "period", Unit: "s", Doc: "timer period",
		get: func(c *model.Circuit) float64 { return c.Trigger.PeriodS },
		set: func(c *model.Circuit, v float64) { c.Trigger.PeriodS = v }},
	"pulse": {Name: "pulse", Unit: "s", Doc: "timer pulse length",
		get: func(c *model.Circuit) float64 { return c.Trigger.PulseS },
		set: func(c *model.Circuit, v float64) { c.Trigger.PulseS = v }},
}

// lightPart is the pseudo-part "light", the irradiance the prediction runs at.
const lightPart = "light"

// PartNames lists the names --set and --vary accept, sorted.
func PartNames() []string {
	names := []string{lightPart}
	for n := range parts {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// LookupPart returns the named part.
func LookupPart(name string) (*Part, error) {
	p, ok := parts[strings.ToLower(name)]
	if !ok {
		return nil, fmt.Errorf("whatif: unknown part %q (known: %s)", name, strings.Join(PartNames(), ", "))
	}
	return p, nil
}

// Get returns the part's value in c.
func (p *Part) Get(c *model.Circuit) float64 { return p.get(c) }

// Change sets one part to a value. Part "light" sets the irradiance in W/m².
type Change struct {
	Part  string
	Value float64
}

// String prints the change as it is written on the command line.
func (ch Change) String() string {
	if ch.Part == lightPart {
		return fmt.Sprintf("light=%.4g W/m²", ch.Value)
	}
	p, err := LookupPart(ch.Part)
	if err != nil {
		return fmt.Sprintf("%s=%g", ch.Part, ch.Value)
	}
	return ch.Part + "=" + units.Format(ch.Value, p.Unit)
}

// ParseChange reads "part=value" with the value in engineering notation ("cap=10000u",
// "hold=2.2uF", "on=2.9V", "light=300").
func ParseChange(s string) (Change, error) {
	name, val, ok := strings.Cut(s, "=")
	if !ok || name == "" || val == "" {
		return Change{}, fmt.Errorf("whatif: %q: want part=value, e.g. cap=10000u", s)
	}
	name = strings.ToLower(strings.TrimSpace(name))
	if name == lightPart {
		v, err := units.ParseNonNeg(strings.TrimSuffix(strings.TrimSpace(val), "W/m²"), "")
		if err != nil {
			return Change{}, fmt.Errorf("whatif: %s: %w", s, err)
		}
		return Change{Part: lightPart, Value: v}, nil
	}
	p, err := LookupPart(name)
	if err != nil {
		return Change{}, err
	}
	parse := units.ParsePositive
	if p.Name == "iq" || p.Name == "leak" || p.Name == "probe" {
		parse = units.ParseNonNeg // 0 removes the part
	}
	v, err := parse(strings.TrimSpace(val), p.Unit)
	if err != nil {
		return Change{}, fmt.Errorf("whatif: %s: %w", s, err)
	}
	return Change{Part: p.Name, Value: v}, nil
}

// Apply returns a copy of c with the changes made, and the irradiance g with any light
// change made.
func Apply(c *model.Circuit, g float64, chs []Change) (*model.Circuit, float64, error) {
	cc := *c
	for _, ch := range chs {
		if ch.Part == lightPart {
			g = ch.Value
			continue
		}
		p, err := LookupPart(ch.Part)
		if err != nil {
			return nil, 0, err
		}
		p.set(&cc, ch.Value)
	}
	if err := cc.Validate(); err != nil {
		return nil, 0, fmt.Errorf("whatif: after %v: %w", chs, err)
	}
	return &cc, g, nil
}
