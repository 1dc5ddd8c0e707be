package emulator

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"time"
)

// ErrUnavailable is returned (wrapped) by Available and Build when a tool the emulated
// board needs is not installed.
var ErrUnavailable = errors.New("emulator: toolchain not available")

// simavrLibs are the places Debian and others put the static simavr library.
var simavrLibs = []string{
	"/usr/lib/x86_64-linux-gnu/libsimavr.a",
	"/usr/lib/aarch64-linux-gnu/libsimavr.a",
	"/usr/lib/libsimavr.a",
	"/usr/local/lib/libsimavr.a",
}

// Available reports whether the emulated board can be built here: avr-gcc, a host C
// compiler, make and libsimavr.a. The error wraps ErrUnavailable and names what is
// missing.
func Available() error {
	var missing []string
	for _, tool := range []string{"avr-gcc", "cc", "make"} {
		if _, err := exec.LookPath(tool); err != nil {
			missing = append(missing, tool)
		}
	}
	found := false
	for _, p := range simavrLibs {
		if _, err := os.Stat(p); err == nil {
			found = true
			break
		}
	}
	if !found {
		missing = append(missing, "libsimavr.a (package libsimavr-dev)")
	}
	if len(missing) > 0 {
		return fmt.Errorf("%w: missing %s (install gcc-avr avr-libc libsimavr-dev)",
			ErrUnavailable, strings.Join(missing, ", "))
	}
	return nil
}

// SourceDir returns firmware-protocol/, the directory holding firmware/ and emulator/,
// found from this file's location at build time.
func SourceDir() (string, error) {
	_, file, _, ok := runtime.Caller(0)
	if !ok {
		return "", errors.New("emulator: cannot locate the source directory")
	}
	dir := filepath.Dir(filepath.Dir(file))
	if _, err := os.Stat(filepath.Join(dir, "firmware", "Makefile")); err != nil {
		return "", fmt.Errorf("emulator: firmware sources not found: %w", err)
	}
	return dir, nil
}

// Binaries are the built harness and firmware image.
type Binaries struct {
	Harness  string // the capcycle-emulator program
	Firmware string // the firmware ELF
}

// Build compiles the firmware (avr-gcc) and the harness (cc, libsimavr) into dir with
// their Makefiles and returns the paths. src is the firmware-protocol directory; "" means
// SourceDir().
func Build(ctx context.Context, src, dir string) (Binaries, error) {
	if err := Available(); err != nil {
		return Binaries{}, err
	}
	if src == "" {
		var err error
		if src, err = SourceDir(); err != nil {
			return Binaries{}, err
		}
	}
	dir, err := filepath.Abs(dir)
	if err != nil {
		return Binaries{}, fmt.Errorf("emulator: %w", err)
	}
	fwDir := filepath.Join(dir, "firmware")
	steps := [][]string{
		{"make", "-s", "-C", filepath.Join(src, "firmware"), "BUILD=" + fwDir, "all"},
		{"make", "-s", "-C", filepath.Join(src, "emulator", "harness"), "BUILD=" + dir, "all"},
	}
	for _, s := range steps {
		cmd := exec.CommandContext(ctx, s[0], s[1:]...)
		var out bytes.Buffer
		cmd.Stdout, cmd.Stderr = &out, &out
		if err := cmd.Run(); err != nil {
			return Binaries{}, fmt.Errorf("emulator: %s: %w\n%s", strings.Join(s, " "), err, out.String())
		}
	}
	return Binaries{
		Harness:  filepath.Join(dir, "capcycle-emulator"),
		Firmware: filepath.Join(fwDir, "capcycle.elf"),
	}, nil
}

// Config says how to run the emulated board. The zero value of each field means its
// default.
type Config struct {
	// Waveform is the path of the waveform file (see the package doc). Required.
	Waveform string
	// Div are the divider ratios (pin volts / input volts) per channel; nil means 1.
	Div []float64
	// AVccMV is the supply and AVcc reference in millivolts; 0 means 5000.
	AVccMV int
	// NoWait starts the firmware at once instead of when a host first opens the port.
	NoWait bool
	// EEPROM is the path of an EEPROM image: loaded at start if it exists and written
	// back when the harness stops, so >save survives a restart. "" means a blank
	// EEPROM every run.
	EEPROM string
}

