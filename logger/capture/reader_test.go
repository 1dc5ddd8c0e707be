package capture

import (
	"errors"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"
	"testing/iotest"
)

func readAll(t *testing.T, r *Reader) ([]float64, []float64, error) {
	t.Helper()
	var ts, vs []float64
	bt, bv := make([]float64, 3), make([]float64, 3) // small batches cross row boundaries
	for {
		n, err := r.Read(bt, bv)
		ts = append(ts, bt[:n]...)
		vs = append(vs, bv[:n]...)
		if err == io.EOF {
			return ts, vs, nil
		}
		if err != nil {
			return ts, vs, err
		}
	}
}

// badFiles are inputs the reader must refuse, with the line and column of the fault
// (column 0: the whole line or file).
var badFiles = []struct {
	name      string
	in        string
	line, col int
	err       error
}{
	{"empty", "", 1, 0, ErrEmpty},
	{"only comments", "# format: capcycle.capture/1\n# start: 2026-12-01T09:30:00Z\n", 3, 0, ErrEmpty},
	{"header only", "time_s,vcap_v\n", 2, 0, ErrNoRows},
	{"no time column", "when,vcap_v\n0,1\n", 1, 0, ErrMissingColumn},
	{"no volt column", "time_s,current_a\n0,1\n", 1, 0, ErrMissingColumn},
	{"named volt column absent", "time_s,vcap_v\n0,1\n", 1, 0, ErrMissingColumn}, // VoltCol set below
	{"not a number volt", "time_s,vcap_v\n0,1.5\n0.1,abc\n", 3, 5, ErrNotNumber},
	{"not a number time", "time_s,vcap_v\n0,1.5\nx1,1.6\n", 3, 1, ErrNotNumber},
	{"nan volt", "time_s,vcap_v\n0,1.5\n0.1,NaN\n", 3, 5, ErrNotFinite},
	{"inf volt", "time_s,vcap_v\n0,1.5\n0.1,+Inf\n", 3, 5, ErrNotFinite},
	{"inf time", "time_s,vcap_v\ninf,1.5\n", 2, 1, ErrNotFinite},
	{"overflow", "time_s,vcap_v\n0,1e400\n", 2, 3, ErrNotFinite},
	{"time backwards", "time_s,vcap_v\n0,1\n0.2,1\n0.1,1\n", 4, 1, ErrTimeBackwards},
	{"duplicate time", "time_s,vcap_v\n0,1\n0.1,1\n0.1,1.1\n", 4, 1, ErrDuplicateTime},
	{"duplicate time after comment", "time_s,vcap_v\n0,1\n# gap: start_s=0 end_s=5\n0,1\n", 4, 1, ErrDuplicateTime},
	{"too few fields", "time_s,vcap_v,vcell_v\n0,1,2\n0.1\n", 3, 4, ErrFieldCount},
	{"missing cell of an unused column", "time_s,vcap_v,vcell_v\n0,1,2\n0.1,1\n", 3, 6, ErrFieldCount},
	{"extra cell", "time_s,vcap_v\n0,1\n0.1,1,7\n", 3, 7, ErrFieldCount},
	{"extra empty cell", "time_s,vcap_v\n0,1\n0.1,1,\n", 3, 7, ErrFieldCount},
	{"time stamps beyond 18 digits", "time_s,vcap_v\n1e19,1\n", 2, 1, ErrTimeRange},
	{"empty volt cell", "time_s,vcap_v\n0,1\n0.1,\n", 3, 5, ErrEmptyCell},
	{"binary garbage", "\x7fELF\x02\x01\x01\x00\x00\x00", 1, 1, ErrBinary},
	{"nul in data", "time_s,vcap_v\n0,1\n0.1,1\x00\x002\n", 3, 6, ErrBinary},
	{"control in header", "time_s,\x01vcap_v\n", 1, 8, ErrBinary},
	{"utf-8 garbage in number", "time_s,vcap_v\n0,1\n0.1,\xc3\xa9\n", 3, 5, ErrBinary},
	{"bad rfc3339", "time,vcap_v\n2026-12-01T09:30:00Z,1\n2026-12-01T09:3x:01Z,1\n", 3, 1, ErrBadTime},
	{"rfc3339 backwards", "time,vcap_v\n2026-12-01T09:30:01Z,1\n2026-12-01T09:30:00Z,1\n", 3, 1, ErrTimeBackwards},
	{"semicolon not a number", "time_s;vcap_v\n0;1,5\n0,1;x\n", 3, 5, ErrNotNumber},
	{"tab two dots", "time_s\tvcap_v\n0\t1.5\n0.1\t1.5.1\n", 3, 5, ErrNotNumber},
	{"torn foreign row", "time_s,vcap_v\n0,1\n0.1,1.", 3, 0, nil}, // dropped with a warning (TestReaderWarnings)
	{"long line", "time_s,vcap_v\n" + strings.Repeat("1", 70000) + "\n", 2, 1, ErrLineTooLong},
	{"long second cell", "time_s,vcap_v\n0," + strings.Repeat("1", 70000) + "\n", 2, 2, ErrLineTooLong},
	{"third column chosen by index absent", "time_s,vcap_v\n0,1\n", 1, 0, ErrMissingColumn}, // TimeCol "3"
	{"not a number current", "time_s,vcap_v,iload_a\n0,1,0\n0.1,1,x\n", 3, 7, ErrNotNumber},
}

