package capture

import (
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"
	"time"
)

// Malformed start, gap and reset lines and a torn last line are warnings with the file,
// the line and what was expected; the reading goes on, and nothing in them is used.
func TestReaderWarnings(t *testing.T) {
	cases := []struct {
		name     string
		in       string
		rows     int
		lines    []int  // the lines of the warnings, in order
		want     string // in the first warning's message
		kind     error
		gaps     int
		lost     int64
		resets   int
		hasStart bool
	}{
		{"start not a time", "# start: yesterday\ntime_s,vcap_v\n0,1\n", 1, []int{1}, "want RFC 3339", ErrBadMeta, 0, 0, 0, false},
		{"gap without end_s", "time_s,vcap_v\n0,1\n# gap: start_s=0 reason=unplugged\n5,1\n", 2, []int{3}, `end_s "" is not a time`, ErrBadMeta, 0, 0, 0, false},
		{"gap with a word for start", "time_s,vcap_v\n0,1\n# gap: start_s=zero end_s=5 reason=unplugged\n5,1\n", 2, []int{3}, `start_s "zero"`, ErrBadMeta, 0, 0, 0, false},
		{"gap backwards", "time_s,vcap_v\n0,1\n# gap: start_s=5 end_s=1 reason=unplugged\n5,1\n", 2, []int{3}, "before start_s", ErrBadMeta, 0, 0, 0, false},
		{"gap with a bad lost is kept", "time_s,vcap_v\n0,1\n# gap: start_s=0 end_s=5 reason=lost-samples lost=-3\n5,1\n", 2, []int{3}, `lost "-3"`, ErrBadMeta, 1, 0, 0, false},
		{"gap without a reason is kept", "time_s,vcap_v\n0,1\n# gap: start_s=0 end_s=5 lost=2\n5,1\n", 2, []int{3}, "no reason", ErrBadMeta, 1, 2, 0, false},
		{"reset without at_s", "time_s,vcap_v\n0,1\n# reset: cause=ext segment=2\n5,1\n", 2, []int{3}, `at_s ""`, ErrBadMeta, 0, 0, 0, false},
		{"reset with a bad segment is kept", "time_s,vcap_v\n0,1\n# reset: at_s=5 cause=ext segment=two\n5,1\n", 2, []int{3}, `segment "two"`, ErrBadMeta, 0, 0, 1, false},
		{"torn foreign row", "time_s,vcap_v\n0,1\n0.1,1.", 1, []int{3}, "no line end", ErrTornLine, 0, 0, 0, false},
		{"torn row of ours", "# format: capcycle.capture/1\n# start: 2026-12-01T09:30:00Z\ntime_s,vcap_v\n0,1\n0.1,2.4", 1, []int{5}, "no line end", ErrTornLine, 0, 0, 0, true},
		{"torn metadata line", "time_s,vcap_v\n0,1\n# gap: start_s=0 end_s=0.", 1, []int{3}, "no line end", ErrTornLine, 0, 0, 0, false},
		{"two warnings", "# start: 2026-13-01T00:00:00Z\ntime_s,vcap_v\n0,1\n# reset: at_s=x\n1,1\n2,1", 2, []int{1, 4, 6}, "start", ErrBadMeta, 0, 0, 0, false},
		{"well formed: no warning", "# start: 2026-12-01T09:30:00Z\ntime_s,vcap_v\n0,1\n# gap: start_s=0 end_s=5 reason=unplugged\n# reset: at_s=5 cause=ext segment=2\n5,1\n", 2, nil, "", nil, 1, 0, 1, true},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			r := NewReader(strings.NewReader(tc.in), "w.csv")
			ts, _, err := readAll(t, r)
			if err != nil {
				t.Fatalf("a warning stopped the reading: %v", err)
			}
			if len(ts) != tc.rows {
				t.Errorf("%d rows %v, want %d", len(ts), ts, tc.rows)
			}
			ws := r.Warnings()
			if len(ws) != len(tc.lines) || r.WarningCount() != len(tc.lines) {
				t.Fatalf("warnings %v (count %d), want at lines %v", ws, r.WarningCount(), tc.lines)
			}
			for i, w := range ws {
				if w.File != "w.csv" || w.Line != tc.lines[i] {
					t.Errorf("warning %d at %s:%d, want w.csv:%d (%v)", i, w.File, w.Line, tc.lines[i], w)
				}
			}
			if len(ws) > 0 {
				if !errors.Is(ws[0], tc.kind) || !strings.Contains(ws[0].Error(), tc.want) {
					t.Errorf("warning %q, want %v and %q", ws[0], tc.kind, tc.want)
				}
				if !strings.HasPrefix(ws[0].Error(), "capture: w.csv:") {
					t.Errorf("warning %q does not name the package and file", ws[0])
				}
			}
			if len(r.Gaps()) != tc.gaps || r.Lost() != tc.lost || len(r.Resets()) != tc.resets {
				t.Errorf("gaps %+v lost %d resets %+v", r.Gaps(), r.Lost(), r.Resets())
			}
			if _, ok := r.Start(); ok != tc.hasStart {
				t.Errorf("start known %v, want %v", ok, tc.hasStart)
			}
			if r.Torn() != errors.Is(ws0(ws), ErrTornLine) && !strings.Contains(tc.name, "two") {
				t.Errorf("Torn %v with warnings %v", r.Torn(), ws)
			}
		})
	}
}

