package logger

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"strings"
	"testing"
	"time"
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

// TestKillRecorderChild is the child of TestKill9ThenAppend: it records until killed.
func TestKillRecorderChild(t *testing.T) {
	port, out := os.Getenv("CAPCYCLE_KILL_PORT"), os.Getenv("CAPCYCLE_KILL_OUT")
	if port == "" {
		t.Skip("child process of TestKill9ThenAppend")
	}
	_, err := Record(context.Background(), &Config{Port: port, Out: out, Silence: time.Minute})
	t.Fatalf("Record returned: %v", err)
}