// Board is a running emulated board.
type Board struct {
	// Path is the pseudo-terminal to open: a symbolic link to it (in a directory of its
	// own) that the harness removes before the terminal closes. A host that reopens Path
	// after the harness has exited gets "no such file", never another program's
	// terminal that the kernel gave the freed /dev/pts number (a recorder retrying a lost
	// port would otherwise read, and steal, another emulated board's bytes).
	Path string

	dir    string // holds the link; removed when the harness exits
	cmd    *exec.Cmd
	stderr *lockedBuffer
	done   chan struct{}
	err    error
	once   sync.Once
}

type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// Start runs the harness with the firmware and returns once the pty exists.
func Start(ctx context.Context, bin Binaries, cfg *Config) (*Board, error) {
	if cfg == nil || cfg.Waveform == "" {
		return nil, errors.New("emulator: Config.Waveform is required")
	}
	args := []string{"-w", cfg.Waveform}
	if len(cfg.Div) > 0 {
		parts := make([]string, len(cfg.Div))
		for i, d := range cfg.Div {
			parts[i] = strconv.FormatFloat(d, 'g', -1, 64)
		}
		args = append(args, "-d", strings.Join(parts, ","))
	}
	if cfg.AVccMV != 0 {
		args = append(args, "-a", strconv.Itoa(cfg.AVccMV))
	}
	if cfg.NoWait {
		args = append(args, "-n")
	}
	if cfg.EEPROM != "" {
		args = append(args, "-e", cfg.EEPROM)
	}
	dir, err := os.MkdirTemp("", "capcycle-board-")
	if err != nil {
		return nil, fmt.Errorf("emulator: %w", err)
	}
	args = append(args, "-l", filepath.Join(dir, "tty"), bin.Firmware)
	cmd := exec.CommandContext(ctx, bin.Harness, args...)
	cmd.Cancel = func() error { return cmd.Process.Signal(syscall.SIGTERM) }
	cmd.WaitDelay = 2 * time.Second
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		os.RemoveAll(dir)
		return nil, fmt.Errorf("emulator: %w", err)
	}
	b := &Board{dir: dir, cmd: cmd, stderr: &lockedBuffer{}, done: make(chan struct{})}
	cmd.Stderr = b.stderr
	if err := cmd.Start(); err != nil {
		os.RemoveAll(dir)
		return nil, fmt.Errorf("emulator: start %s: %w", bin.Harness, err)
	}
	go func() {
		b.err = cmd.Wait()
		os.RemoveAll(b.dir) // the harness removed the link, unless it was killed
		close(b.done)
	}()
	line, err := readLine(ctx, stdout)
	if err != nil {
		b.Close()
		return nil, fmt.Errorf("emulator: no pty path from the harness: %w (stderr: %s)", err, b.stderr.String())
	}
	go io.Copy(io.Discard, stdout)
	b.Path = line
	return b, nil
}

// readLine returns the first line of r: the harness prints it at once, or exits (EOF)
// when it cannot start. It waits for one of those, not for a time budget that a busy
// machine could overrun; ctx's end stops the harness and so ends the wait too.
func readLine(ctx context.Context, r io.Reader) (string, error) {
	type result struct {
		s   string
		err error
	}
	ch := make(chan result, 1)
	go func() {
		s, err := bufio.NewReader(r).ReadString('\n')
		ch <- result{strings.TrimSpace(s), err}
	}()
	select {
	case res := <-ch:
		if res.err != nil {
			return "", res.err
		}
		return res.s, nil
	case <-ctx.Done():
		return "", ctx.Err()
	}
}

// Stderr returns what the harness wrote to its standard error so far.
func (b *Board) Stderr() string { return b.stderr.String() }

// Done is closed when the harness has exited.
func (b *Board) Done() <-chan struct{} { return b.done }

// Close stops the harness (SIGTERM) and waits for it. A second Close does nothing.
func (b *Board) Close() error {
	b.once.Do(func() {
		select {
		case <-b.done:
		default:
			_ = b.cmd.Process.Signal(syscall.SIGTERM)
			select {
			case <-b.done:
			case <-time.After(3 * time.Second):
				_ = b.cmd.Process.Kill()
				<-b.done
			}
		}
	})
	var ee *exec.ExitError
	if b.err != nil && !errors.As(b.err, &ee) {
		return fmt.Errorf("emulator: %w", b.err)
	}
	return nil
}
