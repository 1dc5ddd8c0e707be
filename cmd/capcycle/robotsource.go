package main

import (
	"fmt"
	"math"
	"strings"
	"sync/atomic"
	"time"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	"capcycle/firmware-protocol/virtualboard"
	"capcycle/firmware-protocol/wire"
)

// This file wires the circuit model to the virtual board: a rig is a circuit, its light
// and the way the board is clipped to it (which node each ADC input reads, through what
// divider, with which converter), and modelSource turns the model's trajectory into the
// voltages at the board's inputs.

// robotNode is a point of the circuit that one board input reads.
type robotNode int

const (
	nodeNone  robotNode = iota // an input wired to nothing: it reads 0 V
	nodeVcap                   // the storage capacitor
	nodeVcell                  // the cell's output
	nodeVhold                  // the hold capacitor of a hold trigger
	nodeVload                  // the load side of the switch
	nodeIload                  // the load current, through a shunt and an amplifier (robotRig.VPerA)
)

func (n robotNode) String() string {
	switch n {
	case nodeVcap:
		return "vcap"
	case nodeVcell:
		return "vcell"
	case nodeVhold:
		return "vhold"
	case nodeVload:
		return "vload"
	case nodeIload:
		return "iload"
	}
	return "none"
}

// robotRig is a circuit under its light with the board wired to it.
type robotRig struct {
	Name    string
	Circuit *model.Circuit
	Light   model.Light
	StartV  float64 // node voltage at t = 0, volts
	// StartS shifts the run into the light's day: the board's t = 0 is the light's
	// StartS (the robot is put on the sill then, with the storage at StartV).
	StartS float64

	// The board: Nodes[k] is what ADC input k reads through a divider of ratio Div[k]
	// (ADC-pin volts over node volts). Nodes[0] is always nodeVcap. An input on
	// nodeIload reads the load current as VPerA[k] volts per ampere (shunt·gain), with
	// Div[k] 1; VPerA may be nil when no input reads it.
	Nodes []robotNode
	Div   []float64
	VPerA []float64
	Bits  int      // converter resolution
	Ref   wire.Ref // reference the board boots with
	RefV  float64  // the reference's nominal volts (what the firmware believes)
}

// Scenario defaults for the board: a 10-bit converter on a 5 V AVcc reference (an
// ATmega328P board on USB power) reading the storage node through two equal resistors,
// which puts the top of the range at 10 V, above both scenarios' open-circuit voltage.
const (
	scenarioBits = 10
	scenarioRefV = 5.0
	scenarioDiv  = 0.5
)

// rigFromScenario wires the board to a built-in scenario: one input on the storage node.
func rigFromScenario(sc *model.Scene) *robotRig {
	return &robotRig{
		Name: sc.Name, Circuit: sc.Circuit, Light: sc.Light, StartV: sc.StartV,
		Nodes: []robotNode{nodeVcap}, Div: []float64{scenarioDiv},
		Bits: scenarioBits, Ref: wire.RefAVcc, RefV: scenarioRefV,
	}
}

// rigFromProfile builds the circuit and the light from a bench profile
// (model.FromProfile) and wires the board as the profile's channels say: ADC input k
// reads the profile's channel on ADC k, through its divider; ADC0 must read vcap, as
// the recorder writes ADC0 as vcap_v.
func rigFromProfile(p *profile.Profile) (*robotRig, error) {
	c, light, err := model.FromProfile(p)
	if err != nil {
		return nil, fmt.Errorf("profile %s: %w", p.Name, err)
	}
	if light == nil {
		return nil, fmt.Errorf("profile %s: no [light] table: the virtual robot needs the light it stands in", p.Name)
	}
	rig := &robotRig{Name: p.Name, Circuit: c, Light: light, Bits: p.ADC.Bits, RefV: p.ADC.ReferenceV}
	if rig.Bits == 0 {
		rig.Bits = scenarioBits
	}
	switch p.ADC.Reference {
	case profile.RefInternal:
		rig.Ref = wire.RefInternal
	default:
		rig.Ref = wire.RefAVcc
	}
	maxADC := 0
	for _, ch := range p.Channels {
		maxADC = max(maxADC, ch.ADC)
	}
	if maxADC >= wire.MaxChannels {
		return nil, fmt.Errorf("profile %s: ADC%d: the board has ADC0..ADC%d", p.Name, maxADC, wire.MaxChannels-1)
	}
	rig.Nodes = make([]robotNode, maxADC+1)
	rig.Div = make([]float64, maxADC+1)
	for k := range rig.Div {
		rig.Div[k] = 1
	}
	for _, ch := range p.Channels {
		n, err := nodeOf(ch.Node)
		if err != nil {
			return nil, fmt.Errorf("profile %s: channel on ADC%d: %w", p.Name, ch.ADC, err)
		}
		rig.Nodes[ch.ADC], rig.Div[ch.ADC] = n, ch.Ratio()
		if n == nodeIload {
			if rig.VPerA == nil {
				rig.VPerA = make([]float64, maxADC+1)
			}
			rig.VPerA[ch.ADC] = ch.VoltsPerAmp()
		}
	}
	if rig.Nodes[0] != nodeVcap {
		return nil, fmt.Errorf("profile %s: the board's ADC0 must read vcap (the recorder writes ADC0 as vcap_v)", p.Name)
	}
	return rig, nil
}

