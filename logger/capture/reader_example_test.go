package capture_test

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"capcycle/logger/capture"
)

func ExampleReader() {
	in := `# format: capcycle.capture/1
# profile: wren
time_s,vcap_v
0.000000,2.41513
0.100000,2.41602
# gap: start_s=0.100000 end_s=0.400000 reason=lost-samples lost=2
0.400000,2.41870
`
	r := capture.NewReader(strings.NewReader(in), "day.csv")
	t, v := make([]float64, 2), make([]float64, 2) // the caller's buffers, reused
	for {
		n, err := r.Read(t, v)
		for i := 0; i < n; i++ {
			fmt.Printf("%.1f s  %.5f V\n", t[i], v[i])
		}
		if err == io.EOF {
			break
		}
		if err != nil {
			fmt.Println(err)
			return
		}
	}
	fmt.Println("profile:", r.Meta()["profile"], "gaps:", len(r.Gaps()), "lost:", r.Lost())
	// Output:
	// 0.0 s  2.41513 V
	// 0.1 s  2.41602 V
	// 0.4 s  2.41870 V
	// profile: wren gaps: 1 lost: 2
}

// A foreign logger's CSV: semicolons, decimal commas, millivolts named in the header.
func ExampleReader_foreign() {
	in := "Time (s);Voltage (mV)\n0,0;2415,1\n0,5;2416,3\n"
	r := capture.NewReader(strings.NewReader(in), "logger.csv")
	t, v := make([]float64, 8), make([]float64, 8)
	n, _ := r.Read(t, v)
	fmt.Println(n, t[1], v[1])
	// Output: 2 0.5 2.4163
}

// Bad input names the file, line and column.
func ExampleParseError() {
	r := capture.NewReader(strings.NewReader("time_s,vcap_v\n0,1.5\n0.1,NaN\n"), "day.csv")
	_, err := r.Read(make([]float64, 8), make([]float64, 8))
	var pe *capture.ParseError
	if errors.As(err, &pe) {
		fmt.Println(pe.Line, pe.Column, errors.Is(err, capture.ErrNotFinite))
		fmt.Println(err)
	}
	// Output:
	// 3 5 true
	// capture: day.csv:3:5: not a finite number (NaN or Inf) ("NaN")
}
