package main

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"capcycle/firmware-protocol/emulator"
)

// TestEveryExampleRuns takes every example from every command's -h and every command
// line from the README, and runs it in-process against the demo data: the profiles in
// testdata/profiles and the captures in testdata/captures, copied into a fresh directory
// under the names the example uses. Each must exit 0, except where exampleNeeds says
// what it needs that a test machine lacks and which exit code and message it then gives.
func TestEveryExampleRuns(t *testing.T) {
	examples := helpExamples(t)
	examples = append(examples, readmeExamples(t)...)
	if len(examples) < 30 {
		t.Fatalf("found %d examples; the help and the README hold more than that", len(examples))
	}
	fx := newExampleFixtures(t)
	t.Chdir(t.TempDir())
	seen := map[string]bool{}
	for _, ex := range examples {
		if seen[ex.line] {
			continue // the same command line in the help and the README runs once
		}
		seen[ex.line] = true
		t.Run(ex.from+": "+ex.line, func(t *testing.T) {
			if strings.HasPrefix(ex.line, "capcycle demo") && !strings.HasSuffix(ex.line, " -h") && (testing.Short() || raceEnabled) {
				t.Skip("the demo records a day at its speed, for minutes on a busy machine; skipped in -short mode and under the race detector (TestDemo runs an hour of it)")
			}
			if strings.Contains(ex.line, "--board emulated") {
				if err := emulator.Available(); err != nil {
					t.Skipf("emulated board not available: %v", err)
				}
			}
			dir := t.TempDir()
			t.Chdir(dir)
			runExample(t, fx, dir, ex.line)
		})
	}
}

type example struct{ from, line string }

// helpExamples runs "-h" of every command (and of profile's actions) and returns the lines
// of their "examples:" sections.
func helpExamples(t *testing.T) []example {
	t.Helper()
	var helps [][]string
	for _, c := range commands() {
		helps = append(helps, []string{c.name, "-h"})
	}
	helps = append(helps, []string{"profile", "init", "-h"}, []string{"profile", "check", "-h"})
	var out []example
	for _, h := range helps {
		code, stdout, stderr := runCmd(t, h...)
		if code != 0 {
			t.Fatalf("capcycle %s: exit %d\n%s", strings.Join(h, " "), code, stderr)
		}
		text := stdout + stderr
		_, exs, ok := strings.Cut(text, "\nexamples:\n")
		if !ok {
			t.Errorf("capcycle %s prints no examples:\n%s", strings.Join(h, " "), text)
			continue
		}
		for _, l := range strings.Split(exs, "\n") {
			if l = strings.TrimSpace(l); l != "" {
				out = append(out, example{"capcycle " + strings.Join(h, " "), l})
			}
		}
	}
	return out
}

var (
	reInlineCommand = regexp.MustCompile("`(capcycle [^`]+)`")
	rePlaceholder   = regexp.MustCompile(`\b[A-Z]{2,}\b|\[`)
)

// readmeExamples returns the command lines of README.md: every line of a code block that
// runs capcycle (not the lines that show its output, "capcycle NAME: ..."), and every
// inline `capcycle ...` with a flag and no placeholder (PORT, [VOLTS]) in it.
func readmeExamples(t *testing.T) []example {
	t.Helper()
	raw, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	var out []example
	inBlock := false
	sc := bufio.NewScanner(bytes.NewReader(raw))
	for n := 1; sc.Scan(); n++ {
		l := strings.TrimSpace(sc.Text())
		if strings.HasPrefix(l, "```") {
			inBlock = !inBlock
			continue
		}
		from := fmt.Sprintf("README.md:%d", n)
		if inBlock {
			l = strings.TrimPrefix(l, "go run ./cmd/")
			if c, _, ok := strings.Cut(l, " #"); ok {
				l = strings.TrimSpace(c)
			}
			f := strings.Fields(l)
			if len(f) >= 2 && f[0] == "capcycle" && !strings.HasSuffix(f[1], ":") {
				out = append(out, example{from, l})
			}
			continue
		}
		for _, m := range reInlineCommand.FindAllStringSubmatch(l, -1) {
			if strings.Contains(m[1], " -") && !rePlaceholder.MatchString(m[1]) {
				out = append(out, example{from, m[1]})
			}
		}
	}
	return out
}