func TestReaderBadInput(t *testing.T) {
	for _, tc := range badFiles {
		t.Run(tc.name, func(t *testing.T) {
			r := NewReader(strings.NewReader(tc.in), "bad.csv")
			switch tc.name {
			case "named volt column absent":
				r.VoltCol = "vcell_v"
			case "third column chosen by index absent":
				r.TimeCol = "3"
			}
			_, _, err := readAll(t, r)
			if tc.err == nil {
				if err != nil {
					t.Fatalf("want no error, got %v", err)
				}
				return
			}
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("want *ParseError, got %v", err)
			}
			if !errors.Is(err, tc.err) {
				t.Errorf("error %v, want %v", err, tc.err)
			}
			if pe.File != "bad.csv" || pe.Line != tc.line || pe.Column != tc.col {
				t.Errorf("at %s:%d:%d, want bad.csv:%d:%d (%v)", pe.File, pe.Line, pe.Column, tc.line, tc.col, err)
			}
			if !strings.HasPrefix(err.Error(), "capture: bad.csv:") {
				t.Errorf("message %q does not start with the package and file", err)
			}
		})
	}
	if len(badFiles) < 20 {
		t.Fatalf("only %d bad files", len(badFiles))
	}
}

func TestReaderOurFormat(t *testing.T) {
	in := `# format: capcycle.capture/1
# start: 2026-12-01T09:30:00.000000Z
# profile: wren
# channel: vcap_v adc=0 bits=12 ref_v=5 divider=0.3333 scale=1
time_s,vcap_v
0.000000,2.41513
0.100000,2.41602
# gap: start_s=0.100000 end_s=0.400000 reason=lost-samples lost=2
0.400000,2.41870

# a free comment
# reset: at_s=12.731022 cause=ext segment=2
12.731022,2.39811
12.8,2.4`
	r := NewReader(iotest.OneByteReader(strings.NewReader(in)), "day.csv")
	ts, vs, err := readAll(t, r)
	if err != nil {
		t.Fatal(err)
	}
	wantT := []float64{0, 0.1, 0.4, 12.731022}
	wantV := []float64{2.41513, 2.41602, 2.41870, 2.39811}
	if len(ts) != len(wantT) {
		t.Fatalf("got %d rows %v, want %d (the torn last row dropped)", len(ts), ts, len(wantT))
	}
	for i := range wantT {
		if ts[i] != wantT[i] || vs[i] != wantV[i] {
			t.Errorf("row %d: %v,%v want %v,%v", i, ts[i], vs[i], wantT[i], wantV[i])
		}
	}
	if !r.Torn() {
		t.Error("torn last row not reported")
	}
	if r.Meta()["profile"] != "wren" || r.Meta()["format"] != FormatVersion {
		t.Errorf("meta %v", r.Meta())
	}
	if g := r.Gaps(); len(g) != 1 || g[0].StartS != 0.1 || g[0].EndS != 0.4 || g[0].Reason != GapLostSamples || r.Lost() != 2 {
		t.Errorf("gaps %+v lost %d", g, r.Lost())
	}
	if s := r.Resets(); len(s) != 1 || s[0].AtS != 12.731022 || s[0].Cause != "ext" || s[0].Segment != 2 {
		t.Errorf("resets %+v", s)
	}
	if st, ok := r.Start(); !ok || st.Unix() != 1796117400 {
		t.Errorf("start %v %v", st, ok)
	}
}

