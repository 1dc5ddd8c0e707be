package lambertw

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"strings"
	"testing"
)

// refRow is one line of testdata/lambert_w_reference_values.csv.
type refRow struct {
	line   int
	branch string
	expr   string
	want   float64
	source string
}

// readRef reads the reference table (sources: GSL specfunc/test_sf.c, LambertW.jl,
// pracma lambertWp documentation, Boost.Math test_lambert_w.cpp; see the file header).
func readRef(t *testing.T) []refRow {
	t.Helper()
	f, err := os.Open("../../testdata/lambert_w_reference_values.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var rows []refRow
	sc := bufio.NewScanner(f)
	n := 0
	header := false
	for sc.Scan() {
		n++
		line := sc.Text()
		if strings.HasPrefix(line, "#") || strings.TrimSpace(line) == "" {
			continue
		}
		if !header {
			header = true
			continue
		}
		fields := strings.SplitN(line, ",", 4)
		if len(fields) != 4 {
			t.Fatalf("line %d: want 4 fields, got %q", n, line)
		}
		w, err := evalExpr(fields[2])
		if err != nil {
			t.Fatalf("line %d: W: %v", n, err)
		}
		rows = append(rows, refRow{n, fields[0], fields[1], w, fields[3]})
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return rows
}

// TestReference checks W0 and W-1 against every row of the reference table. The tolerance
// is a few ulps of W plus what one ulp of the argument is worth through W's slope, which
// is large near the branch point -1/e (the table's GSL arguments there are C expressions
// rounded to double, so no evaluation can do better than that).
func TestReference(t *testing.T) {
	rows := readRef(t)
	if len(rows) < 20 {
		t.Fatalf("only %d reference rows", len(rows))
	}
	for _, r := range rows {
		x, err := evalExpr(r.expr)
		if err != nil {
			t.Fatalf("line %d: %v", r.line, err)
		}
		var got float64
		switch r.branch {
		case "W0":
			got = W0(x)
		case "Wm1":
			got = Wm1(x)
		default:
			t.Fatalf("line %d: unknown branch %q", r.line, r.branch)
		}
		tol := 4*ulp(r.want) + argTol(x, r.want)
		if math.Abs(got-r.want) > tol || math.IsNaN(got) {
			t.Errorf("line %d (%s): %s(%s) = %.17g, want %.17g (tol %.2g)", r.line, r.source, r.branch, r.expr, got, r.want, tol)
		}
	}
}

func ulp(v float64) float64 {
	v = math.Abs(v)
	return math.Nextafter(v, math.Inf(1)) - v
}

// argTol is how far W moves when its argument moves by 2 ulps: |W'(x)| 2 ulp(x) with
// W' = W / (x (1+W)), capped by the branch-point form sqrt(2e * 2ulp).
func argTol(x, w float64) float64 {
	dx := 2 * ulp(x)
	if x == 0 {
		return dx
	}
	slope := math.Abs(w / (x * (1 + w)))
	branch := math.Sqrt(2 * math.E * dx)
	return math.Min(slope*dx, branch)
}

func TestIdentity(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for range 20000 {
		x := math.Exp(rng.Float64()*1400 - 700) // 1e-304 .. 1e304
		if rng.IntN(3) == 0 {
			x = -rng.Float64() / math.E
		}
		w := W0(x)
		// Check W e^W = x in log form for large x and directly otherwise.
		if x > 1 {
			if d := math.Abs(w + math.Log(w) - math.Log(x)); d > 4e-16*(1+math.Abs(w)+math.Log(x)) {
				t.Fatalf("W0(%g) = %g: w + ln w - ln x = %g", x, w, d)
			}
		} else if d := math.Abs(w*math.Exp(w) - x); d > 8e-16*math.Abs(x)+1e-16*math.Abs(w) {
			t.Fatalf("W0(%g) = %g: w e^w - x = %g", x, w, d)
		}
		if x < 0 {
			v := Wm1(x)
			if v > -1 {
				t.Fatalf("Wm1(%g) = %g > -1", x, v)
			}
			if d := math.Abs(v*math.Exp(v) - x); d > 1e-15*math.Abs(x)+1e-16 {
				t.Fatalf("Wm1(%g) = %g: w e^w - x = %g", x, v, d)
			}
		}
	}
}

func TestW0Exp(t *testing.T) {
	for _, l := range []float64{-50, -3, 0, 0.5, 1, 1.1, 2, 5, 30, 700, 709, 710, 800, 1e4, 1e8, 1e15, 1e300} {
		w := W0Exp(l)
		if l < 700 {
			if d := math.Abs(w - W0(math.Exp(l))); d > 4*ulp(w) {
				t.Errorf("W0Exp(%g) = %.17g, W0(exp) = %.17g", l, w, W0(math.Exp(l)))
			}
		}
		if d := math.Abs(w + math.Log(w) - l); d > 4*ulp(l)+4*ulp(w) {
			t.Errorf("W0Exp(%g) = %.17g: w + ln w - l = %g", l, w, d)
		}
	}
	if got := W0Exp(1); got != 1 {
		t.Errorf("W0Exp(1) = %v, want 1 (W(e) = 1)", got)
	}
}

func TestSpecial(t *testing.T) {
	tests := []struct {
		name string
		got  float64
		want float64
	}{
		{"W0(0)", W0(0), 0},
		{"W0(+Inf)", W0(math.Inf(1)), math.Inf(1)},
		{"Wm1(0)", Wm1(0), math.Inf(-1)},
		{"W0Exp(-Inf)", W0Exp(math.Inf(-1)), 0},
	}
	for _, tc := range tests {
		if tc.got != tc.want {
			t.Errorf("%s = %v, want %v", tc.name, tc.got, tc.want)
		}
	}
	for _, v := range []float64{W0(-0.5), Wm1(-0.5), Wm1(0.1), W0(math.NaN())} {
		if !math.IsNaN(v) {
			t.Errorf("want NaN outside the domain, got %v", v)
		}
	}
}

func BenchmarkW0Exp(b *testing.B) {
	s := 0.0
	for i := range b.N {
		s += W0Exp(float64(i%1000) * 0.7)
	}
	_ = s
}

func ExampleW0() {
	fmt.Printf("%.15f\n", W0(1)) // the omega constant
	fmt.Println(W0(math.E))
	// Output:
	// 0.567143290409784
	// 1
}

func ExampleW0Exp() {
	// W(exp(1000)): exp(1000) overflows a float64, its W does not.
	fmt.Printf("%.6f\n", W0Exp(1000))
	// Output:
	// 993.099169
}

// evalExpr evaluates the table's x_expression column: numbers, e, M_E, log(), + - * /
// and parentheses, in IEEE double from left to right as a C compiler would.
func evalExpr(s string) (float64, error) {
	p := &exprParser{s: strings.ReplaceAll(s, " ", "")}
	v, err := p.sum()
	if err != nil {
		return 0, err
	}
	if p.i != len(p.s) {
		return 0, fmt.Errorf("expression %q: unexpected %q", s, p.s[p.i:])
	}
	return v, nil
}

type exprParser struct {
	s string
	i int
}

func (p *exprParser) sum() (float64, error) {
	v, err := p.product()
	for err == nil && p.i < len(p.s) && (p.s[p.i] == '+' || p.s[p.i] == '-') {
		op := p.s[p.i]
		p.i++
		var r float64
		r, err = p.product()
		if op == '+' {
			v += r
		} else {
			v -= r
		}
	}
	return v, err
}

func (p *exprParser) product() (float64, error) {
	v, err := p.unary()
	for err == nil && p.i < len(p.s) && (p.s[p.i] == '*' || p.s[p.i] == '/') {
		op := p.s[p.i]
		p.i++
		var r float64
		r, err = p.unary()
		if op == '*' {
			v *= r
		} else {
			v /= r
		}
	}
	return v, err
}

func (p *exprParser) unary() (float64, error) {
	if p.i < len(p.s) && p.s[p.i] == '-' {
		p.i++
		v, err := p.unary()
		return -v, err
	}
	return p.atom()
}

func (p *exprParser) atom() (float64, error) {
	rest := p.s[p.i:]
	switch {
	case strings.HasPrefix(rest, "("):
		p.i++
		v, err := p.sum()
		if err != nil {
			return 0, err
		}
		if p.i >= len(p.s) || p.s[p.i] != ')' {
			return 0, fmt.Errorf("expression %q: missing )", p.s)
		}
		p.i++
		return v, nil
	case strings.HasPrefix(rest, "log("):
		p.i += 3
		v, err := p.atom()
		return math.Log(v), err
	case strings.HasPrefix(rest, "M_E"):
		p.i += 3
		return math.E, nil
	case strings.HasPrefix(rest, "e") && (len(rest) == 1 || !isNumChar(rest[1])):
		p.i++
		return math.E, nil
	}
	j := p.i
	for j < len(p.s) && (isNumChar(p.s[j]) || (p.s[j] == 'e' || p.s[j] == 'E') ||
		((p.s[j] == '+' || p.s[j] == '-') && j > p.i && (p.s[j-1] == 'e' || p.s[j-1] == 'E'))) {
		j++
	}
	v, err := strconv.ParseFloat(p.s[p.i:j], 64)
	if err != nil {
		return 0, fmt.Errorf("expression %q: %w", p.s, err)
	}
	p.i = j
	return v, nil
}

func isNumChar(c byte) bool { return c >= '0' && c <= '9' || c == '.' }

// W0 hands x > 3 to W0Exp(ln x), and W0Exp hands small l back to W0: the two thresholds
// must not overlap, or ln 3 < l < threshold recurses forever.
func TestW0ExpNoRecursionWindow(t *testing.T) {
	for _, l := range []float64{0.999, 1.0, 1.05, 1.0986, 1.099, 1.1, 1.2} {
		w := W0Exp(l)
		if got := w + math.Log(w); math.Abs(got-l) > 1e-13 {
			t.Errorf("W0Exp(%v) = %v: w + ln w = %v", l, w, got)
		}
	}
	if w := W0(3.001); math.Abs(w*math.Exp(w)-3.001) > 1e-12 {
		t.Errorf("W0(3.001) = %v", w)
	}
}
