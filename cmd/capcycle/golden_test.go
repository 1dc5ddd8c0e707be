package main

import (
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// The golden analyses in testdata/golden were written by "capcycle analyze FILE --json"
// (with and without the scenario's profile) before the analysis was restructured into one
// pipeline. The analysis JSON is a contract (DEVELOPERS.md): later versions may add
// fields, but every field the golden file holds must still be there with the same value.
// The captures are the three in testdata/captures and two simulated by the circuit model
// from the demo scenarios (Wren from 10:00 for 15 minutes at 20 Hz, Fern from 09:00 for
// 3 hours at 2 Hz, both from 0 V), gzipped.
//
// Numbers may differ in the last bits when a sum is reordered: they are compared with a
// relative tolerance of 1e-9 (an absolute 1e-12 around zero).
var goldenCases = []struct {
	capture, profile string
}{
	{"golden/wren-sim-15min.csv.gz", "wren"},
	{"golden/fern-sim-3h.csv.gz", "fern"},
	{"captures/fern-rc-stall-3h.csv", "fern"},
	{"captures/wren-emulated-burst.csv", "wren"},
	{"captures/wren-rc-10min.csv", "wren"},
}

// updateGolden rewrites the golden files from this version's output: only for a change
// that is meant to change values (say which in the commit), never to make a test pass.
var updateGolden = flag.Bool("update-golden", false, "rewrite testdata/golden/*.json.gz from this version's analysis")

// goldenIgnore lists paths whose values legitimately depend on where the test runs.
var goldenIgnore = map[string]bool{"source.path": true}

func TestAnalysisJSONMatchesGolden(t *testing.T) {
	dir := t.TempDir()
	for _, c := range goldenCases {
		base := strings.TrimSuffix(strings.TrimSuffix(filepath.Base(c.capture), ".gz"), ".csv")
		file := filepath.Join(dir, base+".csv")
		if err := os.WriteFile(file, readMaybeGzip(t, filepath.Join("../../testdata", c.capture)), 0o644); err != nil {
			t.Fatal(err)
		}
		for _, withProfile := range []bool{true, false} {
			name, args := base, []string{"analyze", file, "--json"}
			if withProfile {
				args = append(args, "--profile", "../../testdata/profiles/"+c.profile+".toml")
			} else {
				name += "-noprofile"
			}
			t.Run(name, func(t *testing.T) {
				var out, errb bytes.Buffer
				code := run(context.Background(), args, &env{stdin: strings.NewReader(""), stdout: &out, stderr: &errb})
				if code != 0 {
					t.Fatalf("exit %d: %s", code, errb.String())
				}
				goldenPath := "../../testdata/golden/" + name + ".json.gz"
				if *updateGolden {
					writeGzip(t, goldenPath, out.Bytes())
				}
				var got, want any
				if err := json.Unmarshal(out.Bytes(), &got); err != nil {
					t.Fatalf("analysis JSON: %v", err)
				}
				if err := json.Unmarshal(readMaybeGzip(t, goldenPath), &want); err != nil {
					t.Fatalf("golden JSON: %v", err)
				}
				var diffs []string
				goldenDiff("", want, got, &diffs)
				sort.Strings(diffs)
				if len(diffs) > 20 {
					diffs = append(diffs[:20], fmt.Sprintf("... and %d more", len(diffs)-20))
				}
				for _, d := range diffs {
					t.Error(d)
				}
			})
		}
	}
}

func writeGzip(t *testing.T, path string, b []byte) {
	t.Helper()
	var buf bytes.Buffer
	z, _ := gzip.NewWriterLevel(&buf, gzip.BestCompression)
	if _, err := z.Write(b); err != nil {
		t.Fatal(err)
	}
	if err := z.Close(); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

func readMaybeGzip(t *testing.T, path string) []byte {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var r io.Reader = f
	if strings.HasSuffix(path, ".gz") {
		z, err := gzip.NewReader(f)
		if err != nil {
			t.Fatal(err)
		}
		r = z
	}
	b, err := io.ReadAll(r)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// goldenDiff appends to diffs every place where got lacks or changes a value of want.
// Keys that got adds are allowed.
func goldenDiff(path string, want, got any, diffs *[]string) {
	if goldenIgnore[path] {
		return
	}
	switch w := want.(type) {
	case map[string]any:
		g, ok := got.(map[string]any)
		if !ok {
			*diffs = append(*diffs, fmt.Sprintf("%s: want an object, got %T", path, got))
			return
		}
		for k, wv := range w {
			p := k
			if path != "" {
				p = path + "." + k
			}
			gv, ok := g[k]
			if !ok {
				*diffs = append(*diffs, p+": missing")
				continue
			}
			goldenDiff(p, wv, gv, diffs)
		}
	case []any:
		g, ok := got.([]any)
		if !ok || len(g) != len(w) {
			*diffs = append(*diffs, fmt.Sprintf("%s: want %d items, got %v", path, len(w), describeLen(got)))
			return
		}
		for i := range w {
			goldenDiff(fmt.Sprintf("%s[%d]", path, i), w[i], g[i], diffs)
		}
	case float64:
		g, ok := got.(float64)
		if !ok || !(math.Abs(g-w) <= 1e-9*math.Max(math.Abs(w), math.Abs(g)) || math.Abs(g-w) <= 1e-12) {
			*diffs = append(*diffs, fmt.Sprintf("%s: want %v, got %v", path, w, got))
		}
	default:
		if want != got {
			*diffs = append(*diffs, fmt.Sprintf("%s: want %v, got %v", path, want, got))
		}
	}
}

func describeLen(v any) string {
	if s, ok := v.([]any); ok {
		return fmt.Sprintf("%d items", len(s))
	}
	return fmt.Sprintf("%T", v)
}
