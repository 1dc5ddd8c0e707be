package model

import "fmt"

// Integrator defaults.
const (
	DefaultRelTol   = 1e-7 // relative tolerance of each step
	DefaultAbsTolV  = 1e-9 // absolute tolerance on voltages, volts
	DefaultMaxStepS = 5.0  // longest step, seconds (keeps light changes and events in view)
	DefaultRateHz   = 10.0 // Sampler rate when Options.RateHz is zero

	// DefaultQuasiStaticS is the armature time constant L/(R+R_on) below which the motor
	// current is taken to follow the voltage at once. Such a lag (tens of µs for a small
	// motor) is far shorter than the pulse and the mechanical time constant, and
	// integrating it would force microsecond steps through every pulse.
	DefaultQuasiStaticS = 200e-6
)

// Options control a run. The zero value (or nil) means the defaults given per field.
type Options struct {
	DurationS float64      // length of the run, seconds; Simulate needs it > 0, a Sampler with 0 runs on forever
	StartV    float64      // node (and slow branch) voltage at t = 0, volts; the hold capacitor starts at StartV - DiodeV
	RateHz    float64      // sample rate of OnSample and of a Sampler (0: no OnSample calls; a Sampler uses DefaultRateHz)
	OnSample  func(Sample) // Simulate calls it for t = 0, 1/RateHz, 2/RateHz, ... in order (nil: no samples)
	RelTol    float64      // relative step tolerance (0: DefaultRelTol)
	AbsTolV   float64      // absolute step tolerance on voltages, volts (0: DefaultAbsTolV)
	MaxStepS  float64      // longest integrator step, seconds (0: DefaultMaxStepS)
	// QuasiStaticS: armature time constants below it are treated as instantaneous
	// (0: DefaultQuasiStaticS; negative: always integrate the inductance).
	QuasiStaticS float64
}

func (o *Options) validate() error {
	for _, f := range []struct {
		name string
		v    float64
	}{{"Options.DurationS", o.DurationS}, {"Options.StartV", o.StartV}, {"Options.RateHz", o.RateHz},
		{"Options.RelTol", o.RelTol}, {"Options.AbsTolV", o.AbsTolV}, {"Options.MaxStepS", o.MaxStepS}} {
		if f.name == "Options.QuasiStaticS" {
			continue
		}
		if err := nonNegative(f.name, f.v); err != nil {
			return err
		}
	}
	return nil
}

// Sample is the state at one sample instant. The cell is wired straight across the node, so
// its terminal voltage is State.V.
type Sample struct {
	TS       float64 // seconds from the start
	LightWm2 float64 // irradiance on the cell, W/m²
	State
}

// EventKind names a discrete change.
type EventKind int

const (
	EventFire     EventKind = iota // the switch turns on
	EventReset                     // the switch turns off; charging resumes
	EventDiodeOn                   // the hold capacitor's diode starts to conduct
	EventDiodeOff                  // the diode blocks; the hold capacitor runs the supervisor alone
)

var eventNames = [...]string{"fire", "reset", "diode-on", "diode-off"}

func (k EventKind) String() string {
	if k >= 0 && int(k) < len(eventNames) {
		return eventNames[k]
	}
	return fmt.Sprintf("EventKind(%d)", int(k))
}

// Event is one located instant (to within 1 ns of the integrator's solution).
type Event struct {
	TS    float64 // seconds from the start
	Kind  EventKind
	V     float64 // node voltage, volts
	HoldV float64 // hold capacitor voltage, volts (0 without a hold trigger)
}

// Energy is the bookkeeping over an interval, joules. The node's energy balance is
//
//	StoredDiffJ = HarvestedJ - LoadJ - LeakJ - ProbeJ - QuiescentJ - DiodeJ - BranchJ
//
// where StoredDiffJ is the change of ½CV² + ½C2 V2² + ½Ch Vh². HarvestedJ = ∫ V I_cell dt
// is negative in the dark, when the cell draws from the capacitor. LoadJ is all that went
// into the switch and the load (for a motor also what ends up as speed).
type Energy struct {
	HarvestedJ  float64 // from the cell
	LoadJ       float64 // into the switch and the load
	LeakJ       float64 // in the capacitor's leakage resistance
	ProbeJ      float64 // in the probe divider
	QuiescentJ  float64 // drawn by the supervisor
	DiodeJ      float64 // lost in the hold diode's forward drop
	BranchJ     float64 // lost in the slow branch's resistance (charge redistribution)
	StoredDiffJ float64 // change of the energy stored in the capacitors
}

// Residual returns the imbalance: inflow minus outflows minus the change stored. It is zero
// up to the integration error.
func (e Energy) Residual() float64 {
	return e.HarvestedJ - e.LoadJ - e.LeakJ - e.ProbeJ - e.QuiescentJ - e.DiodeJ - e.BranchJ - e.StoredDiffJ
}

// Cycle is one charge-fire-reset cycle: from the previous reset (or the start of the run)
// to this reset.
type Cycle struct {
	Index  int
	StartS float64 // previous reset, or 0
	FireS  float64 // the switch turned on (NaN if it never did in this cycle)
	FireV  float64 // node voltage at the fire, volts (NaN likewise)
	ResetS float64 // the switch turned off
	ResetV float64 // node voltage at the reset, volts
	Energy
}

