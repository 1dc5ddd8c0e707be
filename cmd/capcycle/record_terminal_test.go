//go:build unix

package main

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/creack/pty"
)

// TestRecordChild is the child process of the terminal tests: it runs main with the
// arguments in CAPCYCLE_CHILD_ARGS (one a line), as the capcycle binary would, signal
// handling included.
func TestRecordChild(t *testing.T) {
	a := os.Getenv("CAPCYCLE_CHILD_ARGS")
	if a == "" {
		t.Skip("child process of the terminal tests")
	}
	os.Args = append([]string{"capcycle"}, strings.Split(a, "\n")...)
	main()
}

// terminal is a capcycle process on a real pseudo-terminal (its controlling terminal, as
// in a login) and what it has written to the screen.
type terminal struct {
	t    *testing.T
	cmd  *exec.Cmd
	ptmx *os.File
	mu   sync.Mutex
	out  bytes.Buffer
	read chan struct{} // closed when the screen's reader ends
}

func startTerminal(t *testing.T, args ...string) *terminal {
	t.Helper()
	if testing.Short() {
		t.Skip("starts a child process")
	}
	cmd := exec.Command(os.Args[0], "-test.run=^TestRecordChild$")
	cmd.Env = append(os.Environ(), "CAPCYCLE_CHILD_ARGS="+strings.Join(args, "\n"))
	ptmx, err := pty.StartWithSize(cmd, &pty.Winsize{Rows: 24, Cols: 200})
	if err != nil {
		t.Skip("no pseudo-terminals:", err)
	}
	tm := &terminal{t: t, cmd: cmd, ptmx: ptmx, read: make(chan struct{})}
	go func() {
		defer close(tm.read)
		buf := make([]byte, 4096)
		for {
			n, err := ptmx.Read(buf)
			tm.mu.Lock()
			tm.out.Write(buf[:n])
			tm.mu.Unlock()
			if err != nil {
				return
			}
		}
	}()
	t.Cleanup(func() {
		cmd.Process.Kill()
		ptmx.Close()
	})
	return tm
}

// line is the status line as the screen shows it now: the last line, as redrawn after
// its last carriage return, without the erase-to-end code.
func (tm *terminal) line() string {
	tm.mu.Lock()
	s := strings.ReplaceAll(tm.out.String(), "\r\n", "\n")
	tm.mu.Unlock()
	s = s[strings.LastIndexByte(s, '\n')+1:]
	s = s[strings.LastIndexByte(s, '\r')+1:]
	return strings.ReplaceAll(s, "\x1b[K", "")
}

func (tm *terminal) screen() string {
	tm.mu.Lock()
	defer tm.mu.Unlock()
	return tm.out.String()
}

// waitLine polls the status line until it matches re, and returns how long that took.
// The deadline is generous: the test waits on the screen, not on a time budget.
func (tm *terminal) waitLine(re string) time.Duration {
	tm.t.Helper()
	rx := regexp.MustCompile(re)
	start := time.Now()
	for time.Since(start) < 60*time.Second {
		if rx.MatchString(tm.line()) {
			return time.Since(start)
		}
		time.Sleep(20 * time.Millisecond)
	}
	tm.t.Fatalf("no %q on the screen within 60 s; screen:\n%s", re, tm.screen())
	return 0
}

// wait waits for the process to end and returns its exit code (-1 for a signal).
func (tm *terminal) wait() int {
	tm.t.Helper()
	done := make(chan struct{})
	go func() {
		select {
		case <-done:
		case <-time.After(60 * time.Second):
			tm.cmd.Process.Kill()
		}
	}()
	tm.cmd.Wait()
	close(done)
	return tm.cmd.ProcessState.ExitCode()
}

// TestRecordTerminalBoardSilentThenGone drives "capcycle record" on a real terminal: when
// the board stops sending, the status line says so (instead of showing the last reading
// as if it were live), and when the board goes away it says it is reopening the port.
// Both states are meant to show within 3 s; the test logs how long they took.
func TestRecordTerminalBoardSilentThenGone(t *testing.T) {
	b := newRecBoard(t, 1)
	out := filepath.Join(t.TempDir(), "sill.csv")
	tm := startTerminal(t, "record", "--port", b.path, "--out", out)
	tm.waitLine(`^\d+\.\d{3} V charging .* [1-9]\d* samples`)
	b.paused.Store(true)
	d := tm.waitLine(`^board silent for \d+ s, still listening \| last \d+\.\d{3} V`)
	t.Logf("silent state on the screen %v after the board stopped sending: %q", d, tm.line())
	b.unplug()
	d = tm.waitLine(`^board gone for \d+ s, reopening the port \(try \d+\)`)
	t.Logf("gone state on the screen %v after the unplug: %q", d, tm.line())
	syscall.Kill(tm.cmd.Process.Pid, syscall.SIGINT)
	if code := tm.wait(); code != 0 {
		t.Fatalf("exit %d after Ctrl-C; screen:\n%s", code, tm.screen())
	}
	<-tm.read
	if s := tm.screen(); !strings.Contains(s, "1 gaps") {
		t.Errorf("the summary does not count the gap:\n%s", s)
	}
	text, _ := os.ReadFile(out)
	if !strings.Contains(string(text), "# end: ") {
		t.Errorf("not closed cleanly:\n%s", text)
	}
}

// TestRecordStopSignals: every signal that ends a recording closes the file with its
// trailer and exits 0: Ctrl-C (SIGINT), a kill (SIGTERM), and the hang-up of a terminal
// that goes away (SIGHUP, sent by the kernel when the terminal's other side is closed,
// as with a dropped remote login).
func TestRecordStopSignals(t *testing.T) {
	for _, sig := range []string{"SIGINT", "SIGTERM", "hang-up"} {
		t.Run(sig, func(t *testing.T) {
			b := newRecBoard(t, 1)
			out := filepath.Join(t.TempDir(), "wren.csv")
			tm := startTerminal(t, "record", "--port", b.path, "--out", out)
			tm.waitLine(` [1-9]\d* samples`)
			switch sig {
			case "SIGINT":
				syscall.Kill(tm.cmd.Process.Pid, syscall.SIGINT)
			case "SIGTERM":
				syscall.Kill(tm.cmd.Process.Pid, syscall.SIGTERM)
			default:
				tm.ptmx.Close() // the terminal goes away: the kernel sends SIGHUP
			}
			if code := tm.wait(); code != 0 {
				t.Fatalf("exit %d (%v); screen:\n%s", code, tm.cmd.ProcessState, tm.screen())
			}
			text, _ := os.ReadFile(out)
			for _, want := range []string{"# end: ", "# stats: samples="} {
				if !strings.Contains(string(text), want) {
					t.Errorf("no %q line: not closed cleanly:\n%s", want, text)
				}
			}
		})
	}
}
