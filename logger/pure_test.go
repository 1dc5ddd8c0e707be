package logger

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"go.bug.st/serial"
)

func TestDriftFit(t *testing.T) {
	// A board clock 250 ppm slow against the host: device = host * (1 - 250e-6), so the
	// drift is -250 ppm. Two segments with different intercepts; arrivals late by 0 to
	// 1.5 ms, and every seventh by 80 ms (a busy machine).
	var d DriftFit
	jit := []float64{0.001, 0.0005, 0, 0.0007, 0.0015, 0.0002, 0.08}
	for seg, off := range []float64{10, 5000} {
		if seg > 0 {
			d.NewSegment()
		}
		for i := 0; i < 36000; i++ {
			host := off + float64(i)/10
			dev := 1e6 + host*(1-250e-6) // the board started its clock at some other time
			d.Add(dev, host+jit[i%len(jit)])
		}
	}
	ppm, ok := d.PPM()
	if !ok || math.Abs(ppm-(-250)) > 2 {
		t.Errorf("drift %v ppm (ok %v), want -250 +- 2", ppm, ok)
	}
	if d.Points() != 72000 || math.Abs(d.SpanS()-2*3599.9*(1-250e-6)) > 1.01 {
		t.Errorf("points %d span %v", d.Points(), d.SpanS())
	}
	var empty DriftFit
	if _, ok := empty.PPM(); ok {
		t.Error("an empty fit gave a drift")
	}
}

// TestDriftRule: a drift is given only from a fit of at least MinDriftSpanS over
// MinDriftBlocks blocks, within MaxDriftPPM; the faults seen in use (a fit over 0 s, a
// board run 99 times faster than real time) give none.
func TestDriftRule(t *testing.T) {
	fit := func(n int, stepS, rate float64) *DriftFit {
		d := &DriftFit{}
		for i := 0; i < n; i++ {
			host := float64(i) * stepS
			d.Add(host*rate, host+0.0005*float64(i%3))
		}
		return d
	}
	for _, tc := range []struct {
		name string
		d    *DriftFit
		ok   bool
		ppm  float64
		why  string
	}{
		{"13 points in one burst", fit(13, 0.002, 1), false, 0, "needs at least 60 s"},
		{"59 s at 10 Hz", fit(590, 0.1, 1+200e-6), false, 0, "needs at least 60 s"},
		{"2 min at 10 Hz, 200 ppm fast", fit(1200, 0.1, 1+200e-6), true, 200, ""},
		{"10 min at 1 Hz, 5 % slow", fit(600, 1, 0.95), true, -50000, ""},
		{"a board 99 times faster than real time", fit(1200, 0.1, 99), false, 0, "do not follow real time"},
	} {
		ppm, ok, why := tc.d.Drift()
		if ok != tc.ok || ok && math.Abs(ppm-tc.ppm) > 20 || !strings.Contains(why, tc.why) {
			t.Errorf("%s: %+.1f ppm ok %v (%s); want ok %v %+.1f ppm", tc.name, ppm, ok, why, tc.ok, tc.ppm)
		}
	}
}

func TestFireDetector(t *testing.T) {
	var d FireDetector
	// Charge from 1 V to 3 V over 20 s at 10 Hz, fire down to 1 V within 0.2 s, three times.
	tm := 0.0
	for cycle := 0; cycle < 3; cycle++ {
		for i := 0; i <= 200; i++ {
			d.Add(tm, 1+2*float64(i)/200)
			tm += 0.1
		}
		d.Add(tm, 2)
		tm += 0.1
		d.Add(tm, 1)
		tm += 0.1
	}
	if d.Cycles() != 3 {
		t.Errorf("cycles %d, want 3", d.Cycles())
	}
	if p, ok := d.LastPeriod(); !ok || math.Abs(p-20.3) > 1e-9 {
		t.Errorf("period %v %v, want 20.3 s", p, ok)
	}
	// A slow leak from 3 V to 1 V over 100 s is not a fire.
	var leak FireDetector
	for i := 0; i <= 1000; i++ {
		leak.Add(float64(i)*0.1, 3-2*float64(i)/1000)
	}
	if leak.Cycles() != 0 {
		t.Errorf("a slow leak counted %d fires", leak.Cycles())
	}
}

