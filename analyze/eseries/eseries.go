// Package eseries looks up the IEC 60063 preferred values (the E3, E6, E12 and E24 series)
// that resistors and capacitors are sold in, so that a computed part value can be turned
// into one a builder can buy.
//
// The values come from the table e_series_iec60063.csv embedded in this package (its
// comment lines name the sources). They are looked up, never computed: the series are not
// exactly round(10^(i/N)) (E24 lists 2.7 where the geometric value is 2.61).
package eseries

import (
	"bufio"
	"bytes"
	_ "embed"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

//go:embed e_series_iec60063.csv
var table []byte

// Series is one preferred-value series: its name and one decade of base values
// (two significant digits, 10 to 91) in ascending order.
type Series struct {
	Name      string
	Base      []float64
	Tolerance float64 // nominal tolerance as a fraction (0.2 for E6)
}

var series = mustParse(table)

func mustParse(data []byte) map[string]*Series {
	m, err := parse(data)
	if err != nil {
		panic("eseries: embedded table: " + err.Error()) // programmer error: the table ships with the code
	}
	return m
}

func parse(data []byte) (map[string]*Series, error) {
	m := map[string]*Series{}
	sc := bufio.NewScanner(bytes.NewReader(data))
	line := 0
	header := true
	for sc.Scan() {
		line++
		s := strings.TrimSpace(sc.Text())
		if s == "" || strings.HasPrefix(s, "#") {
			continue
		}
		if header {
			header = false
			continue
		}
		f := strings.Split(s, ",")
		if len(f) != 4 {
			return nil, fmt.Errorf("line %d: want 4 fields, got %d", line, len(f))
		}
		v, err := strconv.ParseFloat(f[2], 64)
		if err != nil {
			return nil, fmt.Errorf("line %d: value: %w", line, err)
		}
		tol, err := strconv.ParseFloat(f[3], 64)
		if err != nil {
			return nil, fmt.Errorf("line %d: tolerance: %w", line, err)
		}
		se := m[f[0]]
		if se == nil {
			se = &Series{Name: f[0], Tolerance: tol}
			m[f[0]] = se
		}
		se.Base = append(se.Base, v)
	}
	for _, se := range m {
		sort.Float64s(se.Base)
	}
	return m, sc.Err()
}

// Get returns the named series ("E3", "E6", "E12" or "E24").
func Get(name string) (*Series, error) {
	s, ok := series[strings.ToUpper(name)]
	if !ok {
		return nil, fmt.Errorf("eseries: unknown series %q (want E3, E6, E12 or E24)", name)
	}
	return s, nil
}

// Bracket returns the preferred values just below-or-equal and just above-or-equal to v
// (v > 0). When v is itself a preferred value, lo == hi == v.
func (s *Series) Bracket(v float64) (lo, hi float64) {
	if !(v > 0) || math.IsInf(v, 0) {
		panic("eseries: Bracket needs a positive finite value") // callers validate user input first
	}
	dec := math.Floor(math.Log10(v)) - 1 // base values are 10..91, so scale by 10^dec
	const rel = 1e-9
	for d := dec - 1; d <= dec+1; d++ {
		scale := math.Pow(10, d)
		for _, b := range s.Base {
			x := b * scale
			if x <= v*(1+rel) {
				lo = x
			}
			if x >= v*(1-rel) && hi == 0 {
				hi = x
			}
		}
	}
	if math.Abs(lo-v) <= v*rel {
		lo = v
	}
	if math.Abs(hi-v) <= v*rel {
		hi = v
	}
	return lo, hi
}

// Nearest returns the preferred value closest to v on a logarithmic scale (the way the
// series are spaced), and the relative difference (nearest-v)/v.
func (s *Series) Nearest(v float64) (nearest, diff float64) {
	lo, hi := s.Bracket(v)
	nearest = lo
	if math.Log(hi/v) < math.Log(v/lo) {
		nearest = hi
	}
	return nearest, (nearest - v) / v
}
