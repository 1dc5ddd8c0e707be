package report

import (
	"bufio"
	"capcycle/analyze/analysis"
	"errors"
	"fmt"
	"html/template"
	"io"
	"path/filepath"
	"time"
)

// Options tunes a report. The zero value (or a nil *Options) gives the defaults below.
type Options struct {
	// Title heads the page. Default: "capcycle report: " and the capture's file name.
	Title string
	// Generated is printed in the header as the time the report was made. Zero (the
	// default) leaves it out, which keeps a report byte-identical when rebuilt.
	Generated time.Time
	// CycleRows is how many rows of the cycle table the page shows; the rest live in
	// the CSV. Default 12; a negative value shows every cycle.
	CycleRows int
	// CSVHref and JSONHref are the links, relative to the HTML file, to the cycle CSV and
	// the analysis JSON written beside it. Empty (the default) names no file.
	// WriteBundle sets them.
	CSVHref, JSONHref string
	// MaxPoints caps the points of any one plotted series after min/max decimation.
	// Default 1200.
	MaxPoints int
	// MaxBins caps the bins of the day's voltage envelope. Default 900.
	MaxBins int
	// LabelA and LabelB name the two captures in Compare. Default "before" and "after".
	LabelA, LabelB string
	// Overwrite lets WriteBundle replace existing report files (never the capture).
	// Default false: an existing file is an error.
	Overwrite bool
}

func (o *Options) cycleRows() int {
	if o == nil || o.CycleRows == 0 {
		return 12
	}
	return o.CycleRows
}

func (o *Options) maxPoints() int {
	if o == nil || o.MaxPoints <= 0 {
		return 1200
	}
	return o.MaxPoints
}

func (o *Options) maxBins() int {
	if o == nil || o.MaxBins <= 0 {
		return 900
	}
	return o.MaxBins
}

func (o *Options) labels() (a, b string) {
	a, b = "before", "after"
	if o != nil && o.LabelA != "" {
		a = o.LabelA
	}
	if o != nil && o.LabelB != "" {
		b = o.LabelB
	}
	return a, b
}

// ErrNoResult is returned when Write or Compare is given a nil Result.
var ErrNoResult = errors.New("report: no analysis result")

// Write writes the report of one analysed capture to w as one self-contained HTML page:
// the stylesheet and every plot (as SVG) are inline, there are no scripts, and nothing
// is fetched from anywhere, so the file reads the same offline, in years, and on paper
// (A4 or Letter).
//
// The page is built from r alone, so a saved analysis JSON rebuilds the same report.
// A part of r that is null gives its section a plain statement that the data is absent
// rather than an empty plot. opts may be nil.
func Write(w io.Writer, r *analysis.Result, opts *Options) error {
	if r == nil {
		return ErrNoResult
	}
	if opts == nil {
		opts = &Options{}
	}
	return render(w, singlePage(r, opts))
}

// render executes the page template into w.
func render(w io.Writer, p *page) error {
	bw := bufio.NewWriter(w)
	if err := pageTemplate.Execute(bw, p); err != nil {
		return fmt.Errorf("report: writing the page: %w", err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("report: writing the page: %w", err)
	}
	return nil
}

// singlePage lays out the report of one capture.
func singlePage(r *analysis.Result, o *Options) *page {
	p := &page{Title: o.Title, CSS: template.CSS(pageCSS)}
	if p.Title == "" {
		p.Title = "capcycle report: " + captureName(r)
	}
	if !o.Generated.IsZero() {
		p.Generated = o.Generated.UTC().Format("2006-01-02 15:04 UTC")
	}
	p.Facts = headerFacts(r)
	p.Verdict = Verdict(r).HTML()
	p.Findings = findingViews(r.Findings)
	p.Notes = r.Notes
	p.Links = bundleLinks(o)

	p.add(daySection(r, o))
	p.add(stallSection(r))
	p.add(cyclesSection(r, o))
	p.add(predictSection(r, o))
	p.add(cellSection(r, o))
	p.add(leakSection(r, o))
	p.add(paramSection(r))
	p.add(cycleTableSection(r, o))
	p.add(methodsSection())
	p.add(safetySection())
	return p
}

func captureName(r *analysis.Result) string {
	if r.Source.Path == "" {
		return "unnamed capture"
	}
	return filepath.Base(r.Source.Path)
}
