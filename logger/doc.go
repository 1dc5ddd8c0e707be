// Package logger records a board's capacitor voltage from a serial port into a capture
// file (package capture), and keeps recording through the things that go wrong on a
// windowsill all day: a cable pulled and put back, a board that resets, bit errors, a
// full disk, a Ctrl-C.
//
// # Ports
//
// Ports lists the system's serial ports (path, USB vendor:product, serial number,
// product). Open opens one with go.bug.st/serial and wraps it: that library answers a
// read timeout with (0, nil), which bufio readers give up on after 100 tries
// (io.ErrNoProgress); the wrapped Read waits instead and returns only with data or an
// error (a *PortError; PortGone when the device went away). Busy ports and permission
// problems get a PortError whose message says what to do (close the other program; join
// the dialout or uucp group). Probe asks a port for its identity frame; SelectBoard
// picks the one board that answers.
//
// # Recording
//
// Record runs one recording from a Config (cmd/capcycle fills it from the profile and
// the flags; this package knows nothing of profiles):
//
//  1. open the port, ask for the identity (">id"), send the settings that differ
//     (">chan", ">rate", ">burst", ">ref"), and create the capture with the board's
//     identity, dividers and calibration in its header;
//  2. turn every sample frame into a row, in volts:
//     counts / 2^ebits * ref / divider * gain + offset (PROTOCOL.md, "ID and CH");
//     slow A rows and burst S rows mix at their own spacing;
//  3. drop damaged frames (counted, never written), count sequence gaps as lost samples
//     and note them as gap lines, unwrap the 32-bit device clock, and fit the device
//     clock against the host's (the drift goes into the trailer);
//  4. when the port goes away (or goes silent), note the gap, reopen it with back-off and
//     go on in the same file; a board reset (a boot identity, or the counter running
//     back) starts a new segment, while time_s stays increasing (each segment is
//     anchored to the host clock at its first sample and then follows the device clock);
//  5. stop at Duration, at Until, or when the context ends, and close the file with its
//     trailer.
//
// Text input (InputText) is for boards running other firmware: lines holding numbers
// (counts or volts) separated by commas, semicolons, spaces or tabs, converted with
// TextInput and stamped with the host's arrival time. There is no handshake.
//
// Connect opens a board for one-off work (Board: Command, Average); FitCalibration turns
// multimeter readings into a channel's gain and offset, which "capcycle calibrate" sends
// with ">cal" and stores with ">save". Every capture then carries the calibration the
// board reported in its header.
//
// A live status line (Snapshot) goes to Config.Status: redrawn in place at most four
// times a second on a terminal, a plain line every LogEvery elsewhere.
//
// Package loggertest has a fake Port for tests.
package logger
