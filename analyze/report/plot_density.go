package report

import (
	"capcycle/analyze/analysis"
	"fmt"
	"image"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// densitySet is one capture's cycle density with its model cycle, for the density plot.
type densitySet struct {
	name  string // "" for a single capture
	d     *analysis.CycleDensity
	model *analysis.Trace
	col   color.RGBA
}

// densityFigure draws every cycle at once: the density of all cycles aligned at the fire
// (time since the fire on a log axis, so the pulse and the recharge both show), the
// median cycle over it, and the fitted model's cycle. Two captures get a panel each,
// on the same axes.
func densityFigure(id string, sets []densitySet) (figure, string) {
	var plots []*plot.Plot
	var legend []legendItem
	xlo, xhi, vhi := math.Inf(1), math.Inf(-1), 0.0
	for _, s := range sets {
		lo, hi := densityX(s.d)
		xlo, xhi = math.Min(xlo, lo), math.Max(xhi, hi)
		vhi = math.Max(vhi, float64(len(s.d.Counts[0]))*s.d.VStepV)
	}
	caption := ""
	for i, s := range sets {
		p, items := densityPlot(s, i == 0)
		p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = xlo, xhi, 0, vhi
		if s.name != "" {
			p.Title.Text = s.name
		}
		plots = append(plots, p)
		legend = append(legend, items...)
		who := "All"
		if s.name != "" {
			who = s.name + ": all"
		}
		caption += fmt.Sprintf("%s %d cycles, each shifted so that its fire falls at time zero. ", who, s.d.Cycles)
	}
	caption += "The shade of each cell is how many cycles passed through it (darker: more; every cycle leaves at least a light trace), over the time since the fire on a log axis: the pulse in the first milliseconds, the recharge after. The solid line is the median cycle, drawn where at least half the cycles still run; the dashed line is the fitted model's cycle."
	alt := "Density of every cycle aligned at the fire, with the median cycle and the fitted model's cycle"
	svg, err := renderSVG(id, figW, vg.Points(230*float64(len(plots))), alt, func(dc draw.Canvas) error {
		c := legendRows(dc, legend)
		if len(plots) == 1 {
			plots[0].Draw(c)
			return nil
		}
		side(c, plots, vg.Points(8))
		return nil
	})
	if err != nil {
		return figure{Err: err.Error()}, ""
	}
	return figure{SVG: svg, Alt: alt, Caption: caption}, ""
}

// hasDensity says whether r carries a cycle density with at least one cell.
func hasDensity(r *analysis.Result) bool {
	d := r.CycleDensity
	return d != nil && len(d.Counts) > 0 && len(d.Counts[0]) > 0 && d.ColsPerDecade > 0 && d.T0S > 0
}

// densityX is the range of log10(time since the fire) the grid covers.
func densityX(d *analysis.CycleDensity) (lo, hi float64) {
	lo = math.Log10(d.T0S)
	return lo, lo + float64(len(d.Counts))/float64(d.ColsPerDecade)
}

// densityPlot makes one capture's panel; named says whether its legend items are wanted.
func densityPlot(s densitySet, named bool) (*plot.Plot, []legendItem) {
	d := s.d
	p := newPlot("time since the fire", "capacitor voltage (V)")
	p.X.Tick.Marker = decadeTicks{}
	lo, hi := densityX(d)
	img := densityImage(d, s.col)
	p.Add(plotter.NewImage(img, lo, 0, hi, float64(len(d.Counts[0]))*d.VStepV))
	var items []legendItem
	sw := &swatch{col: s.col}
	items = append(items, legendItem{"cycles (density)", []plot.Thumbnailer{sw}})
	if x, y := densityMedian(d); len(x) > 1 {
		if l, err := line(x, y, colInk, 1.4, nil); err == nil {
			p.Add(l)
			items = append(items, legendItem{"median cycle", []plot.Thumbnailer{l}})
		}
	}
	if m := s.model; m != nil {
		var x, y []float64
		for i := range min(len(m.TS), len(m.V)) {
			if m.TS[i] > 0 {
				x, y = append(x, math.Log10(m.TS[i])), append(y, m.V[i])
			}
		}
		if l, err := line(x, y, colVermil, 1.4, dashModel); err == nil && len(x) > 1 {
			p.Add(l)
			items = append(items, legendItem{"fitted model", []plot.Thumbnailer{l}})
		}
	}
	if !named {
		return p, nil
	}
	return p, items
}

// densityImage renders the counts as an image, one pixel per cell: white for none, then
// from a light tint (one cycle) to the full colour (the most crowded cell), on a square-
// root scale so that lone cycles stay visible beside the crowd.
func densityImage(d *analysis.CycleDensity, col color.RGBA) *image.RGBA {
	nc, nr := len(d.Counts), len(d.Counts[0])
	img := image.NewRGBA(image.Rect(0, 0, nc, nr))
	peak := 1
	for _, c := range d.Counts {
		for _, n := range c {
			peak = max(peak, n)
		}
	}
	for x, c := range d.Counts {
		for r := range nr {
			a := 0.0
			if r < len(c) && c[r] > 0 {
				a = 0.18 + 0.82*math.Sqrt(float64(c[r])/float64(peak))
			}
			mix := func(v uint8) uint8 { return uint8(math.Round(255 - a*(255-float64(v)))) }
			img.Set(x, nr-1-r, color.RGBA{mix(col.R), mix(col.G), mix(col.B), 0xff})
		}
	}
	return img
}

// densityMedian is the median cycle: in each column where at least half the cycles
// still run, the voltage below which half of them lie (interpolated within the row).
func densityMedian(d *analysis.CycleDensity) (x, y []float64) {
	lo, _ := densityX(d)
	for k, c := range d.Counts {
		total := 0
		for _, n := range c {
			total += n
		}
		if 2*total < d.Cycles || total == 0 {
			continue
		}
		half, acc := float64(total)/2, 0.0
		for r, n := range c {
			if n > 0 && acc+float64(n) >= half {
				v := (float64(r) + (half-acc)/float64(n)) * d.VStepV
				x = append(x, lo+(float64(k)+0.5)/float64(d.ColsPerDecade))
				y = append(y, v)
				break
			}
			acc += float64(n)
		}
	}
	return x, y
}

// swatch is a legend thumbnail: a filled box.
type swatch struct{ col color.Color }

func (s *swatch) Thumbnail(c *draw.Canvas) {
	c.FillPolygon(s.col, []vg.Point{c.Min, {X: c.Max.X, Y: c.Min.Y}, c.Max, {X: c.Min.X, Y: c.Max.Y}})
}

// decadeTicks labels an axis of log10(seconds) at each decade, in words a builder reads
// ("1 ms", "10 s", "1 h" when it falls near), with minor ticks at 2 and 5.
type decadeTicks struct{}

func (decadeTicks) Ticks(lo, hi float64) []plot.Tick {
	var out []plot.Tick
	few := hi-lo < 2.5 // under 2.5 decades: label 2 and 5 too
	for e := int(math.Floor(lo)); e <= int(math.Ceil(hi)); e++ {
		for _, m := range []float64{1, 2, 5} {
			v := math.Log10(m) + float64(e)
			if v < lo-1e-9 || v > hi+1e-9 {
				continue
			}
			t := plot.Tick{Value: v}
			if m == 1 || few {
				t.Label = decadeLabel(e, m)
			}
			out = append(out, t)
		}
	}
	return out
}

// decadeLabel names m × 10^e seconds.
func decadeLabel(e int, m float64) string {
	switch v := m * math.Pow10(e); {
	case e < -3:
		return fmt.Sprintf("%g µs", math.Round(v*1e6))
	case e < 0:
		return fmt.Sprintf("%g ms", math.Round(v*1e3))
	case e < 3:
		return fmt.Sprintf("%g s", v)
	default:
		return dur(v)
	}
}
