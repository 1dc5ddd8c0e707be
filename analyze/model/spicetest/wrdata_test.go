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

func TestReadColumns(t *testing.T) {
	in := " 0.0  1.0 0\nnot a line\n 1.0e-3  1.5 0.2\n 1.0e-3  1.5 0.2\n 2.0e-3 2.0\n 3.0e-3 2.5 x\n 4.0e-3 2.6 -1e-3 extra\n"
	ts, cols, err := ReadColumns(strings.NewReader(in), 2)
	if err != nil {
		t.Fatal(err)
	}
	if len(ts) != 3 || ts[2] != 4e-3 || cols[0][1] != 1.5 || cols[1][2] != -1e-3 {
		t.Fatalf("ts %v cols %v", ts, cols)
	}
}
