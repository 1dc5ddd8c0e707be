package main

import (
	"fmt"
	"strings"
	"time"

	"capcycle/analyze/model"
	"capcycle/firmware-protocol/virtualboard"
	"capcycle/firmware-protocol/wire"
)

// This file wires the circuit model to the virtual board: a rig is a circuit, its light
// and the way the board is clipped to it (which node each ADC input reads, through what
// divider, with which converter), and modelSource turns the model's trajectory into the
// voltages at the board's inputs.

// boardFlaws are the board's imperfections, set by the flags.
type boardFlaws struct {
	EBits    int     // resolution after oversampling; 0 means Bits (no oversampling)
	NoiseV   float64 // rms noise at the storage node, volts
	RefError float64 // the true reference's relative error
	DivTol   float64 // the dividers' relative tolerance
	Seed     uint64
}

// boardConfig is the virtual board's configuration for rig, fed by src. The noise is
// given at the storage node and converted to converter LSB through ADC0's divider.
func boardConfig(rig *model.Rig, src virtualboard.Source, fl boardFlaws) *virtualboard.Config {
	cfg := &virtualboard.Config{
		Source: src, Firmware: "0.1.0-virtual", Board: "virtual-robot",
		Channels: len(rig.Nodes), Bits: rig.Bits, EBits: fl.EBits,
		Ref: wire.RefAVcc, RefError: fl.RefError,
		Div: rig.Div, DivTolerance: fl.DivTol, Seed: fl.Seed,
	}
	if cfg.EBits == 0 {
		cfg.EBits = rig.Bits
	}
	if rig.RefInternal {
		cfg.Ref, cfg.BandgapV = wire.RefInternal, rig.RefV
	} else {
		cfg.AVccV = rig.RefV
	}
	if fl.NoiseV > 0 && rig.RefV > 0 {
		lsbAtNode := rig.RefV / float64(int(1)<<rig.Bits) / rig.Div[0]
		cfg.NoiseLSB = fl.NoiseV / lsbAtNode
	}
	return cfg
}

// robotStatus is the short status line of a running robot: the model's time of day
// (hours past the midnight its day starts from), the storage voltage, fires, and the
// board's frame counts.
func robotStatus(src *model.RigSource, b *virtualboard.Board) string {
	ts, v, fires := src.Progress()
	st := b.Stats()
	d := time.Duration((src.StartS() + ts) * float64(time.Second)).Truncate(time.Second)
	h := int(d.Hours())
	m := int(d.Minutes()) % 60
	sec := int(d.Seconds()) % 60
	var sb strings.Builder
	fmt.Fprintf(&sb, "model %02d:%02d:%02d  %.3f V  %d fires  %d frames", h, m, sec, v, fires, st.Frames)
	if st.Dropped > 0 || st.Discarded > 0 {
		fmt.Fprintf(&sb, " (%d dropped, %d with no host)", st.Dropped, st.Discarded)
	}
	if st.SlipS >= 1 {
		// The board fell behind its pace (a slow host, a busy machine) and let the
		// model wait rather than lose frames.
		fmt.Fprintf(&sb, ", model held back %.3g s for a slow host", st.SlipS)
	}
	return sb.String()
}
