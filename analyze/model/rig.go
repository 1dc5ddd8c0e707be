package model

import (
	"fmt"
	"math"
	"strings"
	"sync/atomic"
	"time"

	"capcycle/analyze/profile"
)

// A rig is a circuit under its light with a logging board clipped to it: which node each
// ADC input reads, through what divider, with which converter. RigSource turns the
// model's trajectory into the voltages at the board's inputs, for a virtual board
// (package firmware-protocol/virtualboard) that plays the part of the real one.

// Node is a point of the circuit that one board input reads.
type Node int

const (
	NodeNone  Node = iota // an input wired to nothing: it reads 0 V
	NodeVcap              // the storage capacitor
	NodeVcell             // the cell's output
	NodeVhold             // the hold capacitor of a hold trigger
	NodeVload             // the load side of the switch
	NodeIload             // the load current, through a shunt and an amplifier (Rig.VPerA)
)

func (n Node) String() string {
	switch n {
	case NodeVcap:
		return "vcap"
	case NodeVcell:
		return "vcell"
	case NodeVhold:
		return "vhold"
	case NodeVload:
		return "vload"
	case NodeIload:
		return "iload"
	}
	return "none"
}

// Rig is a circuit under its light with the board wired to it.
type Rig struct {
	Name    string
	Circuit *Circuit
	Light   Light
	StartV  float64 // node voltage at t = 0, volts
	// StartS shifts the run into the light's day: the board's t = 0 is the light's
	// StartS (the robot is put on the sill then, with the storage at StartV).
	StartS float64

	// The board: Nodes[k] is what ADC input k reads through a divider of ratio Div[k]
	// (ADC-pin volts over node volts). Nodes[0] is always NodeVcap. An input on
	// NodeIload reads the load current as VPerA[k] volts per ampere (shunt·gain), with
	// Div[k] 1; VPerA may be nil when no input reads it.
	Nodes       []Node
	Div         []float64
	VPerA       []float64
	Bits        int     // converter resolution
	RefInternal bool    // the board boots on its internal (bandgap) reference, not AVcc
	RefV        float64 // the reference's nominal volts (what the firmware believes)
}

// Scenario defaults for the board: a 10-bit converter on a 5 V AVcc reference (an
// ATmega328P board on USB power) reading the storage node through two equal resistors,
// which puts the top of the range at 10 V, above both scenarios' open-circuit voltage.
const (
	scenarioBits = 10
	scenarioRefV = 5.0
	scenarioDiv  = 0.5
)

// RigFromScene wires the board to a built-in scenario: one input on the storage node.
func RigFromScene(sc *Scene) *Rig {
	return &Rig{
		Name: sc.Name, Circuit: sc.Circuit, Light: sc.Light, StartV: sc.StartV,
		Nodes: []Node{NodeVcap}, Div: []float64{scenarioDiv},
		Bits: scenarioBits, RefV: scenarioRefV,
	}
}

// ScenarioRig is the rig of a built-in scenario: its circuit and light, with the board
// wired as its profile says (RigFromProfile of ScenarioProfile).
func ScenarioRig(name string, channels int) (*Rig, error) {
	b, err := ScenarioProfile(name)
	if err != nil {
		return nil, err
	}
	p, err := profile.Parse(strings.ToLower(name)+".toml", b)
	if err != nil {
		return nil, fmt.Errorf("model: built-in scenario %s: %w", name, err)
	}
	return RigFromProfile(p, channels)
}

// RigFromProfile builds the circuit and the light from a bench profile (for a board of
// the given number of inputs)
// (FromProfile) and wires the board as the profile's channels say: ADC input k
// reads the profile's channel on ADC k, through its divider; ADC0 must read vcap, as
// the recorder writes ADC0 as vcap_v.
func RigFromProfile(p *profile.Profile, channels int) (*Rig, error) {
	c, light, err := FromProfile(p)
	if err != nil {
		return nil, fmt.Errorf("profile %s: %w", p.Name, err)
	}
	if light == nil {
		return nil, fmt.Errorf("profile %s: no [light] table: the virtual robot needs the light it stands in", p.Name)
	}
	rig := &Rig{Name: p.Name, Circuit: c, Light: light, Bits: p.ADC.Bits, RefV: p.ADC.ReferenceV}
	if rig.Bits == 0 {
		rig.Bits = scenarioBits
	}
	rig.RefInternal = p.ADC.Reference == profile.RefInternal
	maxADC := 0
	for _, ch := range p.Channels {
		maxADC = max(maxADC, ch.ADC)
	}
	if maxADC >= channels {
		return nil, fmt.Errorf("profile %s: ADC%d: the board has ADC0..ADC%d", p.Name, maxADC, channels-1)
	}
	rig.Nodes = make([]Node, maxADC+1)
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
		if n == NodeIload {
			if rig.VPerA == nil {
				rig.VPerA = make([]float64, maxADC+1)
			}
			rig.VPerA[ch.ADC] = ch.VoltsPerAmp()
		}
	}
	if rig.Nodes[0] != NodeVcap {
		return nil, fmt.Errorf("profile %s: the board's ADC0 must read vcap (the recorder writes ADC0 as vcap_v)", p.Name)
	}
	return rig, nil
}