func ExampleFitCalibration() {
	// Two points: the board read 0.990 V and 4.450 V where the multimeter showed 1.000 V
	// and 4.500 V.
	gain, off, _ := FitCalibration([]CalPoint{{RawV: 0.990, TrueV: 1.000}, {RawV: 4.450, TrueV: 4.500}})
	fmt.Printf("gain %.5f offset %.5f V\n", gain, off)
	// One point: the gain alone.
	gain, off, _ = FitCalibration([]CalPoint{{RawV: 3.25, TrueV: 3.30}})
	fmt.Printf("gain %.5f offset %.5f V\n", gain, off)
	// Output:
	// gain 1.01156 offset -0.00145 V
	// gain 1.01538 offset 0.00000 V
}

func ExampleTextVolts() {
	// A 10-bit reading of 512 with a 5 V reference through a 1:3 divider.
	fmt.Printf("%.4f V\n", TextVolts(TextInput{Bits: 10, VrefV: 5, Divider: 1.0 / 3}, 512))
	// Output:
	// 7.5000 V
}

func TestParseNumbers(t *testing.T) {
	dst := make([]float64, 3)
	for _, c := range []struct {
		line string
		n    int
		ok   bool
	}{
		{"1,2,3", 3, true}, {"1 2\t3", 3, true}, {" 1.5;  -2 ", 2, true}, {"1,x,3", 1, false},
		{"v=1", 0, false}, {"", 0, true}, {"1,2,3,4", 3, true}, {"NaN", 0, false},
	} {
		n, ok := parseNumbers([]byte(c.line), dst)
		if n != c.n || ok != c.ok {
			t.Errorf("parseNumbers(%q) = %d %v, want %d %v", c.line, n, ok, c.n, c.ok)
		}
	}
}

func TestOpenErrors(t *testing.T) {
	_, err := Open(filepath.Join(t.TempDir(), "ttyNONE"), nil)
	var pe *PortError
	if !errors.As(err, &pe) || pe.Kind != PortMissing || !strings.Contains(err.Error(), "capcycle ports") {
		t.Errorf("missing port: %v", err)
	}
	// A path that is not a terminal at all.
	f := filepath.Join(t.TempDir(), "plain")
	os.WriteFile(f, nil, 0o644)
	if _, err := Open(f, nil); err == nil {
		t.Error("a plain file opened as a serial port")
	}
	for _, c := range []struct {
		err  error
		kind PortErrorKind
		hint string
	}{
		{&serial.PortError{}, PortBusy, "another program"}, // the zero PortError is PortBusy
		{syscall.EBUSY, PortBusy, "another program"},
		{syscall.EACCES, PortPermission, "dialout"},
		{syscall.ENOENT, PortMissing, "cable"},
	} {
		e := openError("/dev/ttyUSB9", c.err).(*PortError)
		if e.Kind != c.kind || !strings.Contains(e.Error(), c.hint) || !errors.Is(e, c.err) {
			t.Errorf("%v: kind %v, message %q", c.err, e.Kind, e.Error())
		}
	}
}

func TestPickBoard(t *testing.T) {
	usb := func(p string) PortInfo { return PortInfo{Path: p, USB: true, VID: "2341", PID: "0043"} }
	one := []Answer{{Port: usb("/dev/a"), Err: ErrHandshake}, {Port: usb("/dev/b"), ID: &testIdentity}}
	if p, err := pickBoard(one); p != "/dev/b" || err != nil {
		t.Errorf("one board: %q %v", p, err)
	}
	two := append(one, Answer{Port: usb("/dev/c"), ID: &testIdentity})
	if _, err := pickBoard(two); !errors.Is(err, ErrManyBoards) || !strings.Contains(err.Error(), "/dev/c 2341:0043 board=test") {
		t.Errorf("two boards: %v", err)
	}
	if _, err := pickBoard(one[:1]); !errors.Is(err, ErrNoBoard) || !strings.Contains(err.Error(), "/dev/a") {
		t.Errorf("no board: %v", err)
	}
}

var testIdentity = newTestBoard(nil).id
