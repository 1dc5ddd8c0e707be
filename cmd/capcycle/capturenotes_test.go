package main

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"capcycle/analyze"
	"capcycle/analyze/analysis"
	"capcycle/logger/capture"
)

// analyze prints the capture reader's warnings with file:line, and the time origin of a
// capture in epoch milliseconds; a ragged row is refused with the header's count.
func TestAnalyzePrintsReaderNotes(t *testing.T) {
	dir := t.TempDir()
	rows := func(t0 int64, n int) string { // every 100 ms from t0 ms
		var b strings.Builder
		for i := 0; i < n; i++ {
			b.WriteString(strconv.FormatInt(t0+100*int64(i), 10) + "," + strconv.FormatFloat(1+0.01*float64(i%7), 'f', 5, 64) + "\n")
		}
		return b.String()
	}
	cases := []struct {
		name, text string
		code       int
		want       []string
	}{
		{"malformed gap and a torn last line",
			"time_ms,vcap_v\n" + rows(0, 40) + "# gap: start_s=3.9 end_s=soon reason=unplugged\n" + "4000,1.0\n4100,1.",
			exitOK, []string{`warning: capture: c.csv:42: malformed metadata line: gap: end_s "soon" is not a time in seconds; want start_s=T0 end_s=T1 reason=R [lost=N]`,
				"warning: capture: c.csv:44: last line has no line end (cut short): dropped"}},
		{"epoch milliseconds", "time_ms,vcap_v\n" + rows(1796117400000, 40), exitOK,
			[]string{"note: c.csv: the time stamps start far from zero; times are counted from an origin of 1796117400 s"}},
		{"ragged row", "time_ms,vcap_v\n" + rows(0, 5) + "600,1,2\n", exitUsage,
			[]string{"c.csv:7:7: row has the wrong number of fields: 3, the header row has 2 (time_ms,vcap_v)"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, "c.csv")
			if err := os.WriteFile(path, []byte(tc.text), 0o644); err != nil {
				t.Fatal(err)
			}
			code, _, errs := runCmd(t, "analyze", path)
			if code != tc.code {
				t.Fatalf("exit %d, want %d; stderr %q", code, tc.code, errs)
			}
			for _, w := range tc.want {
				if !strings.Contains(errs, strings.ReplaceAll(w, "c.csv", path)) {
					t.Errorf("stderr lacks %q:\n%s", w, errs)
				}
			}
		})
	}
}

// The same capture with its time stamps in epoch milliseconds gives the same analysis:
// the reader counts them from their origin, so no resolution is lost and nothing grows
// with the offset.
func TestAnalyzeEpochMillisecondsSameAsFromZero(t *testing.T) {
	src, err := os.ReadFile("../../testdata/captures/wren-rc-10min.csv")
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	for _, line := range strings.Split(strings.TrimSuffix(string(src), "\n"), "\n") {
		switch {
		case strings.HasPrefix(line, "#"):
			b.WriteString(line + "\n")
		case strings.HasPrefix(line, "time_s,"):
			b.WriteString("time_ms" + strings.TrimPrefix(line, "time_s") + "\n")
		default:
			ts, rest, _ := strings.Cut(line, ",")
			whole, frac, _ := strings.Cut(ts, ".") // seconds with 6 decimals
			frac = (frac + "000000")[:6]
			w, _ := strconv.ParseInt(whole, 10, 64)
			f, _ := strconv.ParseInt(frac, 10, 64)
			us := 1796117400000000 + w*1000000 + f // epoch microseconds
			b.WriteString(strconv.FormatInt(us/1000, 10) + "." + strconv.FormatInt(1000+us%1000, 10)[1:] + "," + rest + "\n")
		}
	}
	read := func(name, text string) *analysis.Result {
		res, err := analyze.Run(context.Background(), capture.NewReader(strings.NewReader(text), name), nil)
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	zero, epoch := read("zero.csv", string(src)), read("epoch.csv", b.String())
	if len(zero.Cycles) == 0 || len(epoch.Cycles) != len(zero.Cycles) || epoch.Samples != zero.Samples {
		t.Fatalf("%d cycles of %d samples from zero, %d of %d in epoch milliseconds", len(zero.Cycles), zero.Samples, len(epoch.Cycles), epoch.Samples)
	}
	for i, c := range zero.Cycles {
		e := epoch.Cycles[i]
		if math.Abs(e.FireS-c.FireS) > 1e-9 || math.Abs(e.ResetS-c.ResetS) > 1e-9 || math.Abs(e.FireV-c.FireV) > 1e-9 {
			t.Errorf("cycle %d: fire %.9f s %g V from zero, %.9f s %g V in epoch ms", i, c.FireS, c.FireV, e.FireS, e.FireV)
		}
	}
	if math.Abs(epoch.DurationS-zero.DurationS) > 1e-9 || epoch.Noise == nil || zero.Noise == nil ||
		math.Abs(epoch.Noise.RMSV-zero.Noise.RMSV) > 1e-3*zero.Noise.RMSV {
		t.Errorf("duration %v / %v s, noise %+v / %+v", zero.DurationS, epoch.DurationS, zero.Noise, epoch.Noise)
	}
}
