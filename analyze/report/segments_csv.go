package report

import (
	"fmt"
	"io"

	"github.com/gocarina/gocsv"

	"capcycle/analyze/analysis"
)

// SegmentRow is one line of the segment CSV: a stretch of the capture of one kind.
type SegmentRow struct {
	Kind   string  `csv:"kind"`
	StartS float64 `csv:"start_s"`
	EndS   float64 `csv:"end_s"`
	StartV float64 `csv:"start_v"`
	EndV   float64 `csv:"end_v"`
}

// WriteSegments writes the segment CSV (a header row, then one row per segment) to w.
func WriteSegments(w io.Writer, r *analysis.Result) error {
	rows := make([]SegmentRow, len(r.Segments))
	for i, s := range r.Segments {
		rows[i] = SegmentRow{Kind: string(s.Kind), StartS: s.StartS, EndS: s.EndS, StartV: s.StartV, EndV: s.EndV}
	}
	if len(rows) == 0 {
		if _, err := io.WriteString(w, "kind,start_s,end_s,start_v,end_v\n"); err != nil {
			return fmt.Errorf("report: writing the segment CSV: %w", err)
		}
		return nil
	}
	if err := gocsv.Marshal(&rows, w); err != nil {
		return fmt.Errorf("report: writing the segment CSV: %w", err)
	}
	return nil
}
