package analyze

import (
	"context"
	"errors"
	"os"
	"testing"

	"capcycle/logger/capture"
)

// A cancelled context stops the analysis between batches with the context's error, and
// nothing half-analysed is returned.
func TestRunStopsWhenCancelled(t *testing.T) {
	path := "../testdata/captures/wren-rc-10min.csv"
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	ctx, cancel := context.WithCancel(context.Background())
	batches := 0
	opts := &Options{BatchRows: 256, Progress: func(int, int64) {
		if batches++; batches == 3 {
			cancel()
		}
	}}
	res, err := Run(ctx, capture.NewReader(f, path), opts)
	if !errors.Is(err, context.Canceled) || res != nil {
		t.Fatalf("after cancel: result %v, error %v; want no result and context.Canceled", res != nil, err)
	}
	if batches != 3 {
		t.Errorf("read %d batches after the cancel, want it to stop at the third", batches)
	}
}
