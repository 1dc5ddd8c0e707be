package predict

import (
	"errors"
	"fmt"
	"math"

	"capcycle/analyze/model"
)

// Figures are the predicted figures of the steady cycle under a constant light.
type Figures struct {
	Fires   bool    // false: the node settles below the trigger (see EquilibriumV)
	ChargeS float64 // reset to the next fire, seconds
	PulseS  float64 // fire to reset, seconds
	PeriodS float64 // fire to fire, seconds
	FireV   float64 // node voltage at the fire, volts
	ResetV  float64 // node voltage at the reset, volts
	EnergyJ float64 // ½C(FireV² − ResetV²), joules: what the capacitor gives up per pulse
	LoadJ   float64 // what the switch and load took per cycle, joules
	// DutyCycle is PulseS/PeriodS; FiresPerHour is 3600/PeriodS.
	DutyCycle    float64
	FiresPerHour float64
	// EquilibriumV is where the node settles when it never fires (NaN when it fires),
	// and SettleS the time from 0 V to within 1 % of it.
	EquilibriumV float64
	SettleS      float64
}

// Options tune Steady. The zero value (or nil) means the defaults given per field.
type Options struct {
	// MaxS is the longest run tried before deciding the circuit never fires, seconds
	// (0 means 48 hours).
	MaxS float64
	// Cycles is how many cycles are run before the last one is taken as steady (0 means 4).
	Cycles int
}

// ErrNoCycle is returned (wrapped) when a circuit fired but did not complete a cycle within
// Options.MaxS: the switch closed and never opened, or the charge takes longer than that.
var ErrNoCycle = errors.New("predict: no complete cycle")

// Steady runs the circuit under the constant irradiance g (W/m²) until it has settled into
// a repeating cycle and returns that cycle's figures. When the node never reaches the
// trigger, Fires is false and EquilibriumV says where it settles.
func Steady(c *model.Circuit, g float64, opt *Options) (Figures, error) {
	if opt == nil {
		opt = &Options{}
	}
	maxS := opt.MaxS
	if maxS <= 0 {
		maxS = 48 * 3600
	}
	ncyc := opt.Cycles
	if ncyc <= 0 {
		ncyc = 4
	}
	if err := c.Validate(); err != nil {
		return Figures{}, fmt.Errorf("predict: %w", err)
	}
	veq := EquilibriumV(c, g)
	start := startV(c)
	if c.Trigger.Kind != model.TriggerTimer && c.Trigger.Kind != model.TriggerNone && veq < FireThresholdV(c) {
		return settled(c, g, veq), nil
	}
	// Guess the length from the charge from start to the trigger at the mean net current;
	// then double until enough cycles completed.
	d := firstGuessS(c, g, start)
	for {
		if d > maxS {
			d = maxS
		}
		res, err := model.Simulate(c, model.Constant(g), &model.Options{DurationS: d, StartV: start})
		if err != nil {
			return Figures{}, fmt.Errorf("predict: %w", err)
		}
		if len(res.Cycles) >= ncyc {
			return figures(c, res), nil
		}
		if d >= maxS {
			if len(res.Cycles) >= 2 {
				return figures(c, res), nil
			}
			if len(res.Fires()) == 0 {
				return settled(c, g, veq), nil
			}
			return Figures{}, fmt.Errorf("%w in %.0f s (fired %d times)", ErrNoCycle, maxS, len(res.Fires()))
		}
		d *= 4
	}
}

// figures takes the last complete cycle of a run.
func figures(c *model.Circuit, res *model.Result) Figures {
	n := len(res.Cycles)
	last, prev := res.Cycles[n-1], res.Cycles[n-2]
	f := Figures{
		Fires:        true,
		ChargeS:      last.FireS - prev.ResetS,
		PulseS:       last.ResetS - last.FireS,
		PeriodS:      last.FireS - prev.FireS,
		FireV:        last.FireV,
		ResetV:       last.ResetV,
		LoadJ:        last.LoadJ,
		EquilibriumV: math.NaN(),
	}
	f.EnergyJ = 0.5 * c.Storage.CapF * (f.FireV*f.FireV - f.ResetV*f.ResetV)
	if f.PeriodS > 0 {
		f.DutyCycle = f.PulseS / f.PeriodS
		f.FiresPerHour = 3600 / f.PeriodS
	}
	return f
}

func settled(c *model.Circuit, g, veq float64) Figures {
	return Figures{Fires: false, EquilibriumV: veq, SettleS: SettleTimeS(c, g, veq),
		ChargeS: math.Inf(1), PeriodS: math.Inf(1), FireV: math.NaN(), ResetV: math.NaN()}
}

