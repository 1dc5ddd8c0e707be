package detect

// Bin is one bin of a min/max envelope.
type Bin struct {
	StartS, EndS float64
	MinV, MaxV   float64
}

// Envelope keeps the minimum and maximum voltage of a capture of any length in between
// Bins/2 and Bins bins of equal duration: when the bins run out it merges them pairwise
// and doubles the bin width, so the memory is fixed however long the capture.
type Envelope struct {
	bins  []Bin
	width float64
	t0    float64
	start bool
	limit int
}

// NewEnvelope returns an envelope of at most limit bins (limit >= 2; 4000 gives 2000 to
// 4000 bins).
func NewEnvelope(limit int) *Envelope {
	if limit < 2 {
		panic("detect: envelope needs at least 2 bins")
	}
	return &Envelope{limit: limit}
}

// Add puts samples (t increasing) into the envelope.
func (e *Envelope) Add(t, v []float64) {
	for i := range t {
		if !e.start {
			e.start = true
			e.t0 = t[i]
			e.width = 1e-3
			if len(t) > 1 && t[len(t)-1] > t[0] {
				e.width = (t[len(t)-1] - t[0]) / float64(len(t)) * 4
			}
		}
		if n := len(e.bins); n > 0 && t[i] >= e.bins[n-1].StartS && t[i] < e.bins[n-1].EndS {
			// the common case: still in the last bin
			b := &e.bins[n-1]
			if !(v[i] >= b.MinV) {
				b.MinV = v[i]
			}
			if !(v[i] <= b.MaxV) {
				b.MaxV = v[i]
			}
			continue
		}
		k := int((t[i] - e.t0) / e.width)
		for k >= e.limit {
			e.merge()
			k = int((t[i] - e.t0) / e.width)
		}
		for len(e.bins) <= k {
			s := e.t0 + float64(len(e.bins))*e.width
			e.bins = append(e.bins, Bin{StartS: s, EndS: s + e.width, MinV: nan, MaxV: nan})
		}
		b := &e.bins[k]
		if !(v[i] >= b.MinV) {
			b.MinV = v[i]
		}
		if !(v[i] <= b.MaxV) {
			b.MaxV = v[i]
		}
	}
}

func (e *Envelope) merge() {
	k := 0
	for i := 0; i < len(e.bins); i += 2 {
		b := e.bins[i]
		if i+1 < len(e.bins) {
			c := e.bins[i+1]
			b.EndS = c.EndS
			if c.MinV < b.MinV || b.MinV != b.MinV {
				b.MinV = c.MinV
			}
			if c.MaxV > b.MaxV || b.MaxV != b.MaxV {
				b.MaxV = c.MaxV
			}
		} else {
			b.EndS = b.StartS + 2*e.width
		}
		e.bins[k] = b
		k++
	}
	e.bins = e.bins[:k]
	e.width *= 2
}

// Bins returns the bins that hold samples (empty bins, inside gaps, are left out).
func (e *Envelope) Bins() []Bin {
	out := make([]Bin, 0, len(e.bins))
	for _, b := range e.bins {
		if b.MinV == b.MinV {
			out = append(out, b)
		}
	}
	return out
}
