package main

import (
	"bufio"
	"context"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	"capcycle/firmware-protocol/wire"
	"capcycle/logger"
	"capcycle/logger/loggertest"
)

// wrenCurrentProfile is wren.toml under a steady lamp (300 W/m²) with its vcell input
// replaced by a load-current channel on ADC1: a 1 Ω low-side shunt and an amplifier of
// gain 20, 20 V/A at the pin, so that the motor's ~140 mA stall current is ~2.8 V of the
// 5 V range (full scale 250 mA, 244 µA per count).
func wrenCurrentProfile(t *testing.T) string {
	t.Helper()
	src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "profiles", "wren.toml"))
	if err != nil {
		t.Fatal(err)
	}
	p := string(src)
	vcell := "[[channel]]\nnode = \"vcell\"\nadc = 1\ntop_ohm = \"1meg\"\nbottom_ohm = \"1meg\"\n"
	i := strings.Index(p, "[light]")
	if i < 0 || !strings.Contains(p, vcell) {
		t.Fatal("wren.toml has no vcell channel on ADC1 or no [light] table")
	}
	p = p[:i] + "[light]\nkind = \"constant\"\nirradiance_w_m2 = 300\n"
	p = strings.Replace(p, vcell, "[[channel]]\nnode = \"iload\"\nadc = 1\nshunt_ohm = 1\namp_gain = 20\n", 1)
	path := filepath.Join(t.TempDir(), "wren-current.toml")
	if err := os.WriteFile(path, []byte(p), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// TestRecordCurrentChannel: a profile's iload channel turns into an iload_a column in
// amperes, with divider 1 and a scale of 1/(shunt·gain).
func TestRecordCurrentChannel(t *testing.T) {
	p, err := profile.Load(wrenCurrentProfile(t))
	if err != nil {
		t.Fatal(err)
	}
	cfg := &logger.Config{}
	if err := recordFromProfile(cfg, p, false); err != nil {
		t.Fatal(err)
	}
	if len(cfg.Columns) != 1 || cfg.Columns[0] != "iload_a" || len(cfg.Dividers) != 2 || cfg.Dividers[0] != 0.5 ||
		cfg.Dividers[1] != 1 || len(cfg.Scales) != 2 || cfg.Scales[0] != 0 || cfg.Scales[1] != 1.0/20 {
		t.Errorf("columns %q dividers %v scales %v; want [iload_a], [0.5 1], [0 0.05]", cfg.Columns, cfg.Dividers, cfg.Scales)
	}
	// A count is 5 V / 2^12 / 20 V/A = 61 µA: 6 decimals keep the file's step under a
	// tenth of it.
	if cfg.Decimals != 6 {
		t.Errorf("%d decimals, want 6", cfg.Decimals)
	}
	// Text input has one scale for every column: an amperes column cannot be made there.
	if err := recordFromProfile(&logger.Config{}, p, true); err == nil || !strings.Contains(err.Error(), "load current") {
		t.Errorf("text input with an iload channel: %v, want an error", err)
	}
}

// TestRecordVirtualCurrentThenAnalyze runs "capcycle robot" with a profile that has a
// load-current channel, records it with "capcycle record --profile" over the real serial
// stack (go.bug.st/serial on the robot's pseudo-terminal), and analyses the capture:
// the capacitance measured from the iload_a column at the fires is within 3 % of the
// profile's 4.7 mF (the model's own capacitance; the board's 0.5 % divider tolerance
// and the ADC's 244 µA steps are what stand between them).
func TestRecordVirtualCurrentThenAnalyze(t *testing.T) {
	if testing.Short() {
		t.Skip("records 36 s of model time over a pseudo-terminal")
	}
	prof := wrenCurrentProfile(t)
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	stdoutR, stdoutW := io.Pipe()
	robotErr := &loggertest.Buffer{}
	// 36 s of the lamp, as fast as the host reads; 500 Hz bursts at the fires (a pulse
	// lasts about 0.1 s), 11 bits after oversampling, which the board allows at 500 Hz
	// with two channels.
	args := []string{"robot", "--profile", prof, "--speed", "0", "--hours", "0.01", "--fast-hz", "500",
		"--ebits", "11", "--linger", "300ms"}
	robotCode := make(chan int, 1)
	go func() {
		robotCode <- run(ctx, args, &env{stdin: strings.NewReader(""), stdout: stdoutW, stderr: robotErr})
		stdoutW.Close()
	}()
	line, err := bufio.NewReader(stdoutR).ReadString('\n')
	if err != nil {
		t.Fatalf("no path on stdout: %v; stderr: %s", err, robotErr.String())
	}
	go io.Copy(io.Discard, stdoutR)
	port := strings.TrimSpace(line)

	out := filepath.Join(t.TempDir(), "wren-current.csv")
	recCtx, stopRec := context.WithCancel(ctx)
	defer stopRec()
	recErr := &loggertest.Buffer{}
	recCode := make(chan int, 1)
	go func() {
		recCode <- run(recCtx, []string{"record", "--port", port, "--profile", prof, "--out", out, "--quiet"},
			&env{stdin: strings.NewReader(""), stdout: io.Discard, stderr: recErr})
	}()
	select {
	case c := <-robotCode:
		if c != 0 {
			t.Fatalf("robot: exit %d: %s", c, robotErr.String())
		}
	case c := <-recCode:
		t.Fatalf("record ended first: exit %d: %s", c, recErr.String())
	case <-ctx.Done():
		t.Fatal("the robot did not finish 36 s of model time within a minute")
	}
	stopRec()
	if c := <-recCode; c != 0 {
		t.Fatalf("record: exit %d: %s", c, recErr.String())
	}

	raw, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"time_s,vcap_v,iload_a\n", "# channel: iload_a adc=1 ", " divider=1 scale=0.05\n"} {
		if !strings.Contains(string(raw), want) {
			t.Fatalf("capture has no %q:\n%s", want, raw[:min(len(raw), 1200)])
		}
	}
	code, sum, errs := runCmd(t, "analyze", out)
	if code != 0 {
		t.Fatalf("analyze: exit %d: %s", code, errs)
	}
	c, n := measuredCapacitance(t, sum)
	t.Logf("capacitance %g mF from %d fires", c, n)
	if n < 5 || c < 4.7*0.97 || c > 4.7*1.03 {
		t.Errorf("capacitance %g mF from %d fires; want 4.7 mF within 3 %% from at least 5 fires\n%s", c, n, sum)
	}
}

