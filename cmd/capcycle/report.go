package main

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"capcycle/analyze"
	"capcycle/analyze/analysis"
	htmlreport "capcycle/analyze/report"
	"capcycle/cmd/internal/cli"
)

// reportCommand is "capcycle report".
func reportCommand() *command {
	return &command{
		name:    "report",
		summary: "write a self-contained HTML report of a capture",
		run:     runReport,
	}
}

// analyseCapture analyses a capture file, with the circuit's declared values from the
// profile when one is given (as "capcycle analyze" does).
func analyseCapture(ctx context.Context, path, profilePath string) (*analysis.Result, error) {
	opts, err := analysisOptions(profilePath)
	if err != nil {
		return nil, err
	}
	res, err := analyze.File(ctx, path, opts)
	if err != nil {
		return nil, analysisError(err)
	}
	return res, nil
}

func runReport(ctx context.Context, args []string, e *env) error {
	fs := newFlags("report", "CAPTURE [B] [flags]  |  --from-json A.json [B.json] [flags]", e.stderr,
		"capcycle report wren.csv --profile wren.toml",
		"capcycle report wren.csv --out wren-report.html --force",
		"capcycle report --from-json wren.analysis.json",
		"capcycle report before.csv after.csv --out compare.html",
		"capcycle report wren.csv fern.csv --profile wren.toml --profile fern.toml --label-a Wren --label-b Fern",
		"capcycle report --from-json before.analysis.json after.analysis.json --out compare.html")
	out := outFlag(fs, "", "the HTML file to write (default: beside the first input, named after it); for one input the analysis JSON and the cycle CSV are written beside it")
	profiles := &perInputFlag{Name: "profile"}
	fs.Var(profiles, "profile", "the bench profile (TOML) describing the circuit, for a capture; for two captures give one for both or one each, in order")
	force := fs.Bool("force", false, "replace report files that exist already (the capture is never written)")
	fromJSON := fs.Bool("from-json", false, "the inputs are saved analysis JSON files (capcycle analyze --json), not captures")
	labelA := fs.String("label-a", "before", "for two inputs: the name of the first")
	labelB := fs.String("label-b", "after", "for two inputs: the name of the second")
	inputs, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	switch len(inputs) {
	case 1, 2:
	case 0:
		return usageErrorf("give a capture, or --from-json and a saved analysis (see capcycle report -h)")
	default:
		return usageErrorf("give one input for a report or two for a comparison, not %d", len(inputs))
	}
	if err := profiles.Check(len(inputs)); err != nil {
		return err
	}
	results := make([]*analysis.Result, len(inputs))
	for i, in := range inputs {
		if *fromJSON {
			results[i], err = analysis.ReadFile(in)
			err = inputError(err)
		} else {
			results[i], err = analyseCapture(ctx, in, profiles.ForInput(i))
		}
		if err != nil {
			return err
		}
	}
	opts := &htmlreport.Options{Overwrite: *force, LabelA: *labelA, LabelB: *labelB}
	if len(inputs) == 1 {
		return writeOne(e, inputs[0], results[0], *out, *fromJSON, opts)
	}
	return writeComparison(e, inputs, results, *out, opts)
}

// parseInterleaved parses flags that may come before, between or after the inputs
// ("capcycle report A B --out compare.html") and returns the inputs in order.
func parseInterleaved(fs *flag.FlagSet, args []string) ([]string, error) {
	if err := parseFlags(fs, args); err != nil {
		return nil, err
	}
	return fs.Args(), nil
}

// writeOne writes the report bundle of one input.
func writeOne(e *env, input string, r *analysis.Result, out string, fromJSON bool, opts *htmlreport.Options) error {
	dir, base, err := bundleName(input, out, fromJSON)
	if err != nil {
		return err
	}
	b := htmlreport.BundlePaths(dir, base)
	if fromJSON && cli.SameFile(b.JSON, input) {
		return usageErrorf("the analysis JSON would be written over its own input %s; choose another --out", input)
	}
	if b, err = htmlreport.WriteBundle(dir, base, r, opts); err != nil {
		var pe *htmlreport.PathError
		switch {
		case errors.As(err, &pe) && errors.Is(err, htmlreport.ErrExists):
			return usageErrorf("%s exists; use --force to replace it", pe.Path)
		case errors.As(err, &pe):
			return usageErrorf("%s is the capture itself: it is never written over; choose another --out", pe.Path)
		}
		return workErrorf("%w", err)
	}
	fmt.Fprintf(e.stdout, "%s\n", htmlreport.Summary(r))
	fmt.Fprintf(e.stdout, "report:   %s\nanalysis: %s\ncycles:   %s\n", b.HTML, b.JSON, b.CSV)
	return nil
}

// bundleName picks the directory and base name of the bundle: from -o when given
// (it must end in .html), else beside the input, named after it with ".report".
func bundleName(input, out string, fromJSON bool) (dir, base string, err error) {
	if out != "" {
		if !strings.HasSuffix(out, ".html") {
			return "", "", usageErrorf("--out %s: the report's name must end in .html", out)
		}
		return filepath.Dir(out), strings.TrimSuffix(filepath.Base(out), ".html"), nil
	}
	name := filepath.Base(input)
	if fromJSON {
		name = strings.TrimSuffix(strings.TrimSuffix(name, ".json"), ".analysis")
	} else {
		name = strings.TrimSuffix(name, filepath.Ext(name))
	}
	return filepath.Dir(input), name + ".report", nil
}

// writeComparison writes the comparison page of two inputs.
func writeComparison(e *env, inputs []string, rs []*analysis.Result, out string, opts *htmlreport.Options) error {
	if out == "" {
		a := strings.TrimSuffix(filepath.Base(inputs[0]), filepath.Ext(inputs[0]))
		b := strings.TrimSuffix(filepath.Base(inputs[1]), filepath.Ext(inputs[1]))
		out = filepath.Join(filepath.Dir(inputs[0]), a+"-vs-"+b+".html")
	}
	if !strings.HasSuffix(out, ".html") {
		return usageErrorf("--out %s: the comparison's name must end in .html", out)
	}
	for i, in := range inputs {
		if cli.SameFile(out, in) || cli.SameFile(out, rs[i].Source.Path) {
			return usageErrorf("--out %s would write over the input %s", out, in)
		}
	}
	if _, err := os.Lstat(out); err == nil && !opts.Overwrite {
		return usageErrorf("%s exists; use --force to replace it", out)
	}
	var buf bytes.Buffer
	if err := htmlreport.Compare(&buf, rs[0], rs[1], opts); err != nil {
		return workErrorf("%w", err)
	}
	if err := htmlreport.WriteFileAtomic(out, buf.Bytes()); err != nil {
		return workErrorf("%w", err)
	}
	la, lb := opts.LabelA, opts.LabelB
	fmt.Fprintf(e.stdout, "%s: %s\n%s: %s\ncomparison: %s\n", la, htmlreport.Summary(rs[0]), lb, htmlreport.Summary(rs[1]), out)
	return nil
}
