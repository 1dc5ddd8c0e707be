package analyze

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/logger/capture"
)

// metaCapture writes a capture in our format (logger/capture/FORMAT.md) with the given
// channel and calibration lines: 20 minutes at 2 Hz of a slow rise with 20 mV of noise,
// far above the ADC step, so the samples alone show no step.
func metaCapture(channel, calibration string) string {
	var sb strings.Builder
	fmt.Fprintf(&sb, "# format: %s\n", capture.FormatVersion)
	if channel != "" {
		fmt.Fprintf(&sb, "# channel: %s\n", channel)
	}
	if calibration != "" {
		fmt.Fprintf(&sb, "# calibration: %s\n", calibration)
	}
	sb.WriteString("time_s,vcap_v\n")
	rng := rand.New(rand.NewPCG(7, 8))
	for i := 0; i < 2400; i++ {
		ts := 0.5 * float64(i)
		v := 1 + 1e-4*ts + 0.02*rng.NormFloat64()
		fmt.Fprintf(&sb, "%.6f,%.5f\n", ts+0.25, v)
	}
	return sb.String()
}

// The ADC step at the storage node comes from the capture's channel line when it has
// one: one count is ref_v / 2^bits / divider * scale, times the calibration gain.
func TestStepFromMetadata(t *testing.T) {
	for _, tc := range []struct {
		name, channel, cal string
		opts               Options
		want               float64
		origin             analysis.StepOrigin
	}{
		{"channel", "vcap_v adc=0 bits=11 ref_v=5 divider=0.3125 scale=1", "", Options{}, 5.0 / 2048 / 0.3125, "metadata"},
		{"with gain", "vcap_v adc=0 bits=12 ref_v=5 divider=0.5 scale=1", "vcap_v gain=1.0012 offset_v=-0.003 from=board", Options{}, 5.0 / 4096 / 0.5 * 1.0012, "metadata"},
		{"vcap among others", "vcell_v adc=1 bits=10 ref_v=5 divider=1 scale=1", "", Options{}, 0, ""},
		{"volts already", "vcap_v adc=0 bits=0 ref_v=5 divider=1 scale=1", "", Options{}, 0, ""},
		{"option wins", "vcap_v adc=0 bits=11 ref_v=5 divider=0.3125 scale=1", "", Options{StepV: 1e-3}, 1e-3, "declared"},
		{"no metadata", "", "", Options{}, 0, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			text := metaCapture(tc.channel, tc.cal)
			if tc.name == "vcap among others" {
				// a second channel line for vcap_v after one for another column
				text = strings.Replace(text, "# channel: vcell_v", "# channel: vcap_v adc=0 bits=10 ref_v=5 divider=0.5 scale=1\n# channel: vcell_v", 1)
				tc.want, tc.origin = 5.0/1024/0.5, "metadata"
			}
			o := tc.opts
			res, err := Run(context.Background(), capture.NewReader(strings.NewReader(text), tc.name), &o)
			if err != nil {
				t.Fatal(err)
			}
			if res.Noise == nil {
				t.Fatal("no noise record")
			}
			if math.Abs(res.Noise.StepV-tc.want) > 1e-12 || res.Noise.StepOrigin != tc.origin {
				t.Errorf("step %v (%q), want %v (%q)", res.Noise.StepV, res.Noise.StepOrigin, tc.want, tc.origin)
			}
		})
	}
}
