package logger

import (
	"bytes"
	"fmt"
	"math"
	"strconv"

	"capcycle/logger/capture"
)

// maxTextLine is the longest text line accepted; longer ones are counted as bad.
const maxTextLine = 512

// textParser turns lines of numbers into rows, stamped with the host's arrival time.
// Numbers are separated by commas, semicolons, spaces or tabs; a line whose first
// Columns fields are not all numbers (a banner, a prompt, a cut line) is counted as bad
// and not written.
type textParser struct {
	s       *stream
	cfg     TextInput
	factor  float64
	pend    []byte
	vals    []float64
	toolong bool
}

func newTextParser(s *stream, cfg TextInput) *textParser {
	f := 1.0
	if cfg.Bits > 0 {
		f = cfg.VrefV / math.Ldexp(1, cfg.Bits)
	}
	f /= or1(cfg.Divider)
	f *= or1(cfg.Scale)
	return &textParser{s: s, cfg: cfg, factor: f, vals: make([]float64, cfg.Columns)}
}

func or1(x float64) float64 {
	if x == 0 {
		return 1
	}
	return x
}

// TextVolts converts one number of a text line to volts with in's settings:
// n / 2^Bits * VrefV / Divider * Scale (Bits 0: n is volts).
//
// With Bits 10 and VrefV 5, 512 counts are 2.5 V at the ADC: the ATmega328P's result
// is Vin*1024/Vref (datasheet, "ADC Conversion Result").
func TextVolts(in TextInput, n float64) float64 {
	return n * newTextParser(nil, in).factor
}

func (p *textParser) feed(b []byte, hostS float64) error {
	for len(b) > 0 {
		i := bytes.IndexByte(b, '\n')
		if i < 0 {
			if len(p.pend)+len(b) > maxTextLine {
				p.toolong = true
				p.pend = p.pend[:0]
			} else {
				p.pend = append(p.pend, b...)
			}
			return nil
		}
		line := b[:i]
		b = b[i+1:]
		if len(p.pend) > 0 {
			p.pend = append(p.pend, line...)
			line = p.pend
		}
		bad := p.toolong || len(line) > maxTextLine
		p.toolong = false
		var err error
		if bad {
			p.s.stats.BadFrames++
		} else {
			err = p.line(line, hostS)
		}
		p.pend = p.pend[:0]
		if err != nil {
			return err
		}
	}
	return nil
}

func (p *textParser) line(line []byte, hostS float64) error {
	line = bytes.TrimRight(line, "\r")
	if len(bytes.TrimSpace(line)) == 0 {
		return nil
	}
	n, ok := parseNumbers(line, p.vals)
	if !ok || n < len(p.vals) {
		p.s.stats.BadFrames++
		return nil
	}
	for k := range p.vals {
		p.vals[k] *= p.factor
	}
	t := hostS
	p.s.hostS = hostS
	if p.s.written && t < p.s.lastS+1e-6 {
		t = p.s.lastS + 1e-6 // lines that arrive together: 1 us apart, in order
	}
	return p.s.row(t, p.vals)
}

// parseNumbers reads the numbers of line into dst (at most len(dst)) and returns how
// many it read; ok is false if a field among the first len(dst) is not a number.
func parseNumbers(line []byte, dst []float64) (n int, ok bool) {
	i := 0
	for i < len(line) && n < len(dst) {
		for i < len(line) && isSep(line[i]) {
			i++
		}
		j := i
		for j < len(line) && !isSep(line[j]) {
			j++
		}
		if j == i {
			break
		}
		v, err := strconv.ParseFloat(string(line[i:j]), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return n, false
		}
		dst[n] = v
		n++
		i = j
	}
	return n, true
}

func isSep(c byte) bool { return c == ',' || c == ' ' || c == '\t' || c == ';' }

// openText creates the capture for text input; there is no handshake.
func (ss *session) openText() error {
	t := ss.cfg.Text
	if t.Columns <= 0 {
		t.Columns = 1
	}
	if ss.cfg.Channels > 0 {
		t.Columns = ss.cfg.Channels
	}
	cols := ss.cfg.columns(t.Columns)
	chans := make([]capture.Channel, t.Columns)
	for k := range chans {
		chans[k] = capture.Channel{Column: cols[k], ADC: k, Bits: t.Bits, RefV: t.VrefV,
			Divider: t.Divider, Scale: t.Scale}
	}
	if err := ss.openFile(ss.header("", chans)); err != nil {
		return err
	}
	ss.s = newStream(ss.w, t.Columns, nil)
	ss.text = newTextParser(ss.s, t)
	ss.resume()
	if ss.text.factor <= 0 || math.IsInf(ss.text.factor, 0) {
		return fmt.Errorf("logger: text conversion factor %g is not usable", ss.text.factor)
	}
	return nil
}
