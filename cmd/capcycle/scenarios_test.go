package main

// Helpers for the end-to-end findings tests (findings_e2e_test.go): a circuit from a bench
// profile, simulated by the circuit model, read through the probe divider by a 10-bit ADC
// with noise the way a real board reads it, then analysed with the later stages (prediction
// and findings) exactly as "capcycle analyze --profile" runs them.

import (
	"context"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"capcycle/analyze"
	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	"capcycle/logger/capture"
)

// loadProfile reads a profile from testdata/profiles.
func loadProfile(t *testing.T, name string) *profile.Profile {
	t.Helper()
	p, err := profile.Load(filepath.Join("..", "..", "testdata", "profiles", name))
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// parseProfile reads an inline profile.
func parseProfile(t *testing.T, name, toml string) *profile.Profile {
	t.Helper()
	p, err := profile.Parse(name, []byte(toml))
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// circuitOf is the profile's circuit (model.FromProfile).
func circuitOf(t *testing.T, p *profile.Profile) *model.Circuit {
	t.Helper()
	c, _, err := model.FromProfile(p)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// board is how the capture is read: a divider ratio in front of an ADC of Bits bits with
// reference RefV, Gaussian noise of NoiseV at the ADC pin (volts, before quantisation),
// seeded. It is the profile's vcap channel unless a test changes it.
type board struct {
	Ratio  float64 // ADC volts over node volts
	RefV   float64
	Bits   int
	NoiseV float64
	Seed   uint64
}

// boardOf is the board a profile declares for its vcap channel, with 1 mV of noise at the
// pin (about a fifth of a 10-bit step at 5 V: a quiet breadboard; common practice, no
// source).
func boardOf(t *testing.T, p *profile.Profile) board {
	t.Helper()
	d := profile.Derive(p)
	for _, ch := range d.Channels {
		if ch.Node == profile.NodeVcap {
			bits := p.ADC.Bits
			if bits == 0 {
				bits = 10
			}
			return board{Ratio: ch.Ratio, RefV: p.ADC.ReferenceV, Bits: bits, NoiseV: 1e-3, Seed: 1}
		}
	}
	t.Fatal("profile has no vcap channel")
	return board{}
}

// reader turns node volts into the volts a capture file holds: divide, add noise,
// quantise to counts (clamped to 0 … 2^bits − 1, as the ADC saturates), scale back.
type reader struct {
	b   board
	rng *rand.Rand
	lsb float64 // node volts per count
}

func newReader(b board) *reader {
	return &reader{b: b, rng: rand.New(rand.NewPCG(b.Seed, b.Seed^0x5eed)), lsb: b.RefV / float64(int(1)<<b.Bits) / b.Ratio}
}

func (r *reader) read(v float64) float64 {
	pin := v*r.b.Ratio + r.b.NoiseV*r.rng.NormFloat64()
	full := float64(int(1)<<r.b.Bits) - 1
	counts := math.Max(0, math.Min(full, math.Round(pin/r.b.RefV*float64(int(1)<<r.b.Bits))))
	return counts * r.lsb
}

// genRun is a generated capture: the model's own event list and the samples as read.
type genRun struct {
	sim   *model.Result
	t, v  []float64
	trueV []float64 // the node voltage at each sample, before the divider and the ADC (model runs only)
}

// simulate runs c under light for durS seconds from startV, sampled at rateHz and read
// through b.
func simulate(t *testing.T, c *model.Circuit, light model.Light, durS, rateHz, startV float64, b board) *genRun {
	t.Helper()
	rd := newReader(b)
	r := &genRun{}
	sim, err := model.Simulate(c, light, &model.Options{DurationS: durS, StartV: startV, RateHz: rateHz,
		OnSample: func(s model.Sample) {
			r.t = append(r.t, s.TS)
			r.v = append(r.v, rd.read(s.V))
			r.trueV = append(r.trueV, s.V)
		}})
	if err != nil {
		t.Fatal(err)
	}
	r.sim = sim
	return r
}

// optionsFor fills the analysis options the way "capcycle analyze --profile" does.
func optionsFor(p *profile.Profile) *analyze.Options {
	return &analyze.Options{Path: "generated", Profile: p, Declared: analyze.Declare(p)}
}

// analyse runs the whole analysis (with the later stages) on the samples.
func analyse(t *testing.T, p *profile.Profile, r *genRun) *analysis.Result {
	t.Helper()
	return analyze.RunSamples(r.t, r.v, optionsFor(p))
}

// captureGap is a stretch cut out of a capture file: the rows with FromS < t < ToS are not
// written and a gap line says so; Lost > 0 marks it as lost samples (the board's counter
// skipped), otherwise the port was unplugged.
type captureGap struct {
	FromS, ToS float64
	Lost       int64
}

// writeCapture writes r as a capture file through logger/capture's Writer (the format of
// "capcycle record", logger/capture/FORMAT.md), with the gaps cut out, and returns its path.
func writeCapture(t *testing.T, p *profile.Profile, b board, r *genRun, gaps []captureGap) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "capture.csv")
	h := &capture.Header{
		Start:    time.Date(2026, 6, 21, 11, 0, 0, 0, time.UTC),
		Source:   "file path=generated",
		Profile:  p.Name,
		Channels: []capture.Channel{{Column: capture.ColVcap, ADC: 0, Bits: b.Bits, RefV: b.RefV, Divider: b.Ratio}},
	}
	w, err := capture.Create(path, h, nil)
	if err != nil {
		t.Fatal(err)
	}
	var lost, ngaps int64
	g := 0
	for i, ts := range r.t {
		for g < len(gaps) && ts >= gaps[g].ToS {
			g++
		}
		if g < len(gaps) && ts > gaps[g].FromS && ts < gaps[g].ToS {
			// Skipped; the gap line goes before the next written row.
			if i > 0 && !(r.t[i-1] > gaps[g].FromS) {
				reason := capture.GapUnplugged
				if gaps[g].Lost > 0 {
					reason = capture.GapLostSamples
				}
				if err := w.GapUntilNextRow(r.t[i-1], reason, gaps[g].Lost); err != nil {
					t.Fatal(err)
				}
				lost += gaps[g].Lost
				ngaps++
			}
			continue
		}
		if err := w.Row(ts, []float64{r.v[i]}); err != nil {
			t.Fatal(err)
		}
	}
	end := r.t[len(r.t)-1]
	if err := w.Close(&capture.Trailer{End: h.Start.Add(time.Duration(end * float64(time.Second))), EndS: end,
		Stats: &capture.Stats{Samples: w.Rows(), Lost: lost, Gaps: ngaps}}); err != nil {
		t.Fatal(err)
	}
	return path
}

// analyseFile runs "capcycle analyze"'s own path: analyze.File on the capture file (the
// held-out check included).
func analyseFile(t *testing.T, p *profile.Profile, path string) *analysis.Result {
	t.Helper()
	res, err := analyze.File(context.Background(), path, optionsFor(p))
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// findingsOf indexes the findings by code.
func findingsOf(res *analysis.Result) map[string]analysis.Finding {
	m := map[string]analysis.Finding{}
	for _, f := range res.Findings {
		m[f.Code] = f
	}
	return m
}

// modelFires counts the model's completed cycles (fire and reset) that end before endS.
func modelFires(sim *model.Result, endS float64) int {
	n := 0
	for _, c := range sim.Cycles {
		if !math.IsNaN(c.FireS) && c.ResetS < endS {
			n++
		}
	}
	return n
}

// profileText reads a profile's text from testdata/profiles.
func profileText(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "profiles", name))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// variant is a profile made from text by replacing lines (old, new pairs, each old found
// exactly once) and appending extra tables.
func variant(t *testing.T, name, text string, pairs []string, extra string) *profile.Profile {
	t.Helper()
	for i := 0; i+1 < len(pairs); i += 2 {
		if n := strings.Count(text, pairs[i]); n != 1 {
			t.Fatalf("profile variant: %q found %d times", pairs[i], n)
		}
		text = strings.Replace(text, pairs[i], pairs[i+1], 1)
	}
	return parseProfile(t, name, text+"\n"+extra)
}

// logFindings writes the findings to the test log (seen with -v or on failure).
func logFindings(t *testing.T, res *analysis.Result) {
	t.Helper()
	full := 0
	for _, c := range res.Cycles {
		if c.Kind == "full" {
			full++
		}
	}
	t.Logf("%d samples, %d cycles (%d full)", res.Samples, len(res.Cycles), full)
	for _, f := range res.Findings {
		t.Logf("  %s %s: %s %v", f.Severity, f.Code, f.Message, f.Numbers)
	}
}
