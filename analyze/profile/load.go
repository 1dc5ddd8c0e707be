package profile

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/BurntSushi/toml"

	"capcycle/analyze/units"
)

// Load reads and checks the profile in the file at path.
func Load(path string) (*Profile, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("profile: %w", err)
	}
	return Parse(path, data)
}

// Parse reads and checks a profile from data; name is used in error messages and, without
// its directory and extension, as the default Profile.Name. The first problem found is
// returned as an *Error.
func Parse(name string, data []byte) (*Profile, error) {
	var raw rawProfile
	md, err := toml.NewDecoder(bytes.NewReader(data)).Decode(&raw)
	if err != nil {
		return nil, decodeError(name, err)
	}
	c := &conv{file: name, loc: newLocator(string(data))}
	c.unknownKeys(md)
	p := c.profile(&raw)
	if c.err != nil {
		return nil, c.err
	}
	if p.Name == "" {
		p.Name = strings.TrimSuffix(filepath.Base(name), filepath.Ext(name))
	}
	return p, nil
}

var lineInMessage = regexp.MustCompile(`^toml: line (\d+)(?: \(last key "[^"]*"\))?: `)

// decodeError turns a decoder error into an *Error with the line.
func decodeError(file string, err error) error {
	var pe toml.ParseError
	if errors.As(err, &pe) {
		return &Error{File: file, Line: pe.Position.Line, Key: pe.LastKey, Msg: pe.Message, Err: &kindError{ErrSyntax, err}}
	}
	msg := err.Error()
	line := 0
	if m := lineInMessage.FindStringSubmatch(msg); m != nil {
		line, _ = strconv.Atoi(m[1])
		msg = msg[len(m[0]):]
	}
	return &Error{File: file, Line: line, Msg: strings.TrimPrefix(msg, "toml: "), Err: &kindError{ErrType, err}}
}

// knownKeys lists every key path the file may hold, without array indices.
var knownKeys = func() map[string]bool {
	m := map[string]bool{}
	var walk func(t reflect.Type, prefix string)
	walk = func(t reflect.Type, prefix string) {
		for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice {
			t = t.Elem()
		}
		for i := 0; i < t.NumField(); i++ {
			f := t.Field(i)
			name := f.Tag.Get("toml")
			if name == "" {
				continue
			}
			m[prefix+name] = true
			if f.Type != reflect.TypeOf(rawValue{}) {
				walk(f.Type, prefix+name+".")
			}
		}
	}
	walk(reflect.TypeOf(rawProfile{}), "")
	return m
}()

// unknownKeys reports the first key that the profile does not define: one left undecoded,
// or one that the decoder matched only by ignoring case.
func (c *conv) unknownKeys(md toml.MetaData) {
	undecoded := map[string]bool{}
	for _, k := range md.Undecoded() {
		undecoded[strings.Join(k, ".")] = true
	}
	for _, k := range md.Keys() {
		path := strings.Join(k, ".")
		if !undecoded[path] && knownKeys[path] {
			continue
		}
		msg := fmt.Sprintf("unknown key %q", k[len(k)-1])
		if t := md.Type(k...); t == "Hash" || t == "ArrayHash" {
			msg = fmt.Sprintf("unknown table %q", k[len(k)-1])
		}
		if s := suggest(path); s != "" {
			msg += fmt.Sprintf(" (did you mean %q?)", s)
		} else if len(k) == 1 {
			msg += "; the tables are storage, trigger, switch, load, cell, adc, channel, calibration, light"
		}
		c.err = &Error{File: c.file, Line: c.loc.findPlain(path), Key: path, Msg: msg, Err: ErrUnknownKey}
		return
	}
}

// suggest returns the known key in the same table closest to path, if any is close.
func suggest(path string) string {
	table, last := "", path
	if i := strings.LastIndex(path, "."); i >= 0 {
		table, last = path[:i+1], path[i+1:]
	}
	best, bestD := "", 3
	var keys []string
	for k := range knownKeys {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		if !strings.HasPrefix(k, table) || strings.Contains(k[len(table):], ".") {
			continue
		}
		name := k[len(table):]
		d := editDistance(strings.ToLower(last), name)
		if d < bestD {
			best, bestD = name, d
		}
	}
	return best
}

