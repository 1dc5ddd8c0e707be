package capture

import (
	"fmt"
	"strings"
)

// Columns are a user's words for how to read a foreign CSV, as flags give them: the
// time, volt and current columns (a name or a position from 1; "" for the default
// rule), the time format ("seconds", "rfc3339", "" for auto), the volt unit ("V", "mV",
// "uV", "" for the unit in the column's name) and the delimiter (",", ";", "tab", ""
// for the one the header row uses).
type Columns struct {
	Time, Volt, Current string
	TimeFormat          string
	VoltUnit            string
	Delim               string
}

// Apply sets r's options from c; it must be called before r reads. An error names the
// option and what it takes.
func (c Columns) Apply(r *Reader) error {
	tf, err := ParseTimeFormat(c.TimeFormat)
	if err != nil {
		return err
	}
	scale, err := voltUnit(c.VoltUnit)
	if err != nil {
		return err
	}
	comma, err := delimiter(c.Delim)
	if err != nil {
		return err
	}
	r.TimeCol, r.VoltCol, r.CurrentCol, r.TimeFormat = c.Time, c.Volt, c.Current, tf
	if scale != 0 {
		r.VoltScale = scale
	}
	if comma != 0 {
		r.Comma = comma
	}
	return nil
}

func voltUnit(s string) (float64, error) {
	switch strings.ToLower(s) {
	case "":
		return 0, nil
	case "v":
		return 1, nil
	case "mv":
		return 1e-3, nil
	case "uv", "µv", "μv":
		return 1e-6, nil
	}
	return 0, fmt.Errorf("capture: volt unit %q: want V, mV or uV", s)
}

func delimiter(s string) (byte, error) {
	switch s {
	case "":
		return 0, nil
	case ",", ";":
		return s[0], nil
	case "tab", "\\t", "\t":
		return '\t', nil
	}
	return 0, fmt.Errorf("capture: delimiter %q: want ',', ';' or tab", s)
}
