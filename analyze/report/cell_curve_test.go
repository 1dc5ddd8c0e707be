package report

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"

	"gonum.org/v1/plot"
)

// TestDiodeCurveMeetsItsEnds checks the fitted cell curve at its two ends against the
// closed forms of the ideal single-diode model (Rs = 0, Rsh infinite; the Shockley diode
// equation, e.g. Sze and Ng, "Physics of Semiconductor Devices", 3rd ed., ch. 13): the
// current is Isc at 0 V and falls to zero at Voc = n Vt ln(Isc/I0 + 1).
func TestDiodeCurveMeetsItsEnds(t *testing.T) {
	const isc, i0, n = 5e-3, 1e-9, 7 * 1.3 // seven cells in series, ideality 1.3
	vt := 1.380649e-23 * 298.15 / 1.602176634e-19
	voc := n * vt * math.Log(isc/i0+1)
	c := analysis.CellFit{IscA: &analysis.Estimate{Value: isc}, I0A: &analysis.Estimate{Value: i0}, N: &analysis.Estimate{Value: n}}
	p := plot.New()
	l := addDiodeCurve(p, c, nil, voc, 1)
	if l == nil {
		t.Fatal("no curve")
	}
	first := l.XYs[0]
	if first.X != 0 || math.Abs(first.Y-isc) > 1e-9 {
		t.Errorf("at 0 V the curve gives %g A, want Isc %g A", first.Y, isc)
	}
	last := l.XYs[len(l.XYs)-1]
	if math.Abs(last.X-voc) > 0.06*voc || last.Y > 0.1*isc {
		t.Errorf("the curve ends at %.3f V, %g A; want near Voc %.3f V and 0 A", last.X, last.Y, voc)
	}
}
