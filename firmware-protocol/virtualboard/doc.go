// Package virtualboard is a capcycle ADC board in software: it speaks the wire
// protocol (../PROTOCOL.md) on a pseudo-terminal, so a host opens it with the real
// serial stack (go.bug.st/serial) exactly as it opens a USB board. The demo and the
// recorder's tests run on it.
//
// # Wiring a circuit to it
//
// The board samples a Source: the true voltages at its channel inputs, pulled at each
// fast sample instant in world time (seconds since Run began). Any model can feed it;
// cmd/ wires the circuit simulator in through a SourceFunc, so this package never
// imports the analysis code. A Waveform interpolates a table of points.
//
//	b, err := virtualboard.Open(&virtualboard.Config{
//		Source:   virtualboard.SourceFunc(func(t float64, v []float64) bool { v[0] = model.V(t); return true }),
//		Div:      []float64{1.0 / 3},
//		NoiseLSB: 0.7,
//		Speed:    100,
//	})
//	fmt.Println("board on", b.Path())
//	err = b.Run(ctx)
//
// # What it emulates
//
// The firmware's behaviour as PROTOCOL.md specifies it: the boot frames (ID, CH, ST),
// the adaptive capture (A frames with min and max while the voltage creeps; B, the
// pre-trigger ring and S frames at the fast rate when a sample leaves the slow mean by
// more than thr counts; E once quiet), ST every StatusEveryS, and every host command
// with its OK or ER reply, EEPROM settings that survive resets included. And the
// board's imperfections: each conversion truncates Vpin*2^bits/Vref after Gaussian
// noise (NoiseLSB), 4^(ebits-bits) conversions are summed and shifted for the extra
// bits, the true reference differs from the nominal by RefError, and each divider
// from its nominal ratio within DivTolerance (seeded). The source is read once per fast
// sample; the conversions of one sample differ only by their noise.
//
// Bytes reach the host as fast as the pseudo-terminal carries them; at Speed > 0 with
// Config.Baud set, the board drops what a serial line at that rate could not carry
// (below).
//
// # Time
//
// Speed 1 runs in real time and Speed N N times faster; frames made while no host has
// the port open are lost (as on a real link). Every sample is taken at its own instant
// of world time, never at the end of the round that makes it. The board paces itself
// by world time: it never drops a frame because the host reads slowly or the machine
// is busy; it waits, and when it has fallen behind the wall clock (Config.Clock) by
// more than a tenth of a second it lets world time slip (Stats.SlipS) instead of
// rushing through the backlog. With Config.Baud set, the serial line is emulated in
// world time: a byte takes 10*Speed/Baud world seconds (8N1), a frame made while
// TxQueue frames wait for the line is dropped (counted in ST's drop, so a host counts
// the lost samples), and which frames those are depends on the signal and the
// settings only. Budget gives the highest Speed at which the line carries whatever
// the capture settings can make. Speed 0 runs as fast as the host reads: the board waits for
// a host and for room in the queue, so nothing is lost, and while sampling is stopped
// world time waits for a command. At Speed 0 the board runs ahead of the host by what
// the queue (TxQueue frames) and the pseudo-terminal (a few kilobytes) hold, so the
// reply to a command comes after the frames already buffered; its OK, ID and CH frames
// still come in order, and the new settings apply from the command's device time on.
//
// # Unplugging, resets and faults
//
// A pseudo-terminal pair cannot outlive its master, so Unplug does what pulling the
// USB cable does: it closes the pair, a host's open port fails ("Port has been closed"
// from go.bug.st/serial), and the device path disappears. Plug makes a new pair, and
// the board boots from power-on (ID with boot=1, seq and t_us from 0, ST reset=por).
// The new pair has a new /dev/pts path; set Config.Link to have the board keep a
// symbolic link at a fixed path pointing at the current pair, as udev's by-id links
// do for a USB board, and reopen that. Reset reboots the board without unplugging it
// (reset=ext by default, as the bridge's DTR pulse does; frames still queued are lost),
// so a host sees a new boot ID on the same open port. The board does not reset when a
// host opens the port; call Reset for that.
//
// When the host closes its port and opens it again (the board stays plugged in), the
// path stays the same. What the pseudo-terminal held unread when the host closed it
// (a few kilobytes, perhaps ending in part of a frame) is lost, as a real bridge's
// buffer would be; at Speed 0 the board then waits for the host, so everything made
// after the reopen arrives (the first bytes may be the tail of a cut frame).
//
// InjectGarbage puts bytes between frames, Corrupt flips one bit in each of the next n
// frames, BitErrorRate flips bits at random, FailNextSave makes >save fail. Stats
// counts what the board made, sent, dropped and lost, and Config.Tap sees every byte
// written, so a test can compare what was sent with what a host received.
package virtualboard
