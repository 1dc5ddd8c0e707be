package report

import (
	"bytes"
	"capcycle/analyze/analysis"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/gocarina/gocsv"
)

// Bundle names the files WriteBundle wrote.
type Bundle struct {
	HTML string // the report
	JSON string // the analysis, the report's only input
	CSV  string // one row per cycle
}

// BundlePaths returns the names WriteBundle uses in dir for base: base.html,
// base.analysis.json and base.cycles.csv.
func BundlePaths(dir, base string) Bundle {
	return Bundle{
		HTML: filepath.Join(dir, base+".html"),
		JSON: filepath.Join(dir, base+".analysis.json"),
		CSV:  filepath.Join(dir, base+".cycles.csv"),
	}
}

// ErrExists is returned inside a *PathError when a bundle file exists already and
// Options.Overwrite is false.
var ErrExists = errors.New("file exists")

// ErrCapture is returned inside a *PathError when a bundle file would be the capture
// itself. The capture is never written, whatever the options.
var ErrCapture = errors.New("that is the capture, which is never written over")

// PathError is a refusal to write one file of the bundle.
type PathError struct {
	Path string
	Err  error // ErrExists or ErrCapture
}

func (e *PathError) Error() string { return "report: " + e.Path + ": " + e.Err.Error() }
func (e *PathError) Unwrap() error { return e.Err }

// WriteBundle writes the report, the analysis JSON and the cycle CSV into dir, named
// after base (see BundlePaths), with the report linking to the other two. Each file is
// written to a temporary name and renamed into place, so a failure leaves no half file.
// It never writes over r.Source.Path, and it replaces existing files only when
// opts.Overwrite is set; it checks all three names before it writes any.
func WriteBundle(dir, base string, r *analysis.Result, opts *Options) (Bundle, error) {
	if r == nil {
		return Bundle{}, ErrNoResult
	}
	o := Options{}
	if opts != nil {
		o = *opts
	}
	b := BundlePaths(dir, base)
	for _, p := range []string{b.HTML, b.JSON, b.CSV} {
		if err := checkTarget(p, r.Source.Path, o.Overwrite); err != nil {
			return Bundle{}, err
		}
	}
	o.JSONHref = filepath.Base(b.JSON)
	o.CSVHref = filepath.Base(b.CSV)

	// No indentation: a day of cycles indented is larger than the capture it came from.
	js, err := json.Marshal(r)
	if err != nil {
		return Bundle{}, fmt.Errorf("report: encoding the analysis: %w", err)
	}
	var csvBuf bytes.Buffer
	if err := WriteCycles(&csvBuf, r); err != nil {
		return Bundle{}, err
	}
	var html bytes.Buffer
	if err := Write(&html, r, &o); err != nil {
		return Bundle{}, err
	}
	for _, f := range []struct {
		path string
		data []byte
	}{{b.JSON, append(js, '\n')}, {b.CSV, csvBuf.Bytes()}, {b.HTML, html.Bytes()}} {
		if err := WriteFileAtomic(f.path, f.data); err != nil {
			return Bundle{}, err
		}
	}
	return b, nil
}

// checkTarget refuses the capture, and an existing file unless overwrite is set.
func checkTarget(path, capture string, overwrite bool) error {
	if capture != "" {
		ap, err1 := filepath.Abs(path)
		ac, err2 := filepath.Abs(capture)
		if err1 == nil && err2 == nil && ap == ac {
			return &PathError{path, ErrCapture}
		}
		if si, err := os.Stat(path); err == nil {
			if ci, err := os.Stat(capture); err == nil && os.SameFile(si, ci) {
				return &PathError{path, ErrCapture}
			}
		}
	}
	if _, err := os.Lstat(path); err == nil && !overwrite {
		return &PathError{path, ErrExists}
	}
	return nil
}

// WriteFileAtomic writes data to a temporary file beside path and renames it over path.
func WriteFileAtomic(path string, data []byte) error {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".*.tmp")
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	tmp := f.Name()
	_, err = f.Write(data)
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Chmod(tmp, 0o644)
	}
	if err == nil {
		err = os.Rename(tmp, path)
	}
	if err != nil {
		os.Remove(tmp)
		return fmt.Errorf("report: writing %s: %w", path, err)
	}
	return nil
}

// CycleRow is one line of the cycle CSV. Empty fields are values that are null in the
// analysis JSON (the first cycle's charge time, energies without a capacitance).
type CycleRow struct {
	Index          int      `csv:"index"`
	FireS          float64  `csv:"fire_s"`
	FireV          float64  `csv:"fire_v"`
	ResetS         float64  `csv:"reset_s"`
	ResetV         float64  `csv:"reset_v"`
	ChargeS        *float64 `csv:"charge_s"`
	PulseS         float64  `csv:"pulse_s"`
	EnergyJ        *float64 `csv:"energy_j"`
	Kind           string   `csv:"kind"`
	LightA         *float64 `csv:"light_a"`
	NominalChargeS *float64 `csv:"predicted_nominal_charge_s"`
	FittedChargeS  *float64 `csv:"predicted_fitted_charge_s"`
}

// CycleRows turns the Result's cycles into CSV rows, with the predicted charge times
// when the analysis has them.
func CycleRows(r *analysis.Result) []CycleRow {
	nom := map[int]*float64{}
	fit := map[int]*float64{}
	if r.Prediction != nil {
		for _, pc := range r.Prediction.Cycles {
			if pc.Nominal != nil {
				nom[pc.Index] = pc.Nominal.ChargeS
			}
			if pc.Fitted != nil {
				fit[pc.Index] = pc.Fitted.ChargeS
			}
		}
	}
	rows := make([]CycleRow, len(r.Cycles))
	for i, c := range r.Cycles {
		rows[i] = CycleRow{Index: c.Index, FireS: c.FireS, FireV: c.FireV, ResetS: c.ResetS, ResetV: c.ResetV,
			ChargeS: c.ChargeS, PulseS: c.PulseS, EnergyJ: c.EnergyJ, Kind: string(c.Kind), LightA: c.LightA,
			NominalChargeS: nom[c.Index], FittedChargeS: fit[c.Index]}
	}
	return rows
}

// WriteCycles writes the cycle CSV (a header row, then one row per cycle) to w.
func WriteCycles(w io.Writer, r *analysis.Result) error {
	rows := CycleRows(r)
	if len(rows) == 0 {
		// gocsv writes nothing for an empty slice; keep the header so the file says what it is.
		_, err := io.WriteString(w, "index,fire_s,fire_v,reset_s,reset_v,charge_s,pulse_s,energy_j,kind,light_a,predicted_nominal_charge_s,predicted_fitted_charge_s\n")
		if err != nil {
			return fmt.Errorf("report: writing the cycle CSV: %w", err)
		}
		return nil
	}
	if err := gocsv.Marshal(&rows, w); err != nil {
		return fmt.Errorf("report: writing the cycle CSV: %w", err)
	}
	return nil
}
