package report

import (
	"bytes"
	"compress/gzip"
	"context"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"capcycle/analyze"
	"capcycle/analyze/analysis"
	"capcycle/analyze/profile"
	"capcycle/logger/capture"
)

// Results of the real analysis, run on the captures in testdata (the simulated demo
// stretches, gzipped, and the synthetic RC captures) with the scenario's profile. They
// complement the invented fixtures of fixtures_test.go: what the analysis actually
// writes, density and all.
var analysedCache sync.Map // key: capture+profile, value: *analysis.Result

// analysed analyses testdata/NAME (gunzipped when it ends in .gz) with the profile
// analyze/model/scenarios/PROFILE.toml ("" for none), once per test binary.
func analysed(t testing.TB, name, prof string) *analysis.Result {
	t.Helper()
	key := name + "|" + prof
	if v, ok := analysedCache.Load(key); ok {
		return v.(*analysis.Result)
	}
	path := filepath.Join("..", "..", "testdata", name)
	if strings.HasSuffix(name, ".gz") {
		path = gunzipTo(t, path, filepath.Join(t.TempDir(), strings.TrimSuffix(filepath.Base(name), ".gz")))
	}
	opts := &analyze.Options{}
	if prof != "" {
		p, err := profile.Load(filepath.Join("..", "model", "scenarios", prof+".toml"))
		if err != nil {
			t.Fatal(err)
		}
		opts.Profile, opts.Declared = p, analyze.Declare(p)
	}
	res, err := analyze.File(context.Background(), path, opts)
	if err != nil {
		t.Fatal(err)
	}
	analysedCache.Store(key, res)
	return res
}

func gunzipTo(t testing.TB, from, to string) string {
	t.Helper()
	raw, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	z, err := gzip.NewReader(bytes.NewReader(raw))
	if err != nil {
		t.Fatal(err)
	}
	b, err := io.ReadAll(z)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(to, b, 0o644); err != nil {
		t.Fatal(err)
	}
	return to
}

func wrenAnalysed(t testing.TB) *analysis.Result {
	return analysed(t, "golden/wren-sim-15min.csv.gz", "wren")
}

func fernAnalysed(t testing.TB) *analysis.Result {
	return analysed(t, "golden/fern-sim-3h.csv.gz", "fern")
}

// analysedForeign rewrites testdata/NAME (a capture of ours) the way another logger would
// write it (semicolons, decimal commas, millivolts, RFC 3339 times from a start of its
// own, columns "stamp" and "ch1") and analyses that file with the column mapping set, as
// "capcycle analyze --time-col stamp --volt-col ch1 --volt-unit mV ..." does.
func analysedForeign(t testing.TB, name string) *analysis.Result {
	t.Helper()
	if v, ok := analysedCache.Load("foreign|" + name); ok {
		return v.(*analysis.Result)
	}
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	start := time.Date(2026, 12, 1, 9, 30, 0, 0, time.UTC)
	var b strings.Builder
	b.WriteString("stamp;ch1\n")
	for _, line := range strings.Split(string(raw), "\n") {
		if line == "" || line[0] == '#' || strings.HasPrefix(line, "time") {
			continue
		}
		f := strings.Split(line, ",")
		ts, err1 := strconv.ParseFloat(f[0], 64)
		v, err2 := strconv.ParseFloat(f[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("%s: %q", name, line)
		}
		stamp := start.Add(time.Duration(ts * float64(time.Second))).Format("2006-01-02T15:04:05.000Z07:00")
		b.WriteString(stamp + ";" + strings.Replace(strconv.FormatFloat(v*1000, 'f', 2, 64), ".", ",", 1) + "\n")
	}
	path := filepath.Join(t.TempDir(), "logger.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	opts := &analyze.Options{Setup: func(r *capture.Reader) error {
		r.TimeCol, r.VoltCol, r.VoltScale, r.TimeFormat = "stamp", "ch1", 1e-3, capture.TimeRFC3339
		return nil
	}}
	res, err := analyze.File(context.Background(), path, opts)
	if err != nil {
		t.Fatal(err)
	}
	analysedCache.Store("foreign|"+name, res)
	return res
}