func nodeOf(n profile.Node) (robotNode, error) {
	switch n {
	case profile.NodeVcap:
		return nodeVcap, nil
	case profile.NodeVcell:
		return nodeVcell, nil
	case profile.NodeVhold:
		return nodeVhold, nil
	case profile.NodeVload:
		return nodeVload, nil
	case profile.NodeIload:
		return nodeIload, nil
	}
	return nodeNone, fmt.Errorf("node %q is not one the virtual robot can read", n)
}

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
func boardConfig(rig *robotRig, src virtualboard.Source, fl boardFlaws) *virtualboard.Config {
	cfg := &virtualboard.Config{
		Source: src, Firmware: "0.1.0-virtual", Board: "virtual-robot",
		Channels: len(rig.Nodes), Bits: rig.Bits, EBits: fl.EBits,
		Ref: rig.Ref, RefError: fl.RefError,
		Div: rig.Div, DivTolerance: fl.DivTol, Seed: fl.Seed,
	}
	if cfg.EBits == 0 {
		cfg.EBits = rig.Bits
	}
	switch rig.Ref {
	case wire.RefInternal:
		cfg.BandgapV = rig.RefV
	default:
		cfg.AVccV = rig.RefV
	}
	if fl.NoiseV > 0 && rig.RefV > 0 {
		lsbAtNode := rig.RefV / float64(int(1)<<rig.Bits) / rig.Div[0]
		cfg.NoiseLSB = fl.NoiseV / lsbAtNode
	}
	return cfg
}

// modelSource is a virtualboard.Source that runs the circuit model: it pulls the
// model's samples (model.Sampler, at a fixed rate) as the board's clock passes them and
// gives each board input its node's voltage, interpolated linearly between the two
// samples around the board's instant. It ends with the model run (its DurationS).
//
// The board calls Sample from its Run goroutine only; the progress counters (model time,
// fires, the storage voltage) may be read from any goroutine.
type modelSource struct {
	sp      *model.Sampler
	c       *model.Circuit
	nodes   []robotNode
	vPerA   []float64    // per input: volts per ampere of an iload input (robotRig.VPerA)
	a, b    model.Sample // the samples around the last instant asked for; a.TS <= t <= b.TS
	started bool
	ended   bool
	startS  float64 // the light's time of day at t = 0, s (for the status clock)

	timeBits atomic.Uint64 // math.Float64bits of the model time reached, s
	voltBits atomic.Uint64 // math.Float64bits of the storage voltage there, V
	fires    atomic.Int64  // switch turn-ons seen in the samples
}

var _ virtualboard.Source = (*modelSource)(nil)

// newModelSource starts the model of rig for durationS seconds (0: endless) sampled at
// rateHz.
func newModelSource(rig *robotRig, durationS, rateHz float64) (*modelSource, error) {
	light := shiftLight(rig.Light, rig.StartS)
	sp, err := model.NewSampler(rig.Circuit, light, &model.Options{DurationS: durationS, RateHz: rateHz, StartV: rig.StartV})
	if err != nil {
		return nil, err
	}
	return &modelSource{sp: sp, c: rig.Circuit, nodes: rig.Nodes, vPerA: rig.VPerA, startS: rig.StartS}, nil
}

