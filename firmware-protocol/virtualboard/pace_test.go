//go:build unix

package virtualboard

import (
	"context"
	"errors"
	"math"
	"sync"
	"testing"
	"time"

	"capcycle/firmware-protocol/wire"
)

// stallClock is a wall clock that moves only when the board sleeps on it, and that
// jumps ahead by Stall on every Every-th sleep, as a busy machine's scheduler would
// leave the board's goroutine waiting. It makes Speed > 0 runs quick and repeatable.
type stallClock struct {
	mu    sync.Mutex
	now   time.Time
	n     int
	Every int
	Stall time.Duration
}

func newStallClock(every int, stall time.Duration) *stallClock {
	return &stallClock{now: time.Unix(1e9, 0), Every: every, Stall: stall}
}

func (c *stallClock) Now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.now
}

func (c *stallClock) Sleep(d time.Duration) {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.n++
	c.now = c.now.Add(d)
	if c.Every > 0 && c.n%c.Every == 0 {
		c.now = c.now.Add(c.Stall)
	}
}

// runBoard opens a board, opens a host on it, waits until the board sees the host,
// and then runs the board. It returns the board, the host and Run's result.
func runBoard(t *testing.T, cfg *Config) (*Board, *host, <-chan error) {
	t.Helper()
	b, err := Open(cfg)
	if err != nil {
		t.Fatal(err)
	}
	h := openHost(t, b.Path())
	b.mu.Lock()
	p := b.port
	b.mu.Unlock()
	for !p.present.Load() { // the board's reader sees the host on its next read
		time.Sleep(time.Millisecond)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- b.Run(ctx) }()
	t.Cleanup(func() {
		cancel()
		b.Close()
	})
	return b, h, done
}

// readAll reads frames until Run has ended and the host has read every frame the
// board wrote; each, if not nil, sees every frame as it arrives.
func readAll(t *testing.T, b *Board, h *host, done <-chan error, each func(wire.Frame)) []wire.Frame {
	t.Helper()
	type got struct {
		f   wire.Frame
		err error
	}
	frames := make(chan got, 256)
	go func() {
		for {
			f, err := h.dec.Next()
			var fe *wire.FrameError
			if errors.As(err, &fe) {
				continue
			}
			frames <- got{f, err}
			if err != nil {
				return
			}
		}
	}()
	var fs []wire.Frame
	ended := false
	for !ended || int64(len(fs)) < b.Stats().Frames {
		select {
		case err := <-done:
			if err != nil {
				t.Fatalf("Run: %v", err)
			}
			ended, done = true, nil
		case g := <-frames:
			if g.err != nil {
				t.Fatalf("after %d frames: %v", len(fs), g.err)
			}
			fs = append(fs, g.f)
			if each != nil {
				each(g.f)
			}
		}
	}
	return fs
}

// ramp is a source rising 10 mV per world second for durS seconds.
func ramp(durS float64) Source {
	return SourceFunc(func(t float64, v []float64) bool {
		v[0] = 0.01 * t
		return t <= durS
	})
}

func TestSamplesTakenAtTheirInstantDespiteStalls(t *testing.T) {
	// The board paces against a clock that stalls for 2 s of wall time (40 s of
	// world time at Speed 20) every 50 rounds. Every A frame must still hold the
	// ramp's value at its own instant, not at the end of the round that made it:
	// no held values stamped as fresh samples.
	clk := newStallClock(50, 2*time.Second)
	const speed = 20
	cfg := &Config{Source: ramp(300), Bits: 10, EBits: 10, Thr: -1, Speed: speed, Clock: clk}
	b, h, done := runBoard(t, cfg)
	fs := readAll(t, b, h, done, nil)
	// 10 bits on 5 V: 4.88 mV a count, so the ramp climbs a count in 0.49 s.
	lsb := 5.0 / 1024
	n := 0
	for _, f := range fs {
		a, ok := f.(Average)
		if !ok {
			continue
		}
		n++
		// The mean of the fast samples of the interval: the ramp at its middle,
		// truncated by the converter (each conversion floors).
		mid := float64(a.TimeUS)/1e6 + float64(a.N-1)/2/500
		want := 0.01 * mid / lsb
		if got := float64(a.Mean[0]); math.Abs(got-(want-0.5)) > 1 {
			t.Fatalf("A seq %d at %.3f s holds %v counts, want the ramp's %.1f there", a.Seq, mid, got, want)
		}
	}
	if n < 2900 {
		t.Errorf("%d A frames over 300 s at 10 Hz; want about 3000", n)
	}
	st := b.Stats()
	if st.SlipS < 100 || st.Dropped != 0 {
		t.Errorf("stats %+v: want world time slipped through the stalls (tens of seconds each) and nothing dropped", st)
	}
}

