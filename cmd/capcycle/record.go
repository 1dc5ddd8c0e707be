package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"golang.org/x/term"

	"capcycle/analyze/profile"
	"capcycle/analyze/units"
	"capcycle/logger"
)

// recordCommand is "capcycle record".
func recordCommand() *command {
	return &command{
		name:    "record",
		summary: "log a board's capacitor voltage to a capture file",
		run:     runRecord,
	}
}

// recordFlags are the flags of "capcycle record"; a flag that is set wins over the profile.
type recordFlags struct {
	port, profile, out, until, input, ref, columns string
	baud, bits, channels                           int
	force, append, quiet, noDTR                    bool
	duration                                       time.Duration
	vref, divider, scale                           *units.Value
	slowHz, fastHz                                 int
	burstThr, burstPre, burstPost                  int
}

func newRecordFlags(w io.Writer) (*flag.FlagSet, *recordFlags) {
	f := &recordFlags{
		vref:    units.NewValue(0, units.Volt, units.Positive),
		divider: units.NewValue(0, "", units.Positive),
		scale:   units.NewValue(0, "", units.Any),
	}
	fs := newFlags("record", "[flags]", w,
		"capcycle record --profile wren.toml",
		"capcycle record --port /dev/ttyUSB0 --out wren-sill.csv --until 18:30",
		"capcycle record --port /dev/ttyACM0 --input text --bits 10 --vref 5.02 --divider 0.3333 --duration 2h",
		"capcycle record --profile wren.toml --append --out wren-sill.csv")
	fs.StringVar(&f.port, "port", "", "serial port path (default: the one board that answers)")
	fs.IntVar(&f.baud, "baud", 115200, "serial speed, bits per second")
	fs.BoolVar(&f.noDTR, "no-dtr", false, "open with DTR and RTS low (boards that should not reset on open)")
	fs.StringVar(&f.profile, "profile", "", "bench profile (TOML): name, dividers, ADC reference")
	outVar(fs, &f.out, "", "capture file (default: PROFILE-YYYYMMDD-HHMM.csv in the current directory)")
	fs.BoolVar(&f.force, "force", false, "replace an existing capture file")
	fs.BoolVar(&f.append, "append", false, "continue an existing capture file (repairs a torn last line)")
	fs.DurationVar(&f.duration, "duration", 0, "stop after this long (e.g. 90m, 8h); 0: until Ctrl-C")
	fs.StringVar(&f.until, "until", "", "stop at this local time, HH:MM (the next one to come)")
	fs.BoolVar(&f.quiet, "quiet", false, "no status line")
	fs.StringVar(&f.input, "input", "frames", "what the port carries: frames (capcycle firmware) or text (lines of numbers)")
	fs.IntVar(&f.bits, "bits", 0, "text input: ADC resolution of the numbers, bits; 0: the numbers are volts (default: the profile's)")
	fs.Var(f.vref, "vref", "text input: ADC reference, V (default: the profile's)")
	fs.Var(f.divider, "divider", "divider ratio of vcap, ADC volts over node volts, at most 1 (default: the profile's, else the board's)")
	fs.Var(f.scale, "scale", "text input: a further factor on every number (default 1)")
	fs.IntVar(&f.channels, "channels", 0, "channels to record, 1..4 (default: the profile's, else all the board sends)")
	fs.StringVar(&f.columns, "columns", "", "names of the columns after vcap_v, comma-separated (default: from the profile, else ch1_v,...)")
	fs.IntVar(&f.slowHz, "slow-hz", 0, "slow (averaged) sample rate, Hz (default: keep the board's)")
	fs.IntVar(&f.fastHz, "fast-hz", 0, "fast (burst) sample rate, Hz (default: keep the board's)")
	fs.IntVar(&f.burstThr, "burst-thr", -1, "burst threshold, counts; 0 disables bursts; -1 keeps the board's")
	fs.IntVar(&f.burstPre, "burst-pre", -1, "pre-trigger samples kept before a burst; -1 keeps the board's")
	fs.IntVar(&f.burstPost, "burst-post", -1, "quiet samples that end a burst; -1 keeps the board's")
	fs.StringVar(&f.ref, "ref", "", "ADC reference: avcc, int or ext (default: the profile's, else keep the board's)")
	return fs, f
}

