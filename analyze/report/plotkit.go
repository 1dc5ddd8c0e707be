package report

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// The report's colours. They come from a palette chosen to stay distinct for readers
// with the common colour-vision deficiencies (Okabe and Ito, "Color Universal Design",
// 2008); every series also differs in marker shape or dash pattern, and is named in
// the legend, so no meaning rests on colour alone.
var (
	colInk     = color.RGBA{0x22, 0x22, 0x22, 0xff}
	colBlue    = color.RGBA{0x00, 0x72, 0xb2, 0xff}
	colBand    = color.RGBA{0xa9, 0xcb, 0xe4, 0xff}
	colOrange  = color.RGBA{0xe6, 0x9f, 0x00, 0xff}
	colVermil  = color.RGBA{0xd5, 0x5e, 0x00, 0xff}
	colGreen   = color.RGBA{0x00, 0x9e, 0x73, 0xff}
	colPurple  = color.RGBA{0xcc, 0x79, 0xa7, 0xff}
	colGapFill = color.RGBA{0xe4, 0xe4, 0xe4, 0xff}
	colGrid    = color.RGBA{0xdd, 0xdd, 0xdd, 0xff}
	colMuted   = color.RGBA{0x77, 0x77, 0x77, 0xff}
)

// Plot sizes. A plot is drawn for a phone's column (about 340 px at 390 px wide, after
// the page's margins) with text of 10 and 11 points, so that at one pixel per point the
// smallest text stays at least 9 px; wider screens scale it up (the stylesheet caps the
// width) and paper prints it 12 cm wide. Panels that would sit side by side on paper
// are stacked instead (see side).
const (
	figW      = 340
	fontTick  = 10
	fontLabel = 11
)

// sansFont is the face every plot uses. Its metrics match Arial and Helvetica, which the
// page's stylesheet names as stand-ins, so text fits where the layout put it.
var sansFont = font.Font{Typeface: "Liberation", Variant: "Sans"}

// dashes used to tell lines apart without colour.
var (
	dashModel     = []vg.Length{vg.Points(5), vg.Points(2.5)}
	dashTrig      = []vg.Length{vg.Points(4), vg.Points(2)}
	dashDotted    = []vg.Length{vg.Points(1), vg.Points(2)}
	dashLongShort = []vg.Length{vg.Points(7), vg.Points(2), vg.Points(1.5), vg.Points(2)}
)

// newPlot makes a plot with the report's look: sans-serif text, a light grid, axis
// labels that carry their units.
func newPlot(xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	p.X.Label.Text = xlabel
	p.Y.Label.Text = ylabel
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(sansFont, fontLabel)
		a.Label.TextStyle.Color = colInk
		a.Tick.Label.Font = font.From(sansFont, fontTick)
		a.Tick.Label.Color = colInk
		a.LineStyle.Color = colInk
		a.Tick.LineStyle.Color = colInk
		a.Padding = vg.Points(2)
		a.Tick.Marker = niceTicks{}
	}
	p.Title.TextStyle.Font = font.From(sansFont, fontLabel)
	p.Legend.TextStyle.Font = font.From(sansFont, fontTick)
	g := plotter.NewGrid()
	g.Vertical.Color = colGrid
	g.Horizontal.Color = colGrid
	g.Vertical.Width = vg.Points(0.4)
	g.Horizontal.Width = vg.Points(0.4)
	p.Add(g)
	return p
}

func textStyle(size float64, c color.Color, xa draw.XAlignment, ya draw.YAlignment) text.Style {
	return text.Style{
		Color:   c,
		Font:    font.From(sansFont, vg.Length(size)),
		XAlign:  xa,
		YAlign:  ya,
		Handler: plot.DefaultTextHandler,
	}
}

// line makes a line plotter from paired slices.
func line(x, y []float64, c color.Color, width float64, dashes []vg.Length) (*plotter.Line, error) {
	l, err := plotter.NewLine(xys(x, y))
	if err != nil {
		return nil, err
	}
	l.LineStyle.Color = c
	l.LineStyle.Width = vg.Points(width)
	l.LineStyle.Dashes = dashes
	return l, nil
}

// scatter makes a scatter plotter with the given glyph.
func scatter(x, y []float64, shape draw.GlyphDrawer, c color.Color, radius float64) (*plotter.Scatter, error) {
	s, err := plotter.NewScatter(xys(x, y))
	if err != nil {
		return nil, err
	}
	s.GlyphStyle.Shape = shape
	s.GlyphStyle.Color = c
	s.GlyphStyle.Radius = vg.Points(radius)
	return s, nil
}

// rect is a filled rectangle with no outline.
func rect(x0, x1, y0, y1 float64, fill color.Color) (*plotter.Polygon, error) {
	p, err := plotter.NewPolygon(plotter.XYs{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}})
	if err != nil {
		return nil, err
	}
	p.Color = fill
	p.LineStyle.Width = 0
	return p, nil
}

func xys(x, y []float64) plotter.XYs {
	out := make(plotter.XYs, 0, len(x))
	for i := range x {
		if finite(x[i]) && finite(y[i]) {
			out = append(out, plotter.XY{X: x[i], Y: y[i]})
		}
	}
	return out
}

// legendItem is one entry of a legend row: a label and the plotters whose thumbnails
// stand for it (drawn on top of each other, as gonum's own legend does).
type legendItem struct {
	label  string
	thumbs []plot.Thumbnailer
}

