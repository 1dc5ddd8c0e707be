package whatif

import (
	"errors"
	"fmt"
	"math"
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
	field  string // the model's field, for messages ("Trigger.OffV")
	get    func(c *model.Circuit) float64
	set    func(c *model.Circuit, v float64)
}

// parts lists every part by name.
var parts = map[string]*Part{
	"cap": {Name: "cap", field: "Storage.CapF", Unit: "F", Series: "E6", Doc: "storage capacitance",
		get: func(c *model.Circuit) float64 { return c.Storage.CapF },
		set: func(c *model.Circuit, v float64) { c.Storage.CapF = v }},
	"hold": {Name: "hold", field: "Trigger.HoldF", Unit: "F", Series: "E6", Doc: "hold capacitance of a hold-capacitor trigger",
		get: func(c *model.Circuit) float64 { return c.Trigger.HoldF },
		set: func(c *model.Circuit, v float64) { c.Trigger.HoldF = v }},
	"on": {Name: "on", field: "Trigger.OnV", Unit: "V", Doc: "trigger turn-on voltage",
		get: func(c *model.Circuit) float64 { return c.Trigger.OnV },
		set: func(c *model.Circuit, v float64) { c.Trigger.OnV = v }},
	"off": {Name: "off", field: "Trigger.OffV", Unit: "V", Doc: "trigger release voltage (node, or hold voltage for a hold trigger)",
		get: func(c *model.Circuit) float64 { return c.Trigger.OffV },
		set: func(c *model.Circuit, v float64) { c.Trigger.OffV = v }},
	"load": {Name: "load", field: "Load.Ohm", Unit: "Ω", Series: "E12", Doc: "load resistance (motor: armature resistance)",
		get: func(c *model.Circuit) float64 { return c.Load.Ohm },
		set: func(c *model.Circuit, v float64) { c.Load.Ohm = v }},
	"leak": {Name: "leak", field: "Storage.LeakOhm", Unit: "Ω", Doc: "capacitor leakage resistance",
		get: func(c *model.Circuit) float64 { return c.Storage.LeakOhm },
		set: func(c *model.Circuit, v float64) { c.Storage.LeakOhm = v }},
	"probe": {Name: "probe", field: "ProbeOhm", Unit: "Ω", Series: "E12", Doc: "probe divider total resistance",
		get: func(c *model.Circuit) float64 { return c.ProbeOhm },
		set: func(c *model.Circuit, v float64) { c.ProbeOhm = v }},
	"iq": {Name: "iq", field: "Supervisor.QuiescentA", Unit: "A", Doc: "supervisor quiescent current",
		get: func(c *model.Circuit) float64 { return c.Supervisor.QuiescentA },
		set: func(c *model.Circuit, v float64) { c.Supervisor.QuiescentA = v }},
	"period": {Name: "period", field: "Trigger.PeriodS", Unit: "s", Doc: "timer period",
		get: func(c *model.Circuit) float64 { return c.Trigger.PeriodS },
		set: func(c *model.Circuit, v float64) { c.Trigger.PeriodS = v }},
	"pulse": {Name: "pulse", field: "Trigger.PulseS", Unit: "s", Doc: "timer pulse length",
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
// change made. A change of the trigger's turn-on voltage without one of its release
// moves the release with it, keeping the hysteresis (on − off) the part has, as a
// supervisor of another threshold would (common practice, no source); where that would
// leave the release at or below 0 V, half the new turn-on voltage at most. Changes that
// leave an unusable circuit are refused in the parts' own names.
func Apply(c *model.Circuit, g float64, chs []Change) (*model.Circuit, float64, error) {
	cc := *c
	setOn, setOff := false, false
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
		setOn = setOn || p.Name == "on"
		setOff = setOff || p.Name == "off"
	}
	if setOn && !setOff {
		if k := cc.Trigger.Kind; k == model.TriggerVoltage || k == model.TriggerHold {
			delta := c.Trigger.OnV - c.Trigger.OffV
			cc.Trigger.OffV = cc.Trigger.OnV - math.Min(delta, 0.5*cc.Trigger.OnV)
		}
	}
	if err := cc.Validate(); err != nil {
		return nil, 0, &ChangeError{Changes: chs, Reason: inPartNames(err, &cc)}
	}
	return &cc, g, nil
}

// ChangeError refuses changes that leave a circuit that cannot be built, in the words
// of the parts.
type ChangeError struct {
	Changes []Change
	Reason  string // e.g. "off (4.40 V) must be below on (4.00 V)"
}

func (e *ChangeError) Error() string {
	s := make([]string, len(e.Changes))
	for i, ch := range e.Changes {
		s[i] = ch.String()
	}
	return fmt.Sprintf("whatif: with %s: %s", strings.Join(s, ", "), e.Reason)
}

// inPartNames says what is wrong with a changed circuit in the names --set uses.
func inPartNames(err error, c *model.Circuit) string {
	var fe *model.FieldError
	if !errors.As(err, &fe) {
		return err.Error()
	}
	name := func(field string) string {
		for _, p := range parts {
			if p.field == field {
				return fmt.Sprintf("%s (%s)", p.Name, units.Format(p.get(c), p.Unit))
			}
		}
		return field
	}
	reason := fe.Reason
	for _, p := range parts {
		if p.field != "" && strings.Contains(reason, p.field) {
			reason = strings.ReplaceAll(reason, p.field, name(p.field))
		}
	}
	return name(fe.Field) + " " + reason
}