// exampleNeed is what an example needs that a test machine lacks, and what it does then.
type exampleNeed struct {
	why  string
	code int
	msg  *regexp.Regexp // the message it gives
}

// exampleNeeds lists the commands that talk to a real board. With none attached they stop
// when they open the port (exit 1, "not found") or when no board answers (exit 2), after
// their flags were parsed and checked.
var exampleNeeds = map[string]exampleNeed{
	"record":    {"a board on a serial port", -1, regexp.MustCompile(`open /dev/tty\w+: not found|no board answered`)},
	"calibrate": {"a board on a serial port", 1, regexp.MustCompile(`open /dev/tty\w+: not found`)},
}

// exampleKnownFaults are examples that fail today for a fault tracked elsewhere, with the
// exit code and message they give. When the fault is fixed the example exits 0, this test
// fails, and the entry goes.
var exampleKnownFaults = map[string]exampleNeed{}

// runExample runs one example line: "A & B" runs A until it is ready (a robot prints
// its port) and then B; "> FILE" sends standard output to FILE; "| ..." drops the
// rest of a pipe (standard output goes to a buffer). "/tmp/" stands for dir.
func runExample(t *testing.T, fx *exampleFixtures, dir, line string) {
	line = strings.ReplaceAll(line, "/tmp/", dir+"/")
	parts := strings.Split(line, "&")
	if len(parts) > 2 {
		t.Fatalf("more than one background command in %q", line)
	}
	var stopBackground func()
	if len(parts) == 2 {
		args, _ := exampleArgs(t, parts[0])
		fx.provide(t, dir, args)
		stopBackground = startUntilReady(t, args)
		line = parts[1]
	}
	args, stdoutFile := exampleArgs(t, line)
	fx.provide(t, dir, args)
	if stopBackground != nil {
		defer stopBackground()
	}
	if p := portArg(args); p != "" && strings.HasPrefix(p, "/dev/") {
		if _, err := os.Stat(p); err == nil {
			t.Skipf("%s exists on this machine; the example would talk to a real board", p)
		}
	}
	if args[0] == "robot" {
		startUntilReady(t, args)()
		return
	}
	ctx := context.Background()
	var stderr bytes.Buffer
	var stderrW syncWriter = syncWriter{w: &stderr}
	if args[0] == "record" && stopBackground != nil {
		// Recording from the virtual robot: stop (as Ctrl-C does) once it records.
		var cancel context.CancelFunc
		ctx, cancel = context.WithCancel(ctx)
		defer cancel()
		stderrW.on, stderrW.cancel = "recording", cancel
	}
	var stdout bytes.Buffer
	code := run(ctx, args, &env{stdin: strings.NewReader(""), stdout: &stdout, stderr: &stderrW})
	if stdoutFile != "" {
		if err := os.WriteFile(stdoutFile, stdout.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	msg := stderrW.String()
	need, ok := exampleNeeds[args[0]]
	if known, isKnown := exampleKnownFaults[line]; isKnown {
		need, ok = known, true
	}
	if ok && stopBackground == nil {
		if !need.msg.MatchString(msg) || (need.code >= 0 && code != need.code) || code == 0 {
			t.Fatalf("needs %s: want the message %q (exit %d), got exit %d:\n%s", need.why, need.msg, need.code, code, msg)
		}
		t.Logf("needs %s: exit %d: %s", need.why, code, strings.TrimSpace(msg))
		return
	}
	if code != 0 {
		t.Fatalf("exit %d\nstdout:\n%s\nstderr:\n%s", code, tail(stdout.String(), 20), msg)
	}
}

// exampleArgs splits a command line as a shell would for these examples (words, 'quoted'
// words, "> FILE", a pipe) and drops the leading "capcycle".
func exampleArgs(t *testing.T, line string) (args []string, stdoutFile string) {
	t.Helper()
	if c, _, ok := strings.Cut(line, "|"); ok {
		line = c
	}
	var words []string
	var cur strings.Builder
	quote, inWord := byte(0), false
	for i := 0; i < len(line); i++ {
		c := line[i]
		switch {
		case quote != 0 && c == quote:
			quote = 0
		case quote != 0:
			cur.WriteByte(c)
		case c == '\'' || c == '"':
			quote, inWord = c, true
		case c == ' ' || c == '\t':
			if inWord {
				words = append(words, cur.String())
				cur.Reset()
				inWord = false
			}
		default:
			cur.WriteByte(c)
			inWord = true
		}
	}
	if inWord {
		words = append(words, cur.String())
	}
	for i := 0; i < len(words); i++ {
		if words[i] == ">" && i+1 < len(words) {
			stdoutFile = words[i+1]
			words = append(words[:i], words[i+2:]...)
			i--
		}
	}
	if len(words) < 2 || words[0] != "capcycle" {
		t.Fatalf("not a capcycle command line: %q", line)
	}
	return words[1:], stdoutFile
}

func portArg(args []string) string {
	for i, a := range args {
		if (a == "--port" || a == "-port") && i+1 < len(args) {
			return args[i+1]
		}
	}
	return ""
}

// startUntilReady runs a robot command in the background until it prints its port on
// standard output, and returns the function that stops it (as Ctrl-C does) and checks
// that it then exits 0.
func startUntilReady(t *testing.T, args []string) func() {
	t.Helper()
	if args[0] != "robot" {
		t.Fatalf("only the robot runs in the background in the examples, not %q", args[0])
	}
	ctx, cancel := context.WithCancel(context.Background())
	ready := make(chan struct{})
	stdout := &syncWriter{w: &bytes.Buffer{}, on: "\n", ready: ready}
	stderr := &syncWriter{w: &bytes.Buffer{}}
	done := make(chan int, 1)
	go func() { done <- run(ctx, args, &env{stdin: strings.NewReader(""), stdout: stdout, stderr: stderr}) }()
	select {
	case <-ready:
	case code := <-done:
		cancel()
		t.Fatalf("the robot exited %d before it was ready:\n%s", code, stderr.String())
	}
	return func() {
		cancel()
		if code := <-done; code != 0 {
			t.Errorf("the robot exited %d when stopped:\n%s", code, stderr.String())
		}
	}
}

// syncWriter is a goroutine-safe buffer that, when what was written contains on, calls
// cancel and closes ready (once).
type syncWriter struct {
	mu     sync.Mutex
	w      *bytes.Buffer
	on     string
	cancel func()
	ready  chan struct{}
	fired  bool
}

func (s *syncWriter) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	n, err := s.w.Write(p)
	if s.on != "" && !s.fired && strings.Contains(s.w.String(), s.on) {
		s.fired = true
		if s.cancel != nil {
			s.cancel()
		}
		if s.ready != nil {
			close(s.ready)
		}
	}
	return n, err
}

func (s *syncWriter) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.w.String()
}

