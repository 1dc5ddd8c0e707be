package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"

	"golang.org/x/net/html"

	"capcycle/analyze/analysis"
	"capcycle/analyze/units"
)

// The fixtures are deterministic but take a moment to simulate; build each once.
var (
	wrenOnce  = sync.OnceValue(wrenResult)
	fernOnce  = sync.OnceValue(fernResult)
	afterOnce = sync.OnceValue(wrenAfterResult)
)

// fixtures are the test Results by name (invented data, see fixtures_test.go).
func fixtures() map[string]*analysis.Result {
	return map[string]*analysis.Result{"wren": wrenOnce(), "fern": fernOnce(), "sparse": sparseResult()}
}

// pageCache keeps rendered pages of the shared fixtures: each test looks at the same
// bytes, and rendering a day-long Result once is enough (the race detector makes it slow).
var pageCache sync.Map // key: pageKey, value: []byte

type pageKey struct {
	r    *analysis.Result
	o    Options
	none bool
}

func renderPage(t testing.TB, r *analysis.Result, o *Options) []byte {
	t.Helper()
	k := pageKey{r: r, none: o == nil}
	if o != nil {
		k.o = *o
	}
	if v, ok := pageCache.Load(k); ok {
		return v.([]byte)
	}
	page := renderFresh(t, r, o)
	pageCache.Store(k, page)
	return page
}

func renderFresh(t testing.TB, r *analysis.Result, o *Options) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := Write(&b, r, o); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func renderCompare(t testing.TB) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := Compare(&b, wrenOnce(), afterOnce(), &Options{LabelA: "33 mF", LabelB: "47 mF"}); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func parseHTML(t testing.TB, page []byte) *html.Node {
	t.Helper()
	doc, err := html.Parse(bytes.NewReader(page))
	if err != nil {
		t.Fatalf("page does not parse as HTML: %v", err)
	}
	return doc
}

// walk calls fn on every element node under n, depth first.
func walk(n *html.Node, fn func(*html.Node)) {
	if n.Type == html.ElementNode {
		fn(n)
	}
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		walk(c, fn)
	}
}

func attr(n *html.Node, key string) string {
	for _, a := range n.Attr {
		if a.Key == key {
			return a.Val
		}
	}
	return ""
}

func hasClass(n *html.Node, class string) bool {
	for _, c := range strings.Fields(attr(n, "class")) {
		if c == class {
			return true
		}
	}
	return false
}

// textOf is the text inside n with runs of white space folded to one space.
func textOf(n *html.Node) string {
	var b strings.Builder
	var rec func(*html.Node)
	rec = func(n *html.Node) {
		if n.Type == html.TextNode {
			b.WriteString(n.Data)
		}
		if n.Type == html.ElementNode && (n.Data == "svg" || n.Data == "style") {
			return
		}
		gap := n.Type == html.ElementNode && spaced[n.Data]
		if gap {
			b.WriteString(" ")
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			rec(c)
		}
		if gap {
			b.WriteString(" ")
		}
	}
	rec(n)
	return strings.Join(strings.Fields(b.String()), " ")
}

var jsonDocs sync.Map // *analysis.Result -> any

// jsonDoc is r as the generic JSON tree a script reading the analysis would see.
func jsonDoc(r *analysis.Result) (any, error) {
	if d, ok := jsonDocs.Load(r); ok {
		return d, nil
	}
	raw, err := json.Marshal(r)
	if err != nil {
		return nil, err
	}
	var doc any
	if err := json.Unmarshal(raw, &doc); err != nil {
		return nil, err
	}
	jsonDocs.Store(r, doc)
	return doc, nil
}

// spaced are the elements whose text stands apart from its neighbours'.
var spaced = map[string]bool{"dt": true, "dd": true, "td": true, "th": true, "li": true, "p": true, "div": true, "code": true}

// jsonValue looks up path in the JSON form of r: dotted keys ("fit.trigger.on_v.value"),
// "len(list)" or "count(list.key=value)".
func jsonValue(r *analysis.Result, path string) (float64, error) {
	doc, err := jsonDoc(r)
	if err != nil {
		return 0, err
	}
	get := func(p string) (any, error) {
		cur := doc
		for _, k := range strings.Split(p, ".") {
			m, ok := cur.(map[string]any)
			if !ok {
				return nil, fmt.Errorf("%s: %q is not inside an object", path, k)
			}
			if cur, ok = m[k]; !ok {
				return nil, fmt.Errorf("%s: no key %q", path, k)
			}
		}
		return cur, nil
	}
	if inner, ok := strings.CutPrefix(path, "len("); ok {
		v, err := get(strings.TrimSuffix(inner, ")"))
		if err != nil {
			return 0, err
		}
		l, ok := v.([]any)
		if !ok {
			return 0, fmt.Errorf("%s: not a list", path)
		}
		return float64(len(l)), nil
	}
	if inner, ok := strings.CutPrefix(path, "count("); ok {
		inner = strings.TrimSuffix(inner, ")")
		list, cond, _ := strings.Cut(inner, ".")
		key, want, _ := strings.Cut(cond, "=")
		v, err := get(list)
		if err != nil {
			return 0, err
		}
		n := 0
		for _, e := range v.([]any) {
			if m, ok := e.(map[string]any); ok && fmt.Sprint(m[key]) == want {
				n++
			}
		}
		return float64(n), nil
	}
	v, err := get(path)
	if err != nil {
		return 0, err
	}
	f, ok := v.(float64)
	if !ok {
		return 0, fmt.Errorf("%s: %v is not a number", path, v)
	}
	return f, nil
}

var shownRE = regexp.MustCompile(`^(-?[0-9]+(?:\.([0-9]+))?) ?(.*)$`)

// parseShown reads a number as the report prints it ("2.71 V", "23.0 ms", "24.0 h",
// "2.02 %", "1439") and returns its value in SI units and half a unit of its last
// digit, the most that rounding can have moved it.
func parseShown(s string) (v, half float64, err error) {
	m := shownRE.FindStringSubmatch(s)
	if m == nil {
		return 0, 0, fmt.Errorf("%q is not a number", s)
	}
	mant, _ := strconv.ParseFloat(m[1], 64)
	ulp := math.Pow10(-len(m[2]))
	unit := m[3]
	scale := 1.0
	switch {
	case unit == "" || unit == "%":
	case unit == "h":
		scale = 3600
	case unit == "min":
		scale = 60
	default:
		// Read SI values back with the project's own parser; the base unit is the
		// text's last rune ("ms" -> "s"), or "Hz".
		rs := []rune(unit)
		base := string(rs[len(rs)-1])
		if strings.HasSuffix(unit, "Hz") {
			base = "Hz"
		}
		got, perr := units.Parse(s, base)
		if perr != nil {
			return 0, 0, perr
		}
		if mant != 0 {
			scale = got / mant
		}
	}
	return mant * scale, ulp / 2 * scale, nil
}