// TestProfileCheckCurrentChannel: "profile check" shows a load-current channel's shunt,
// full-scale current and current per count instead of a divider.
func TestProfileCheckCurrentChannel(t *testing.T) {
	code, out, errs := runCmd(t, "profile", "check", wrenCurrentProfile(t))
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	// 5 V / 20 V/A = 250 mA; / 1024 counts = 244 µA; 2.7 V / (18 + 0.4 + 1) Ω = 139 mA.
	for _, want := range []string{"channel 1: iload", "shunt 1.00 Ω × gain 20", "full scale 250 mA", "244 µA per count", "peak load current 139 mA"} {
		if !strings.Contains(out, want) {
			t.Errorf("no %q in:\n%s", want, out)
		}
	}
}

// TestRigCurrentInput: the virtual robot wires an iload channel as an input that reads
// the model's load current at 20 V/A, with no divider.
func TestRigCurrentInput(t *testing.T) {
	p, err := profile.Load(wrenCurrentProfile(t))
	if err != nil {
		t.Fatal(err)
	}
	rig, err := model.RigFromProfile(p, wire.MaxChannels)
	if err != nil {
		t.Fatal(err)
	}
	if len(rig.Nodes) != 2 || rig.Nodes[1] != model.NodeIload || rig.Div[1] != 1 || len(rig.VPerA) != 2 || rig.VPerA[1] != 20 {
		t.Fatalf("nodes %v div %v volts per amp %v; want [vcap iload], [0.5 1], [0 20]", rig.Nodes, rig.Div, rig.VPerA)
	}
	src, err := model.NewRigSource(rig, 30, 500)
	if err != nil {
		t.Fatal(err)
	}
	// Over 30 s of the lamp the motor fires; the input follows LoadA·20 V/A, and is 0 V
	// while the switch is off.
	var peak float64
	v := make([]float64, 2)
	for i := 0; i < 30*500; i++ {
		if !src.Sample(float64(i)/500, v) {
			break
		}
		peak = max(peak, v[1])
	}
	// Wren's stall current at 2.7 V through 18.4 Ω and the 1 Ω shunt is 139 mA: a little
	// under 2.78 V.
	if peak < 2.65 || peak > 2.79 {
		t.Errorf("highest current-input voltage %.3f V; want 2.65 to 2.79 V (up to 139 mA at 20 V/A)", peak)
	}
}