func TestReaderForeign(t *testing.T) {
	cases := []struct {
		name    string
		in      string
		timeCol string
		voltCol string
		format  TimeFormat
		wantT   []float64
		wantV   []float64
	}{
		{"semicolon decimal comma millivolts", "\"Time (s)\";\"Voltage (mV)\"\r\n0,0;2415,5\r\n0,5;2416\r\n",
			"", "", TimeAuto, []float64{0, 0.5}, []float64{2.4155, 2.416}},
		{"tab, extra columns, reordered", "vcell_v\tvcap_v\ttime_ms\n3.1\t1.25\t0\n3.1\t1.5\t250\n",
			"", "", TimeAuto, []float64{0, 0.25}, []float64{1.25, 1.5}},
		{"rfc3339 with space", "timestamp,v\n2026-12-01 09:30:00Z,1\n2026-12-01 09:30:01.5Z,2\n",
			"", "", TimeAuto, []float64{0, 1.5}, []float64{1, 2}},
		{"columns by index", "a,b,c\n9,0,1.5\n9,1,1.75\n", "2", "3", TimeSeconds,
			[]float64{0, 1}, []float64{1.5, 1.75}},
		{"byte-order mark", "\xef\xbb\xbftime_s,vcap_v\n0,1\n1,2\n", "", "", TimeAuto,
			[]float64{0, 1}, []float64{1, 2}},
		{"exponents and signs", "time_s,vcap_v\n-1e-3,+2.5E-1\n5e-4,-.5\n", "", "", TimeAuto,
			[]float64{-1e-3, 5e-4}, []float64{0.25, -0.5}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			r := NewReader(strings.NewReader(tc.in), "f.csv")
			r.TimeCol, r.VoltCol, r.TimeFormat = tc.timeCol, tc.voltCol, tc.format
			ts, vs, err := readAll(t, r)
			if err != nil {
				t.Fatal(err)
			}
			if len(ts) != len(tc.wantT) {
				t.Fatalf("rows %v %v", ts, vs)
			}
			for i := range ts {
				if math.Abs(ts[i]-tc.wantT[i]) > 1e-12 || math.Abs(vs[i]-tc.wantV[i]) > 1e-12 {
					t.Errorf("row %d: %v,%v want %v,%v", i, ts[i], vs[i], tc.wantT[i], tc.wantV[i])
				}
			}
		})
	}
}

// TestParseNumberMatchesStrconv: the fast path must give strconv's correctly rounded
// result bit for bit, or decline.
func TestParseNumberMatchesStrconv(t *testing.T) {
	inputs := []string{"0", "-0", "1", "2.41513", "0.000001", "12.731022", "86399.990000",
		"4.7e-3", "1E22", "9007199254740991", "9007199254740993", "0.1", "0.3", "123456789012345678",
		"1e-22", "1e23", ".5", "5.", "-3.25e+2", "00012.5000"}
	for _, s := range inputs {
		want, _ := strconv.ParseFloat(s, 64)
		got, ok := parseNumber([]byte(s), '.')
		if ok && math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("%s: %v want %v", s, got, want)
		}
	}
}

func FuzzParseNumber(f *testing.F) {
	f.Add("2.41513")
	f.Add("1e-7")
	f.Fuzz(func(t *testing.T, s string) {
		got, ok := parseNumber([]byte(s), '.')
		if !ok {
			return
		}
		want, err := strconv.ParseFloat(s, 64)
		if err != nil || math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("%q: fast %v, strconv %v %v", s, got, want, err)
		}
	})
}

