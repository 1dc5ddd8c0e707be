//go:build linux

package logger

import (
	"bytes"
	"context"
	"errors"
	"math/rand"
	"os"
	"os/exec"
	"runtime"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"golang.org/x/sys/unix"
)

// TestKill9ThenAppend runs the recorder in a child process on a real pty, kills it with
// SIGKILL while frames are flowing, checks that the file it left parses, and continues
// it with Append: the torn line is cut and the time axis goes on.
func TestKill9ThenAppend(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a child process")
	}
	pb := newPtyBoard(t)
	out := t.TempDir() + "/killed.csv"
	cmd := exec.Command(os.Args[0], "-test.run=^TestKillRecorderChild$")
	cmd.Env = append(os.Environ(), "CAPCYCLE_KILL_PORT="+pb.link, "CAPCYCLE_KILL_OUT="+out)
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	// Feed frames until the file holds flushed rows, then kill mid-stream.
	deadline := time.Now().Add(15 * time.Second)
	for {
		pb.write(pb.slow(nil, 40, func(i int) uint16 { return uint16(100 + i) }))
		time.Sleep(20 * time.Millisecond)
		b, _ := os.ReadFile(out)
		if bytes.Count(b, []byte("\n")) > 200 {
			break
		}
		if time.Now().After(deadline) {
			cmd.Process.Kill()
			cmd.Wait()
			t.Fatalf("the child wrote no rows: %q", b)
		}
	}
	// The child holds the port's lock: a second open is refused with its pid.
	if p, err := Open(pb.link, nil); err == nil {
		p.Close()
		t.Error("the port opened a second time while the child records from it")
	} else if le := (*LockedError)(nil); !errors.As(err, &le) || runtime.GOOS == "linux" && le.Pid != cmd.Process.Pid {
		t.Errorf("second open: %v, want locked by pid %d", err, cmd.Process.Pid)
	}
	go pb.write(pb.slow(nil, 400, func(int) uint16 { return 7 }))
	cmd.Process.Kill()
	cmd.Wait()

	ts, _, rd := readCapture(t, out)
	before := len(ts)
	if before == 0 {
		t.Fatal("nothing survived the kill")
	}
	b, _ := os.ReadFile(out)
	if strings.Contains(string(b), "# end:") {
		t.Fatal("a killed recorder wrote a trailer")
	}
	t.Logf("killed with %d rows on disk, torn last line %v", before, rd.Torn())

	cfg := ptyConfig(pb)
	cfg.Out, cfg.Append = out, true
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 30, func(int) uint16 { return 9 }))
	r.waitFor("30 samples")
	r.stop()
	ts2, _, rd2 := readCapture(t, out)
	if len(ts2) != before+30 || rd2.Torn() {
		t.Fatalf("after append: %d rows (had %d), torn %v", len(ts2), before, rd2.Torn())
	}
	if ts2[before] <= ts[before-1] {
		t.Fatalf("time went back at the append: %v after %v", ts2[before], ts[before-1])
	}
}

// TestKill9LosesUnderASecond kills a recorder child with SIGKILL at random moments while
// a board streams 50 frames a second in real time, and counts the rows it lost: frames
// sent, less the frames still unread in the pseudo-terminal (the recorder never had
// them), less the rows in the file. The promise is at most a second of rows; the
// recorder flushes every 250 ms, so each kill should lose about a quarter of that.
func TestKill9LosesUnderASecond(t *testing.T) {
	if testing.Short() {
		t.Skip("starts child processes")
	}
	pb := newPtyBoard(t)
	seed := time.Now().UnixNano()
	rng := rand.New(rand.NewSource(seed))
	t.Logf("seed %d", seed)
	const framePeriod = 20 * time.Millisecond
	pb.mu.Lock()
	pb.id.SlowHz = 50
	pb.mu.Unlock()
	worst := 0
	for try := 0; try < 6; try++ {
		out := t.TempDir() + "/kill.csv"
		cmd := exec.Command(os.Args[0], "-test.run=^TestKillRecorderChild$")
		cmd.Env = append(os.Environ(), "CAPCYCLE_KILL_PORT="+pb.link, "CAPCYCLE_KILL_OUT="+out)
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		waitFile(t, cmd, out, func(b []byte) bool { return bytes.Contains(b, []byte("time_s,")) })
		// Stream in real time from here (the handshake is over: every frame is recordable).
		var sent atomic.Int64
		stop := make(chan struct{})
		var wg sync.WaitGroup
		wg.Add(1)
		go func() {
			defer wg.Done()
			tick := time.NewTicker(framePeriod)
			defer tick.Stop()
			for {
				select {
				case <-stop:
					return
				case <-tick.C:
				}
				pb.write(pb.slow(nil, 1, func(int) uint16 { return 300 }))
				sent.Add(1)
			}
		}()
		waitFile(t, cmd, out, func(b []byte) bool { return bytes.Count(b, []byte("\n")) > 20 })
		time.Sleep(time.Duration(rng.Int63n(int64(1500 * time.Millisecond))))
		cmd.Process.Kill()
		cmd.Wait()
		close(stop)
		wg.Wait()
		unread := unreadFrames(t, pb)
		ts, _, _ := readCapture(t, out)
		lost := int(sent.Load()) - unread - len(ts)
		t.Logf("kill %d: %d frames sent, %d unread in the pty, %d rows on disk: %d lost (%v)",
			try, sent.Load(), unread, len(ts), lost, time.Duration(lost)*framePeriod)
		if lost < 0 {
			t.Fatalf("kill %d: more rows than frames", try)
		}
		worst = max(worst, lost)
	}
	if d := time.Duration(worst) * framePeriod; d > time.Second {
		t.Errorf("a kill -9 lost %v of rows; the promise is at most 1 s", d)
	}
}

// waitFile polls the child's capture file until ok holds (or the child dies).
func waitFile(t *testing.T, cmd *exec.Cmd, path string, ok func([]byte) bool) {
	t.Helper()
	deadline := time.Now().Add(60 * time.Second)
	for time.Now().Before(deadline) {
		if b, err := os.ReadFile(path); err == nil && ok(b) {
			return
		}
		time.Sleep(20 * time.Millisecond)
	}
	cmd.Process.Kill()
	cmd.Wait()
	b, _ := os.ReadFile(path)
	t.Fatalf("the child's file never got there: %q", b)
}

// unreadFrames drains the frames the recorder never read from the board's pty (its input
// queue outlives the killed reader, since the test holds the device side open) and
// counts them; a frame the recorder read in part counts as unread.
func unreadFrames(t *testing.T, pb *ptyBoard) int {
	t.Helper()
	pb.mu.Lock()
	s := pb.slave
	pb.mu.Unlock()
	n := 0
	for {
		q, err := unix.IoctlGetInt(int(s.Fd()), unix.TIOCINQ)
		if err != nil {
			t.Fatal(err)
		}
		if q == 0 {
			return n
		}
		b := make([]byte, q)
		m, err := s.Read(b)
		if err != nil {
			t.Fatal(err)
		}
		n += bytes.Count(b[:m], []byte("\n"))
	}
}

// TestKillRecorderChild is the child of TestKill9ThenAppend: it records until killed.
func TestKillRecorderChild(t *testing.T) {
	port, out := os.Getenv("CAPCYCLE_KILL_PORT"), os.Getenv("CAPCYCLE_KILL_OUT")
	if port == "" {
		t.Skip("child process of TestKill9ThenAppend")
	}
	_, err := Record(context.Background(), &Config{Port: port, Out: out, Silence: time.Minute})
	t.Fatalf("Record returned: %v", err)
}
