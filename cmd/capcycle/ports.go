package main

import (
	"context"
	"fmt"
	"text/tabwriter"

	"capcycle/logger"
)

// portsCommand is "capcycle ports".
func portsCommand() *command {
	return &command{
		name:    "ports",
		summary: "list serial ports and the boards that speak capcycle's protocol",
		run:     runPorts,
	}
}

// listPorts is the system's port list; tests replace it.
var listPorts = logger.Ports

func runPorts(ctx context.Context, args []string, e *env) error {
	fs := newFlags("ports", "[--probe] [--baud N]", e.stderr,
		"capcycle ports",
		"capcycle ports --probe")
	probe := fs.Bool("probe", false, "ask each USB port for a board identity (opening a port may reset its board)")
	baud := fs.Int("baud", 115200, "serial speed for --probe, bits per second")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usageErrorf("unexpected argument %q", fs.Arg(0))
	}
	ports, err := listPorts()
	if err != nil {
		return workErrorf("%w", err)
	}
	if len(ports) == 0 {
		fmt.Fprintln(e.stdout, "no serial ports found")
		return nil
	}
	var answers []logger.Answer
	if *probe {
		var usb []logger.PortInfo
		for _, p := range ports {
			if p.USB {
				usb = append(usb, p)
			}
		}
		answers = logger.ProbeAll(ctx, nil, usb, &logger.Mode{BaudRate: *baud}, 0)
	}
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', 0)
	fmt.Fprint(tw, "PORT\tUSB ID\tSERIAL\tPRODUCT")
	if *probe {
		fmt.Fprint(tw, "\tBOARD")
	}
	fmt.Fprintln(tw)
	for _, p := range ports {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s", p.Path, dash(p.VIDPID()), dash(p.SerialNumber), dash(p.Product))
		if *probe {
			fmt.Fprintf(tw, "\t%s", probeWord(p, answers))
		}
		fmt.Fprintln(tw)
	}
	return tw.Flush()
}

func dash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

// probeWord says what a probe found on p.
func probeWord(p logger.PortInfo, answers []logger.Answer) string {
	if !p.USB {
		return "not probed"
	}
	for _, a := range answers {
		if a.Port.Path != p.Path {
			continue
		}
		if a.ID != nil {
			return fmt.Sprintf("capcycle board=%s fw=%s", a.ID.Board, a.ID.Firmware)
		}
		if pe, ok := a.Err.(*logger.PortError); ok {
			return pe.Kind.String()
		}
		return "no answer"
	}
	return "-"
}
