package units

import "flag"

// Value is a number in SI units that reads engineering notation. It implements
// flag.Value and flag.Getter, so a command can declare
//
//	c := units.NewValue(4.7e-3, units.Farad, units.Positive)
//	fs.Var(c, "cap", "storage capacitance, F (e.g. 4700u)")
//
// and read c.V after parsing. The zero Value is a plain number (no unit) of 0 in any
// domain.
type Value struct {
	V      float64 // the value in Unit, without prefix; holds the default until Set
	Unit   string  // the unit expected in the text ("" for a plain number)
	Domain Domain  // which signs Set accepts
	set    bool
}

var _ flag.Getter = (*Value)(nil)

// NewValue returns a Value holding def (in SI units) that accepts text in unit within d.
func NewValue(def float64, unit string, d Domain) *Value {
	return &Value{V: def, Unit: unit, Domain: d}
}

// Set parses s with ParseDomain and stores the result. On error the value is unchanged.
func (v *Value) Set(s string) error {
	x, err := ParseDomain(s, v.Unit, v.Domain)
	if err != nil {
		return err
	}
	v.V, v.set = x, true
	return nil
}

// String formats the value with Format (three significant digits).
func (v *Value) String() string {
	if v == nil {
		return ""
	}
	return Format(v.V, v.Unit)
}

// Get returns the value as a float64 (for flag.Getter).
func (v *Value) Get() any { return v.V }

// IsSet reports whether Set has succeeded at least once.
func (v *Value) IsSet() bool { return v.set }

// UnmarshalText lets a Value be filled from text by encoders such as encoding/json or a
// TOML decoder.
func (v *Value) UnmarshalText(b []byte) error { return v.Set(string(b)) }
