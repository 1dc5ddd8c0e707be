package report

import (
	"bytes"
	"capcycle/analyze/analysis"
	"encoding/csv"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"testing"

	"github.com/gocarina/gocsv"
)

func TestWriteBundleRoundTrips(t *testing.T) {
	dir := t.TempDir()
	r := wrenOnce()
	b, err := WriteBundle(dir, "wren", r, nil)
	if err != nil {
		t.Fatal(err)
	}
	if b != BundlePaths(dir, "wren") {
		t.Errorf("paths %+v, want %+v", b, BundlePaths(dir, "wren"))
	}
	// The JSON is the Result.
	raw, err := os.ReadFile(b.JSON)
	if err != nil {
		t.Fatal(err)
	}
	var back analysis.Result
	if err := json.Unmarshal(raw, &back); err != nil {
		t.Fatal(err)
	}
	want, _ := json.Marshal(r)
	got, _ := json.Marshal(&back)
	if !bytes.Equal(got, want) {
		t.Error("the analysis JSON does not read back to the same Result")
	}
	// The report rebuilt from the saved JSON is the same page, byte for byte.
	html, _ := os.ReadFile(b.HTML)
	again := renderFresh(t, &back, &Options{CSVHref: "wren.cycles.csv", JSONHref: "wren.analysis.json"})
	if !bytes.Equal(html, again) {
		t.Error("the report rebuilt from the saved JSON differs from the one written")
	}
	// The CSV has every cycle, with nulls as empty fields.
	f, err := os.Open(b.CSV)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var rows []CycleRow
	if err := gocsv.Unmarshal(f, &rows); err != nil {
		t.Fatal(err)
	}
	if len(rows) != len(r.Cycles) {
		t.Fatalf("%d CSV rows for %d cycles", len(rows), len(r.Cycles))
	}
	// (gocsv reads an empty field into a pointer to zero, so look at the text itself.)
	rawCSV, _ := os.ReadFile(b.CSV)
	recs, err := csv.NewReader(bytes.NewReader(rawCSV)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if recs[0][5] != "charge_s" || recs[1][5] != "" {
		t.Errorf("first cycle's charge time is %q under %q in the CSV, want empty (null)", recs[1][5], recs[0][5])
	}
	last := len(rows) - 1
	if rows[last].FireS != r.Cycles[last].FireS || rows[last].FittedChargeS == nil {
		t.Errorf("last CSV row %+v does not match cycle %+v", rows[last], r.Cycles[last])
	}
}

func TestWriteBundleRefuses(t *testing.T) {
	dir := t.TempDir()
	r := fernOnce()
	if _, err := WriteBundle(dir, "fern", r, nil); err != nil {
		t.Fatal(err)
	}
	_, err := WriteBundle(dir, "fern", r, nil)
	var pe *PathError
	if !errors.Is(err, ErrExists) || !errors.As(err, &pe) || filepath.Dir(pe.Path) != dir {
		t.Errorf("second write without Overwrite: %v, want ErrExists with the path", err)
	}
	if _, err := WriteBundle(dir, "fern", r, &Options{Overwrite: true}); err != nil {
		t.Errorf("with Overwrite: %v", err)
	}
	// A capture named like a bundle file is never written, even with Overwrite.
	capture := filepath.Join(dir, "day.cycles.csv")
	if err := os.WriteFile(capture, []byte("time_s,vcap_v\n0,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	c := *r
	c.Source.Path = capture
	if _, err := WriteBundle(dir, "day", &c, &Options{Overwrite: true}); !errors.Is(err, ErrCapture) {
		t.Errorf("writing over the capture: %v, want ErrCapture", err)
	}
	if got, _ := os.ReadFile(capture); string(got) != "time_s,vcap_v\n0,1\n" {
		t.Errorf("the capture was changed: %q", got)
	}
	if _, err := os.Stat(filepath.Join(dir, "day.html")); !os.IsNotExist(err) {
		t.Errorf("a refused bundle left a file behind: %v", err)
	}
}
