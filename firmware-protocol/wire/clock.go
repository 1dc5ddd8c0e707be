package wire

// Clock unwraps the device's 32-bit microsecond clock (t_us) into a monotonic count.
// Each reading moves the count by its difference from the previous one, taken as a
// signed 32-bit number, so readings may wrap past 2^32 or step a little back (the
// pre-trigger ring's S frames are older than the B frame before them) as long as
// successive readings are less than 2^31 µs (about 35.8 minutes) apart. The first
// reading is taken as is. The zero value is ready to use.
type Clock struct {
	last    uint32
	us      int64
	started bool
}

// Micros returns the unwrapped time of reading t in microseconds.
func (c *Clock) Micros(t uint32) int64 {
	if !c.started {
		c.started, c.last, c.us = true, t, int64(t)
		return c.us
	}
	c.us += int64(int32(t - c.last))
	c.last = t
	return c.us
}

// Seconds returns the unwrapped time of reading t in seconds.
func (c *Clock) Seconds(t uint32) float64 { return float64(c.Micros(t)) / 1e6 }

// Reset forgets the history, so the next reading is taken as is. Call it when the
// board restarts (an Identity frame with Boot set).
func (c *Clock) Reset() { *c = Clock{} }
