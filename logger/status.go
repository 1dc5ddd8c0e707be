package logger

import (
	"fmt"
	"io"
	"strings"
	"time"
)

// Snapshot is the live state of a recording, as the status line shows it.
type Snapshot struct {
	Elapsed     time.Duration
	Port        string
	VoltsNow    float64 // the last vcap_v written
	HaveVolts   bool
	Firing      bool // the simple fire detector says the capacitor is discharging
	Cycles      int  // fires seen so far
	LastPeriodS float64
	HavePeriod  bool
	Samples     int64 // rows written
	Lost        int64 // samples lost to sequence gaps
	BadFrames   int64 // damaged frames (or bad text lines) dropped
	FileBytes   int64
	Reconnects  int

	// Link is what the link to the board is doing; For is how long it has been doing it
	// (LinkQuiet: since the last byte; LinkLost: since the port was lost; LinkStarting:
	// since the first identity request) and Tries the reopen or handshake attempts.
	Link  LinkState
	For   time.Duration
	Tries int
}

// LinkState is the state of the link to the board as the status line shows it.
type LinkState int

// Link states.
const (
	LinkFlowing  LinkState = iota // bytes arrive
	LinkQuiet                     // the port is open but nothing came for a while (QuietAfter)
	LinkLost                      // the port failed or went silent too long; it is being reopened
	LinkStarting                  // the board has not sent its identity yet (start of a recording)
)

// QuietAfter is how long the port may stay silent before the status line says so: a few
// sample periods of the slowest rate a board sends at, and under 3 s so that a board that
// went away shows within that.
const QuietAfter = 2 * time.Second

// String is the status line: "2.415 V charging | 12 cycles, last 41.2 s | 30211 samples,
// 0 lost, 0 bad | 1.2 MB | 01:02:03". While the board is silent, lost or not yet
// answering, the line starts with that state and the last voltage is shown as the last:
// "board silent for 12 s, still listening | last 2.415 V | ...".
func (s Snapshot) String() string {
	var b strings.Builder
	if s.Link == LinkStarting {
		// No file yet: only the state and the clock.
		fmt.Fprintf(&b, "asking the board for its identity (%d s, try %d) | %s", int64(s.For/time.Second), s.Tries, clockString(s.Elapsed))
		return b.String()
	}
	if s.Link != LinkFlowing {
		secs := int64(s.For / time.Second)
		switch s.Link {
		case LinkQuiet:
			fmt.Fprintf(&b, "board silent for %d s, still listening", secs)
		case LinkLost:
			fmt.Fprintf(&b, "board gone for %d s, reopening the port (try %d)", secs, s.Tries)
		}
		if s.HaveVolts {
			fmt.Fprintf(&b, " | last %.3f V", s.VoltsNow)
		}
	} else if s.HaveVolts {
		state := "charging"
		if s.Firing {
			state = "firing"
		}
		fmt.Fprintf(&b, "%.3f V %s", s.VoltsNow, state)
	} else {
		b.WriteString("waiting for samples")
	}
	fmt.Fprintf(&b, " | %d cycles", s.Cycles)
	if s.HavePeriod {
		fmt.Fprintf(&b, ", last %.1f s", s.LastPeriodS)
	}
	fmt.Fprintf(&b, " | %d samples, %d lost, %d bad", s.Samples, s.Lost, s.BadFrames)
	if s.Reconnects > 0 {
		fmt.Fprintf(&b, ", %d reconnects", s.Reconnects)
	}
	fmt.Fprintf(&b, " | %s | %s", sizeString(s.FileBytes), clockString(s.Elapsed))
	return b.String()
}

func sizeString(n int64) string {
	switch {
	case n >= 1<<30:
		return fmt.Sprintf("%.2f GiB", float64(n)/(1<<30))
	case n >= 1<<20:
		return fmt.Sprintf("%.1f MiB", float64(n)/(1<<20))
	case n >= 1<<10:
		return fmt.Sprintf("%.1f KiB", float64(n)/(1<<10))
	}
	return fmt.Sprintf("%d B", n)
}

func clockString(d time.Duration) string {
	s := int64(d / time.Second)
	return fmt.Sprintf("%02d:%02d:%02d", s/3600, s/60%60, s%60)
}

// statusLine draws Snapshots: on a terminal one line redrawn in place at most 4 times a
// second; elsewhere a plain line every `every`; with a nil writer, nothing.
type statusLine struct {
	w     io.Writer
	term  bool
	every time.Duration
	last  time.Time
}

// minRedraw keeps a terminal's status line to at most 4 updates a second.
const minRedraw = 250 * time.Millisecond

func newStatusLine(w io.Writer, term bool, every time.Duration) *statusLine {
	return &statusLine{w: w, term: term, every: every}
}

func (l *statusLine) update(s Snapshot, now time.Time) {
	if l.w == nil {
		return
	}
	if l.last.IsZero() {
		l.last = now
		if !l.term {
			return
		}
	}
	if l.term {
		if now.Sub(l.last) < minRedraw && !l.last.Equal(now) {
			return
		}
		l.last = now
		fmt.Fprintf(l.w, "\r%s\x1b[K", s)
		return
	}
	if now.Sub(l.last) >= l.every {
		l.last = now
		fmt.Fprintf(l.w, "record: %s\n", s)
	}
}

// done prints the last state and ends the line.
func (l *statusLine) done(s Snapshot) {
	if l.w == nil {
		return
	}
	if l.term {
		fmt.Fprintf(l.w, "\r%s\x1b[K\n", s)
		return
	}
	fmt.Fprintf(l.w, "record: %s\n", s)
}

// note prints one event line (the file opened, the port lost or back), above the status
// line on a terminal.
func (l *statusLine) note(format string, a ...any) {
	if l.w == nil {
		return
	}
	msg := fmt.Sprintf(format, a...)
	if l.term {
		fmt.Fprintf(l.w, "\r%s\x1b[K\n", msg)
		return
	}
	fmt.Fprintf(l.w, "record: %s\n", msg)
}
