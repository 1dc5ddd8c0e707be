package main

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"time"

	"capcycle/analyze/profile"
	"capcycle/analyze/units"
	"capcycle/firmware-protocol/wire"
	"capcycle/logger"
)

// calibrateCommand is "capcycle calibrate".
func calibrateCommand() *command {
	return &command{
		name:    "calibrate",
		summary: "calibrate a board's channels against a multimeter reading",
		run:     runCalibrate,
	}
}

const calibrateSafety = `Safety: keep the applied voltage inside the board's input range after the divider
(the ADC pin must stay between 0 V and the board's supply); a charged capacitor can
deliver a large current, so apply the voltage from a current-limited supply and discharge
storage capacitors before you rewire. Follow the part makers' ratings.`

func runCalibrate(ctx context.Context, args []string, e *env) error {
	fs := newFlags("calibrate", "[flags] VOLTS [VOLTS]", e.stderr,
		"capcycle calibrate --port /dev/ttyUSB0 3.30",
		"capcycle calibrate --port /dev/ttyUSB0 --channel 1 --profile wren.toml 1.000 4.500")
	port := fs.String("port", "", "serial port path (default: the one board that answers)")
	baud := fs.Int("baud", 115200, "serial speed, bits per second")
	ch := fs.Int("channel", 0, "channel to calibrate (ADC0 is 0)")
	n := fs.Int("samples", 50, "readings averaged at each voltage")
	prof := fs.String("profile", "", "bench profile: sets the channel's divider ratio on the board too")
	dryRun := fs.Bool("dry-run", false, "compute and print the calibration, but do not send it")
	yes := fs.Bool("yes", false, "do not wait for Enter before each reading (the voltage is already applied)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() < 1 || fs.NArg() > 2 {
		return usageErrorf("want one or two known voltages (read on a multimeter), e.g. \"3.30\" or \"1.0 4.5\"")
	}
	var trueV []float64
	for _, a := range fs.Args() {
		v, err := units.ParseDomain(a, units.Volt, units.Positive)
		if err != nil {
			return usageErrorf("voltage %q: %w", a, err)
		}
		trueV = append(trueV, v)
	}
	if *n < 1 {
		return usageErrorf("--samples %d: want at least 1", *n)
	}
	div, err := profileDivider(*prof, *ch)
	if err != nil {
		return err
	}
	path := *port
	mode := &logger.Mode{BaudRate: *baud}
	if path == "" {
		p, err := logger.SelectBoard(ctx, nil, mode)
		if err != nil {
			return usageErrorf("%w", err)
		}
		path = p
	}
	b, err := logger.Connect(ctx, nil, path, mode, 0)
	if err != nil {
		return workErrorf("%w", err)
	}
	defer b.Close()
	if *ch < 0 || *ch >= int(b.ID.NCh) {
		return usageErrorf("--channel %d: the board records %d channel(s)", *ch, b.ID.NCh)
	}
	old := b.Channels[*ch]
	if div > 0 && !*dryRun {
		// Put the profile's divider on the board first, with a neutral calibration.
		if err := b.Command(ctx, wire.CmdCal{Ch: uint32(*ch), Div: wire.MicroOf(div), Gain: wire.MicroOf(1)}); err != nil {
			return workErrorf("%w", err)
		}
	}
	fmt.Fprintln(e.stderr, calibrateSafety)
	pts, err := readPoints(ctx, e, b, trueV, *ch, *n, *yes, *dryRun, div)
	if err != nil {
		return err
	}
	gain, off, err := logger.FitCalibration(pts)
	if err != nil {
		return workErrorf("%w", err)
	}
	divNow := b.Channels[*ch].Div
	if *dryRun && div > 0 {
		divNow = wire.MicroOf(div)
	}
	cal := wire.CmdCal{Ch: uint32(*ch), Div: divNow, Gain: wire.MicroOf(gain), OffUV: int32(off * 1e6)}
	fmt.Fprintf(e.stdout, "calibration: channel=%d gain=%s offset_v=%.6f divider=%s (was gain=%s offset_v=%.6f)\n",
		*ch, cal.Gain, off, cal.Div, old.Gain, float64(old.OffUV)/1e6)
	if *dryRun {
		fmt.Fprintln(e.stdout, "dry run: nothing sent to the board")
		return nil
	}
	if err := b.Command(ctx, cal); err != nil {
		return workErrorf("%w", err)
	}
	if err := b.Command(ctx, wire.CmdSave{}); err != nil {
		return workErrorf("%w (the calibration is in the board's RAM only)", err)
	}
	fmt.Fprintln(e.stdout, "saved to the board; every capture records it in its calibration line")
	return nil
}

// profileDivider is the divider ratio of the profile's channel on ADC ch (0 without a
// profile).
func profileDivider(path string, ch int) (float64, error) {
	if path == "" {
		return 0, nil
	}
	p, err := profile.Load(path)
	if err != nil {
		return 0, inputError(err)
	}
	for _, c := range p.Channels {
		if c.ADC == ch {
			return c.Ratio(), nil
		}
	}
	return 0, inputError(fmt.Errorf("profile %s has no channel on ADC%d", p.Name, ch))
}

// readPoints reads the board at each known voltage (after Enter, unless yes), averaging n
// readings, and prints each point. On a dry run with a profile's divider, which was not
// sent, the board's own ratio is replaced by it.
func readPoints(ctx context.Context, e *env, b *logger.Board, trueV []float64, ch, n int, yes, dryRun bool, div float64) ([]logger.CalPoint, error) {
	in := bufio.NewReader(e.stdin)
	var pts []logger.CalPoint
	for _, v := range trueV {
		if !yes {
			fmt.Fprintf(e.stderr, "\nApply %s to channel %d (read it on the multimeter), then press Enter: ", units.Format(v, units.Volt), ch)
			if _, err := in.ReadString('\n'); err != nil && err != io.EOF {
				return nil, workErrorf("reading standard input: %w", err)
			}
		}
		r, err := b.Average(ctx, ch, n, 3*time.Second)
		if err != nil {
			return nil, workErrorf("%w", err)
		}
		if dryRun && div > 0 {
			r.RawV *= b.Channels[ch].Div.Float64() / div
			r.SDV *= b.Channels[ch].Div.Float64() / div
		}
		fmt.Fprintf(e.stdout, "point: true_v=%.5f raw_v=%.5f sd_v=%.5f counts=%.2f n=%d\n", v, r.RawV, r.SDV, r.Counts, r.N)
		pts = append(pts, logger.CalPoint{RawV: r.RawV, TrueV: v})
	}
	return pts, nil
}
