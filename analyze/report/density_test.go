package report

import (
	"bytes"
	"encoding/base64"
	"image/png"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"golang.org/x/net/html"
)

// TestDensityShowsEveryCycle renders the report of real analyses and reads the cycle
// plot back: its caption counts as many cycles as the analysis found, and its grid image
// (the density) has a tinted pixel in every column where the density holds a count, so
// no cycle is left out of the picture.
func TestDensityShowsEveryCycle(t *testing.T) {
	for _, name := range []string{"golden/wren-sim-15min.csv.gz", "captures/wren-rc-10min.csv"} {
		t.Run(name, func(t *testing.T) {
			r := analysed(t, name, "wren")
			if r.CycleDensity == nil {
				t.Fatal("the analysis carries no cycle density")
			}
			doc := parseHTML(t, renderFresh(t, r, nil))
			var svg, caption *html.Node
			walk(doc, func(n *html.Node) {
				if n.Type == html.ElementNode && n.Data == "svg" && attr(n, "id") == "fig-cycles" {
					svg = n
					for s := n.NextSibling; s != nil; s = s.NextSibling {
						if s.Type == html.ElementNode && s.Data == "figcaption" {
							caption = s
						}
					}
				}
			})
			if svg == nil || caption == nil {
				t.Fatal("no cycle plot with a caption")
			}
			m := regexp.MustCompile(`All (\d+) cycles`).FindStringSubmatch(textOf(caption))
			if m == nil {
				t.Fatalf("the caption counts no cycles: %q", textOf(caption))
			}
			if n, _ := strconv.Atoi(m[1]); n != len(r.Cycles) {
				t.Errorf("the caption counts %d cycles, the analysis found %d", n, len(r.Cycles))
			}
			var href string
			walk(svg, func(n *html.Node) {
				if n.Type == html.ElementNode && n.Data == "image" {
					href = attr(n, "href")
				}
			})
			const prefix = "data:image/png;base64,"
			if !strings.HasPrefix(href, prefix) {
				t.Fatalf("the plot holds no density image (href %.40q)", href)
			}
			raw, err := base64.StdEncoding.DecodeString(href[len(prefix):])
			if err != nil {
				t.Fatal(err)
			}
			img, err := png.Decode(bytes.NewReader(raw))
			if err != nil {
				t.Fatal(err)
			}
			d := r.CycleDensity
			if b := img.Bounds(); b.Dx() != len(d.Counts) || b.Dy() != len(d.Counts[0]) {
				t.Fatalf("image %v for a grid of %d × %d", b, len(d.Counts), len(d.Counts[0]))
			}
			for x, col := range d.Counts {
				for row, n := range col {
					rr, g, bl, _ := img.At(x, len(col)-1-row).RGBA()
					white := rr>>8 == 255 && g>>8 == 255 && bl>>8 == 255
					if (n > 0) == white {
						t.Fatalf("cell (%d, %d) holds %d cycles but its pixel is white=%v", x, row, n, white)
					}
				}
			}
		})
	}
}
