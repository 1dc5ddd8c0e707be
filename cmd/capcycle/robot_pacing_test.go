//go:build unix

package main

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"capcycle/analyze/analysis"
	"capcycle/firmware-protocol/virtualboard"
)

// jumpClock is the system clock with stalls: every every-th sleep, the board finds on
// waking that by more wall time has passed than it slept, as a busy machine's scheduler
// leaves a goroutine waiting.
type jumpClock struct {
	mu    sync.Mutex
	extra time.Duration
	n     int
	every int
	by    time.Duration
}

func (c *jumpClock) Now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	return time.Now().Add(c.extra)
}

func (c *jumpClock) Sleep(d time.Duration) {
	time.Sleep(d)
	c.mu.Lock()
	defer c.mu.Unlock()
	c.n++
	if c.n%c.every == 0 {
		c.extra += c.by
	}
}

// stallingSource holds the board's goroutine up now and then (really sleeping) while
// it takes a sample: the scheduling delays of a loaded machine, made on purpose.
type stallingSource struct {
	src virtualboard.Source
	rng *rand.Rand
}

func (s *stallingSource) Sample(t float64, v []float64) bool {
	if s.rng.IntN(1500) == 0 {
		time.Sleep(time.Duration(1+s.rng.IntN(20)) * time.Millisecond)
	}
	return s.src.Sample(t, v)
}

// stallingWriter holds the board's writer up now and then (really sleeping) as it
// passes the bytes on: a host that is slow to read, as on a loaded machine.
type stallingWriter struct {
	w   io.Writer
	rng *rand.Rand
}

func (s *stallingWriter) Write(p []byte) (int, error) {
	if s.rng.IntN(20) == 0 {
		time.Sleep(5 * time.Millisecond)
	}
	return s.w.Write(p)
}

// demoVerdicts runs the demo (a quarter of an hour of model time from 10:00) with the extra
// flags and the board hook, and returns for each scenario its verdict's first word(s)
// (before the colon) and its findings' codes and severities, and the printed output.
func demoVerdicts(t *testing.T, hook func(*virtualboard.Config), extra ...string) (map[string]string, string) {
	t.Helper()
	demoBoardHook = hook
	t.Cleanup(func() { demoBoardHook = nil })
	dir := t.TempDir()
	var stdout, stderr bytes.Buffer
	// A guard against a hang only; the run waits on its own events.
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Minute)
	defer cancel()
	args := append([]string{"demo", "--out", dir, "--hours", "0.25", "--start", "10:00"}, extra...)
	if code := run(ctx, args, &env{stdin: strings.NewReader(""), stdout: &stdout, stderr: &stderr}); code != 0 {
		t.Fatalf("demo %v: exit %d\nstdout:\n%s\nstderr:\n%s", extra, code, stdout.String(), stderr.String())
	}
	out := map[string]string{}
	for _, name := range []string{"wren", "fern"} {
		raw, err := os.ReadFile(filepath.Join(dir, name+".analysis.json"))
		if err != nil {
			t.Fatal(err)
		}
		var r analysis.Result
		if err := json.Unmarshal(raw, &r); err != nil {
			t.Fatal(err)
		}
		var findings []string
		for _, f := range r.Findings {
			findings = append(findings, string(f.Severity)+" "+f.Code)
		}
		slices.Sort(findings)
		for _, line := range strings.Split(stdout.String(), "\n") {
			if rest, ok := strings.CutPrefix(line, r.Source.Profile+": "); ok {
				head, _, _ := strings.Cut(rest, ":")
				out[name] = head + " | " + strings.Join(findings, ", ")
			}
		}
	}
	return out, stdout.String()
}

// TestDemoVerdictsIndependentOfLoad: the demo gives the same verdicts and the same
// findings when its board is held up now and then (stalls in its source and in its
// writer, as a loaded machine's scheduler makes), both at its own pace (as fast as the
// recorder reads) and at 300x real time on a clock that jumps ahead by five seconds
// every 40 rounds; and no run loses a sample.
func TestDemoVerdictsIndependentOfLoad(t *testing.T) {
	if testing.Short() {
		t.Skip("three demo runs")
	}
	calm, calmOut := demoVerdicts(t, nil)
	if !strings.HasPrefix(calm["wren"], "Works |") || !strings.HasPrefix(calm["fern"], "Stalls |") {
		t.Fatalf("calm run: verdicts %v, want Wren works and Fern stalls\n%s", calm, calmOut)
	}
	cases := []struct {
		name  string
		extra []string
		hook  func(*virtualboard.Config)
	}{
		{"stalls at the recorder's pace", nil, func(c *virtualboard.Config) {
			c.Source = &stallingSource{src: c.Source, rng: rand.New(rand.NewPCG(1, 2))}
			c.Tap = &stallingWriter{w: c.Tap, rng: rand.New(rand.NewPCG(5, 6))}
		}},
		{"stalls and clock jumps at 300x", []string{"--speed", "300"}, func(c *virtualboard.Config) {
			c.Source = &stallingSource{src: c.Source, rng: rand.New(rand.NewPCG(3, 4))}
			c.Tap = &stallingWriter{w: c.Tap, rng: rand.New(rand.NewPCG(7, 8))}
			c.Clock = &jumpClock{every: 40, by: 5 * time.Second}
		}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			got, out := demoVerdicts(t, tc.hook, tc.extra...)
			for _, name := range []string{"wren", "fern"} {
				if got[name] != calm[name] {
					t.Errorf("%s: verdict %q, without stalls %q", name, got[name], calm[name])
				}
			}
			if strings.Contains(out, "the recorder lost") {
				t.Errorf("the recorder lost samples:\n%s", out)
			}
		})
	}
}
