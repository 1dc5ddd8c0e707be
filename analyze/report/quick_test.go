package report

import (
	"os"
	"testing"
	"time"
)

func TestQuickRender(t *testing.T) {
	t0 := time.Now()
	r := wrenResult()
	t.Logf("sim %v cycles %d env %d traces %d", time.Since(t0), len(r.Cycles), len(r.Envelope), len(r.Traces))
	f, _ := os.Create("/tmp/wren.html")
	if err := Write(f, r, nil); err != nil {
		t.Fatal(err)
	}
	f.Close()
	f, _ = os.Create("/tmp/fern.html")
	if err := Write(f, fernResult(), nil); err != nil {
		t.Fatal(err)
	}
	f.Close()
	t.Log(Verdict(r).String())
	t.Log(Verdict(fernResult()).String())
}
