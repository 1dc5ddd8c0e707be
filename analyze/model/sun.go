package model

import (
	"math"
	"math/rand/v2"
	"sort"
	"time"
)

// WindowDay is the light on a cell standing behind a window, from the sun's position, the
// sky's clearness, a diffuse share and seeded passing clouds. Time t counts from Start and
// may run over several days.
//
// Sun position: the NOAA Global Monitoring Division "General Solar Position Calculations"
// equations, whose declination and equation of time are the Fourier series of Spencer
// (1971, Search 2(5), 172).
//
// Irradiance: the global horizontal irradiance is k_t times the extraterrestrial one,
// G0 cos Z with G0 = 1361 W/m² (Kopp and Lean, 2011) times the orbital eccentricity factor
// 1 + 0.033 cos(2π n/365) (Duffie and Beckman; from memory), but never more than the
// clear-sky value of Haurwitz (1945), 1098 cos Z exp(-0.059/cos Z) W/m² (as given by Reno,
// Hansen and Stein, Sandia report SAND2012-2389; from memory), which supplies the fall-off
// at a low sun. The clearness index k_t is the one that gives the stated diffuse fraction
// in the correlation of Erbs, Klein and Duffie (1982, Solar Energy 28, 293; coefficients
// from memory), so a diffuse fraction of 0.95 is an overcast day and 0.2 a clear one. The
// diffuse part reaches a plane of tilt β from the isotropic sky, (1 + cos β)/2 of it; the
// direct sunlight falls on the window at the angle of incidence
// cos θ = cos Z cos β + sin Z sin β cos(A - γ).
type WindowDay struct {
	Start           time.Time // start of the run; its UTC clock with LongitudeDeg gives solar time
	LatitudeDeg     float64   // north positive
	LongitudeDeg    float64   // east positive (0 with a UTC Start means local solar time)
	AzimuthDeg      float64   // direction the window faces, clockwise from north (180 = south)
	TiltDeg         float64   // window tilt from horizontal (90 = an upright window)
	DiffuseFraction float64   // diffuse share of the global horizontal irradiance, 0..1 (0 means 0.2)
	Transmit        float64   // glass transmittance, 0..1 (0 means 0.8, clear float glass; from memory)
	Shaded          bool      // no direct sun reaches the cell (buildings, a deep reveal)
	Shade           float64   // share of all the window's light that is blocked before the cell, 0..1

	// Clouds: passing clouds, each removing up to CloudDepth of the direct sunlight, separated by
	// exponentially distributed gaps of mean CloudGapS and lasting exponentially
	// distributed times of mean CloudS, with CloudEdgeS raised-cosine edges. CloudS = 0
	// means no passing clouds. The same Seed gives the same clouds.
	Seed       uint64
	CloudS     float64 // mean cloud duration, seconds
	CloudGapS  float64 // mean clear gap, seconds (0 means 600 s)
	CloudDepth float64 // share of the direct sunlight removed at the heart of a cloud, 0..1
	CloudEdgeS float64 // edge duration, seconds (0 means 10 s)
}

// IrradianceWm2 returns the irradiance on the cell at t seconds after Start.
func (w *WindowDay) IrradianceWm2(t float64) float64 {
	direct, diffuse := w.clearSky(t)
	return w.combine(direct, diffuse, w.cloudFactor(t, nil))
}

func (w *WindowDay) combine(direct, diffuse, cloud float64) float64 {
	tr := orDefault(w.Transmit, 0.8)
	return (1 - w.Shade) * tr * (direct*cloud + diffuse)
}

func orDefault(v, d float64) float64 {
	if v == 0 {
		return d
	}
	return v
}

// SunPosition returns the solar zenith and azimuth (clockwise from north), in degrees,
// at the instant when for an observer at latitude and longitude (degrees, north and east
// positive), by the NOAA general solar position equations (Spencer 1971 series).
func SunPosition(when time.Time, latDeg, lonDeg float64) (zenithDeg, azimuthDeg float64) {
	z, a := sunPosition(when, latDeg, lonDeg)
	return z * 180 / math.Pi, a * 180 / math.Pi
}

