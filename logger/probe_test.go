package logger

import (
	"bytes"
	"context"
	"errors"
	"testing"
	"time"

	"capcycle/firmware-protocol/wire"
	"capcycle/logger/loggertest"
)

// fakeOpener opens loggertest ports: "board" answers >id, "mute" says nothing,
// anything else does not exist.
func fakeOpener(path string, _ *Mode) (Port, error) {
	p := loggertest.NewPort()
	switch path {
	case "board":
		p.OnWrite = func(b []byte) {
			if bytes.HasPrefix(b, []byte(">id")) {
				tb := newTestBoard(nil)
				p.Feed(append([]byte("boot loader noise\r\n"), tb.idFrames(false)...))
			}
		}
	case "mute":
	default:
		return nil, &PortError{Path: path, Op: "open", Kind: PortMissing}
	}
	return p, nil
}

func TestProbeFake(t *testing.T) {
	ctx := context.Background()
	id, err := Probe(ctx, fakeOpener, "board", nil, time.Second)
	if err != nil || id.Board != "test" {
		t.Fatalf("probe: %+v %v", id, err)
	}
	if _, err := Probe(ctx, fakeOpener, "mute", nil, 200*time.Millisecond); !errors.Is(err, ErrHandshake) {
		t.Errorf("mute port: %v", err)
	}
	ans := ProbeAll(ctx, fakeOpener, []PortInfo{{Path: "mute"}, {Path: "board"}, {Path: "gone"}}, nil, 200*time.Millisecond)
	if path, err := pickBoard(ans); path != "board" || err != nil {
		t.Errorf("pick: %q %v", path, err)
	}
	var pe *PortError
	if !errors.As(ans[2].Err, &pe) || pe.Kind != PortMissing {
		t.Errorf("missing port answer %+v", ans[2])
	}
}

func TestConnectAndAverage(t *testing.T) {
	p := loggertest.NewPort()
	tb := newTestBoard(nil)
	p.OnWrite = func(b []byte) {
		f, err := wire.Parse(b)
		if err != nil {
			return
		}
		p.Feed(wire.Append(nil, wire.Ack{Cmd: f.Tag()}))
		if _, ok := f.(wire.CmdID); ok {
			p.Feed(tb.idFrames(false))
			// Ten readings of 1000 and 1010 counts, alternating.
			p.Feed(tb.slow(nil, 10, func(i int) uint16 { return uint16(1000 + 10*(i%2)) }))
		}
	}
	open := func(string, *Mode) (Port, error) { return p, nil }
	b, err := Connect(context.Background(), open, "fake", nil, time.Second)
	if err != nil {
		t.Fatal(err)
	}
	defer b.Close()
	r, err := b.Average(context.Background(), 0, 10, time.Second)
	if err != nil {
		t.Fatal(err)
	}
	// Mean 1005 counts; 5 V / 4096 per count through the 0.5 divider.
	if r.Counts != 1005 || r.RawV != 1005*5.0/4096/0.5 || r.N != 10 {
		t.Errorf("reading %+v", r)
	}
	if err := b.Command(context.Background(), wire.CmdSave{}); err != nil {
		t.Errorf("save: %v", err)
	}
}