// Average is wire.Average, for brevity.
type Average = wire.Average

// seqs returns the sequence numbers of the sample frames in fs.
func seqs(fs []wire.Frame) []uint32 {
	var out []uint32
	for _, f := range fs {
		switch x := f.(type) {
		case wire.Sample:
			out = append(out, x.Seq)
		case wire.Average:
			out = append(out, x.Seq)
		}
	}
	return out
}

func TestLinkDropsDependOnWorldTimeOnly(t *testing.T) {
	// A 9600-baud link at Speed 4 carries 240 bytes a world second; bursts of 500 Hz
	// S frames need several kilobytes, so the board drops frames. Which it drops is
	// decided in world time: the same with a steady clock and with one that stalls.
	src := func() Source {
		// A square wave: a burst every 2 s.
		return SourceFunc(func(t float64, v []float64) bool {
			v[0] = 1
			if math.Mod(t, 2) < 1 {
				v[0] = 2
			}
			return t <= 20
		})
	}
	run := func(clk Clock) (Stats, []uint32) {
		cfg := &Config{Source: src(), Speed: 4, Baud: 9600, TxQueue: 16, Clock: clk}
		b, h, done := runBoard(t, cfg)
		fs := readAll(t, b, h, done, nil)
		return b.Stats(), seqs(fs)
	}
	steady, steadySeqs := run(newStallClock(0, 0))
	stalled, stalledSeqs := run(newStallClock(7, 500*time.Millisecond))
	if steady.Dropped == 0 {
		t.Fatalf("stats %+v: the link should have dropped frames", steady)
	}
	if stalled.Dropped != steady.Dropped || stalled.Samples != steady.Samples {
		t.Errorf("dropped %d of %d with stalls, %d of %d without: want the same", stalled.Dropped, stalled.Samples, steady.Dropped, steady.Samples)
	}
	if len(stalledSeqs) != len(steadySeqs) {
		t.Fatalf("the host got %d sample frames with stalls, %d without", len(stalledSeqs), len(steadySeqs))
	}
	for i := range steadySeqs {
		if stalledSeqs[i] != steadySeqs[i] {
			t.Fatalf("sample frame %d: seq %d with stalls, %d without", i, stalledSeqs[i], steadySeqs[i])
		}
	}
	if stalled.SlipS == 0 {
		t.Errorf("stats %+v: the stalls should have let world time slip", stalled)
	}
}

func TestLinkCarriesItsBudget(t *testing.T) {
	// At the Speed Budget gives, a run bursting all the time drops nothing; at four
	// times that speed the same run drops frames, and says so.
	base := Config{Channels: 2, SlowHz: 10, FastHz: 100, Thr: 1, Pre: -1, Post: 4, Baud: 115200, TxQueue: 16}
	lb, err := Budget(&base)
	if err != nil {
		t.Fatal(err)
	}
	// S frames of 2 channels at 12 bits are at most 41 bytes ("!S 4294967295
	// 4294967295 4095 4095 *XXXX\n"): 4100 B/s from the bursts alone.
	if lb.PeakBytesPerS < 4100 || lb.LinkBytesPerS != 11520 || lb.MaxSpeed > 11520.0/4100 {
		t.Fatalf("budget %+v", lb)
	}
	noisy := func() Source {
		i := 0
		return SourceFunc(func(t float64, v []float64) bool {
			i++
			v[0], v[1] = float64(i%2), 1 // every sample moves: one long burst
			return t <= 30
		})
	}
	for _, tc := range []struct {
		name  string
		speed float64
		drops bool
	}{
		{"at the budget", lb.MaxSpeed, false},
		{"four times over", 4 * lb.MaxSpeed, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cfg := base
			cfg.Source, cfg.Speed, cfg.Clock = noisy(), tc.speed, newStallClock(0, 0)
			b, h, done := runBoard(t, &cfg)
			readAll(t, b, h, done, nil)
			st := b.Stats()
			if st.Bursts == 0 || (st.Dropped > 0) != tc.drops {
				t.Errorf("speed %.3g: stats %+v; want drops %v", tc.speed, st, tc.drops)
			}
		})
	}
}
