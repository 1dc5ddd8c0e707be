package fit

import (
	"encoding/json"
	"math"
)

// finite returns a pointer to x, or nil when x is NaN or infinite (JSON has no NaN: a
// value that cannot be determined is written as null).
func finite(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// MarshalJSON writes {"value": ..., "sd": ...}, with null for a NaN or infinite number.
func (v Value) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Value *float64 `json:"value"`
		SD    *float64 `json:"sd"`
	}{finite(v.Value), finite(v.SD)})
}

// MarshalJSON writes the parameters with unit-carrying keys (iph_a, i0_a, n, rs_ohm,
// rsh_ohm), with null for a NaN or infinite number.
func (p DiodeParams) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Iph *float64 `json:"iph_a"`
		I0  *float64 `json:"i0_a"`
		N   *float64 `json:"n"`
		Rs  *float64 `json:"rs_ohm"`
		Rsh *float64 `json:"rsh_ohm"`
	}{finite(p.Iph), finite(p.I0), finite(p.N), finite(p.Rs), finite(p.Rsh)})
}
