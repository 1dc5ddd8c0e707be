package report

import (
	"bytes"
	"compress/gzip"
	"context"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"capcycle/analyze"
	"capcycle/analyze/analysis"
	"capcycle/analyze/profile"
)

// Results of the real analysis, run on the captures in testdata (the simulated demo
// stretches, gzipped, and the synthetic RC captures) with the scenario's profile. They
// complement the invented fixtures of fixtures_test.go: what the analysis actually
// writes, density and all.
var analysedCache sync.Map // key: capture+profile, value: *analysis.Result

// analysed analyses testdata/NAME (gunzipped when it ends in .gz) with the profile
// testdata/profiles/PROFILE.toml ("" for none), once per test binary.
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
		p, err := profile.Load(filepath.Join("..", "..", "testdata", "profiles", prof+".toml"))
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
