package report

import (
	"bytes"
	"capcycle/analyze/analysis"
	"encoding/xml"
	"errors"
	"io"
	"regexp"
	"strings"
	"testing"

	"golang.org/x/net/html"
)

var sectionIDs = []string{"verdict", "day", "cycles", "prediction", "cell", "leak", "parameters", "cycle-table", "methods", "safety"}

func TestWriteIsHTMLWithXMLPlots(t *testing.T) {
	pages := map[string][]byte{"compare": renderCompare(t)}
	for name, r := range fixtures() {
		pages[name] = renderPage(t, r, nil)
	}
	wantSVG := map[string]int{"wren": 5, "fern": 4, "sparse": 0, "compare": 4} // compare: the two days, the cycles, the energies
	for name, page := range pages {
		t.Run(name, func(t *testing.T) {
			doc := parseHTML(t, page)
			ids := map[string]bool{}
			var svgs int
			walk(doc, func(n *html.Node) {
				if id := attr(n, "id"); id != "" {
					if ids[id] {
						t.Errorf("id %q is used twice", id)
					}
					ids[id] = true
				}
				if n.Data == "svg" {
					svgs++
				}
				if n.Data == "script" || n.Data == "iframe" || n.Data == "img" || n.Data == "link" {
					t.Errorf("page has a <%s> element", n.Data)
				}
			})
			if name != "compare" {
				for _, id := range sectionIDs {
					if !ids[id] {
						t.Errorf("section %q is missing", id)
					}
				}
			}
			if svgs != wantSVG[name] {
				t.Errorf("%d plots, want %d", svgs, wantSVG[name])
			}
			// Each inline SVG must stand on its own as XML.
			raw := regexp.MustCompile(`(?s)<svg\b.*?</svg>`).FindAll(page, -1)
			if len(raw) != svgs {
				t.Errorf("found %d <svg>…</svg> spans in the text, %d svg elements in the tree", len(raw), svgs)
			}
			for i, s := range raw {
				if err := checkXML(s); err != nil {
					t.Errorf("plot %d is not well-formed XML: %v", i, err)
				}
				if bytes.Contains(s, []byte("<?xml")) || bytes.Contains(s, []byte("font-family:Liberation")) {
					t.Errorf("plot %d keeps the XML prolog or a per-text font declaration", i)
				}
			}
		})
	}
}

func checkXML(b []byte) error {
	d := xml.NewDecoder(bytes.NewReader(b))
	d.Strict = true
	var depth int
	for {
		tok, err := d.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return err
		}
		switch tok.(type) {
		case xml.StartElement:
			depth++
		case xml.EndElement:
			depth--
		}
	}
	if depth != 0 {
		return errors.New("unbalanced elements")
	}
	return nil
}

// TestNothingFromOutside checks that the page can fetch nothing: no script, no source
// or link to another host, no CSS import or remote url(), and that every link is to a
// place in the page or to a file beside it.
func TestNothingFromOutside(t *testing.T) {
	o := &Options{CSVHref: "wren.cycles.csv", JSONHref: "wren.analysis.json"}
	pages := map[string][]byte{"wren": renderPage(t, wrenOnce(), o), "fern": renderPage(t, fernOnce(), nil), "compare": renderCompare(t)}
	bad := regexp.MustCompile(`(?i)(src\s*=|@import|url\(\s*['"]?(https?:|//)|<script|<link\b|(href|xlink:href)\s*=\s*["']?(https?:|//|javascript:|data:))`)
	for name, page := range pages {
		if m := bad.Find(page); m != nil {
			t.Errorf("%s: found %q", name, m)
		}
		walk(parseHTML(t, page), func(n *html.Node) {
			if h := attr(n, "href"); h != "" && !strings.HasPrefix(h, "#") && (strings.Contains(h, ":") || strings.Contains(h, "/")) {
				t.Errorf("%s: link %q is neither in the page nor beside it", name, h)
			}
		})
	}
	// and the links that should be there are
	for _, want := range []string{`href="wren.cycles.csv"`, `href="wren.analysis.json"`, `href="#safety"`} {
		if !bytes.Contains(pages["wren"], []byte(want)) {
			t.Errorf("wren page lacks %s", want)
		}
	}
}

