package logger

import (
	"io"
	"math"
	"os"
	"strings"
	"testing"

	"capcycle/firmware-protocol/wire"
	"capcycle/logger/capture"
)

// TestRecordScaledColumn records a current-sense channel written in amperes: the board's
// volts at ADC1 (divider 1, its own calibration offset) times Config.Scales[1].
func TestRecordScaledColumn(t *testing.T) {
	pb := newPtyBoard(t)
	pb.mu.Lock()
	pb.id.NCh = 2
	pb.ch = append(pb.ch, wire.Channel{Ch: 1, Div: wire.MicroOf(1), Gain: wire.MicroOf(1), OffUV: 10000})
	pb.mu.Unlock()
	cfg := ptyConfig(pb)
	cfg.Channels = 2
	cfg.Columns = []string{capture.ColIload}
	cfg.Dividers = []float64{0, 1}
	cfg.Scales = []float64{0, 0.05} // 1/(1 Ω · 20): a shunt and an amplifier, 20 V/A
	cfg.Decimals = 7
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 10, func(i int) uint16 { return 2048 }))
	r.waitFor("10 samples")
	r.stop()

	b, err := os.ReadFile(cfg.Out)
	if err != nil {
		t.Fatal(err)
	}
	text := string(b)
	// The metadata says how the amperes were made: v = counts/2^12 · 5 V / 1 · 0.05, then
	// the board's calibration, its 10 mV offset scaled to 0.5 mA.
	for _, want := range []string{
		"# channel: iload_a adc=1 bits=12 ref_v=5 divider=1 scale=0.05\n",
		"# calibration: iload_a gain=1 offset_v=0.0005 from=board\n",
		"time_s,vcap_v,iload_a\n",
		",5.0000000,0.1255000\n", // Decimals
	} {
		if !strings.Contains(text, want) {
			t.Errorf("capture has no %q:\n%s", want, text)
		}
	}
	f, err := os.Open(cfg.Out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rd := capture.NewReader(f, cfg.Out)
	ts, vs, is := make([]float64, 64), make([]float64, 64), make([]float64, 64)
	n, err := rd.ReadCurrent(ts, vs, is)
	if err != nil && err != io.EOF {
		t.Fatal(err)
	}
	if n != 10 || !rd.HasCurrent() {
		t.Fatalf("%d rows, current column %v", n, rd.HasCurrent())
	}
	// 2048/4096 · 5 V = 2.5 V at the pin, + 10 mV offset = 2.51 V; at 20 V/A, 125.5 mA.
	// vcap through the board's 0.5 divider: 5 V.
	for k := 0; k < n; k++ {
		if math.Abs(is[k]-0.1255) > 1e-9 || math.Abs(vs[k]-5) > 1e-9 {
			t.Fatalf("row %d: %g V, %g A; want 5 V, 0.1255 A", k, vs[k], is[k])
		}
	}
}

func TestConfigScales(t *testing.T) {
	for _, c := range []struct {
		name string
		cfg  Config
		want string // "" = accepted
	}{
		{"positive", Config{Out: "x.csv", Scales: []float64{0, 0.05}}, ""},
		{"negative", Config{Out: "x.csv", Scales: []float64{1, -2}}, "channel 1 scale -2"},
		{"infinite", Config{Out: "x.csv", Scales: []float64{math.Inf(1)}}, "channel 0 scale"},
		{"text input", Config{Out: "x.csv", Input: InputText, Scales: []float64{1, 0.05}}, "frame input"},
		{"too many decimals", Config{Out: "x.csv", Decimals: 13}, "decimals"},
		{"text input, all ones", Config{Out: "x.csv", Input: InputText, Scales: []float64{1, 0}}, ""},
	} {
		err := c.cfg.check()
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%s: %v", c.name, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%s: error %v, want one with %q", c.name, err, c.want)
		}
	}
}
