// Package capture owns the capture file: the CSV that "capcycle record" writes and
// "capcycle analyze" reads. FORMAT.md in this directory is the full specification; this
// comment is its summary.
//
// # The file
//
// A capture is a CSV text file. Metadata comes first as "# key: value" comment lines,
// then a header row naming the columns, then one row per sample, in volts:
//
//	# format: capcycle.capture/1
//	# start: 2026-12-01T09:30:00.000000Z
//	# board: proto=1 fw=0.1.0 board=328p16 bits=10 ebits=12 ref_mv=5000 ...
//	# profile: wren
//	# channel: vcap_v adc=0 bits=12 ref_v=5 divider=0.3333 scale=1
//	# calibration: vcap_v gain=1.0012 offset_v=-0.003 from=board
//	time_s,vcap_v
//	0.000000,2.41513
//	0.100000,2.41602
//	# gap: start_s=0.100000 end_s=0.400000 reason=lost-samples lost=2
//	0.400000,2.41870
//
// time_s counts seconds from the start time and only increases; the spacing need not be
// uniform (slow averaged rows and fast bursts mix). Comment lines after the header row are
// events at that point of the time axis: gaps ("# gap: start_s= end_s= reason= lost="),
// board resets ("# reset: at_s= cause= segment="), a continued recording ("# append:"),
// and at a clean stop the trailer ("# end:", "# stats:", "# clock:" with the board's clock
// drift). Any CSV with time_s and vcap_v columns is a capture too.
//
// # Reading
//
// A Reader returns the rows in batches into the caller's buffers and refuses bad input
// with a *ParseError (file, line, column, what was expected): a cell that is not a finite
// number, a time that does not increase, a row whose cells do not match the header row.
// What it can read past is a warning instead (Warnings): a malformed start, gap or reset
// line (not used), and a last line with no line end (a row cut short: dropped, never read
// as a truncated number). Time stamps far from 0 (epoch seconds or milliseconds) lose no
// resolution: from a first time stamp of 10^6 or more the reader subtracts its whole part
// digit by digit and reports it as OriginS, so the times it returns are seconds from that
// origin and Start is the start line plus the origin.
//
// # Writing
//
// A Writer writes the header block at creation, then rows with Row. It buffers, flushes
// at least every FlushEvery and syncs to disk at least every SyncEvery, both measured on
// the time the caller passes (so a test drives the clock). Create never replaces an
// existing file unless Options.Force is set; Append reopens a file, cuts a torn last
// line (a crash mid-write), and continues its time axis. A failed write stops the Writer
// for good with a *WriteError; everything written before it stays a valid capture.
//
// # Who writes what
//
// format.go (shared vocabulary: FormatVersion, the Key constants, Field, ParseComment,
// ParseFields, the event and header types) and writer.go are the recorder's; reader*.go
// is the analyser's. Both sides follow FORMAT.md.
package capture