func runRecord(ctx context.Context, args []string, e *env) error {
	fs, f := newRecordFlags(e.stderr)
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usageErrorf("unexpected argument %q", fs.Arg(0))
	}
	set := map[string]bool{}
	fs.Visit(func(fl *flag.Flag) { set[fl.Name] = true })
	var prof *profile.Profile
	if f.profile != "" {
		p, err := profile.Load(f.profile)
		if err != nil {
			return inputError(err)
		}
		prof = p
	}
	now := time.Now()
	cfg, err := recordConfig(f, set, prof, now)
	if err != nil {
		return err
	}
	if !f.quiet {
		cfg.Status = e.stderr
		if fl, ok := e.stderr.(*os.File); ok && term.IsTerminal(int(fl.Fd())) {
			cfg.Terminal = true
		}
	}
	sum, err := logger.Record(ctx, cfg)
	if err != nil {
		return recordError(err)
	}
	if !f.quiet {
		fmt.Fprintf(e.stderr, "record: %s: %d samples, %d lost, %d bad frames, %d gaps, %d reconnects, %d cycles seen\n",
			sum.Out, sum.Stats.Samples, sum.Stats.Lost, sum.Stats.BadFrames, sum.Stats.Gaps, sum.Reconnects, sum.Cycles)
		if sum.Clock.Points > 0 {
			fmt.Fprintf(e.stderr, "record: the board clock ran %+.0f ppm against the host over %.0f s (in the file's clock line)\n",
				sum.Clock.DriftPPM, sum.Clock.FitS)
		} else if sum.ClockNote != "" {
			fmt.Fprintf(e.stderr, "record: the board clock's drift is not determined: %s\n", sum.ClockNote)
		}
	}
	return nil
}

// recordError marks the errors that are the user's to fix as usage errors.
func recordError(err error) error {
	var pe *logger.PortError
	switch {
	case errors.Is(err, os.ErrExist):
		return usageErrorf("%w (use --force to replace it or --append to continue it)", err)
	case errors.Is(err, logger.ErrOutput):
		return inputError(err)
	case errors.Is(err, logger.ErrNoBoard), errors.Is(err, logger.ErrManyBoards):
		return usageErrorf("%w; pick one with --port PATH", err)
	case errors.As(err, &pe) && pe.Op == "open":
		return workErrorf("%w", err)
	}
	return err
}

