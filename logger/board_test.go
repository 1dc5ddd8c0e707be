package logger

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"sync"
	"testing"

	"capcycle/firmware-protocol/wire"
	"capcycle/logger/capture"
	"capcycle/logger/loggertest"
)

// testBoard plays a capcycle board on the device side: it answers commands as
// PROTOCOL.md says and makes sample frames on request. Its output goes to out.
type testBoard struct {
	mu    sync.Mutex
	out   io.Writer
	id    wire.Identity
	ch    []wire.Channel
	seq   uint32
	tUS   uint32
	cmds  []string // tags of the commands received
	quiet bool     // do not answer commands

	garble   int  // damage this many of the next identity replies (a noisy link)
	bootNext bool // the next identity reply is a boot identity (the board reset on open)
}

func newTestBoard(out io.Writer) *testBoard {
	return &testBoard{out: out,
		id: wire.Identity{Proto: 1, Firmware: "0.1.0", Board: "test", Bits: 10, EBits: 12, Ref: wire.RefAVcc,
			RefUV: 5000000, NCh: 1, ClockHz: 16000000, MaxHz: 1000, SlowHz: 10, FastHz: 500, Thr: 8, Pre: 32, Post: 32, Boot: true},
		ch: []wire.Channel{{Ch: 0, Div: wire.MicroOf(0.5), Gain: wire.MicroOf(1), OffUV: 0}}}
}

func (b *testBoard) write(p []byte) {
	b.mu.Lock()
	defer b.mu.Unlock()
	b.out.Write(p)
}

func (b *testBoard) setQuiet(q bool) {
	b.mu.Lock()
	b.quiet = q
	b.mu.Unlock()
}

// skip advances the counter and clock as if n samples were made and not sent.
func (b *testBoard) skip(n int) {
	b.mu.Lock()
	b.seq += uint32(n)
	b.tUS += uint32(n) * (1000000 / b.id.SlowHz)
	b.mu.Unlock()
}

// restart sets the counter and clock as after a reset.
func (b *testBoard) restart(seq, tUS uint32) {
	b.mu.Lock()
	b.seq, b.tUS = seq, tUS
	b.mu.Unlock()
}

// idFrames is ID plus one CH per channel.
func (b *testBoard) idFrames(boot bool) []byte {
	b.mu.Lock()
	defer b.mu.Unlock()
	id := b.id
	id.Boot = boot
	p := wire.Append(nil, id)
	for k := 0; k < int(id.NCh); k++ {
		c := wire.Channel{Ch: uint32(k), Div: wire.MicroOf(1), Gain: wire.MicroOf(1)}
		if k < len(b.ch) {
			c = b.ch[k]
		}
		p = wire.Append(p, c)
	}
	return p
}

// command handles one command line from the host.
func (b *testBoard) command(line []byte) {
	f, err := wire.Parse(line)
	if err != nil {
		return
	}
	b.mu.Lock()
	b.cmds = append(b.cmds, f.Tag())
	quiet := b.quiet
	b.mu.Unlock()
	if quiet {
		return
	}
	ack := wire.Append(nil, wire.Ack{Cmd: f.Tag()})
	switch c := f.(type) {
	case wire.CmdID:
		b.mu.Lock()
		boot, garble := b.bootNext, b.garble > 0
		b.bootNext = false
		if garble {
			b.garble--
		}
		b.mu.Unlock()
		out := append(ack, b.idFrames(boot)...)
		if garble {
			for i := 3; i < len(out); i += 7 {
				out[i] ^= 0x04 // bit errors all through: the CRCs fail
			}
		}
		b.write(out)
	case wire.CmdRate:
		if c.FastHz > b.id.MaxHz || c.SlowHz > c.FastHz {
			b.write(wire.Append(nil, wire.Nak{Cmd: "rate", Code: wire.CodeRange, Msg: "range"}))
			return
		}
		b.mu.Lock()
		b.id.SlowHz, b.id.FastHz = c.SlowHz, c.FastHz
		b.mu.Unlock()
		b.write(append(ack, b.idFrames(false)...))
	case wire.CmdChan:
		b.mu.Lock()
		b.id.NCh = c.N
		b.mu.Unlock()
		b.write(append(ack, b.idFrames(false)...))
	case wire.CmdBurst:
		b.mu.Lock()
		b.id.Thr, b.id.Pre, b.id.Post = c.Thr, c.Pre, c.Post
		b.mu.Unlock()
		b.write(append(ack, b.idFrames(false)...))
	case wire.CmdCal:
		b.mu.Lock()
		for int(c.Ch) >= len(b.ch) {
			b.ch = append(b.ch, wire.Channel{Ch: uint32(len(b.ch)), Div: wire.MicroOf(1), Gain: wire.MicroOf(1)})
		}
		b.ch[c.Ch] = wire.Channel{Ch: c.Ch, Div: c.Div, Gain: c.Gain, OffUV: c.OffUV}
		b.mu.Unlock()
		b.write(append(ack, b.idFrames(false)...))
	default:
		b.write(ack)
	}
}