// Sample implements virtualboard.Source.
func (s *modelSource) Sample(t float64, v []float64) bool {
	if s.ended {
		return false
	}
	if !s.started {
		first, ok := s.sp.Next()
		if !ok {
			s.ended = true
			return false
		}
		s.a, s.b, s.started = first, first, true
	}
	for s.b.TS < t {
		next, ok := s.sp.Next()
		if !ok {
			s.ended = true
			return false
		}
		if next.On && !s.b.On {
			s.fires.Add(1)
		}
		s.a, s.b = s.b, next
	}
	w := 1.0 // weight of b
	if span := s.b.TS - s.a.TS; span > 0 {
		w = math.Min(1, math.Max(0, (t-s.a.TS)/span))
	}
	for k := range v {
		if k < len(s.nodes) {
			v[k] = (1-w)*s.inputV(s.a, k) + w*s.inputV(s.b, k)
		}
	}
	s.timeBits.Store(math.Float64bits(t))
	s.voltBits.Store(math.Float64bits((1-w)*s.a.V + w*s.b.V))
	return true
}

// Err is the model's error, if one stopped the run.
func (s *modelSource) Err() error { return s.sp.Err() }

// progress returns the model time reached (s), the storage voltage there (V) and the
// fires so far; safe from any goroutine.
func (s *modelSource) progress() (ts, v float64, fires int64) {
	return math.Float64frombits(s.timeBits.Load()), math.Float64frombits(s.voltBits.Load()), s.fires.Load()
}

// inputV is what board input k sees in sample x before its divider: its node's voltage,
// or for an iload input the load current times the shunt's and amplifier's volts per
// ampere (a low-side shunt carries the current the load draws from the storage node).
func (s *modelSource) inputV(x model.Sample, k int) float64 {
	if n := s.nodes[k]; n == nodeIload {
		if k < len(s.vPerA) {
			return x.LoadA * s.vPerA[k]
		}
		return 0
	}
	return s.nodeV(x, s.nodes[k])
}

// nodeV is the voltage of node n in sample x. The model puts the cell straight on the
// storage node (no blocking diode), so vcell is the storage voltage. The load side of
// the switch carries the storage voltage less the switch's drop and on-resistance while
// the switch is on, and nothing while it is off.
func (s *modelSource) nodeV(x model.Sample, n robotNode) float64 {
	switch n {
	case nodeVcap, nodeVcell:
		return x.V
	case nodeVhold:
		return x.HoldV
	case nodeVload:
		if !x.On {
			return 0
		}
		sw, ld := s.c.Switch, s.c.Load
		if ld.Kind == model.LoadMotor {
			return math.Max(0, x.V-sw.DropV-x.MotorA*sw.OnOhm)
		}
		i := math.Max(0, x.V-sw.DropV) / (sw.OnOhm + ld.Ohm)
		return i * ld.Ohm
	}
	return 0
}

// robotStatus is the short status line of a running robot: the model's time of day
// (hours past the midnight its day starts from), the storage voltage, fires, and the
// board's frame counts.
func robotStatus(src *modelSource, b *virtualboard.Board) string {
	ts, v, fires := src.progress()
	st := b.Stats()
	d := time.Duration((src.startS + ts) * float64(time.Second)).Truncate(time.Second)
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

// shiftLight returns the light seen from startS seconds into its day. A windowsill day
// is moved by its start time, so the simulator keeps its own fast path for it (its
// passing clouds, drawn per day from the seed, then fall differently, as on another
// day); any other light is wrapped.
func shiftLight(l model.Light, startS float64) model.Light {
	if startS == 0 {
		return l
	}
	if w, ok := l.(*model.WindowDay); ok {
		c := *w
		c.Start = w.Start.Add(time.Duration(startS * float64(time.Second)))
		return &c
	}
	return shiftedLight{l, startS}
}

// shiftedLight is a light seen from startS seconds into its day.
type shiftedLight struct {
	l      model.Light
	startS float64
}

func (s shiftedLight) IrradianceWm2(t float64) float64 { return s.l.IrradianceWm2(t + s.startS) }
