//go:build unix

package main

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	"capcycle/firmware-protocol/virtualboard"
	"capcycle/firmware-protocol/wire"
	"capcycle/logger"
	"capcycle/logger/capture"
	"capcycle/logger/loggertest"
)

// TestModelSourceFollowsModel: the source gives the model's own samples at the model's
// sample instants, interpolates between them, reads vcell as the storage node and ends
// with the run.
func TestModelSourceFollowsModel(t *testing.T) {
	sc, err := model.Scenario("wren")
	if err != nil {
		t.Fatal(err)
	}
	rig := model.RigFromScene(sc)
	rig.Nodes = []model.Node{model.NodeVcap, model.NodeVcell, model.NodeNone}
	rig.StartS = 12 * 3600 // noon: the sun is on the window and it fires
	const dur, rate = 120.0, 20.0
	src, err := model.NewRigSource(rig, dur, rate)
	if err != nil {
		t.Fatal(err)
	}
	// The same run through the plain simulator, sampled at the same rate.
	var want []model.Sample
	if _, err := model.Simulate(rig.Circuit, model.ShiftLight(rig.Light, rig.StartS),
		&model.Options{DurationS: dur, RateHz: rate, StartV: rig.StartV, OnSample: func(s model.Sample) { want = append(want, s) }}); err != nil {
		t.Fatal(err)
	}
	v := make([]float64, 3)
	for i := 0; i+1 < len(want); i += 7 {
		clear(v)
		if !src.Sample(want[i].TS, v) {
			t.Fatalf("source ended at %g s", want[i].TS)
		}
		if math.Abs(v[0]-want[i].V) > 1e-9 || v[1] != v[0] || v[2] != 0 {
			t.Fatalf("at %g s: got %v, want vcap = vcell = %g and 0 on the unwired input", want[i].TS, v, want[i].V)
		}
		// Half-way to the next sample: the mean of the two.
		mid := (want[i].TS + want[i+1].TS) / 2
		src.Sample(mid, v)
		if m := (want[i].V + want[i+1].V) / 2; math.Abs(v[0]-m) > 1e-9 {
			t.Fatalf("at %g s: got %g V, want the mean %g V", mid, v[0], m)
		}
	}
	_, _, fires := src.Progress()
	if fires == 0 {
		t.Error("no fire counted in two minutes of noon sun")
	}
	if src.Sample(dur+1, v) {
		t.Error("the source did not end after the model run")
	}
}

// TestRigFromProfile: the board is wired as the Wren profile's channels say.
func TestRigFromProfile(t *testing.T) {
	p, err := profile.Load(filepath.Join("..", "..", "analyze", "model", "scenarios", "wren.toml"))
	if err != nil {
		t.Fatal(err)
	}
	rig, err := model.RigFromProfile(p, wire.MaxChannels)
	if err != nil {
		t.Fatal(err)
	}
	if len(rig.Nodes) != 2 || rig.Nodes[0] != model.NodeVcap || rig.Nodes[1] != model.NodeVcell {
		t.Errorf("nodes %v, want [vcap vcell]", rig.Nodes)
	}
	// 1 MΩ over 1 MΩ on both channels (wren.toml).
	if len(rig.Div) != 2 || rig.Div[0] != 0.5 || rig.Div[1] != 0.5 {
		t.Errorf("dividers %v, want [0.5 0.5]", rig.Div)
	}
	if rig.Bits != 10 || rig.RefV != 5 || rig.RefInternal {
		t.Errorf("ADC %d bits, %g V, internal reference %v; want 10 bits, 5 V AVcc", rig.Bits, rig.RefV, rig.RefInternal)
	}
	p.Light = nil
	if _, err := model.RigFromProfile(p, wire.MaxChannels); err == nil || !strings.Contains(err.Error(), "[light]") {
		t.Errorf("a profile without light: %v, want an error naming the [light] table", err)
	}
}

