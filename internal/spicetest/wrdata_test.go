package spicetest

import (
	"strings"
	"testing"
)

func TestReadWrdata(t *testing.T) {
	in := " 0.000000e+00  1.0\nnot a line\n 1.0e-3  1.5\n 1.0e-3  1.5\n 2.0e-3 2.0 extra\n"
	ts, vs, err := ReadWrdata(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	if len(ts) != 3 || ts[1] != 1e-3 || vs[2] != 2.0 {
		t.Fatalf("ts %v vs %v", ts, vs)
	}
}