func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// conv converts the raw file into a Profile, keeping the first problem found.
type conv struct {
	file string
	loc  *locator
	err  *Error
}

func (c *conv) fail(key string, kind error, format string, a ...any) {
	if c.err == nil {
		c.err = &Error{File: c.file, Line: c.loc.find(key), Key: key, Msg: fmt.Sprintf(format, a...), Err: kind}
	}
}

// failCause is fail with an underlying error kept for errors.Is / errors.As.
func (c *conv) failCause(key string, kind, cause error, format string, a ...any) {
	if c.err == nil {
		c.fail(key, &kindError{kind, cause}, format, a...)
	}
}

// q describes a quantity: its unit, sign and what it is (for messages).
type q struct {
	unit string
	dom  units.Domain
	what string
}

var (
	farads    = q{units.Farad, units.Positive, "a capacitance in F, e.g. \"4700u\""}
	volts     = q{units.Volt, units.Positive, "a voltage in V, e.g. 2.7 or \"2.7V\""}
	voltsAny  = q{units.Volt, units.Any, "a voltage in V"}
	voltsNN   = q{units.Volt, units.NonNegative, "a voltage in V, zero or more"}
	amps      = q{units.Ampere, units.Positive, "a current in A, e.g. \"1u\""}
	ampsNN    = q{units.Ampere, units.NonNegative, "a current in A, zero or more, e.g. \"1u\""}
	ohms      = q{units.Ohm, units.Positive, "a resistance in Ω, e.g. \"1meg\" or \"33\""}
	ohmsNN    = q{units.Ohm, units.NonNegative, "a resistance in Ω, zero or more"}
	seconds   = q{units.Second, units.Positive, "a time in s, e.g. \"20m\""}
	secondsNN = q{units.Second, units.NonNegative, "a time in s, zero or more"}
	henries   = q{units.Henry, units.NonNegative, "an inductance in H, e.g. \"250u\""}
	percent   = q{units.Percent, units.NonNegative, "a percentage, e.g. 2"}
	joules    = q{units.Joule, units.NonNegative, "an energy in J"}
	plainPos  = q{"", units.Positive, "a number greater than zero"}
	plainNN   = q{"", units.NonNegative, "a number, zero or more"}
	plainAny  = q{"", units.Any, "a number"}
	kelvin    = q{"K", units.Positive, "a temperature in K, e.g. 298.15"}
	wm2       = q{"W/m2", units.NonNegative, "an irradiance in W/m², e.g. 300"}
	degrees   = q{"deg", units.Any, "an angle in degrees"}
)

// num converts r to a float64 in SI units. A missing value is 0, or an error if req.
func (c *conv) num(key string, r rawValue, k q, req bool) float64 {
	if c.err != nil {
		return 0
	}
	if !r.set {
		if req {
			c.fail(key, ErrMissing, "required: %s", k.what)
		}
		return 0
	}
	var v float64
	switch x := r.v.(type) {
	case int64:
		v = float64(x)
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			c.fail(key, ErrValue, "%v is not a finite number; want %s", x, k.what)
			return 0
		}
		v = x
	case string:
		var err error
		v, err = units.ParseDomain(x, k.unit, k.dom)
		if err != nil {
			var pe *units.ParseError
			if errors.As(err, &pe) {
				c.failCause(key, ErrValue, err, "%q: %v; want %s", x, pe.Err, k.what)
			} else {
				c.failCause(key, ErrValue, err, "%v; want %s", err, k.what)
			}
			return 0
		}
		c.plausible(key, r, v, k)
		return v
	default:
		c.fail(key, ErrType, "%s is not a number; want %s", tomlType(r.v), k.what)
		return 0
	}
	switch {
	case k.dom == units.Positive && v <= 0:
		c.fail(key, ErrValue, "%v: must be more than zero; want %s", v, k.what)
	case k.dom == units.NonNegative && v < 0:
		c.fail(key, ErrValue, "%v: must not be negative; want %s", v, k.what)
	}
	c.plausible(key, r, v, k)
	return v
}

