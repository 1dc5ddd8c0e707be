package virtualboard

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// AutoSpeed is the speed a board runs at when asked for the fastest its link carries:
// the link budget's MaxSpeed, rounded down to two
// significant digits.
func AutoSpeed(maxSpeed float64) float64 {
	if !(maxSpeed > 0) || math.IsInf(maxSpeed, 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(maxSpeed))-1)
	// Two digits, without the binary fraction's tail (2.3, not 2.3000000000000003).
	v, _ := strconv.ParseFloat(strconv.FormatFloat(math.Floor(maxSpeed/p)*p, 'g', 2, 64), 64)
	return v
}

// DescribePace says, in a line or two for a person, how fast a board runs and, when the link cannot carry what the
// board may send at that speed, plainly what is lost.
func DescribePace(speed float64, auto bool, baud int, lb LinkBudget) []string {
	if speed == 0 {
		return []string{"as fast as the host reads (nothing is lost)"}
	}
	pace := fmt.Sprintf("%gx real time", speed)
	if auto {
		pace += fmt.Sprintf(" (the most a %d-baud link carries)", baud)
	}
	out := []string{pace}
	if speed > lb.MaxSpeed {
		out = append(out, fmt.Sprintf("at %gx real time the %d-baud link carries %s a model second, and the board can send %s a model second in a burst: "+
			"frames the link cannot carry are dropped (counted below as dropped, and in the board's status frames; a recorder counts them as lost samples). "+
			"--speed %g or lower carries every frame; --speed 0 runs as fast as the host reads",
			speed, baud, byteCount(lb.LinkBytesPerS/speed), byteCount(lb.PeakBytesPerS), AutoSpeed(lb.MaxSpeed)))
	}
	return out
}

// byteCount prints a byte count.
func byteCount(n float64) string {
	if n >= 1000 {
		return fmt.Sprintf("%.3g kB", n/1000)
	}
	return fmt.Sprintf("%.3g bytes", n)
}

// Speed is a board's pace as a person gives it (a flag): "auto", the fastest its link
// carries (AutoSpeed), or X, a factor of real time, 0 or more (0: as fast as the host
// reads).
type Speed struct {
	Auto bool
	X    float64
}

func (s *Speed) String() string {
	if s == nil || s.Auto {
		return "auto"
	}
	return strconv.FormatFloat(s.X, 'g', -1, 64)
}

// Set reads "auto" or a factor of real time.
func (s *Speed) Set(x string) error {
	if strings.EqualFold(x, "auto") {
		*s = Speed{Auto: true}
		return nil
	}
	v, err := strconv.ParseFloat(x, 64)
	if err != nil || v < 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("want auto or a factor of real time, 0 or more")
	}
	*s = Speed{X: v}
	return nil
}