// legendRows draws the legend as rows across the top of dc, left to right, wrapping when
// a row is full, so it never covers data. It returns the canvas left below it.
func legendRows(dc draw.Canvas, items []legendItem) draw.Canvas {
	if len(items) == 0 {
		return dc
	}
	sty := textStyle(fontTick, colInk, draw.XLeft, draw.YCenter)
	const thumbW, gapAfterThumb, gapAfterItem, rowH = 20.0, 4.0, 12.0, 15.0
	x0 := float64(dc.Min.X) + 4
	x := x0
	y := float64(dc.Max.Y) - rowH/2
	for _, it := range items {
		w := thumbW + gapAfterThumb + float64(sty.Width(it.label)) + gapAfterItem
		if x > x0 && x+w > float64(dc.Max.X) {
			x = x0
			y -= rowH
		}
		tc := draw.Canvas{Canvas: dc.Canvas, Rectangle: vg.Rectangle{
			Min: vg.Point{X: vg.Length(x), Y: vg.Length(y - 3.5)},
			Max: vg.Point{X: vg.Length(x + thumbW), Y: vg.Length(y + 3.5)},
		}}
		for _, th := range it.thumbs {
			th.Thumbnail(&tc)
		}
		dc.FillText(sty, vg.Point{X: vg.Length(x + thumbW + gapAfterThumb), Y: vg.Length(y)}, it.label)
		x += w
	}
	bottom := y - rowH/2 - 2
	return draw.Crop(dc, 0, 0, 0, vg.Length(bottom)-dc.Max.Y)
}

// stack draws plots one above the other in dc, heights in proportion to weights, with
// their data areas lined up on the left and the right edges.
func stack(dc draw.Canvas, plots []*plot.Plot, weights []float64, gap vg.Length) {
	var total float64
	for _, w := range weights {
		total += w
	}
	avail := dc.Max.Y - dc.Min.Y - gap*vg.Length(len(plots)-1)
	cs := make([]draw.Canvas, len(plots))
	top := dc.Max.Y
	for i := range plots {
		h := avail * vg.Length(weights[i]/total)
		cs[i] = draw.Canvas{Canvas: dc.Canvas, Rectangle: vg.Rectangle{
			Min: vg.Point{X: dc.Min.X, Y: top - h},
			Max: vg.Point{X: dc.Max.X, Y: top},
		}}
		top -= h + gap
	}
	var left, right vg.Length
	for i, p := range plots {
		d := p.DataCanvas(cs[i])
		left = max(left, d.Min.X-cs[i].Min.X)
		right = max(right, cs[i].Max.X-d.Max.X)
	}
	for i, p := range plots {
		d := p.DataCanvas(cs[i])
		c := draw.Crop(cs[i], left-(d.Min.X-cs[i].Min.X), -(right - (cs[i].Max.X - d.Max.X)), 0, 0)
		p.Draw(c)
	}
}

// side draws companion plots in dc: one above the other with their data areas lined up
// (a phone's column is too narrow to set them side by side), of equal heights.
func side(dc draw.Canvas, plots []*plot.Plot, gap vg.Length) {
	w := make([]float64, len(plots))
	for i := range w {
		w[i] = 1
	}
	stack(dc, plots, w, gap)
}

// timeAxis picks the unit for a time axis from the span it covers.
func timeAxis(span float64) (div float64, unit string) {
	switch a := math.Abs(span); {
	case a < 120:
		return 1, "s"
	case a < 2*3600:
		return 60, "min"
	default:
		return 3600, "h"
	}
}

// siAxis picks an SI prefix for an axis whose largest magnitude is maxAbs, and returns
// the divisor and the prefixed unit ("mA").
func siAxis(maxAbs float64, unit string) (div float64, label string) {
	if maxAbs <= 0 || !finite(maxAbs) {
		return 1, unit
	}
	exp := int(math.Floor(math.Log10(maxAbs)))
	p := floorDiv(exp, 3) * 3
	p = max(-15, min(12, p))
	return math.Pow10(p), prefixes[p] + unit
}

func scaled(v []float64, div float64) []float64 {
	out := make([]float64, len(v))
	for i := range v {
		out[i] = v[i] / div
	}
	return out
}

func rangeOf(vs ...[]float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range vs {
		for _, x := range v {
			if finite(x) {
				lo = math.Min(lo, x)
				hi = math.Max(hi, x)
			}
		}
	}
	return lo, hi
}

func errf(format string, a ...any) error { return fmt.Errorf("report: "+format, a...) }

// niceTicks labels a linear axis every 1, 2 or 5 times a power of ten, aiming at about
// N labels (6 when N is 0), with unlabelled minor ticks between.
type niceTicks struct{ N int }

func (t niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) || !finite(lo) || !finite(hi) {
		return plot.DefaultTicks{}.Ticks(lo, hi)
	}
	n := t.N
	if n <= 0 {
		n = 6
	}
	raw := (hi - lo) / float64(n)
	e := math.Floor(math.Log10(raw))
	base := math.Pow10(int(e))
	var step, minor float64
	switch m := raw / base; {
	case m < 1.5:
		step, minor = base, base/2
	case m < 3.5:
		step, minor = 2*base, base
	case m < 7.5:
		step, minor = 5*base, base
	default:
		step, minor = 10*base, 5*base
	}
	dec := max(0, -int(math.Floor(math.Log10(step)+1e-9)))
	var out []plot.Tick
	for k := math.Ceil(lo / minor); k*minor <= hi+minor*1e-9; k++ {
		v := k * minor
		t := plot.Tick{Value: v}
		if r := math.Abs(math.Remainder(v, step)); r < minor*1e-6 {
			if math.Abs(v) < step*1e-9 {
				v = 0
			}
			t.Label = strconv.FormatFloat(v, 'f', dec, 64)
		}
		out = append(out, t)
	}
	return out
}