// sunPosition returns zenith and azimuth in radians.
func sunPosition(when time.Time, latDeg, lonDeg float64) (zenith, azimuth float64) {
	u := when.UTC()
	hour := float64(u.Hour()) + float64(u.Minute())/60 + (float64(u.Second())+float64(u.Nanosecond())*1e-9)/3600
	days := 365.0
	if y := u.Year(); y%4 == 0 && (y%100 != 0 || y%400 == 0) {
		days = 366
	}
	g := 2 * math.Pi / days * (float64(u.YearDay()-1) + (hour-12)/24) // fractional year, rad
	eqtime := 229.18 * (0.000075 + 0.001868*math.Cos(g) - 0.032077*math.Sin(g) -
		0.014615*math.Cos(2*g) - 0.040849*math.Sin(2*g)) // minutes
	decl := 0.006918 - 0.399912*math.Cos(g) + 0.070257*math.Sin(g) - 0.006758*math.Cos(2*g) +
		0.000907*math.Sin(2*g) - 0.002697*math.Cos(3*g) + 0.00148*math.Sin(3*g) // rad
	tst := hour*60 + eqtime + 4*lonDeg  // true solar time, minutes (UTC clock)
	ha := (tst/4 - 180) * math.Pi / 180 // hour angle, rad
	lat := latDeg * math.Pi / 180
	cz := math.Sin(lat)*math.Sin(decl) + math.Cos(lat)*math.Cos(decl)*math.Cos(ha)
	cz = math.Max(-1, math.Min(1, cz))
	zenith = math.Acos(cz)
	// Azimuth from south, west positive, then turned to clockwise from north.
	az := math.Atan2(math.Sin(ha), math.Cos(ha)*math.Sin(lat)-math.Tan(decl)*math.Cos(lat))
	azimuth = math.Mod(az+math.Pi, 2*math.Pi)
	return zenith, azimuth
}

// clearSky returns the direct and diffuse irradiance on the window plane (before the glass)
// at t: the smooth part, without passing clouds.
func (w *WindowDay) clearSky(t float64) (direct, diffuse float64) {
	when := w.Start.Add(time.Duration(t * float64(time.Second)))
	zen, az := sunPosition(when, w.LatitudeDeg, w.LongitudeDeg)
	cz := math.Cos(zen)
	if cz <= 0 {
		return 0, 0
	}
	doy := float64(when.UTC().YearDay())
	g0 := 1361 * (1 + 0.033*math.Cos(2*math.Pi*doy/365))
	f := orDefault(w.DiffuseFraction, 0.2)
	ghi := math.Min(erbsClearness(f)*g0*cz, 1098*cz*math.Exp(-0.059/cz))
	beta := w.TiltDeg * math.Pi / 180
	gamma := w.AzimuthDeg * math.Pi / 180
	cosInc := cz*math.Cos(beta) + math.Sin(zen)*math.Sin(beta)*math.Cos(az-gamma)
	if cosInc > 0 && !w.Shaded {
		dni := (1 - f) * ghi / math.Max(cz, 0.02)
		direct = dni * cosInc
	}
	diffuse = f * ghi * (1 + math.Cos(beta)) / 2
	return direct, diffuse
}

// erbsDiffuse is the diffuse fraction of the global horizontal irradiance as a function of
// the clearness index k_t (Erbs, Klein and Duffie, 1982).
func erbsDiffuse(kt float64) float64 {
	switch {
	case kt <= 0.22:
		return 1 - 0.09*kt
	case kt <= 0.8:
		return 0.9511 - 0.1604*kt + 4.388*kt*kt - 16.638*kt*kt*kt + 12.336*kt*kt*kt*kt
	}
	return 0.165
}

// erbsClearness inverts erbsDiffuse by bisection (it falls monotonically from 1 at k_t = 0
// to 0.165 at 0.8); fractions below 0.165 give 0.8, and 1 gives 0.
func erbsClearness(f float64) float64 {
	if f <= erbsDiffuse(0.8) {
		return 0.8
	}
	if f >= 1 {
		return 0
	}
	lo, hi := 0.0, 0.8
	for range 60 {
		mid := 0.5 * (lo + hi)
		if erbsDiffuse(mid) > f {
			lo = mid
		} else {
			hi = mid
		}
	}
	return 0.5 * (lo + hi)
}