// TestVerdictNumbersMatchJSON reads every number back out of the rendered verdict and
// checks it against the JSON field it names, to within the rounding of the digits shown.
func TestVerdictNumbersMatchJSON(t *testing.T) {
	cases := fixtures()
	chat := sparseResult()
	chat.Cycles = []analysis.Cycle{{Index: 0, FireS: 10, FireV: 2.7, ResetS: 10.01, ResetV: 2.65, PulseS: 0.01, Kind: "chatter"}}
	cases["chatter"] = chat
	none := sparseResult()
	none.Samples = 0
	cases["empty"] = none
	near := *fernOnce()
	near.EquilibriumV = est(3.9986, 0.0004, "fitted")
	near.Declared = &analysis.Declared{OnV: 4.0}
	cases["near-trigger"] = &near
	digit := regexp.MustCompile(`[0-9]`)
	for name, r := range cases {
		t.Run(name, func(t *testing.T) {
			doc := parseHTML(t, renderPage(t, r, nil))
			var verdict *html.Node
			walk(doc, func(n *html.Node) {
				if n.Data == "p" && hasClass(n, "verdict") {
					verdict = n
				}
			})
			if verdict == nil {
				t.Fatal("no verdict paragraph")
			}
			var spans int
			for c := verdict.FirstChild; c != nil; c = c.NextSibling {
				switch {
				case c.Type == html.TextNode:
					if digit.MatchString(c.Data) {
						t.Errorf("verdict text %q holds a number not traced to the JSON", c.Data)
					}
				case c.Type == html.ElementNode && hasClass(c, "n"):
					spans++
					path, shown := attr(c, "data-json"), textOf(c)
					want, err := jsonValue(r, path)
					if err != nil {
						t.Errorf("verdict number %q: %v", shown, err)
						continue
					}
					got, half, err := parseShown(shown)
					if err != nil {
						t.Errorf("verdict number %q does not read back: %v", shown, err)
						continue
					}
					if d := got - want; d > half*1.000001 || d < -half*1.000001 {
						t.Errorf("verdict shows %q (%g) for %s = %g; rounding allows ±%g", shown, got, path, want, half)
					}
				default:
					t.Errorf("unexpected node in the verdict: %v", c.Data)
				}
			}
			var want int
			for _, p := range Verdict(r).Parts {
				if p.Path != "" {
					want++
				}
			}
			if spans != want {
				t.Errorf("%d numbers in the page's verdict, %d in Verdict(r)", spans, want)
			}
			if name == "wren" && spans < 6 {
				t.Errorf("wren's verdict carries only %d numbers", spans)
			}
			if name == "near-trigger" {
				var shown []string
				for _, p := range Verdict(r).Parts {
					if strings.HasSuffix(p.Path, "on_v") || strings.HasPrefix(p.Path, "equilibrium_v") {
						shown = append(shown, p.Text)
					}
				}
				if len(shown) != 2 || shown[0] == shown[1] {
					t.Errorf("settling level and trigger print as %q: a level below the trigger must not read the same", shown)
				}
			}
			t.Logf("%s: %s", name, Verdict(r))
		})
	}
}

func TestAbsentDataIsSaidPlainly(t *testing.T) {
	doc := parseHTML(t, renderPage(t, sparseResult(), nil))
	absent := map[string]int{}
	walk(doc, func(n *html.Node) {
		if n.Data != "section" {
			return
		}
		id := attr(n, "id")
		walk(n, func(m *html.Node) {
			if m.Data == "p" && hasClass(m, "absent") {
				absent[id]++
			}
			if m.Data == "svg" {
				t.Errorf("section %s draws a plot with no data", id)
			}
		})
	})
	for _, id := range []string{"verdict", "day", "cycles", "prediction", "cell", "leak", "cycle-table"} {
		if absent[id] == 0 {
			t.Errorf("section %s does not say that its data is absent", id)
		}
	}
}