// recordConfig turns the flags and the profile into the logger's plain config.
func recordConfig(f *recordFlags, set map[string]bool, prof *profile.Profile, now time.Time) (*logger.Config, error) {
	cfg := &logger.Config{Port: f.port, Mode: &logger.Mode{BaudRate: f.baud, NoDTR: f.noDTR},
		Out: f.out, Force: f.force, Append: f.append, Duration: f.duration, Channels: f.channels}
	if f.force && f.append {
		return nil, usageErrorf("--force and --append exclude each other")
	}
	if f.duration < 0 {
		return nil, usageErrorf("--duration %v is negative", f.duration)
	}
	switch f.input {
	case "frames":
		cfg.Input = logger.InputFrames
	case "text":
		cfg.Input = logger.InputText
	default:
		return nil, usageErrorf("--input %q: want frames or text", f.input)
	}
	if f.until != "" {
		u, err := recordUntil(f.until, now)
		if err != nil {
			return nil, err
		}
		cfg.Until = u
	}
	if f.channels < 0 || f.channels > 4 {
		return nil, usageErrorf("--channels %d: want 1..4", f.channels)
	}
	if prof != nil {
		if err := recordFromProfile(cfg, prof, f.input == "text"); err != nil {
			return nil, err
		}
	}
	if set["columns"] {
		cfg.Columns = recordSplit(f.columns)
	}
	if set["divider"] {
		if f.divider.V > 1 {
			return nil, usageErrorf("--divider %g: the ratio is ADC volts over node volts, at most 1 (did you mean %.6g?)", f.divider.V, 1/f.divider.V)
		}
		if len(cfg.Dividers) == 0 {
			cfg.Dividers = []float64{0}
		}
		cfg.Dividers[0] = f.divider.V
		cfg.Text.Divider = f.divider.V
	}
	if set["bits"] {
		if f.bits < 0 || f.bits > 32 {
			return nil, usageErrorf("--bits %d: want 0..32", f.bits)
		}
		cfg.Text.Bits = f.bits
	}
	if set["vref"] {
		cfg.Text.VrefV = f.vref.V
	}
	if set["scale"] {
		cfg.Text.Scale = f.scale.V
	}
	if cfg.Input == logger.InputText {
		if cfg.Port == "" {
			return nil, usageErrorf("--input text needs --port")
		}
		if cfg.Text.Bits > 0 && cfg.Text.VrefV <= 0 {
			return nil, usageErrorf("--input text with --bits %d needs --vref (or a profile)", cfg.Text.Bits)
		}
	}
	if f.slowHz < 0 || f.fastHz < 0 {
		return nil, usageErrorf("rates must be positive")
	}
	cfg.SlowHz, cfg.FastHz = uint32(f.slowHz), uint32(f.fastHz)
	if f.burstThr >= 0 || f.burstPre >= 0 || f.burstPost >= 0 {
		if f.burstThr < 0 || f.burstPre < 0 {
			return nil, usageErrorf("--burst-thr and --burst-pre go together")
		}
		cfg.Burst = &logger.Burst{Thr: uint32(f.burstThr), Pre: uint32(f.burstPre), Post: uint32(max(f.burstPost, 0))}
	}
	if set["ref"] {
		switch f.ref {
		case "avcc", "int", "ext":
			cfg.Ref = f.ref
		default:
			return nil, usageErrorf("--ref %q: want avcc, int or ext", f.ref)
		}
	}
	if cfg.Out == "" {
		name := "capture"
		if prof != nil && prof.Name != "" {
			name = recordFileWord(prof.Name)
		}
		cfg.Out = fmt.Sprintf("%s-%s.csv", name, now.Format("20060102-1504"))
	}
	return cfg, nil
}

// recordFromProfile takes the name, the channels, their dividers, scales and columns
// and the ADC reference from the profile (profile.Recording).
func recordFromProfile(cfg *logger.Config, p *profile.Profile, text bool) error {
	r, err := p.Recording(cfg.Channels, text)
	if err != nil {
		return inputError(err)
	}
	cfg.Profile = p.Name
	cfg.Channels, cfg.Dividers, cfg.Scales, cfg.Columns, cfg.Ref = r.Channels, r.Dividers, r.Scales, r.Columns, r.Ref
	cfg.Decimals = max(cfg.Decimals, r.Decimals)
	if text {
		cfg.Text = logger.TextInput{Bits: p.ADC.Bits, VrefV: p.ADC.ReferenceV, Divider: cfg.Dividers[0], Columns: cfg.Channels}
	}
	return nil
}

// recordUntil is the next time of day "HH:MM" after now, in now's location.
func recordUntil(s string, now time.Time) (time.Time, error) {
	sec, err := units.ParseClock(s)
	if err != nil {
		return time.Time{}, usageErrorf("--until %q: want HH:MM (24-hour clock)", s)
	}
	u := time.Date(now.Year(), now.Month(), now.Day(), 0, 0, int(sec), 0, now.Location())
	if !u.After(now) {
		u = u.AddDate(0, 0, 1)
	}
	return u, nil
}

func recordSplit(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ",") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}

// recordFileWord makes a name safe for a file name: lower case, letters, digits and '-'.
func recordFileWord(s string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(s) {
		switch {
		case r >= 'a' && r <= 'z', r >= '0' && r <= '9', r == '-', r == '_':
			b.WriteRune(r)
		case r == ' ' || r == '.':
			b.WriteByte('-')
		}
	}
	if b.Len() == 0 {
		return "capture"
	}
	return filepath.Base(b.String())
}
