package wire

import "strconv"

// Limits of protocol version 1 (PROTOCOL.md, "Frame syntax").
const (
	// Version is the protocol version this package speaks (the ID frame's proto key).
	Version = 1
	// MaxLine is the longest frame in bytes, start character and "\n" included.
	MaxLine = 255
	// MaxChannels is the most channels a sample frame carries.
	MaxChannels = 4
)

// Start characters: every device frame begins with DeviceStart, every host command
// with CommandStart. Neither occurs anywhere else in a frame.
const (
	DeviceStart  = '!'
	CommandStart = '>'
)

// A Frame is one decoded line: a device frame (Identity, Channel, Sample, Average,
// BurstBegin, BurstEnd, Status, Ack, Nak), a host command (the Cmd types), or an
// Unknown frame with a tag this version does not know. Frames are plain values; a
// type switch tells them apart.
type Frame interface {
	// Tag is the frame's tag as sent on the wire ("S", "ID", "rate", ...).
	Tag() string
	frame()
}

// Field is a key=value pair that a receiver did not know, kept in order.
type Field struct {
	Key, Value string
}

// Ref names an ADC reference source. Values other than the constants may come from
// newer firmware and are kept as sent.
type Ref string

// The ADC reference sources of protocol version 1.
const (
	RefAVcc     Ref = "avcc" // the analog supply
	RefInternal Ref = "int"  // the internal band-gap, nominal 1.1 V
	RefExternal Ref = "ext"  // the AREF pin
)

// ResetCause is the cause of the device's last reset, as reported in ST frames.
type ResetCause string

// The reset causes of protocol version 1.
const (
	ResetPowerOn  ResetCause = "por" // power applied
	ResetPin      ResetCause = "ext" // reset pin, e.g. pulsed by the USB bridge's DTR
	ResetBrownOut ResetCause = "bod" // supply dipped below the brown-out level
	ResetWatchdog ResetCause = "wdt" // the watchdog fired
	ResetUnknown  ResetCause = "unk" // the flags were cleared (e.g. by a boot loader) before the firmware read them
)

// ErrorCode is the code of an ER reply. Its String is the msg word devices send with it.
type ErrorCode uint32

// The error codes of protocol version 1.
const (
	CodeUnknown ErrorCode = 1 // unknown command tag
	CodeRange   ErrorCode = 2 // a value out of range
	CodeSyntax  ErrorCode = 3 // missing key, bad number, bad frame
	CodeBusy    ErrorCode = 4 // cannot do it now
	CodeEEPROM  ErrorCode = 5 // EEPROM write or verify failed
	CodeCRC     ErrorCode = 6 // the command's CRC did not match
)

var codeWords = [...]string{"", "unknown", "range", "syntax", "busy", "eeprom", "crc"}

// String returns the msg word of the code ("range"), or "code N" for codes this
// version does not know.
func (c ErrorCode) String() string {
	if c >= 1 && int(c) < len(codeWords) {
		return codeWords[c]
	}
	return "code " + strconv.FormatUint(uint64(c), 10)
}

// Identity is the ID frame: who the board is and the settings in force. It is sent at
// boot (Boot true), after the OK to a >id command and after every settings change, and
// is followed by one Channel frame per enabled channel.
type Identity struct {
	Proto    uint32 // protocol version, Version
	Firmware string // fw: firmware version
	Board    string // board kind
	Bits     uint32 // the ADC's own resolution
	EBits    uint32 // resolution of every count after oversampling (<= 16)
	Ref      Ref    // ADC reference source
	RefUV    uint32 // ref_uv: calibrated reference, microvolts
	NCh      uint32 // enabled channels, 1..MaxChannels
	ClockHz  uint32 // clk_hz: device clock
	MaxHz    uint32 // max_hz: highest fast rate accepted for NCh channels
	SlowHz   uint32 // slow_hz: rate of A frames
	FastHz   uint32 // fast_hz: rate of fast samples (S frames in a burst)
	Thr      uint32 // burst threshold, counts at EBits; 0 disables bursts
	Pre      uint32 // pre-trigger ring length, samples
	Post     uint32 // quiet samples that end a burst
	Boot     bool   // sent at power-up or reset: seq and t_us restart
	Extra    []Field
}

// Channel is the CH frame: one channel's divider and calibration. Input volts are
// counts/2^EBits * RefUV/1e6 / Div * Gain + OffUV/1e6 (see Volts).
type Channel struct {
	Ch    uint32 // channel index, 0..MaxChannels-1
	Div   Micro  // divider ratio, ADC-pin volts over input volts
	Gain  Micro  // calibration gain
	OffUV int32  // off_uv: calibration offset at the input, microvolts
}

// Volts converts counts at ebits resolution, with reference refUV microvolts, to
// volts at the input of the channel. A zero Div gives +Inf or NaN.
func (c Channel) Volts(counts float64, ebits, refUV uint32) float64 {
	v := counts / float64(uint64(1)<<ebits) * float64(refUV) / 1e6
	return v/c.Div.Float64()*c.Gain.Float64() + float64(c.OffUV)/1e6
}

// Sample is the S frame: one fast sample of NCh channels.
type Sample struct {
	Seq    uint32 // sample sequence number, shared with Average
	TimeUS uint32 // t_us: device clock at the sample, wraps at 2^32
	NCh    int    // channels carried, 1..MaxChannels
	Counts [MaxChannels]uint16
}