// TestDayLongReportStaysLight renders the day-long fixture (1400+ cycles, 2800 envelope
// bins, 13 traces, a 4000-point leak trace) and checks the page stays small.
func TestDayLongReportStaysLight(t *testing.T) {
	r := wrenOnce()
	if r.DurationS < 24*3600-1 || len(r.Envelope) < 2000 || len(r.Cycles) < 1000 {
		t.Fatalf("fixture is not a busy day: %g s, %d bins, %d cycles", r.DurationS, len(r.Envelope), len(r.Cycles))
	}
	page := renderPage(t, r, nil)
	const limit = 1 << 20
	t.Logf("day-long report: %d bytes (%d cycles, %d envelope bins in the Result)", len(page), len(r.Cycles), len(r.Envelope))
	if len(page) > limit {
		t.Errorf("day-long report is %d bytes, over %d", len(page), limit)
	}
	// Ten times the data must not make it ten times the size: the plots decimate.
	big := *r
	big.Envelope = nil
	for _, e := range r.Envelope {
		for k := range 10 {
			e2 := e
			e2.TS += float64(k) * 3
			big.Envelope = append(big.Envelope, e2)
		}
	}
	// and a flood of everything else: 400 traces of 6000 points, 40 000 cycles with
	// predictions, a 100 000-point leak trace, a 50 000-point I-V curve.
	for range 400 / len(r.Traces) {
		for _, tr := range r.Traces {
			long := analysis.Trace{}
			for k := range 6000 {
				long.TS = append(long.TS, tr.TS[0]+float64(k)*0.02)
				long.V = append(long.V, tr.V[k%len(tr.V)])
			}
			big.Traces = append(big.Traces, long)
		}
	}
	big.Cycles, big.Prediction = nil, &analysis.Prediction{Fitted: r.Prediction.Fitted}
	for k := range 40000 {
		c := r.Cycles[k%len(r.Cycles)]
		c.Index, c.FireS = k, float64(k)*2
		big.Cycles = append(big.Cycles, c)
		m := 30 + float64(k%17)
		big.Prediction.Cycles = append(big.Prediction.Cycles, analysis.PredictedCycle{Index: k,
			Measured: analysis.CycleFigs{ChargeS: f64(m)}, Nominal: &analysis.CycleFigs{ChargeS: f64(m * 1.1)}, Fitted: &analysis.CycleFigs{ChargeS: f64(m * 0.99)}})
	}
	big.LeakTrace = &analysis.Trace{}
	for k := range 100000 {
		big.LeakTrace.TS = append(big.LeakTrace.TS, float64(k))
		big.LeakTrace.V = append(big.LeakTrace.V, 2.3-float64(k)*1e-6)
	}
	big.Fit.Cell.IV = nil
	for k := range 50000 {
		v := 5 * float64(k) / 50000
		big.Fit.Cell.IV = append(big.Fit.Cell.IV, [2]float64{v, 1e-3 * (1 - v/5)})
	}
	page2 := renderFresh(t, &big, nil)
	t.Logf("flooded Result: %d bytes", len(page2))
	if float64(len(page2)) > 1.5*float64(len(page)) {
		t.Errorf("a flood of data grew the page from %d to %d bytes", len(page), len(page2))
	}
}

func TestWriteNil(t *testing.T) {
	if err := Write(io.Discard, nil, nil); !errors.Is(err, ErrNoResult) {
		t.Errorf("Write(nil) = %v, want ErrNoResult", err)
	}
	if err := Compare(io.Discard, wrenOnce(), nil, nil); !errors.Is(err, ErrNoResult) {
		t.Errorf("Compare(a, nil) = %v, want ErrNoResult", err)
	}
}

// TestWriteIsDeterministic: the same Result gives the same bytes.
func TestWriteIsDeterministic(t *testing.T) {
	a := renderPage(t, wrenOnce(), nil)
	b := renderFresh(t, wrenOnce(), nil)
	if !bytes.Equal(a, b) {
		t.Error("two renderings of one Result differ")
	}
}
