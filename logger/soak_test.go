package logger

import (
	"os"
	"runtime"
	"testing"
	"time"
)

// soak streams hours of device time (10 Hz slow rows, and a burst of 200 fast samples
// every 10 minutes) through a real pty as fast as the link takes it, and checks that no
// sample is lost and that the heap after the last hour is not larger than after the
// first by more than slack.
func soak(t *testing.T, hours int) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	cfg.Silence = time.Minute
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	var heap1 uint64
	var buf []byte
	sent := int64(0)
	for h := 0; h < hours; h++ {
		for m := 0; m < 6; m++ { // 10-minute blocks: 599.6 s of slow rows, 0.4 s of burst
			buf = pb.slow(buf[:0], 5996, func(i int) uint16 { return uint16(1000 + i%2000) })
			buf = pb.burst(buf, 200)
			pb.write(buf)
			sent += 5996 + 200
		}
		if h == 0 {
			heap1 = heapNow()
		}
	}
	r.waitFor(itoa(sent) + " samples")
	heapN := heapNow()
	sum := r.stop()
	if sum.Stats.Lost != 0 || sum.Stats.BadFrames != 0 || sum.Stats.Samples != sent {
		t.Errorf("stats %+v, sent %d", sum.Stats, sent)
	}
	st, _ := os.Stat(cfg.Out)
	t.Logf("%d h: %d samples, file %d bytes, heap after hour 1 %d B, after hour %d %d B", hours, sent, st.Size(), heap1, hours, heapN)
	const slack = 4 << 20
	if heapN > heap1+slack {
		t.Errorf("heap grew from %d to %d bytes over %d hours", heap1, heapN, hours)
	}
	ts, _, _ := readCapture(t, cfg.Out)
	if int64(len(ts)) != sent {
		t.Errorf("%d rows in the file, %d sent", len(ts), sent)
	}
	if d := ts[len(ts)-1] - ts[0]; d < float64(hours)*3600-1 {
		t.Errorf("capture spans %v s, want %d h", d, hours)
	}
}

func heapNow() uint64 {
	runtime.GC()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	return ms.HeapInuse
}

func itoa(n int64) string { return string(appendInt(nil, n)) }

func appendInt(b []byte, n int64) []byte {
	if n >= 10 {
		b = appendInt(b, n/10)
	}
	return append(b, byte('0'+n%10))
}

// TestSoakHour is the quick form: 2 hours of device time.
func TestSoakHour(t *testing.T) { soak(t, 2) }

// TestSoak24h is the 24-hour capture, accelerated: about 6 s (10 s under -race) on two
// cores, so it is skipped with -short.
func TestSoak24h(t *testing.T) {
	if testing.Short() {
		t.Skip("24-hour accelerated capture; run without -short")
	}
	soak(t, 24)
}