// Average is the A frame: the mean of N fast samples (1/FastHz apart, the first at
// TimeUS) and the lowest and highest of them, per channel.
type Average struct {
	Seq    uint32
	TimeUS uint32 // t_us of the first of the N fast samples
	N      uint32 // fast samples averaged
	NCh    int    // channels carried, 1..MaxChannels
	Mean   [MaxChannels]uint16
	Min    [MaxChannels]uint16
	Max    [MaxChannels]uint16
}

// BurstBegin is the B frame: a burst begins. The next Pre S frames are the
// pre-trigger ring, oldest first; TimeUS is the time of the triggering sample.
type BurstBegin struct {
	Seq    uint32 // seq of the next sample frame
	TimeUS uint32
	Pre    uint32
}

// BurstEnd is the E frame: the burst ended and A frames resume. TimeUS is the time of
// the burst's last S frame.
type BurstEnd struct {
	Seq    uint32 // seq of the next sample frame
	TimeUS uint32
}

// Status is the ST frame.
type Status struct {
	UptimeS  uint32     // up_s: seconds since reset
	Overruns uint32     // ovr: ADC samples missed since reset
	Dropped  uint32     // drop: frames not sent because the transmit queue was full
	Reset    ResetCause // cause of the last reset
	Running  bool       // run: sampling
	Extra    []Field
}

// Ack is the OK frame: the command Cmd was accepted.
type Ack struct {
	Cmd string
}

// Nak is the ER frame: the command Cmd was refused.
type Nak struct {
	Cmd  string // the command's tag, "?" when it could not be read
	Code ErrorCode
	Msg  string // a word, by convention Code.String()
}

// Unknown is a frame with a valid CRC and syntax but a tag this version does not know.
// Receivers ignore it (newer firmware may send tags older hosts do not know).
type Unknown struct {
	Start  byte // DeviceStart or CommandStart
	Name   string
	Fields []string
}

// CmdID asks for the ID and CH frames (>id).
type CmdID struct{}

// CmdStart starts sampling (>start).
type CmdStart struct{}

// CmdStop stops sampling (>stop).
type CmdStop struct{}

// CmdRate sets the slow and fast rates (>rate).
type CmdRate struct {
	SlowHz, FastHz uint32
}

// CmdChan sets the number of channels (>chan).
type CmdChan struct {
	N uint32
}

// CmdBurst sets the burst threshold, ring length and quiet length (>burst).
type CmdBurst struct {
	Thr, Pre, Post uint32
}

// CmdRef selects the ADC reference (>ref); RefUV 0 keeps its stored calibration.
type CmdRef struct {
	Src   Ref
	RefUV uint32
}

// CmdCal sets one channel's calibration in RAM (>cal).
type CmdCal struct {
	Ch    uint32
	Div   Micro
	Gain  Micro
	OffUV int32
}

// CmdSave stores settings and calibration to EEPROM (>save).
type CmdSave struct{}

// CmdStatus asks for an ST frame (>status).
type CmdStatus struct{}

func (Identity) Tag() string   { return "ID" }
func (Channel) Tag() string    { return "CH" }
func (Sample) Tag() string     { return "S" }
func (Average) Tag() string    { return "A" }
func (BurstBegin) Tag() string { return "B" }
func (BurstEnd) Tag() string   { return "E" }
func (Status) Tag() string     { return "ST" }
func (Ack) Tag() string        { return "OK" }
func (Nak) Tag() string        { return "ER" }
func (u Unknown) Tag() string  { return u.Name }
func (CmdID) Tag() string      { return "id" }
func (CmdStart) Tag() string   { return "start" }
func (CmdStop) Tag() string    { return "stop" }
func (CmdRate) Tag() string    { return "rate" }
func (CmdChan) Tag() string    { return "chan" }
func (CmdBurst) Tag() string   { return "burst" }
func (CmdRef) Tag() string     { return "ref" }
func (CmdCal) Tag() string     { return "cal" }
func (CmdSave) Tag() string    { return "save" }
func (CmdStatus) Tag() string  { return "status" }

func (Identity) frame()   {}
func (Channel) frame()    {}
func (Sample) frame()     {}
func (Average) frame()    {}
func (BurstBegin) frame() {}
func (BurstEnd) frame()   {}
func (Status) frame()     {}
func (Ack) frame()        {}
func (Nak) frame()        {}
func (Unknown) frame()    {}
func (CmdID) frame()      {}
func (CmdStart) frame()   {}
func (CmdStop) frame()    {}
func (CmdRate) frame()    {}
func (CmdChan) frame()    {}
func (CmdBurst) frame()   {}
func (CmdRef) frame()     {}
func (CmdCal) frame()     {}
func (CmdSave) frame()    {}
func (CmdStatus) frame()  {}

// IsCommand reports whether f travels from host to device (a Cmd type, or an Unknown
// frame that began with CommandStart).
func IsCommand(f Frame) bool {
	switch f := f.(type) {
	case CmdID, CmdStart, CmdStop, CmdRate, CmdChan, CmdBurst, CmdRef, CmdCal, CmdSave, CmdStatus:
		return true
	case Unknown:
		return f.Start == CommandStart
	}
	return false
}

// knownTag reports whether tag is one of protocol version 1's tags.
func knownTag(tag string) bool {
	switch tag {
	case "ID", "CH", "S", "A", "B", "E", "ST", "OK", "ER",
		"id", "start", "stop", "rate", "chan", "burst", "ref", "cal", "save", "status":
		return true
	}
	return false
}
