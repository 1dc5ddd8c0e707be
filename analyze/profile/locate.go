package profile

import (
	"strconv"
	"strings"
)

// locator maps key paths to the line they are written on. BurntSushi/toml keeps key
// positions to itself, so the source text is scanned here: table headers, array-of-table
// headers (numbered from 0 in order) and "key = value" lines.
type locator struct {
	line  map[string]int // "storage.cap_f", "channel[1].adc", "storage", "channel[1]"
	plain map[string]int // the same without [i], first occurrence: "channel.adc"
}

func newLocator(src string) *locator {
	l := &locator{line: map[string]int{}, plain: map[string]int{}}
	count := map[string]int{}
	table := ""
	inString := ""    // the multi-line string delimiter we are inside, or ""
	bracketDepth := 0 // open [ of a multi-line array value
	for i, raw := range strings.Split(src, "\n") {
		n := i + 1
		s := strings.TrimSpace(raw)
		if inString != "" {
			if strings.Count(s, inString)%2 == 1 {
				inString = ""
			}
			continue
		}
		if bracketDepth > 0 {
			bracketDepth += bracketBalance(stripComment(s))
			continue
		}
		if s == "" || s[0] == '#' {
			continue
		}
		if strings.HasPrefix(s, "[[") {
			end := strings.Index(s, "]]")
			if end < 0 {
				continue
			}
			name := normKey(s[2:end])
			idx := count[name]
			count[name]++
			table = name + "[" + strconv.Itoa(idx) + "]"
			l.add(table, n)
			continue
		}
		if s[0] == '[' {
			end := strings.Index(s, "]")
			if end < 0 {
				continue
			}
			table = normKey(s[1:end])
			l.add(table, n)
			continue
		}
		eq := strings.Index(s, "=")
		if eq < 0 {
			continue
		}
		key := normKey(s[:eq])
		if table != "" {
			key = table + "." + key
		}
		l.add(key, n)
		val := strings.TrimSpace(s[eq+1:])
		for _, d := range []string{`"""`, `'''`} {
			if strings.HasPrefix(val, d) && strings.Count(val, d)%2 == 1 {
				inString = d
			}
		}
		if inString == "" && strings.HasPrefix(val, "[") {
			bracketDepth = bracketBalance(stripComment(val))
		}
	}
	return l
}

func (l *locator) add(key string, n int) {
	if _, ok := l.line[key]; !ok {
		l.line[key] = n
	}
	p := stripIndex(key)
	if _, ok := l.plain[p]; !ok {
		l.plain[p] = n
	}
}

// find returns the line of key, or of the nearest enclosing table that is written in the
// file, or 0.
func (l *locator) find(key string) int {
	for k := key; k != ""; k = parentKey(k) {
		if n, ok := l.line[k]; ok {
			return n
		}
	}
	return 0
}

// findPlain is find for a key without array indices (as toml.MetaData reports keys).
func (l *locator) findPlain(key string) int {
	for k := key; k != ""; k = parentKey(k) {
		if n, ok := l.plain[k]; ok {
			return n
		}
	}
	return 0
}

func parentKey(k string) string {
	if i := strings.LastIndexAny(k, ".["); i >= 0 {
		return k[:i]
	}
	return ""
}

// normKey removes spaces around dots and the quotes of quoted key parts.
func normKey(s string) string {
	parts := strings.Split(s, ".")
	for i, p := range parts {
		p = strings.TrimSpace(p)
		if len(p) >= 2 && (p[0] == '"' || p[0] == '\'') && p[len(p)-1] == p[0] {
			p = p[1 : len(p)-1]
		}
		parts[i] = p
	}
	return strings.Join(parts, ".")
}

func stripIndex(k string) string {
	var b strings.Builder
	skip := false
	for _, r := range k {
		switch {
		case r == '[':
			skip = true
		case r == ']':
			skip = false
		case !skip:
			b.WriteRune(r)
		}
	}
	return b.String()
}

// stripComment drops a # comment that is not inside a basic or literal string.
func stripComment(s string) string {
	var quote rune
	for i, r := range s {
		switch {
		case quote != 0 && r == quote:
			quote = 0
		case quote == 0 && (r == '"' || r == '\''):
			quote = r
		case quote == 0 && r == '#':
			return s[:i]
		}
	}
	return s
}

func bracketBalance(s string) int {
	return strings.Count(s, "[") - strings.Count(s, "]")
}
