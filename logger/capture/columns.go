package capture

// Picked says which columns a Reader reads: each by its name in the header row (""
// for no load-current column), and the factor that takes it to SI units (seconds,
// volts, amperes), from the unit in its name or the Reader's options.
type Picked struct {
	Time, Volt, Current                string
	TimeScale, VoltScale, CurrentScale float64
}

// Standard reports whether the columns are the capture format's own (time_s, vcap_v and
// iload_a or none), so that a caller need only mention columns picked otherwise.
func (p Picked) Standard() bool {
	return p.Time == ColTime && p.Volt == ColVcap && (p.Current == "" || p.Current == ColIload) &&
		p.TimeScale == 1 && p.VoltScale == 1
}

// Picked returns the columns the Reader reads; the zero Picked before the header row
// has been read (by the first Read).
func (r *Reader) Picked() Picked {
	if !r.started || r.ncol == 0 {
		return Picked{}
	}
	p := Picked{Time: r.columns[r.tcol], Volt: r.columns[r.vcol], TimeScale: r.TimeScale, VoltScale: r.VoltScale}
	if r.icol >= 0 {
		p.Current, p.CurrentScale = r.columns[r.icol], r.iscale
	}
	return p
}
