package fit

import (
	"encoding/binary"
	"errors"
	"math"
	"testing"
)

// FuzzExpApproach feeds arbitrary samples to ExpApproach and LoadShape: they must
// return a result or an error from this package, never panic or hang, and a result
// without error must have a positive time constant.
func FuzzExpApproach(f *testing.F) {
	seed := make([]byte, 0, 16*20)
	for i := 0; i < 20; i++ {
		seed = binary.LittleEndian.AppendUint64(seed, math.Float64bits(float64(i)*0.01))
		seed = binary.LittleEndian.AppendUint64(seed, math.Float64bits(1+2*math.Exp(-float64(i)/5)))
	}
	f.Add(seed)
	f.Add([]byte{1, 2, 3})
	f.Fuzz(func(t *testing.T, b []byte) {
		var tt, v []float64
		for len(b) >= 16 && len(tt) < 400 {
			tt = append(tt, math.Float64frombits(binary.LittleEndian.Uint64(b)))
			v = append(v, math.Float64frombits(binary.LittleEndian.Uint64(b[8:])))
			b = b[16:]
		}
		fit, err := ExpApproach(tt, v)
		if err != nil {
			if !errors.Is(err, ErrInput) && !errors.Is(err, ErrNotIdentifiable) && !errors.Is(err, ErrNotConverged) {
				t.Fatalf("unexpected error %v", err)
			}
			return
		}
		if !(fit.Tau.Value > 0) {
			t.Fatalf("tau %v without error", fit.Tau)
		}
		_, _ = LoadShape(tt, v, 0)
	})
}
