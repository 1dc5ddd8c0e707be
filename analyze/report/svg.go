package report

import (
	"bytes"
	"fmt"
	"html/template"
	"regexp"
	"strings"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// figure is one rendered plot, ready to inline into the page.
type figure struct {
	SVG     template.HTML // the <svg> element, sanitised
	Alt     string        // what the plot shows, for screen readers
	Caption string
	Err     string // set when the plot could not be drawn
}

// renderSVG draws a w×h plot with fn and returns the inline SVG. A panic inside the
// plotting library (bad ranges, odd data) becomes an error, so one plot that cannot be
// drawn costs that plot only.
func renderSVG(id string, w, h vg.Length, alt string, fn func(dc draw.Canvas) error) (svg template.HTML, err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("report: plot %s: %v", id, p)
		}
	}()
	c := vgsvg.New(w, h)
	if err := fn(draw.New(c)); err != nil {
		return "", fmt.Errorf("report: plot %s: %w", id, err)
	}
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return "", fmt.Errorf("report: plot %s: %w", id, err)
	}
	return template.HTML(sanitiseSVG(buf.String(), id, alt)), nil
}

var (
	reSVGOpen  = regexp.MustCompile(`(?s)<svg [^>]*>`)
	reViewBox  = regexp.MustCompile(`viewBox="([^"]*)"`)
	reFontDecl = regexp.MustCompile(`font-family:[^;"]*;|font-variant:normal;|font-weight:normal;|font-style:normal;`)
	reID       = regexp.MustCompile(`\bid="([^"]+)"`)
	reURLRef   = regexp.MustCompile(`url\(#([^)]+)\)`)
	reHrefRef  = regexp.MustCompile(`href="#([^"]+)"`)
)

// sanitiseSVG makes the output of vgsvg fit to sit inside an HTML page:
//   - the XML prolog and the generator comment go (they are not allowed mid-document);
//   - the fixed width and height in points give way to the viewBox alone, so the page's
//     CSS scales the plot to the column and to the printed page;
//   - the font declarations on every <text> go: vgsvg names "Liberation Sans", and the
//     page's stylesheet names it with its metric-compatible stand-ins (Arial, Helvetica)
//     and a generic family, so text renders wherever the file is opened;
//   - an image's data gets a plain href (no xlink namespace) and its true type (PNG);
//   - any id (vgsvg emits none today) gets the plot's prefix, with its references, so two
//     plots on one page can never collide.
func sanitiseSVG(s, id, alt string) string {
	if i := strings.Index(s, "<svg"); i >= 0 {
		s = s[i:]
	}
	vb := ""
	if m := reViewBox.FindStringSubmatch(s); m != nil {
		vb = m[1]
	}
	open := fmt.Sprintf(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="%s" class="plot" id="fig-%s" role="img" aria-label="%s">`,
		vb, id, xmlEscape(alt))
	s = reID.ReplaceAllString(s, `id="`+id+`-$1"`)
	s = reURLRef.ReplaceAllString(s, `url(#`+id+`-$1)`)
	s = reHrefRef.ReplaceAllString(s, `href="#`+id+`-$1"`)
	s = reSVGOpen.ReplaceAllLiteralString(s, open)
	s = reFontDecl.ReplaceAllString(s, "")
	// Images (the density plot's grid): the plain SVG 2 href needs no xlink namespace,
	// and vgsvg's PNG data is labelled as what it is.
	// It fills its box, which is the data's, not its own aspect ratio.
	s = strings.ReplaceAll(s, `xlink:href="data:image/jpg;`, `preserveAspectRatio="none" href="data:image/png;`)
	s = strings.ReplaceAll(s, ` style=""`, "")
	s = strings.ReplaceAll(s, "\n\tstyle=", " style=")
	return strings.TrimSpace(s)
}

func xmlEscape(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch r {
		case '<':
			b.WriteString("&lt;")
		case '>':
			b.WriteString("&gt;")
		case '&':
			b.WriteString("&amp;")
		case '"':
			b.WriteString("&quot;")
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}