// Result is what a whole run produced.
type Result struct {
	EndS   float64 // where the run stopped, seconds
	Final  State   // the state at EndS
	Events []Event // every discrete change, in order
	Cycles []Cycle // completed cycles (ending with a reset), in order
	Totals Energy  // over the whole run
	// Integrator statistics.
	Steps, Rejected, Evals int
}

// Fires returns the instants of the fire events.
func (r *Result) Fires() []float64 { return r.times(EventFire) }

// Resets returns the instants of the reset events.
func (r *Result) Resets() []float64 { return r.times(EventReset) }

func (r *Result) times(k EventKind) []float64 {
	var out []float64
	for _, ev := range r.Events {
		if ev.Kind == k {
			out = append(out, ev.TS)
		}
	}
	return out
}

// Simulate runs the circuit under the light for opt.DurationS seconds and returns the event
// list, the cycles and the energy bookkeeping. Samples go to opt.OnSample as they are made,
// so a long run need not hold them.
func Simulate(c *Circuit, light Light, opt *Options) (*Result, error) {
	if opt == nil || !(opt.DurationS > 0) {
		return nil, fmt.Errorf("model: Options.DurationS must be positive for Simulate")
	}
	e, err := newEngine(c, light, opt)
	if err != nil {
		return nil, err
	}
	var smp *sampling
	if opt.OnSample != nil && opt.RateHz > 0 {
		smp = &sampling{rate: opt.RateHz}
	}
	if smp != nil {
		smp.emitUpTo(e, opt.OnSample, true)
	}
	for {
		more, err := e.advance()
		if err != nil {
			return nil, err
		}
		if !more {
			break
		}
		if smp != nil {
			smp.emitUpTo(e, opt.OnSample, false)
		}
	}
	return e.result(), nil
}

func (e *engine) result() *Result {
	return &Result{
		EndS:     e.t,
		Final:    e.state(),
		Events:   e.events,
		Cycles:   e.cycles,
		Totals:   e.energySince(&e.start, e.start0),
		Steps:    e.steps,
		Rejected: e.rejected,
		Evals:    e.evals,
	}
}

// sampling emits samples at k/rate from the dense output.
type sampling struct {
	rate float64
	k    int64
}

func (s *sampling) next() float64 { return float64(s.k) / s.rate }

// emitUpTo emits every sample time up to the engine's validEnd (at the start only t = 0).
func (s *sampling) emitUpTo(e *engine, fn func(Sample), atStart bool) {
	var y vec
	for {
		ts := s.next()
		if ts > e.validEnd || ts > e.endS {
			return
		}
		if atStart || e.hd == 0 {
			if ts > e.t {
				return
			}
			fn(Sample{TS: ts, LightWm2: e.lc.at(ts), State: e.state()})
		} else {
			e.dense(ts, &y)
			// The dense output belongs to the mode the step was taken in (an event changes
			// the mode only at validEnd), and so do the currents derived from it.
			st := e.stateOf(&y, e.stepMode)
			fn(Sample{TS: ts, LightWm2: e.lc.at(ts), State: st})
		}
		s.k++
	}
}

// Sampler produces the trajectory at a fixed rate on demand, integrating only as far as
// needed: a consumer such as a virtual board can pull one sample per tick for as long as it
// likes. Not safe for concurrent use.
type Sampler struct {
	e    *engine
	s    sampling
	buf  []Sample
	err  error
	done bool
}

// NewSampler prepares a run. opt.DurationS = 0 makes it endless; opt.OnSample is ignored.
func NewSampler(c *Circuit, light Light, opt *Options) (*Sampler, error) {
	var o Options
	if opt != nil {
		o = *opt
	}
	o.OnSample = nil
	e, err := newEngine(c, light, &o)
	if err != nil {
		return nil, err
	}
	rate := o.RateHz
	if rate == 0 {
		rate = DefaultRateHz
	}
	sp := &Sampler{e: e, s: sampling{rate: rate}}
	sp.s.emitUpTo(e, sp.push, true)
	return sp, nil
}

func (sp *Sampler) push(s Sample) { sp.buf = append(sp.buf, s) }

// Next returns the next sample. It returns false at the end of the run or on an error
// (see Err).
func (sp *Sampler) Next() (Sample, bool) {
	for len(sp.buf) == 0 {
		if sp.done {
			return Sample{}, false
		}
		more, err := sp.e.advance()
		if err != nil {
			sp.err, sp.done = err, true
			return Sample{}, false
		}
		if !more {
			sp.done = true
			continue
		}
		sp.s.emitUpTo(sp.e, sp.push, false)
	}
	s := sp.buf[0]
	sp.buf = sp.buf[1:]
	if len(sp.buf) == 0 {
		sp.buf = sp.buf[:0]
	}
	return s, true
}

// Err returns the error that stopped the run, if any.
func (sp *Sampler) Err() error { return sp.err }

// Events returns the events located so far (the integrator may be up to one step ahead of
// the last sample returned).
func (sp *Sampler) Events() []Event { return sp.e.events }

// Result returns the bookkeeping so far.
func (sp *Sampler) Result() *Result { return sp.e.result() }