func tail(s string, n int) string {
	l := strings.Split(s, "\n")
	if len(l) > n {
		l = l[len(l)-n:]
	}
	return strings.Join(l, "\n")
}

// exampleFixtures makes the input files the examples name, from the demo data.
type exampleFixtures struct {
	src   string // absolute path of the package directory
	cache string // analyses made once
	once  sync.Map
}

func newExampleFixtures(t *testing.T) *exampleFixtures {
	t.Helper()
	wd, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	return &exampleFixtures{src: wd, cache: t.TempDir()}
}

// exampleFiles maps the names of the inputs the examples use to demo data: a file under
// the repository root, or "analysis:CAPTURE:PROFILE" for the analysis JSON of a capture.
var exampleFiles = map[string]string{
	"wren.toml":                   "testdata/profiles/wren.toml",
	"before.toml":                 "testdata/profiles/wren.toml",
	"testdata/profiles/wren.toml": "testdata/profiles/wren.toml",
	"fern.toml":                   "testdata/profiles/fern.toml",
	"after.toml":                  "testdata/profiles/fern.toml",
	"testdata/profiles/fern.toml": "testdata/profiles/fern.toml",
	"wren.csv":                    "testdata/captures/wren-rc-10min.csv",
	"wren-day.csv":                "testdata/captures/wren-rc-10min.csv",
	"before.csv":                  "testdata/captures/wren-rc-10min.csv",
	"fern.csv":                    "testdata/captures/fern-rc-stall-3h.csv",
	"after.csv":                   "testdata/captures/fern-rc-stall-3h.csv",
	"logger.csv":                  "logger:testdata/captures/wren-rc-10min.csv",
	"wren.json":                   "analysis:wren.csv:wren.toml",
	"wren.analysis.json":          "analysis:wren.csv:wren.toml",
	"before.analysis.json":        "analysis:before.csv:wren.toml",
	"after.analysis.json":         "analysis:after.csv:fern.toml",
}

