// Package wire is the codec of the capcycle wire protocol (../PROTOCOL.md): the text
// frames a capcycle ADC board sends over its serial link, and the commands a host sends
// back.
//
// # Frames
//
// Every frame is one line: a start character ("!" from the device, ">" from the host),
// a tag, fields separated by single spaces, and a CRC-16/XMODEM of the bytes between
// the start character and the " *" before it:
//
//	!S 12 3400 2048 *XXXX        Sample{Seq: 12, TimeUS: 3400, NCh: 1, Counts: {2048}}
//	!A 7 100000 50 2000 1990 2011 *XXXX
//	                             Average{N: 50, Mean: {2000}, Min: {1990}, Max: {2011}, ...}
//	!OK cmd=rate *XXXX           Ack{Cmd: "rate"}
//	>rate slow_hz=10 fast_hz=500 *XXXX
//	                             CmdRate{SlowHz: 10, FastHz: 500}
//
// (XXXX stands for the four hex digits of the CRC; the examples in this package's tests
// show real ones.) Each frame type is a plain struct implementing Frame; a type switch
// tells them apart. Frames with a tag this version does not know decode as Unknown and
// are meant to be ignored: that is how newer firmware keeps working with older hosts.
//
// # Encoding
//
// Append writes a frame, CRC and "\n" included, to a byte slice and allocates nothing
// for the sample frames, so a device model can stream thousands per second:
//
//	buf = wire.Append(buf[:0], wire.Sample{Seq: seq, TimeUS: t, NCh: 1, Counts: c})
//
// # Decoding
//
// A Decoder reads frames from any io.Reader (a serial port, a file, a pipe):
//
//	d := wire.NewDecoder(port)
//	for {
//		f, err := d.Next()
//		var fe *wire.FrameError
//		switch {
//		case errors.As(err, &fe):
//			continue // a bad frame: fe.Offset, fe.Reason, fe.Line; the stream goes on
//		case err != nil:
//			return err // the reader's own error, io.EOF at the end
//		}
//		...
//	}
//
// Noise, a cut line or a flipped bit never stops the stream: the decoder resynchronises
// at the next start character, and the bad frame comes back as a *FrameError that
// wraps ErrCRC or ErrMalformed. Stats counts good, unknown, bad-CRC and malformed
// frames, the bytes skipped between frames, and the sample frames Lost, found from gaps
// in the sequence numbers (which wrap at 2^32; a step back is a board restart, not a
// loss). ScanFrames is the same framing as a bufio.SplitFunc, with Parse for each token,
// for code that wants a bufio.Scanner.
//
// # Time and volts
//
// The device clock t_us is a 32-bit microsecond counter that wraps about every 71.6
// minutes; a Clock unwraps it into a monotonic count. Counts become volts with
// Channel.Volts, from the reference and divider in the ID and CH frames.
package wire
