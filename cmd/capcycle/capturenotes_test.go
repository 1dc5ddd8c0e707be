package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
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
