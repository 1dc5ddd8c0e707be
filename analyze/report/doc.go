// Package report turns an analysis (analysis.Result) into one HTML page that a builder
// can read on screen, offline, or on paper, and writes the files that go beside it.
//
// # Built from the analysis alone
//
// Write takes nothing but the Result, so the report can be rebuilt at any time from the
// saved analysis JSON, and rebuilding gives the same bytes (Options.Generated is left out
// unless set). Compare sets two Results side by side, for a circuit before and after a
// part change. WriteBundle writes the page, the analysis JSON and the cycle CSV into one
// directory:
//
//	b, err := report.WriteBundle("out", "wren", res, nil)
//	// b.HTML = out/wren.html, b.JSON = out/wren.analysis.json, b.CSV = out/wren.cycles.csv
//
// It never writes over the capture (Result.Source.Path) and replaces existing files only
// with Options.Overwrite; refusals are a *PathError wrapping ErrCapture or ErrExists.
//
// # What the page shows
//
// In the order a builder reads it: a one-sentence verdict (Verdict) and the findings
// with their numbers in words and units ("light 42 W/m²") and suggestions; the day at a
// glance (the voltage as a min/max band with the fires marked and gaps shaded, the light
// level, the fires per hour); for a circuit that never fires, the settling voltage
// against the light with the trigger line (how much light it takes to fire); every cycle
// at once: the density of all cycles aligned at the fire (Result.CycleDensity, time since
// the fire on a log axis), the median cycle over it and the fitted model's cycle (older
// results without a density get a few traced cycles overlaid instead); measured against
// predicted charge time with the 1:1 line, and the error over the day, for the nominal
// and the fitted model; the cell's I-V and power curves with the fitted single-diode
// curve and the maximum-power point (no I-V plot when the analysis says its points are no
// I-V curve); the leakage fit; the parameter table (declared, found, its standard error
// or, for a mean over the cycles, their spread, the difference, judged against the
// tolerance code or twice the standard error); the first rows of the cycle table; the
// methods and references and the safety cautions, collapsed. A part of the Result that
// is null gives its section a plain sentence saying so.
//
// Compare sets the two days side by side (two to a row on a wide screen), the cycles of
// both as two densities, one table of what changed, by how much, judged by the standard
// error of each value (for a mean over the cycles, its spread over √n), the period and
// energy figures, and the prediction errors of both.
//
// # Phone, screen and paper
//
// Plots are drawn for a phone's column (about 340 px at 390 px wide) with text of 10
// and 11 points, so their smallest text stays at least 9 px there; companion panels are
// stacked, not set side by side. Wider screens scale them up to a capped width, and
// paper prints them 8 cm wide, beside the short table that follows them. Wide tables
// scroll inside their own box.
//
// Every number in the verdict carries the JSON path it comes from (data-json on its
// span, also shown as a tooltip), and the tests read each one back against the JSON.
//
// # Self-contained and light
//
// The stylesheet and the plots are inline; there are no scripts and nothing is fetched.
// Plots are drawn with gonum.org/v1/plot into SVG (vg/vgsvg) and cleaned for inlining:
// no XML prolog, the viewBox kept so the plot scales to the column, the per-text font
// declarations replaced by one rule in the stylesheet that names Liberation Sans (the
// face the plots are measured in) and its metric-compatible stand-ins Arial and
// Helvetica, then a generic sans-serif. Long series are decimated with MinMax (the lowest
// and highest point of each run, so one-sample spikes survive) and MergeEnvelope (bins
// merged, never across a gap); a day of data makes a page of well under a megabyte.
//
// # Print
//
// The print stylesheet sets margins but leaves the paper size to the printer, so A4 and
// Letter both work; sections follow each other without forced page breaks, so the
// verdict and findings fill the first page and a day's report prints in a few pages, and
// no figure or table row is split. Methods, references and safety cautions sit in
// collapsed <details> boxes: present, opened with a click, not repeated in full.
//
// # Colour
//
// The colours come from a palette chosen to stay distinct with colour-vision
// deficiencies (Okabe and Ito, 2008); every series also differs in marker or dash and is
// named in a legend drawn above the plot, and statuses are words with a mark (✓, ✗, ≠),
// so no meaning rests on colour alone.
package report
