package logger

import (
	"testing"

	"capcycle/firmware-protocol/wire"
)

// The firmware refuses two channels at its boot fast rate (500 Hz), so going to two
// channels at 50 Hz must lower the rate first; going to one channel at a higher rate must
// drop the channels first.
func TestCommandOrderKeepsEachValid(t *testing.T) {
	id := wire.Identity{NCh: 1, SlowHz: 10, FastHz: 500}
	ss := &session{cfg: Config{Channels: 2, SlowHz: 2, FastHz: 50}}
	got := ss.commands(id)
	if len(got) != 2 {
		t.Fatalf("commands %v", got)
	}
	if _, ok := got[0].(wire.CmdRate); !ok {
		t.Errorf("first command %T, want the lower rate first", got[0])
	}
	id = wire.Identity{NCh: 2, SlowHz: 2, FastHz: 50}
	ss = &session{cfg: Config{Channels: 1, FastHz: 1000}}
	got = ss.commands(id)
	if len(got) != 2 {
		t.Fatalf("commands %v", got)
	}
	if _, ok := got[0].(wire.CmdChan); !ok {
		t.Errorf("first command %T, want the channel count before a higher rate", got[0])
	}
}