// serve reads host commands from r until it fails.
func (b *testBoard) serve(r io.Reader) {
	buf := make([]byte, 512)
	var pend []byte
	for {
		n, err := r.Read(buf)
		pend = append(pend, buf[:n]...)
		for {
			i := bytes.IndexByte(pend, '\n')
			if i < 0 {
				break
			}
			line := pend[:i+1]
			if j := bytes.IndexByte(line, '>'); j >= 0 {
				b.command(line[j:])
			}
			pend = pend[i+1:]
		}
		if err != nil {
			return
		}
	}
}

// slow appends n A frames with the counts from f(i), at the board's slow rate.
func (b *testBoard) slow(dst []byte, n int, f func(i int) uint16) []byte {
	b.mu.Lock()
	defer b.mu.Unlock()
	step := uint32(1000000 / b.id.SlowHz)
	per := b.id.FastHz / b.id.SlowHz
	for i := 0; i < n; i++ {
		a := wire.Average{Seq: b.seq, TimeUS: b.tUS, N: per, NCh: int(b.id.NCh)}
		c := f(i)
		for k := 0; k < a.NCh; k++ {
			a.Mean[k], a.Min[k], a.Max[k] = c, c, c
		}
		dst = wire.Append(dst, a)
		b.seq++
		b.tUS += step
	}
	return dst
}

// burst appends a burst: B, n S frames at the fast rate (a fall and recovery), E.
func (b *testBoard) burst(dst []byte, n int) []byte {
	b.mu.Lock()
	defer b.mu.Unlock()
	step := uint32(1000000 / b.id.FastHz)
	dst = wire.Append(dst, wire.BurstBegin{Seq: b.seq, TimeUS: b.tUS, Pre: 0})
	for i := 0; i < n; i++ {
		s := wire.Sample{Seq: b.seq, TimeUS: b.tUS, NCh: int(b.id.NCh)}
		for k := 0; k < s.NCh; k++ {
			s.Counts[k] = uint16(3000 - 10*i)
		}
		dst = wire.Append(dst, s)
		b.seq++
		b.tUS += step
	}
	dst = wire.Append(dst, wire.BurstEnd{Seq: b.seq, TimeUS: b.tUS - step})
	return dst
}

// ptyBoard is a testBoard on a pseudo-terminal, reached through a symlink that can be
// pointed at a new pty to simulate unplugging and plugging back.
type ptyBoard struct {
	*testBoard
	t      *testing.T
	link   string
	master *os.File
	slave  *os.File
}

func newPtyBoard(t *testing.T) *ptyBoard {
	pb := &ptyBoard{t: t, link: filepath.Join(t.TempDir(), "ttyBOARD")}
	pb.testBoard = newTestBoard(nil)
	pb.plug()
	t.Cleanup(func() { pb.unplug() })
	return pb
}

// plug makes a new pty and points the link at it.
func (pb *ptyBoard) plug() {
	m, s, err := loggertest.OpenPty()
	if errors.Is(err, loggertest.ErrNoPty) {
		pb.t.Skip(err)
	}
	if err != nil {
		pb.t.Fatal(err)
	}
	os.Remove(pb.link)
	if err := os.Symlink(s.Name(), pb.link); err != nil {
		pb.t.Fatal(err)
	}
	// The test keeps the slave open: a pty master reads EIO while no slave is open.
	pb.mu.Lock()
	pb.slave = s
	pb.master = m
	pb.out = m
	pb.mu.Unlock()
	go pb.serve(m)
}

// unplug closes the device side: the host's reads fail as with a pulled cable.
func (pb *ptyBoard) unplug() {
	pb.mu.Lock()
	m, s := pb.master, pb.slave
	pb.master, pb.slave = nil, nil
	pb.out = io.Discard
	pb.mu.Unlock()
	if m != nil {
		m.Close()
		s.Close()
	}
	os.Remove(pb.link)
}

// readCapture checks a capture with the package's reader and returns its rows.
func readCapture(t *testing.T, path string) (ts, vs []float64, r *capture.Reader) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r = capture.NewReader(f, path)
	tb, vb := make([]float64, 4096), make([]float64, 4096)
	for {
		n, err := r.Read(tb, vb)
		ts = append(ts, tb[:n]...)
		vs = append(vs, vb[:n]...)
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
	}
	return ts, vs, r
}
