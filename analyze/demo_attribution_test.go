package analyze

import (
	"compress/gzip"
	"context"
	"io"
	"os"
	"path/filepath"
	"testing"

	"capcycle/analyze/profile"
)

// The Wren capture simulated by the circuit model from its own profile
// (testdata/golden/wren-sim-15min.csv.gz), analysed with that profile: every part the
// analysis compares is consistent with its declared value, since the circuit is the
// profile's own; and the comparison holds the parts a builder checks first (the
// trigger's on voltage and its release).
func TestDemoWrenConsistentWithItsProfile(t *testing.T) {
	p, err := profile.Load(filepath.Join("model", "scenarios", "wren.toml"))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "wren-sim-15min.csv")
	gunzip(t, filepath.Join("..", "testdata", "golden", "wren-sim-15min.csv.gz"), path)
	res, err := File(context.Background(), path, &Options{Profile: p, Declared: Declare(p)})
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, a := range res.Attribution {
		seen[a.Part] = true
		t.Logf("%s: declared %.4g, measured %.4g (%+.2f %%, band -%.2f/+%.2f %%, %s)", a.Part, a.Declared, a.Measured, a.DiffPct, a.TolMinusPct, a.TolPlusPct, a.Basis)
		if !a.Within {
			t.Errorf("%s judged to differ from its own profile: %+v", a.Part, a)
		}
	}
	for _, part := range []string{"trigger.on_v", "trigger.off_v (release the model predicts)"} {
		if !seen[part] {
			t.Errorf("%s not compared", part)
		}
	}
}

func gunzip(t *testing.T, from, to string) {
	t.Helper()
	f, err := os.Open(from)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	out, err := os.Create(to)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := io.Copy(out, zr); err != nil {
		t.Fatal(err)
	}
	if err := out.Close(); err != nil {
		t.Fatal(err)
	}
}
