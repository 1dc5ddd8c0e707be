package capture_test

import (
	"fmt"
	"strings"
	"time"

	"capcycle/logger/capture"
)

func ExampleNewWriter() {
	var b strings.Builder
	w, err := capture.NewWriter(&b, &capture.Header{
		Start:    time.Date(2026, 12, 1, 9, 30, 0, 0, time.UTC),
		Profile:  "wren",
		Channels: []capture.Channel{{Column: "vcap_v", Bits: 12, RefV: 5, Divider: 0.5}},
	}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	w.Row(0, []float64{2.41513})
	w.Row(0.1, []float64{2.41602})
	w.GapUntilNextRow(0.1, capture.GapLostSamples, 2)
	w.Row(0.4, []float64{2.4187})
	w.Close(nil)
	fmt.Print(b.String())
	// Output:
	// # format: capcycle.capture/1
	// # start: 2026-12-01T09:30:00.000000Z
	// # profile: wren
	// # channel: vcap_v adc=0 bits=12 ref_v=5 divider=0.5 scale=1
	// # calibration: vcap_v gain=1 offset_v=0 from=none
	// time_s,vcap_v
	// 0.000000,2.41513
	// 0.100000,2.41602
	// # gap: start_s=0.100000 end_s=0.400000 reason=lost-samples lost=2
	// 0.400000,2.41870
}

func ExampleParseComment() {
	key, value, ok := capture.ParseComment("# gap: start_s=0.1 end_s=0.4 reason=lost-samples lost=2")
	fmt.Println(key, ok)
	word, fields := capture.ParseFields(value)
	fmt.Printf("%q %v\n", word, fields)
	_, _, ok = capture.ParseComment("# a free comment")
	fmt.Println(ok)
	// Output:
	// gap true
	// "" [{start_s 0.1} {end_s 0.4} {reason lost-samples} {lost 2}]
	// false
}