// outputFlags take the name of a file the command writes; it is not provided.
var outputFlags = map[string]bool{"--out": true, "-o": true, "--cycles-csv": true, "--segments-csv": true, "--link": true}

// provide puts every input the arguments name into dir. A word that looks like a file
// (.csv, .toml, .json) and is neither an output nor known fails the test.
func (fx *exampleFixtures) provide(t *testing.T, dir string, args []string) {
	t.Helper()
	for i, a := range args {
		if i > 0 && outputFlags[args[i-1]] {
			continue
		}
		ext := filepath.Ext(a)
		if ext != ".csv" && ext != ".toml" && ext != ".json" {
			continue
		}
		if filepath.IsAbs(a) {
			continue
		}
		fx.make(t, filepath.Join(dir, a), a)
	}
}

func (fx *exampleFixtures) make(t *testing.T, dst, name string) {
	t.Helper()
	how, ok := exampleFiles[name]
	if !ok {
		t.Fatalf("the example reads %s, and the test has no demo data for it: add it to exampleFiles", name)
	}
	if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
		t.Fatal(err)
	}
	var data []byte
	switch {
	case strings.HasPrefix(how, "analysis:"):
		data = fx.analysis(t, how)
	case strings.HasPrefix(how, "logger:"):
		data = loggerCSV(t, filepath.Join(fx.src, "../..", strings.TrimPrefix(how, "logger:")))
	default:
		var err error
		if data, err = os.ReadFile(filepath.Join(fx.src, "../..", how)); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.WriteFile(dst, data, 0o644); err != nil {
		t.Fatal(err)
	}
}

// analysis runs "capcycle analyze CAPTURE --profile PROFILE --json" once per pair.
func (fx *exampleFixtures) analysis(t *testing.T, how string) []byte {
	t.Helper()
	if v, ok := fx.once.Load(how); ok {
		return v.([]byte)
	}
	f := strings.Split(how, ":")
	dir := filepath.Join(fx.cache, strings.ReplaceAll(f[1]+"-"+f[2], "/", "_"))
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	fx.make(t, filepath.Join(dir, f[1]), f[1])
	fx.make(t, filepath.Join(dir, f[2]), f[2])
	code, stdout, stderr := runCmd(t, "analyze", filepath.Join(dir, f[1]), "--profile", filepath.Join(dir, f[2]), "--json")
	if code != 0 {
		t.Fatalf("making %s: exit %d: %s", how, code, stderr)
	}
	fx.once.Store(how, []byte(stdout))
	return []byte(stdout)
}

// loggerCSV rewrites a capture as another logger's file: RFC 3339 time stamps in a column
// "timestamp", the voltage in millivolts in a column "ch1", semicolons between fields.
func loggerCSV(t *testing.T, path string) []byte {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	start := time.Date(2026, 6, 21, 10, 0, 0, 0, time.UTC)
	var b bytes.Buffer
	b.WriteString("timestamp;ch1\n")
	header := true
	for _, l := range strings.Split(string(raw), "\n") {
		if l == "" || strings.HasPrefix(l, "#") {
			continue
		}
		if header {
			header = false
			continue
		}
		var ts, v float64
		if _, err := fmt.Sscanf(l, "%g,%g", &ts, &v); err != nil {
			t.Fatalf("%s: %q: %v", path, l, err)
		}
		at := start.Add(time.Duration(ts * float64(time.Second)))
		fmt.Fprintf(&b, "%s;%.2f\n", at.Format(time.RFC3339Nano), v*1000)
	}
	return b.Bytes()
}
