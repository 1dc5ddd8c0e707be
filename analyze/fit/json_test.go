package fit

import (
	"encoding/json"
	"math"
	"testing"
)

func TestJSONNull(t *testing.T) {
	for _, c := range []struct {
		in   any
		want string
	}{
		{Value{1.5, 0.25}, `{"value":1.5,"sd":0.25}`},
		{Value{2, math.NaN()}, `{"value":2,"sd":null}`},
		{Value{math.Inf(1), math.NaN()}, `{"value":null,"sd":null}`},
		{DiodeParams{Iph: 0.76, I0: 3e-7, N: 1.48, Rs: 0.036, Rsh: math.NaN()},
			`{"iph_a":0.76,"i0_a":3e-7,"n":1.48,"rs_ohm":0.036,"rsh_ohm":null}`},
	} {
		b, err := json.Marshal(c.in)
		if err != nil || string(b) != c.want {
			t.Errorf("json %+v = %s, %v; want %s", c.in, b, err, c.want)
		}
	}
}