// TestBoardConfigNoise: the noise given at the node becomes LSB at the converter through
// ADC0's divider. 10 bits on 5 V through a divider of 0.5: one LSB is 5/1024/0.5 =
// 9.765625 mV at the node, so 2 mV rms is 0.2048 LSB.
func TestBoardConfigNoise(t *testing.T) {
	rig := &model.Rig{Nodes: []model.Node{model.NodeVcap}, Div: []float64{0.5}, Bits: 10, RefV: 5}
	cfg := boardConfig(rig, nil, boardFlaws{NoiseV: 2e-3})
	if math.Abs(cfg.NoiseLSB-0.2048) > 1e-12 {
		t.Errorf("NoiseLSB = %g, want 0.2048", cfg.NoiseLSB)
	}
	if cfg.AVccV != 5 || cfg.EBits != 10 || cfg.Channels != 1 {
		t.Errorf("AVcc %g V, ebits %d, %d channels; want 5 V, 10, 1", cfg.AVccV, cfg.EBits, cfg.Channels)
	}
}

// TestRobotOverPTY runs "capcycle robot" with a profile, reads the path it prints and
// records it with the logger over the real serial stack (go.bug.st/serial on the
// pseudo-terminal) until the robot's model time is over.
func TestRobotOverPTY(t *testing.T) {
	prof := filepath.Join("..", "..", "analyze", "model", "scenarios", "wren.toml")
	stdoutR, stdoutW := io.Pipe()
	stderr := &loggertest.Buffer{}
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	// Three minutes of noon, as fast as the host reads.
	args := []string{"robot", "--profile", prof, "--speed", "0", "--hours", "0.05", "--start", "12:00", "--linger", "300ms"}
	code := make(chan int, 1)
	go func() {
		code <- run(ctx, args, &env{stdin: strings.NewReader(""), stdout: stdoutW, stderr: stderr})
		stdoutW.Close()
	}()
	line, err := bufio.NewReader(stdoutR).ReadString('\n')
	if err != nil {
		t.Fatalf("no path on stdout: %v; stderr: %s", err, stderr.String())
	}
	go io.Copy(io.Discard, stdoutR)
	path := strings.TrimSpace(line)
	if !strings.HasPrefix(path, "/dev/") {
		t.Fatalf("stdout line %q is not a device path", line)
	}
	out := filepath.Join(t.TempDir(), "robot.csv")
	recCtx, stopRec := context.WithCancel(ctx)
	defer stopRec()
	recDone := make(chan error, 1)
	cfg := &logger.Config{Port: path, Out: out, Channels: 2, Columns: []string{"vcell_v"}}
	go func() {
		_, err := logger.Record(recCtx, cfg)
		recDone <- err
	}()
	select {
	case c := <-code:
		if c != 0 {
			t.Fatalf("robot: exit %d: %s", c, stderr.String())
		}
	case <-ctx.Done():
		t.Fatal("the robot did not finish three minutes of model time within a minute")
	}
	stopRec()
	if err := <-recDone; err != nil {
		t.Fatalf("record: %v", err)
	}
	if s := stderr.String(); !strings.Contains(s, "Wren") || !strings.Contains(s, "model time is over") {
		t.Errorf("robot status lacks the name or the end: %s", s)
	}

	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := capture.NewReader(f, out)
	ts, vs := make([]float64, 4096), make([]float64, 4096)
	var n int
	var first, last, vmax float64
	for {
		k, err := r.Read(ts, vs)
		for i := range k {
			if n == 0 {
				first = ts[i]
			}
			last, vmax = ts[i], max(vmax, vs[i])
			n++
		}
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("capture does not parse: %v", err)
		}
	}
	// 180 s at 10 averaged rows a second, plus bursts at the fires.
	if n < 1500 || last-first < 170 {
		t.Errorf("capture holds %d rows over %.1f s; want at least 1500 over about 180 s", n, last-first)
	}
	// Wren's trigger is at 2.7 V (wren.toml); noon sun takes it there within the minutes.
	if vmax < 2.5 || vmax > 3.2 {
		t.Errorf("highest storage voltage %.3f V; want near the 2.7 V trigger", vmax)
	}
	raw, _ := os.ReadFile(out)
	if !bytes.Contains(raw, []byte("time_s,vcap_v,vcell_v")) || !bytes.Contains(raw, []byte("board=virtual-robot")) {
		t.Errorf("capture header lacks the vcell column or the board's identity:\n%s", raw[:min(len(raw), 800)])
	}
}

