package detect

// Point is one point of a decimated waveform: the mean time and voltage of N samples.
type Point struct {
	T, V float64
	N    int
}

// decim keeps a waveform of any length in at most limit points: it averages runs of
// width samples into one point and, when the buffer is full, merges neighbours pairwise
// and doubles the width. Short stretches are therefore kept sample for sample.
type decim struct {
	pts   []Point
	width int
	limit int
	accT  float64
	accV  float64
	accN  int
}

func newDecim(limit int) decim {
	return decim{pts: make([]Point, 0, limit), width: 1, limit: limit}
}

func (d *decim) reset() {
	d.pts = d.pts[:0]
	d.width = 1
	d.accT, d.accV, d.accN = 0, 0, 0
}

func (d *decim) add(t, v float64) { d.addWeighted(t, v, 1) }

// addWeighted adds a point that stands for n samples (mean time t, mean volts v).
func (d *decim) addWeighted(t, v float64, n int) {
	d.accT += t * float64(n)
	d.accV += v * float64(n)
	d.accN += n
	if d.accN >= d.width {
		d.push(Point{d.accT / float64(d.accN), d.accV / float64(d.accN), d.accN})
		d.accT, d.accV, d.accN = 0, 0, 0
	}
}

func (d *decim) push(p Point) {
	if len(d.pts) == d.limit {
		k := 0
		for i := 0; i+1 < len(d.pts); i += 2 {
			a, b := d.pts[i], d.pts[i+1]
			n := a.N + b.N
			d.pts[k] = Point{(a.T*float64(a.N) + b.T*float64(b.N)) / float64(n),
				(a.V*float64(a.N) + b.V*float64(b.N)) / float64(n), n}
			k++
		}
		if len(d.pts)%2 == 1 {
			d.pts[k] = d.pts[len(d.pts)-1]
			k++
		}
		d.pts = d.pts[:k]
		d.width *= 2
	}
	d.pts = append(d.pts, p)
}

// appendFrom appends o's points (skipping the first skip of them) and its partial run.
func (d *decim) appendFrom(o *decim, skip int) {
	for i := skip; i < len(o.pts); i++ {
		p := o.pts[i]
		d.addWeighted(p.T, p.V, p.N)
	}
	if o.accN > 0 && skip <= len(o.pts) {
		d.addWeighted(o.accT/float64(o.accN), o.accV/float64(o.accN), o.accN)
	}
}

// points returns the buffer's points with the partial run appended, in dst.
func (d *decim) points(dst []Point) []Point {
	dst = append(dst[:0], d.pts...)
	if d.accN > 0 {
		dst = append(dst, Point{d.accT / float64(d.accN), d.accV / float64(d.accN), d.accN})
	}
	return dst
}

func (d *decim) empty() bool { return len(d.pts) == 0 && d.accN == 0 }