func ws0(ws []*ParseError) error {
	for _, w := range ws {
		if errors.Is(w, ErrTornLine) {
			return w
		}
	}
	return nil
}

// A file of malformed lines keeps MaxWarnings warnings and counts the rest.
func TestReaderWarningsBounded(t *testing.T) {
	var b strings.Builder
	b.WriteString("time_s,vcap_v\n0,1\n")
	for i := 0; i < 3*MaxWarnings; i++ {
		b.WriteString("# reset: at_s=?\n")
	}
	b.WriteString("1,1\n")
	r := NewReader(strings.NewReader(b.String()), "many.csv")
	if _, _, err := readAll(t, r); err != nil {
		t.Fatal(err)
	}
	if len(r.Warnings()) != MaxWarnings || r.WarningCount() != 3*MaxWarnings {
		t.Errorf("kept %d, counted %d", len(r.Warnings()), r.WarningCount())
	}
}

// Time stamps far from 0 (epoch seconds, epoch milliseconds, 10^15 s) keep the
// resolution of their text: the reader subtracts the whole part of the first one,
// digit by digit, and reports it as OriginS. The same capture written from 0 gives the
// same times to a nanosecond, and a 6 µV ripple on the volts survives.
func TestReaderTimeOrigin(t *testing.T) {
	const rows = 50
	ripple := func(i int) float64 { return 2.5 + 6e-6*float64(i%2) }
	cases := []struct {
		name    string
		head    string
		origin  string  // the whole part written in front of each time stamp
		scale   float64 // seconds per unit of the time column
		originS float64
	}{
		{"from zero", "time_s", "", 1, 0},
		{"epoch seconds", "time_s", "1796117400", 1, 1796117400},
		{"epoch milliseconds", "time_ms", "1796117400000", 1e-3, 1796117400},
		{"1e15 s", "time_s", "1000000000000000", 1, 1e15},
		{"1.7e11 s", "time_s", "170000000000", 1, 1.7e11},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var b strings.Builder
			b.WriteString("# start: 2026-12-01T09:30:00Z\n" + tc.head + ",vcap_v\n")
			for i := 0; i < rows; i++ {
				// 10 ms apart, written with 6 decimals of seconds (3 of milliseconds).
				us := int64(i) * 10000
				frac := strconv.FormatInt(1000000+us%1000000, 10)[1:]
				whole := us / 1000000
				ts := tc.origin
				if tc.scale == 1e-3 {
					ms := whole*1000 + (us%1000000)/1000
					ts = addWhole(tc.origin, ms) + "." + strconv.FormatInt(1000+(us%1000)/1, 10)[1:]
				} else {
					ts = addWhole(tc.origin, whole) + "." + frac
				}
				b.WriteString(ts + "," + strconv.FormatFloat(ripple(i), 'f', 6, 64) + "\n")
				if i == 20 {
					b.WriteString("# gap: start_s=" + addWhole(originSeconds(tc.origin, tc.scale), 0) + ".200000 end_s=" + addWhole(originSeconds(tc.origin, tc.scale), 0) + ".210000 reason=unplugged\n")
				}
			}
			r := NewReader(strings.NewReader(b.String()), "far.csv")
			ts, vs, err := readAll(t, r)
			if err != nil {
				t.Fatal(err)
			}
			if len(ts) != rows {
				t.Fatalf("%d rows", len(ts))
			}
			if r.OriginS() != tc.originS {
				t.Errorf("origin %v s, want %v", r.OriginS(), tc.originS)
			}
			for i := range ts {
				if want := float64(i) * 0.01; math.Abs(ts[i]-want) > 1e-9 {
					t.Fatalf("row %d: %.9f s from the origin, want %.9f", i, ts[i], want)
				}
				if math.Abs(vs[i]-ripple(i)) > 1e-12 {
					t.Fatalf("row %d: %v V, want %v", i, vs[i], ripple(i))
				}
			}
			if g := r.Gaps(); len(g) != 1 || math.Abs(g[0].StartS-0.2) > 1e-9 || math.Abs(g[0].EndS-0.21) > 1e-9 {
				t.Errorf("gap %+v, want 0.2 to 0.21 s from the origin", g)
			}
			st, ok := r.Start()
			want := time.Unix(time.Date(2026, 12, 1, 9, 30, 0, 0, time.UTC).Unix()+int64(tc.originS), 0).UTC()
			if tc.originS > 1e12 {
				if ok {
					t.Errorf("start %v beyond the year 30000 reported", st)
				}
			} else if !ok || !st.Equal(want) {
				t.Errorf("start %v %v, want %v (the start line plus the origin)", st, ok, want)
			}
		})
	}
}

