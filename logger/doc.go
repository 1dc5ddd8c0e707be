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
// the dialout or uucp group). An open port is locked (an advisory flock on the device,
// which holds for root too, released when it closes or the process ends, even by kill
// -9): a second recorder on it gets a busy PortError naming the holder's process id
// (LockedError). Probe asks a port for its identity frame; SelectBoard picks the one
// board that answers.
//
// # Recording
//
// Record runs one recording from a Config (cmd/capcycle fills it from the profile and
// the flags; this package knows nothing of profiles):
//
//  1. check the capture path (its folder exists; an existing file needs Force, or Append
//     and a capture to continue: ErrOutput otherwise), open the port, ask for the
//     identity (">id"), send the settings that differ (">chan", ">rate", ">burst",
//     ">ref"), and create the capture with the board's identity, dividers and
//     calibration in its header. A board that does not answer is asked again (the port
//     reopened if it fails) until it does, the stop time or StartWait comes, or the
//     context ends, as after a loss mid-run;
//  2. turn every sample frame into a row, in volts:
//     counts / 2^ebits * ref / divider * gain + offset (PROTOCOL.md, "ID and CH");
//     slow A rows and burst S rows mix at their own spacing;
//  3. drop damaged frames (counted, never written), count sequence gaps as lost samples
//     and note them as gap lines, unwrap the 32-bit device clock, and fit the device
//     clock against the host's (the drift goes into the trailer when the fit is long
//     and plausible enough to mean something: DriftFit.Drift);
//  4. when the port goes away (or goes silent for Silence), note the gap, reopen it with
//     back-off and go on in the same file; a board reset (a boot identity, or the
//     counter running back) starts a new segment. Within a connected stretch time_s
//     follows the board's clock; a gap between stretches (an outage, a reset) is
//     measured by the host clock, from the arrival of the last row to that of the next,
//     so time_s stays increasing and a board clock that ran ahead cannot hide an outage;
//  5. stop at Duration, at Until, or when the context ends, and close the file with its
//     trailer.
//
// Rows are written to the file every FlushEvery (250 ms), so a crash or a kill -9 loses
// well under a second of them.
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
// times a second on a terminal, a plain line every LogEvery elsewhere. It leads with the
// link's state when the board is not sending: silent for QuietAfter or longer, gone and
// the port being reopened, or not yet answering at the start (LinkState).
//
// Package loggertest has a fake Port for tests.
package logger