// FireThresholdV is the node voltage the trigger needs: OnV, plus the hold diode's drop for
// a hold trigger (the supervisor watches the hold capacitor), or ArmV for a plateau trigger.
func FireThresholdV(c *model.Circuit) float64 {
	switch c.Trigger.Kind {
	case model.TriggerHold:
		return c.Trigger.OnV + c.Trigger.DiodeV
	case model.TriggerPlateau:
		return c.Trigger.ArmV
	}
	return c.Trigger.OnV
}

// startV is a node voltage just below where the circuit releases, so the first cycle is
// already close to the steady one.
func startV(c *model.Circuit) float64 {
	switch c.Trigger.Kind {
	case model.TriggerVoltage, model.TriggerPlateau:
		return c.Trigger.OffV
	case model.TriggerHold:
		return 0.9 * c.Trigger.OnV
	}
	return 0
}

func firstGuessS(c *model.Circuit, g, start float64) float64 {
	if c.Trigger.Kind == model.TriggerTimer {
		return c.Trigger.PhaseS + 6*c.Trigger.PeriodS
	}
	von := FireThresholdV(c)
	net := NetCurrentA(c, g, 0.5*(start+von))
	if net <= 0 {
		return 600
	}
	capF := c.Storage.CapF + c.Storage.Branch2F
	d := 6 * capF * math.Abs(von-start) / net
	return math.Max(d, 1e-4)
}

// DrainA is the current the storage node loses at voltage v when the switch is open:
// leakage, probe and the supervisor's quiescent draw (fading as its supply collapses, as in
// package model). The slow branch of a supercapacitor carries no current at rest and is
// not counted.
func DrainA(c *model.Circuit, v float64) float64 {
	i := 0.0
	if c.Storage.LeakOhm > 0 {
		i += v / c.Storage.LeakOhm
	}
	if c.ProbeOhm > 0 {
		i += v / c.ProbeOhm
	}
	return i + QuiescentA(c, v)
}

// QuiescentA is the supervisor's draw with the node at v: its supply is the node, or the
// hold capacitor one diode drop below it for a hold trigger.
func QuiescentA(c *model.Circuit, v float64) float64 {
	if c.Trigger.Kind == model.TriggerHold {
		v -= c.Trigger.DiodeV
	}
	return c.Supervisor.CurrentA(v)
}

// NetCurrentA is the charging current of the node at v under irradiance g: the cell's
// current less the drains.
func NetCurrentA(c *model.Circuit, g, v float64) float64 {
	return c.Cell.Current(v, g) - DrainA(c, v)
}

// EquilibriumV is the node voltage at which the cell's current under irradiance g equals
// the drains (the switch open), found by bisection between 0 V and the cell's open-circuit
// voltage. It is 0 when there is no light.
func EquilibriumV(c *model.Circuit, g float64) float64 {
	hi := c.Cell.OpenCircuitV(g)
	if hi <= 0 {
		return 0
	}
	lo := 0.0
	if NetCurrentA(c, g, lo) <= 0 {
		return 0
	}
	for i := 0; i < 200 && hi-lo > 1e-9; i++ {
		m := 0.5 * (lo + hi)
		if NetCurrentA(c, g, m) > 0 {
			lo = m
		} else {
			hi = m
		}
	}
	return 0.5 * (lo + hi)
}

// SettleTimeS is the time the node takes to charge from 0 V to within 1 % of veq under
// irradiance g, from t = ∫ C dV / I_net(V) (trapezoids on a fine grid; the slow branch's
// capacitance is counted as charged along, which is right for slow approaches).
func SettleTimeS(c *model.Circuit, g, veq float64) float64 {
	if veq <= 0 {
		return 0
	}
	capF := c.Storage.CapF + c.Storage.Branch2F
	end := 0.99 * veq
	const n = 4000
	h := end / n
	t := 0.0
	prev := capF / NetCurrentA(c, g, 0)
	for k := 1; k <= n; k++ {
		cur := capF / NetCurrentA(c, g, float64(k)*h)
		t += 0.5 * (prev + cur) * h
		prev = cur
	}
	return t
}

// IrradianceFor returns the irradiance at which the circuit's cell gives the short-circuit
// current iscA, W/m² (the photocurrent is proportional to irradiance).
func IrradianceFor(c *model.Circuit, iscA float64) float64 {
	ref := c.Cell.RefWm2
	if ref == 0 {
		ref = model.RefIrradianceWm2
	}
	isc := c.Cell.Current(0, ref)
	if isc <= 0 {
		return 0
	}
	return iscA / isc * ref
}