// addWhole adds n to the decimal integer s ("" is 0), as text.
func addWhole(s string, n int64) string {
	if s == "" {
		return strconv.FormatInt(n, 10)
	}
	v, err := strconv.ParseInt(s, 10, 64)
	if err != nil {
		panic(err)
	}
	return strconv.FormatInt(v+n, 10)
}

// originSeconds is the whole origin in seconds, as text.
func originSeconds(s string, scale float64) string {
	if s == "" {
		return ""
	}
	v, _ := strconv.ParseInt(s, 10, 64)
	if scale == 1e-3 {
		v /= 1000
	}
	return strconv.FormatInt(v, 10)
}

func TestSplitDecimal(t *testing.T) {
	cases := []struct {
		in   string
		ip   int64
		frac float64
		ok   bool
	}{
		{"1796117400.123456", 1796117400, 0.123456, true},
		{"-12.5", -12, -0.5, true},
		{"1.7e11", 170000000000, 0, true},
		{"1.7000000000000001e11", 170000000000, 1e-5, true},
		{"0.25", 0, 0.25, true},
		{"1e15", 1000000000000000, 0, true},
		{"123456789012345678.5", 123456789012345678, 0.5, true},
		{"1234567890123456789", 0, 0, false},
		{"12,5", 12, 0.5, true},
		{"x", 0, 0, false},
	}
	for _, c := range cases {
		x, _ := strconv.ParseFloat(strings.Replace(c.in, ",", ".", 1), 64)
		ip, frac, ok := splitDecimal([]byte(c.in), ',', x)
		if ok != c.ok || (ok && (ip != c.ip || math.Abs(frac-c.frac) > 1e-15)) {
			t.Errorf("%s: %d %v %v, want %d %v %v", c.in, ip, frac, ok, c.ip, c.frac, c.ok)
		}
	}
}