// cloud is one passing cloud: its start and end, and its depth.
type cloud struct{ t0, t1, depth float64 }

// dayClouds returns the clouds that start in day d (d = floor(t / 86400)), generated from
// the seed and d alone so that any day can be produced on its own.
func (w *WindowDay) dayClouds(d int64) []cloud {
	if w.CloudS <= 0 {
		return nil
	}
	rng := rand.New(rand.NewPCG(w.Seed, uint64(d)))
	gap := orDefault(w.CloudGapS, 600)
	var out []cloud
	t := float64(d) * 86400
	end := t + 86400
	for {
		t += rng.ExpFloat64() * gap
		if t >= end {
			return out
		}
		dur := rng.ExpFloat64() * w.CloudS
		depth := w.CloudDepth * (0.6 + 0.4*rng.Float64())
		out = append(out, cloud{t, math.Min(t+dur, end), depth})
		t += dur
	}
}

// cloudFactor returns the share of the direct sunlight that gets through the clouds at t. The cache,
// when not nil, keeps one day's clouds.
func (w *WindowDay) cloudFactor(t float64, c *cloudCache) float64 {
	if w.CloudS <= 0 {
		return 1
	}
	d := int64(math.Floor(t / 86400))
	var list []cloud
	if c != nil {
		if !c.ok || c.day != d {
			c.day, c.list, c.ok = d, w.dayClouds(d), true
		}
		list = c.list
	} else {
		list = w.dayClouds(d)
	}
	edge := orDefault(w.CloudEdgeS, 10)
	f := 1.0
	// Clouds follow one another, so both ends increase along the list.
	first := sort.Search(len(list), func(i int) bool { return list[i].t1+edge >= t })
	for _, cl := range list[first:] {
		if t < cl.t0-edge {
			break
		}
		if t > cl.t1+edge {
			continue
		}
		// Raised-cosine ramp in over [t0-edge, t0], full over [t0, t1], out over [t1, t1+edge].
		var s float64
		switch {
		case t < cl.t0:
			s = 0.5 * (1 + math.Cos(math.Pi*(cl.t0-t)/edge))
		case t <= cl.t1:
			s = 1
		default:
			s = 0.5 * (1 + math.Cos(math.Pi*(t-cl.t1)/edge))
		}
		f *= 1 - cl.depth*s
	}
	return f
}

type cloudCache struct {
	ok   bool
	day  int64
	list []cloud
}

// lightCache speeds up a WindowDay inside the simulator: the smooth clear-sky part is
// sampled every gridS seconds and interpolated linearly, and one day's clouds are kept.
// The interpolation error is below 1e-5 of the value except within one grid cell of a
// kink (sunrise, sunset, the sun crossing the window's plane), where it stays below 0.1 %
// (TestLightCache). Other lights pass straight through.
type lightCache struct {
	light  Light
	wd     *WindowDay
	gridS  float64
	k      int64 // grid index of the cached interval [k, k+1]
	ok     bool
	b0, b1 float64
	d0, d1 float64
	clouds cloudCache
}

func newLightCache(l Light) *lightCache {
	c := &lightCache{light: l, gridS: 10}
	if wd, ok := l.(*WindowDay); ok {
		c.wd = wd
	}
	return c
}

func (c *lightCache) at(t float64) float64 {
	if c.wd == nil {
		return c.light.IrradianceWm2(t)
	}
	k := int64(math.Floor(t / c.gridS))
	if !c.ok || k != c.k {
		if c.ok && k == c.k+1 {
			c.b0, c.d0 = c.b1, c.d1
		} else {
			c.b0, c.d0 = c.wd.clearSky(float64(k) * c.gridS)
		}
		c.b1, c.d1 = c.wd.clearSky(float64(k+1) * c.gridS)
		c.k, c.ok = k, true
	}
	u := t/c.gridS - float64(k)
	direct := c.b0 + u*(c.b1-c.b0)
	diffuse := c.d0 + u*(c.d1-c.d0)
	return c.wd.combine(direct, diffuse, c.wd.cloudFactor(t, &c.clouds))
}
