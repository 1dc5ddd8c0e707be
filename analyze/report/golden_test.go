package report

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"golang.org/x/net/html"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

// textParts extracts the report's words: headings, the verdict, the findings, table
// captions, heads and cells, notes and statements of absent data, one per line. Plots
// are left out (their SVG is checked elsewhere); what remains is what a reader reads.
func textParts(doc *html.Node) string {
	var b strings.Builder
	walk(doc, func(n *html.Node) {
		switch {
		case n.Data == "h1" || n.Data == "h2" || n.Data == "h3":
			b.WriteString(strings.Repeat("#", int(n.Data[1]-'0')) + " " + textOf(n) + "\n")
		case n.Data == "p" && (hasClass(n, "verdict") || hasClass(n, "absent") || hasClass(n, "note")):
			b.WriteString(attr(n, "class") + ": " + textOf(n) + "\n")
		case n.Data == "li" && n.Parent != nil && hasClass(n.Parent, "anotes"):
			b.WriteString("analysis note: " + textOf(n) + "\n")
		case n.Data == "li" && hasClass(n, "finding"):
			b.WriteString("finding: " + textOf(n) + "\n")
		case n.Data == "figcaption":
			b.WriteString("figure: " + textOf(n) + "\n")
		case n.Data == "caption":
			b.WriteString("table: " + textOf(n) + "\n")
		case n.Data == "tr":
			var cells []string
			for c := n.FirstChild; c != nil; c = c.NextSibling {
				if c.Type == html.ElementNode {
					cells = append(cells, textOf(c))
				}
			}
			b.WriteString("| " + strings.Join(cells, " | ") + " |\n")
		case n.Data == "dl" && hasClass(n, "facts"):
			b.WriteString("facts: " + textOf(n) + "\n")
		case n.Data == "dt" && n.Parent != nil && n.Parent.Parent != nil && hasClass(n.Parent.Parent, "items"):
			b.WriteString("item: " + textOf(n) + "\n")
		}
	})
	return b.String()
}

// TestGoldenText compares the text parts of each report with testdata/NAME.golden.
// Run "go test -run TestGoldenText -update" after an intended change and read the diff.
func TestGoldenText(t *testing.T) {
	pages := map[string][]byte{
		"compare": renderCompare(t),
		"wren":    renderPage(t, wrenOnce(), &Options{CSVHref: "wren.cycles.csv", JSONHref: "wren.analysis.json"}),
		"fern":    renderPage(t, fernOnce(), nil),
		"sparse":  renderPage(t, sparseResult(), nil),
	}
	for name, page := range pages {
		t.Run(name, func(t *testing.T) {
			got := []byte(textParts(parseHTML(t, page)))
			path := filepath.Join("testdata", name+".golden")
			if *update {
				if err := os.WriteFile(path, got, 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (run with -update to create it)", err)
			}
			if !bytes.Equal(got, want) {
				gl, wl := strings.Split(string(got), "\n"), strings.Split(string(want), "\n")
				for i := 0; i < max(len(gl), len(wl)); i++ {
					var g, w string
					if i < len(gl) {
						g = gl[i]
					}
					if i < len(wl) {
						w = wl[i]
					}
					if g != w {
						t.Errorf("%s line %d:\n got: %s\nwant: %s", path, i+1, g, w)
						break
					}
				}
			}
		})
	}
}
