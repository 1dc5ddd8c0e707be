package logger

import (
	"strings"
	"testing"
	"time"
)

func TestStatusLineTerminal(t *testing.T) {
	var b strings.Builder
	l := newStatusLine(&b, true, time.Minute)
	t0 := time.Unix(0, 0)
	// 100 updates over 1 s: at most 4 redraws a second (plus the first).
	for i := 0; i < 100; i++ {
		l.update(Snapshot{Samples: int64(i)}, t0.Add(time.Duration(i)*10*time.Millisecond))
	}
	if n := strings.Count(b.String(), "\r"); n > 5 || n < 4 {
		t.Errorf("%d redraws in 1 s", n)
	}
	if !strings.HasSuffix(b.String(), "\x1b[K") {
		t.Errorf("a redraw does not clear the rest of the line: %q", b.String())
	}
}

func TestStatusLinePlain(t *testing.T) {
	var b strings.Builder
	l := newStatusLine(&b, false, time.Minute)
	t0 := time.Unix(0, 0)
	for i := 0; i <= 600; i++ { // 10 minutes, an update a second
		l.update(Snapshot{Samples: int64(i)}, t0.Add(time.Duration(i)*time.Second))
	}
	l.done(Snapshot{Samples: 601})
	lines := strings.Split(strings.TrimSuffix(b.String(), "\n"), "\n")
	if len(lines) != 11 || strings.Contains(b.String(), "\r") {
		t.Errorf("%d lines in 10 min (want 10 and the last):\n%s", len(lines), b.String())
	}
	for _, l := range lines {
		if !strings.HasPrefix(l, "record: ") {
			t.Errorf("line %q", l)
		}
	}
}

func TestSnapshotString(t *testing.T) {
	s := Snapshot{Elapsed: 3723 * time.Second, VoltsNow: 2.4151, HaveVolts: true, Cycles: 12,
		LastPeriodS: 41.25, HavePeriod: true, Samples: 30211, FileBytes: 1258291}
	want := "2.415 V charging | 12 cycles, last 41.2 s | 30211 samples, 0 lost, 0 bad | 1.2 MiB | 01:02:03"
	if got := s.String(); got != want {
		t.Errorf("got  %q\nwant %q", got, want)
	}
}
