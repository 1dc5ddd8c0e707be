package profile

import (
	"fmt"
	"math"
)

// Recording is how the recorder writes a board wired as the profile says: plain values
// that the command line copies into the logger's configuration (the logger knows no
// profiles).
type Recording struct {
	Channels int       // channels to record: ADC0 .. ADC(n-1)
	Dividers []float64 // per channel, the divider ratio (ADC volts over node volts)
	// Scales is a per channel factor after the divider (1/(shunt·gain) for a load-current
	// channel, which is written in amperes); nil when every factor is 1.
	Scales  []float64
	Columns []string // names of the columns after vcap_v, one per channel from ADC1
	// Decimals keeps the file's step at most a tenth of a count of any current channel
	// (0: the recorder's default).
	Decimals int
	Ref      string // the reference: "avcc" or "int"
}

// MaxRecordedChannels is the board's number of analogue inputs the recorder takes
// (PROTOCOL.md: ADC0..ADC3).
const MaxRecordedChannels = 4

// ColIload is the column name of a load-current channel, amperes (the capture format's).
const ColIload = "iload_a"

// Recording says how to record the board the profile wires: vcap on ADC0 (the recorder
// writes ADC0 as vcap_v), further nodes on ADC1.., each through its divider; a
// load-current channel (node iload) as column iload_a in amperes, divider 1 and a scale
// of 1/(shunt·gain) on the volts at its pin. channels, when not 0, is the number of
// channels to record (else ADC0 to the highest the profile uses). text is set for
// plain-text input from other firmware, which has one scale for every column and so
// cannot carry a current channel.
func (p *Profile) Recording(channels int, text bool) (Recording, error) {
	byADC := map[int]Channel{}
	maxADC := 0
	for _, c := range p.Channels {
		byADC[c.ADC] = c
		maxADC = max(maxADC, c.ADC)
	}
	if c, ok := byADC[0]; !ok || c.Node != NodeVcap {
		return Recording{}, fmt.Errorf("profile %s: the board's ADC0 must read vcap (the recorder writes ADC0 as vcap_v)", p.Name)
	}
	if maxADC >= MaxRecordedChannels {
		return Recording{}, fmt.Errorf("profile %s: ADC%d: the board records ADC0..ADC%d", p.Name, maxADC, MaxRecordedChannels-1)
	}
	r := Recording{Channels: channels}
	if r.Channels == 0 {
		r.Channels = maxADC + 1
	}
	r.Dividers = make([]float64, r.Channels)
	for k := 0; k < r.Channels; k++ {
		c, ok := byADC[k]
		if ok {
			r.Dividers[k] = c.Ratio()
		}
		if ok && c.IsCurrent() {
			if text {
				return Recording{}, fmt.Errorf("profile %s: ADC%d reads the load current: text input has one scale for every column, so record it with the capcycle firmware (frame input)", p.Name, k)
			}
			if r.Scales == nil {
				r.Scales = make([]float64, r.Channels)
			}
			r.Dividers[k], r.Scales[k] = 1, 1/c.VoltsPerAmp()
			r.Decimals = max(r.Decimals, currentDecimals(p.ADC, c))
		}
		if k > 0 {
			r.Columns = append(r.Columns, columnName(k, c, ok))
		}
	}
	switch p.ADC.Reference {
	case RefAVCC:
		r.Ref = "avcc"
	case RefInternal:
		r.Ref = "int"
	}
	return r, nil
}

func columnName(k int, c Channel, ok bool) string {
	switch {
	case ok && c.IsCurrent():
		return ColIload
	case ok:
		return string(c.Node) + "_v"
	}
	return fmt.Sprintf("ch%d_v", k)
}

// currentDecimals is the number of decimals that keeps the file's step at most a tenth
// of a count of current channel c at the firmware's resolution (the profile's bits plus
// the 2 of its default oversampling): at least the default 5, at most 12.
func currentDecimals(a ADC, c Channel) int {
	lsbA := a.ReferenceV / math.Ldexp(1, a.Bits+2) / c.VoltsPerAmp()
	d := int(math.Ceil(-math.Log10(lsbA / 10)))
	return min(max(d, 5), 12)
}

// BurstThreshold is a burst threshold for the board, in counts at ebits of resolution:
// half of on_v − off_v at the storage node, seen through a divider of ratio div on a
// reference of refV volts, so that a fire starts a burst and the charging between two
// slow rows does not; at least 8 counts (and 8 when the profile gives no swing).
func (p *Profile) BurstThreshold(div, refV float64, ebits int) int {
	swing := p.Trigger.OnV - p.Trigger.OffV
	if !(swing > 0) || !(refV > 0) {
		return 8
	}
	c := 0.5 * swing * div / refV * float64(int(1)<<ebits)
	return max(8, int(c))
}