// plausible refuses a value outside the key's plausible range (see plausible.go); a 0
// of a key whose 0 means "none" or "not given" passes.
func (c *conv) plausible(key string, r rawValue, v float64, k q) {
	rg, ok := rangeFor(key)
	switch {
	case !ok || c.err != nil:
		return
	case v == 0 && k.dom != units.Positive:
		return // 0 is "none" or "not given"; the key's own rule says whether that is allowed
	case v >= rg.lo && v <= rg.hi:
		return
	}
	what := "below"
	if v > rg.hi {
		what = "above"
	}
	msg := fmt.Sprintf("%s is %s the plausible range %s to %s", fv(v, k.unit), what, fv(rg.lo, k.unit), fv(rg.hi, k.unit))
	if rg.why != "" {
		msg += " (" + rg.why + ")"
	}
	if v < rg.lo {
		msg += milliHint(r.v)
	}
	c.fail(key, ErrValue, "%s; want %s", msg, k.what)
}

// text converts r to a string, which must be one of allowed when any are given.
func (c *conv) text(key string, r rawValue, req bool, allowed ...string) string {
	if c.err != nil {
		return ""
	}
	if !r.set {
		if req {
			if len(allowed) > 0 {
				c.fail(key, ErrMissing, "required: one of %s", quoteAll(allowed))
			} else {
				c.fail(key, ErrMissing, "required")
			}
		}
		return ""
	}
	s, ok := r.v.(string)
	if !ok {
		c.fail(key, ErrType, "%s is not a string; want a quoted text", tomlType(r.v))
		return ""
	}
	if len(allowed) > 0 && !contains(allowed, s) {
		c.fail(key, ErrValue, "%q: want one of %s", s, quoteAll(allowed))
		return ""
	}
	return s
}

// integer converts r to an int in [lo, hi]; a missing value is def.
func (c *conv) integer(key string, r rawValue, lo, hi, def int64) int64 {
	if c.err != nil || !r.set {
		return def
	}
	var v int64
	switch x := r.v.(type) {
	case int64:
		v = x
	case float64:
		if x != math.Trunc(x) || math.Abs(x) > 1<<53 {
			c.fail(key, ErrValue, "%v: want a whole number from %d to %d", x, lo, hi)
			return def
		}
		v = int64(x)
	default:
		c.fail(key, ErrType, "%s is not a number; want a whole number from %d to %d", tomlType(r.v), lo, hi)
		return def
	}
	if v < lo || v > hi {
		c.fail(key, ErrValue, "%d: want a whole number from %d to %d", v, lo, hi)
		return def
	}
	return v
}

// forbid reports a key that is set but does not apply.
func (c *conv) forbid(key string, r rawValue, why string) {
	if r.set {
		c.fail(key, ErrValue, "does not apply: %s", why)
	}
}

// check reports a problem at key unless ok.
func (c *conv) check(ok bool, key string, format string, a ...any) {
	if !ok {
		c.fail(key, ErrValue, format, a...)
	}
}

func tomlType(v any) string {
	switch v.(type) {
	case string:
		return "a string"
	case int64, float64:
		return "a number"
	case bool:
		return "a boolean"
	case time.Time:
		return "a date or time"
	case map[string]any:
		return "a table"
	case []any, []map[string]any:
		return "an array"
	}
	return fmt.Sprintf("a %T", v)
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func quoteAll(list []string) string {
	q := make([]string, len(list))
	for i, s := range list {
		q[i] = strconv.Quote(s)
	}
	return strings.Join(q, ", ")
}

func fv(v float64, unit string) string { return units.Format(v, unit) }