func TestReadAllocs(t *testing.T) {
	var sb strings.Builder
	sb.WriteString("time_s,vcap_v\n")
	for i := 0; i < 2000; i++ {
		sb.WriteString(strconv.FormatFloat(float64(i)*0.01, 'f', 6, 64) + ",2.41513\n")
	}
	in := sb.String()
	bt, bv := make([]float64, 512), make([]float64, 512)
	allocs := testing.AllocsPerRun(5, func() {
		r := NewReader(strings.NewReader(in), "a.csv")
		for {
			if _, err := r.Read(bt, bv); err != nil {
				break
			}
		}
	})
	// The reader, its buffer and the header's column names; nothing per row.
	if allocs > 20 {
		t.Errorf("%v allocations for 2000 rows", allocs)
	}
}

// A load-current column is found by name, scaled by its unit, read with ReadCurrent,
// and ignored with CurrentCol "none".
func TestReaderCurrent(t *testing.T) {
	in := "# format: capcycle.capture/1\ntime_s,vcap_v,iload_ma\n0,2.5,0\n0.01,2.4,120.5\n0.02,2.3,118\n"
	r := NewReader(strings.NewReader(in), "pulse.csv")
	ts, vs, is := make([]float64, 8), make([]float64, 8), make([]float64, 8)
	n, err := r.ReadCurrent(ts, vs, is)
	if err != io.EOF || n != 3 {
		t.Fatalf("ReadCurrent: %d rows, %v", n, err)
	}
	if !r.HasCurrent() {
		t.Fatal("HasCurrent false with an iload_ma column")
	}
	if want := []float64{0, 0.1205, 0.118}; math.Abs(is[1]-want[1]) > 1e-12 || math.Abs(is[2]-want[2]) > 1e-12 || is[0] != 0 {
		t.Errorf("currents %v, want %v A", is[:3], want)
	}
	if vs[2] != 2.3 || ts[2] != 0.02 {
		t.Errorf("row 3: %g s %g V", ts[2], vs[2])
	}

	// An empty current cell is a row in which the channel was not sampled.
	r = NewReader(strings.NewReader("time_s,vcap_v,iload_a\n0,1,0.5\n0.1,1, \n"), "sparse.csv")
	if n, err := r.ReadCurrent(ts, vs, is); err != io.EOF || n != 2 || is[0] != 0.5 || !math.IsNaN(is[1]) {
		t.Errorf("an empty current cell: %d rows, %v, currents %v", n, err, is[:2])
	}

	r = NewReader(strings.NewReader(strings.Replace(in, "0.02,2.3,118", "0.02,2.3,oops", 1)), "pulse.csv")
	r.CurrentCol = "none"
	if _, _, err := readAll(t, r); err != nil || r.HasCurrent() {
		t.Errorf(`CurrentCol "none": %v, HasCurrent %v`, err, r.HasCurrent())
	}

	for _, head := range []string{"time_s,vcap_v", "time_s,vcap_v,iload_v", "time_s,vcap_v,iloader"} {
		row := strings.Repeat("1,", strings.Count(head, ",")) + "2"
		r = NewReader(strings.NewReader(head+"\n"+row+"\n"), "plain.csv")
		if _, _, err := readAll(t, r); err != nil || r.HasCurrent() {
			t.Errorf("%s: %v, HasCurrent %v (no column of current)", head, err, r.HasCurrent())
		}
	}
	r = NewReader(strings.NewReader("time_s,vcap_v,iload (uA)\n0,1,250\n"), "paren.csv")
	if n, err := r.ReadCurrent(ts, vs, is); err != io.EOF || n != 1 || math.Abs(is[0]-250e-6) > 1e-15 {
		t.Errorf(`"iload (uA)": %d rows, %v, %g A`, n, err, is[0])
	}
	r = NewReader(strings.NewReader("time_s,vcap_v\n0,1\n"), "plain.csv")
	r.CurrentCol = "i_motor"
	var pe *ParseError
	if _, _, err := readAll(t, r); !errors.As(err, &pe) || !errors.Is(err, ErrMissingColumn) {
		t.Errorf("a named current column that is absent: %v", err)
	}
}
