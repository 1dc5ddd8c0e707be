package logger

import (
	"context"
	"math"
	"path/filepath"
	"testing"
	"time"

	"capcycle/firmware-protocol/virtualboard"
	"capcycle/firmware-protocol/wire"
)

// solarEngine is a sawtooth like a voltage-triggered solar engine's: the capacitor
// charges toward 3.2 V with a 20 s time constant, fires at 2.7 V and is dumped to 1.6 V
// in 50 ms, then charges again. (Invented demo numbers, not a measurement.)
type solarEngine struct {
	v, last float64
	firing  bool
	fires   int
	endS    float64
}

func (s *solarEngine) Sample(t float64, v []float64) bool {
	if t > s.endS {
		return false
	}
	dt := t - s.last
	s.last = t
	if s.firing {
		s.v -= dt * (1.1 / 0.05)
		if s.v <= 1.6 {
			s.v, s.firing = 1.6, false
		}
	} else {
		s.v += (3.2 - s.v) * (1 - math.Exp(-dt/20))
		if s.v >= 2.7 {
			s.firing = true
			s.fires++
		}
	}
	v[0] = s.v // the board's input; its 1:2 divider is in Config.Div
	return true
}

func openVirtual(t *testing.T, cfg *virtualboard.Config) *virtualboard.Board {
	t.Helper()
	cfg.Link = filepath.Join(t.TempDir(), "ttyVIRTUAL")
	b, err := virtualboard.Open(cfg)
	if err != nil {
		t.Skip("virtual board:", err)
	}
	t.Cleanup(func() { b.Close() })
	return b
}

// TestVirtualRobot records a virtual board running a solar-engine sawtooth: no sample
// lost, slow and burst rows mixed, every fire seen by the live counter.
func TestVirtualRobot(t *testing.T) {
	src := &solarEngine{v: 1.6, endS: 120}
	vb := openVirtual(t, &virtualboard.Config{Source: src, Div: []float64{0.5}, NoiseLSB: 0.5})
	cfg := &Config{Port: vb.Path(), Silence: time.Minute}
	r := startRecording(t, cfg)
	runDone := make(chan error, 1)
	go func() { runDone <- vb.Run(context.Background()) }()
	select {
	case err := <-runDone:
		if err != nil {
			t.Fatal(err)
		}
	case <-time.After(60 * time.Second):
		t.Fatal("the virtual board did not finish")
	}
	time.Sleep(300 * time.Millisecond) // let the last bytes arrive
	sum := r.stop()
	st := vb.Stats()
	if sum.Stats.Lost != 0 || sum.Stats.BadFrames != 0 {
		t.Errorf("stats %+v (board %+v)", sum.Stats, st)
	}
	if sum.Stats.Samples < st.Samples*9/10 {
		t.Errorf("%d rows of %d samples made", sum.Stats.Samples, st.Samples)
	}
	if sum.Cycles != src.fires {
		t.Errorf("live counter saw %d fires, the source made %d", sum.Cycles, src.fires)
	}
	ts, vs, _ := readCapture(t, cfg.Out)
	fast, slow := 0, 0
	maxV := 0.0
	for i := 1; i < len(ts); i++ {
		switch dt := ts[i] - ts[i-1]; {
		case math.Abs(dt-0.002) < 1e-5:
			fast++
		case math.Abs(dt-0.1) < 1e-5:
			slow++
		}
		maxV = math.Max(maxV, vs[i])
	}
	// Bursts at 500 Hz (2 ms apart) between slow rows at 10 Hz (100 ms apart).
	if fast < 100 || slow < 500 {
		t.Errorf("%d steps of 2 ms and %d of 100 ms", fast, slow)
	}
	if math.Abs(maxV-2.7) > 0.05 {
		t.Errorf("highest voltage %v, want the 2.7 V trigger", maxV)
	}
	t.Logf("%d rows, %d fires, board %+v, drift %+v", len(ts), src.fires, st, sum.Clock)
}

// TestVirtualFaults: bit errors on the wire, an unplug and a reset of a virtual board
// during one recording.
func TestVirtualFaults(t *testing.T) {
	src := &solarEngine{v: 1.6, endS: 1e9}
	vb := openVirtual(t, &virtualboard.Config{Source: src, Div: []float64{0.5}, Speed: 20, BitErrorRate: 1e-4})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go vb.Run(ctx)
	cfg := &Config{Port: vb.Path(), RetryMin: 20 * time.Millisecond, RetryMax: 200 * time.Millisecond}
	r := startRecording(t, cfg)
	r.waitFor("samples")
	time.Sleep(time.Second)
	vb.Unplug()
	time.Sleep(300 * time.Millisecond)
	if err := vb.Plug(); err != nil {
		t.Fatal(err)
	}
	r.waitFor("1 reconnects")
	time.Sleep(500 * time.Millisecond)
	vb.Reset(wire.ResetPin)
	time.Sleep(time.Second)
	sum := r.stop()
	cancel()
	ts, _, rd := readCapture(t, cfg.Out)
	if int64(len(ts)) != sum.Stats.Samples {
		t.Errorf("%d rows, %d counted", len(ts), sum.Stats.Samples)
	}
	if sum.Reconnects != 1 || sum.Segments < 2 {
		t.Errorf("summary %+v", sum)
	}
	var unplugged bool
	for _, g := range rd.Gaps() {
		unplugged = unplugged || g.Reason == "unplugged"
	}
	if !unplugged || len(rd.Resets()) == 0 {
		t.Errorf("gaps %+v resets %+v", rd.Gaps(), rd.Resets())
	}
	t.Logf("%+v; board %+v", sum.Stats, vb.Stats())
}