func nodeOf(n profile.Node) (Node, error) {
	switch n {
	case profile.NodeVcap:
		return NodeVcap, nil
	case profile.NodeVcell:
		return NodeVcell, nil
	case profile.NodeVhold:
		return NodeVhold, nil
	case profile.NodeVload:
		return NodeVload, nil
	case profile.NodeIload:
		return NodeIload, nil
	}
	return NodeNone, fmt.Errorf("node %q is not one the virtual robot can read", n)
}

// RigSource feeds a virtual board (its Sample method is what package
// firmware-protocol/virtualboard asks of a source) from the circuit model: it pulls the
// model's samples (Sampler, at a fixed rate) as the board's clock passes them and
// gives each board input its node's voltage, interpolated linearly between the two
// samples around the board's instant. It ends with the model run (its DurationS).
//
// The board calls Sample from its Run goroutine only; the progress counters (model time,
// fires, the storage voltage) may be read from any goroutine.
type RigSource struct {
	sp      *Sampler
	c       *Circuit
	nodes   []Node
	vPerA   []float64 // per input: volts per ampere of an iload input (Rig.VPerA)
	a, b    Sample    // the samples around the last instant asked for; a.TS <= t <= b.TS
	started bool
	ended   bool
	startS  float64 // the light's time of day at t = 0, s (for the status clock)

	timeBits atomic.Uint64 // math.Float64bits of the model time reached, s
	voltBits atomic.Uint64 // math.Float64bits of the storage voltage there, V
	fires    atomic.Int64  // switch turn-ons seen in the samples
}

// NewRigSource starts the model of rig for durationS seconds (0: endless) sampled at
// rateHz.
func NewRigSource(rig *Rig, durationS, rateHz float64) (*RigSource, error) {
	light := ShiftLight(rig.Light, rig.StartS)
	sp, err := NewSampler(rig.Circuit, light, &Options{DurationS: durationS, RateHz: rateHz, StartV: rig.StartV})
	if err != nil {
		return nil, err
	}
	return &RigSource{sp: sp, c: rig.Circuit, nodes: rig.Nodes, vPerA: rig.VPerA, startS: rig.StartS}, nil
}

// Sample fills v with the voltage at each board input at time t (seconds from the
// start) and reports false once the model run is over.
func (s *RigSource) Sample(t float64, v []float64) bool {
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

// StartS is the light's time of day at t = 0, seconds past the midnight its day starts
// from.
func (s *RigSource) StartS() float64 { return s.startS }

// Err is the model's error, if one stopped the run.
func (s *RigSource) Err() error { return s.sp.Err() }

// Progress returns the model time reached (s), the storage voltage there (V) and the
// fires so far; safe from any goroutine.
func (s *RigSource) Progress() (ts, v float64, fires int64) {
	return math.Float64frombits(s.timeBits.Load()), math.Float64frombits(s.voltBits.Load()), s.fires.Load()
}

// inputV is what board input k sees in sample x before its divider: its node's voltage,
// or for an iload input the load current times the shunt's and amplifier's volts per
// ampere (a low-side shunt carries the current the load draws from the storage node).
func (s *RigSource) inputV(x Sample, k int) float64 {
	if n := s.nodes[k]; n == NodeIload {
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
func (s *RigSource) nodeV(x Sample, n Node) float64 {
	switch n {
	case NodeVcap, NodeVcell:
		return x.V
	case NodeVhold:
		return x.HoldV
	case NodeVload:
		if !x.On {
			return 0
		}
		sw, ld := s.c.Switch, s.c.Load
		if ld.Kind == LoadMotor {
			return math.Max(0, x.V-sw.DropV-x.MotorA*sw.OnOhm)
		}
		i := math.Max(0, x.V-sw.DropV) / (sw.OnOhm + ld.Ohm)
		return i * ld.Ohm
	}
	return 0
}

// ShiftLight returns the light seen from startS seconds into its day. A windowsill day
// is moved by its start time, so the simulator keeps its own fast path for it (its
// passing clouds, drawn per day from the seed, then fall differently, as on another
// day); any other light is wrapped.
func ShiftLight(l Light, startS float64) Light {
	if startS == 0 {
		return l
	}
	if w, ok := l.(*WindowDay); ok {
		c := *w
		c.Start = w.Start.Add(time.Duration(startS * float64(time.Second)))
		return &c
	}
	return shiftedLight{l, startS}
}

// shiftedLight is a light seen from startS seconds into its day.
type shiftedLight struct {
	l      Light
	startS float64
}

func (s shiftedLight) IrradianceWm2(t float64) float64 { return s.l.IrradianceWm2(t + s.startS) }
