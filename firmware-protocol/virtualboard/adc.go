package virtualboard

import (
	"math"
	"math/rand/v2"
)

// conversionsPerSecond is the ATmega328P's conversion rate at full resolution: a
// 16 MHz clock with the ADC prescaler at 128 gives a 125 kHz ADC clock (inside the
// 50-200 kHz the datasheet asks for full resolution), and a normal conversion takes 13
// ADC clocks (ATmega328P datasheet, section "Analog-to-Digital Converter",
// "Prescaling and Conversion Timing").
const conversionsPerSecond = 16e6 / 128 / 13

// maxHz is the highest fast rate for nch channels when each sample is 4^(ebits-bits)
// conversions.
func maxHz(nch, bits, ebits int) uint32 {
	return uint32(conversionsPerSecond / float64(nch) / float64(int(1)<<(2*(ebits-bits))))
}

// adc models the converter: each conversion truncates Vpin*2^bits/Vref (the
// datasheet's ADC = Vin*1024/Vref for 10 bits) after adding Gaussian noise, clamps to
// the code range, and 4^n conversions are summed and shifted right by n for n extra
// bits (oversampling and decimation, Atmel application note AVR121).
type adc struct {
	bits, ebits int
	noiseLSB    float64
	rng         *rand.Rand
}

func (a *adc) sample(vpin, vref float64) uint16 {
	x := vpin / vref * float64(int(1)<<a.bits)
	n := a.ebits - a.bits
	top := int(1)<<a.bits - 1
	sum := 0
	for range 1 << (2 * n) {
		c := x
		if a.noiseLSB > 0 {
			c += a.noiseLSB * a.rng.NormFloat64()
		}
		code := 0
		switch {
		case c >= float64(top):
			code = top
		case c > 0:
			code = int(math.Floor(c))
		}
		sum += code
	}
	return uint16(sum >> n)
}

func newRand(seed uint64) *rand.Rand { return rand.New(rand.NewPCG(seed, 0x6361706379636c65)) }
