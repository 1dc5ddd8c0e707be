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

// TestSnapshotLinkStates: a board that is silent, gone or not yet answering is said so
// first, and the last voltage is marked as the last, not shown as live.
func TestSnapshotLinkStates(t *testing.T) {
	live := Snapshot{Elapsed: 75 * time.Second, VoltsNow: 2.4151, HaveVolts: true, Cycles: 3, Samples: 750, FileBytes: 2048}
	for _, tc := range []struct {
		link  LinkState
		for_  time.Duration
		tries int
		want  string
	}{
		{LinkQuiet, 12 * time.Second, 0, "board silent for 12 s, still listening | last 2.415 V | 3 cycles | 750 samples, 0 lost, 0 bad | 2.0 KiB | 00:01:15"},
		{LinkLost, 4500 * time.Millisecond, 3, "board gone for 4 s, reopening the port (try 3) | last 2.415 V | 3 cycles | 750 samples, 0 lost, 0 bad | 2.0 KiB | 00:01:15"},
		{LinkStarting, 8 * time.Second, 8, "asking the board for its identity (8 s, try 8) | 00:01:15"},
	} {
		s := live
		s.Link, s.For, s.Tries = tc.link, tc.for_, tc.tries
		if got := s.String(); got != tc.want {
			t.Errorf("got  %q\nwant %q", got, tc.want)
		}
	}
}