// TestRobotFlags: impossible values are usage errors (exit 2).
func TestRobotFlags(t *testing.T) {
	for _, args := range [][]string{
		{"robot", "--scenario", "wren", "--profile", "x.toml"},
		{"robot", "--scenario", "nosuch"},
		{"robot", "--hours", "0"},
		{"robot", "--speed", "-1"},
		{"robot", "--speed", "fast"},
		{"robot", "--baud", "0"},
		{"robot", "--start", "25:00"},
		{"robot", "extra"},
	} {
		var out, errs bytes.Buffer
		if code := run(context.Background(), args, &env{stdin: strings.NewReader(""), stdout: &out, stderr: &errs}); code != exitUsage {
			t.Errorf("%v: exit %d, want %d (%s)", args, code, exitUsage, errs.String())
		}
	}
}

// TestScenarioWiring: a built-in scenario is wired as its demo profile: Wren has its
// cell on ADC1, Fern its storage behind 2.2 MΩ over 1 MΩ (fern.toml).
func TestScenarioWiring(t *testing.T) {
	for _, c := range []struct {
		name  string
		nodes []model.Node
		div0  float64
	}{
		{"wren", []model.Node{model.NodeVcap, model.NodeVcell}, 0.5},
		{"fern", []model.Node{model.NodeVcap}, 1.0 / 3.2},
	} {
		f := &robotFlags{scenario: c.name}
		rig, err := f.rig()
		if err != nil {
			t.Fatal(err)
		}
		if len(rig.Nodes) != len(c.nodes) || rig.Nodes[0] != c.nodes[0] || rig.Nodes[len(rig.Nodes)-1] != c.nodes[len(c.nodes)-1] {
			t.Errorf("%s: nodes %v, want %v", c.name, rig.Nodes, c.nodes)
		}
		if math.Abs(rig.Div[0]-c.div0) > 1e-12 {
			t.Errorf("%s: ADC0 divider %g, want %g", c.name, rig.Div[0], c.div0)
		}
	}
}

// TestRobotSpeedAuto: by default the robot runs at the fastest speed its serial link
// carries at the board's boot settings, and says so; a speed above it is said plainly
// to drop frames.
func TestRobotSpeedAuto(t *testing.T) {
	fs, f := newRobotFlags(io.Discard)
	if err := parseFlags(fs, []string{"--scenario", "wren"}); err != nil {
		t.Fatal(err)
	}
	rig, err := f.rig()
	if err != nil {
		t.Fatal(err)
	}
	_, b, speed, lb, err := f.open(rig)
	if err != nil {
		t.Fatal(err)
	}
	b.Close()
	// Wren's board: 2 channels at 12 bits (10 + 2 oversampled), 100 Hz fast, 10 Hz
	// slow. A burst's S frame is at most 41 bytes ("!S 4294967295 4294967295 4095
	// 4095 *XXXX\n"), so 4100 bytes a model second from the bursts alone, and a
	// 115200-baud 8N1 link carries 11520 bytes a second: below 2.81x real time.
	if !f.speed.Auto || lb.LinkBytesPerS != 11520 || lb.PeakBytesPerS < 4100 {
		t.Fatalf("auto %v, budget %+v", f.speed.Auto, lb)
	}
	if speed > lb.MaxSpeed || speed < 0.9*lb.MaxSpeed || lb.MaxSpeed > 11520.0/4100 {
		t.Errorf("auto speed %g; the link carries up to %g", speed, lb.MaxSpeed)
	}
	if p := virtualboard.DescribePace(speed, true, 115200, lb); len(p) != 1 || !strings.Contains(p[0], "the most a 115200-baud link carries") {
		t.Errorf("pace at the auto speed: %q", p)
	}
	p := virtualboard.DescribePace(100, false, 115200, lb)
	if len(p) != 2 || !strings.Contains(p[1], "dropped") || !strings.Contains(p[1], fmt.Sprintf("--speed %g or lower", speed)) {
		t.Errorf("pace at 100x says %q; want a plain word on the dropped frames and the speed that carries them", p)
	}
	for _, c := range []struct{ in, want float64 }{{2.81, 2.8}, {0.347, 0.34}, {57.9, 57}, {1234, 1200}} {
		if got := virtualboard.AutoSpeed(c.in); got != c.want {
			t.Errorf("virtualboard.AutoSpeed(%g) = %g, want %g", c.in, got, c.want)
		}
	}
}

