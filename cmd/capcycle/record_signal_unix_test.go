//go:build unix

package main

import (
	"bytes"
	"context"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"capcycle/logger/loggertest"
)

// TestRecordSIGINT sends the process a real SIGINT mid-recording, through the same
// signal.NotifyContext main uses; the capture must be closed cleanly. The signal goes
// once the recording has said it started (the file is open), however long that takes.
// (Unix only: Windows has no way for a process to send itself SIGINT.)
func TestRecordSIGINT(t *testing.T) {
	b := newRecBoard(t, 1)
	out := filepath.Join(t.TempDir(), "int.csv")
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	var e loggertest.Buffer
	done := make(chan struct{})
	go func() {
		defer close(done)
		for !strings.Contains(e.String(), "recording ") {
			select {
			case <-ctx.Done():
				return
			case <-time.After(10 * time.Millisecond): // polls stderr: an interval, not a limit
			}
		}
		syscall.Kill(os.Getpid(), syscall.SIGINT)
	}()
	var o bytes.Buffer
	code := run(ctx, []string{"record", "--port", b.path, "--out", out}, &env{stdin: strings.NewReader(""), stdout: &o, stderr: &e})
	<-done
	if code != 0 {
		t.Fatalf("exit %d: %s", code, e.String())
	}
	text, _ := os.ReadFile(out)
	if !strings.Contains(string(text), "# end: ") || !strings.HasSuffix(string(text), "\n") {
		t.Fatalf("not closed cleanly:\n%s", text)
	}
	if !strings.Contains(e.String(), "samples") {
		t.Errorf("no status on stderr: %q", e.String())
	}
}