// TestRobotTooFastSaysWhatItDrops runs the robot at 100x real time, well above what
// its link carries, with the recorder on the port: the robot says at start that frames
// will be dropped, counts them in its last status line, and the recorder counts the
// dropped samples as lost.
func TestRobotTooFastSaysWhatItDrops(t *testing.T) {
	stdoutR, stdoutW := io.Pipe()
	stderr := &loggertest.Buffer{}
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute) // a guard against a hang
	defer cancel()
	args := []string{"robot", "--scenario", "wren", "--speed", "100", "--hours", "0.05", "--start", "12:00", "--linger", "300ms"}
	code := make(chan int, 1)
	go func() {
		code <- run(ctx, args, &env{stdin: strings.NewReader(""), stdout: stdoutW, stderr: stderr})
		stdoutW.Close()
	}()
	line, err := bufio.NewReader(stdoutR).ReadString('\n')
	if err != nil {
		t.Fatalf("no path on stdout: %v; stderr: %s", err, stderr.String())
	}
	go io.Copy(io.Discard, stdoutR)
	out := filepath.Join(t.TempDir(), "robot.csv")
	recCtx, stopRec := context.WithCancel(ctx)
	defer stopRec()
	type rec struct {
		s   *logger.Summary
		err error
	}
	recDone := make(chan rec, 1)
	go func() {
		s, err := logger.Record(recCtx, &logger.Config{Port: strings.TrimSpace(line), Out: out, Channels: 2})
		recDone <- rec{s, err}
	}()
	if c := <-code; c != 0 {
		t.Fatalf("robot: exit %d: %s", c, stderr.String())
	}
	stopRec()
	r := <-recDone
	if r.err != nil {
		t.Fatalf("record: %v", r.err)
	}
	msg := stderr.String()
	if !strings.Contains(msg, "frames the link cannot carry are dropped") {
		t.Errorf("the robot did not say that 100x drops frames:\n%s", msg)
	}
	lines := strings.Split(strings.TrimSpace(msg), "\n")
	var last string
	for _, l := range lines {
		if strings.Contains(l, " frames") && strings.Contains(l, "model ") {
			last = l
		}
	}
	var dropped int
	if i := strings.Index(last, "("); i < 0 {
		t.Fatalf("the last status line %q counts no dropped frames", last)
	} else if _, err := fmt.Sscanf(last[i:], "(%d dropped", &dropped); err != nil || dropped == 0 {
		t.Fatalf("the last status line %q: want a count of dropped frames (%v)", last, err)
	}
	if r.s.Stats.Lost == 0 || r.s.Stats.Lost > int64(dropped) {
		t.Errorf("the recorder counted %d lost samples; the board dropped %d frames", r.s.Stats.Lost, dropped)
	}
}
