package model

import (
	"errors"
	"fmt"
	"math"
)

// Circuit is the whole solar engine: the cell charges the storage node, whose voltage V obeys
//
//	C dV/dt = I_cell(V, G) - I_leak(V) - I_probe(V) - I_branch(V) - I_q - I_load(V, on).
//
// Every field is in SI units; the zero value of an optional part means "absent".
type Circuit struct {
	Cell       Cell
	Storage    Storage
	ProbeOhm   float64 // total resistance of the ADC divider across the node, ohms (0: no probe)
	Supervisor Supervisor
	Trigger    Trigger
	Switch     Switch
	Load       Load
}

// Storage is the storage capacitor with its leakage and, for a supercapacitor, a second
// slow branch (Zubieta and Bonert, 2000, two-branch model: a fast capacitance at the
// terminals and a slower R-C branch that takes up and gives back charge).
type Storage struct {
	CapF       float64 // capacitance at the terminals, farads (required, > 0)
	LeakOhm    float64 // parallel leakage resistance, ohms (0: no leakage)
	Branch2F   float64 // capacitance of the slow branch, farads (0: no slow branch)
	Branch2Ohm float64 // resistance in series with the slow branch, ohms (required with Branch2F)
}

// Supervisor is the quiescent draw of the trigger's own electronics. The current is
// QuiescentA at and above MinSupplyV and fades smoothly to zero as its supply collapses:
//
//	I_q(S) = QuiescentA s(S/MinSupplyV),  s(u) = 3u² - 2u³ for 0 <= u < 1, 1 above, 0 below,
//
// (a smoothstep: continuous with a continuous slope, common practice, no source). S is the
// supervisor's supply: the hold capacitor for TriggerHold, the storage node otherwise.
type Supervisor struct {
	QuiescentA float64 // supply current when running, amperes (0: none)
	MinSupplyV float64 // supply below which the current fades, volts (0: never fades)
}

// CurrentA returns the supervisor's draw with its supply at s volts: QuiescentA at and above
// MinSupplyV, fading by the smoothstep of the type's doc below it, 0 at or below 0 V.
func (sv Supervisor) CurrentA(s float64) float64 {
	iq, vmin := sv.QuiescentA, sv.MinSupplyV
	if iq == 0 || vmin == 0 || s >= vmin {
		return iq
	}
	if s <= 0 {
		return 0
	}
	u := s / vmin
	return iq * u * u * (3 - 2*u)
}

// TriggerKind says what turns the switch on and off.
type TriggerKind int

const (
	// TriggerNone leaves the switch off: the node just charges (or decays).
	TriggerNone TriggerKind = iota
	// TriggerVoltage turns on when V rises to OnV and off when V falls to OffV.
	TriggerVoltage
	// TriggerHold is a voltage supervisor supplied from a hold capacitor that a diode
	// charges from the node. It turns on when the hold voltage rises to OnV; after the fire
	// the node falls, the diode blocks, the hold capacitor runs the supervisor alone and
	// discharges through its quiescent current, and the switch turns off when the hold
	// voltage falls to OffV (the supervisor's release threshold).
	TriggerHold
	// TriggerTimer turns on at PhaseS + k PeriodS for PulseS, whatever the voltage.
	TriggerTimer
	// TriggerPlateau turns on when the net charging current C dV/dt falls below PlateauA
	// while V is at least ArmV (the charge has levelled off), and off when V falls to OffV
	// (or, with OffV = 0, after PulseS).
	TriggerPlateau
)

var triggerNames = [...]string{"none", "voltage", "hold", "timer", "plateau"}

func (k TriggerKind) String() string {
	if k >= 0 && int(k) < len(triggerNames) {
		return triggerNames[k]
	}
	return fmt.Sprintf("TriggerKind(%d)", int(k))
}

// Trigger is the switch's control. Which fields matter depends on Kind.
type Trigger struct {
	Kind     TriggerKind
	OnV      float64 // voltage, hold: turn-on threshold, volts
	OffV     float64 // voltage, plateau: release voltage of the node; hold: release of the hold voltage, volts
	HoldF    float64 // hold: hold capacitance, farads
	DiodeV   float64 // hold: forward drop of the isolation diode (ideal diode with a fixed drop), volts
	PeriodS  float64 // timer: period, seconds
	PulseS   float64 // timer: on time; plateau with OffV = 0: fixed on time, seconds
	PhaseS   float64 // timer: time of the first fire, seconds (default 0)
	PlateauA float64 // plateau: net charging current below which it fires, amperes
	ArmV     float64 // plateau: node voltage at or above which it may fire, volts
}

// Switch is the transistor between node and load: an on-resistance, a saturation drop, or
// both in series. Zero values make an ideal switch.
type Switch struct {
	OnOhm float64 // on-resistance, ohms
	DropV float64 // saturation (collector-emitter) drop, volts; no current flows below it
}

// LoadKind selects the load model.
type LoadKind int

const (
	// LoadResistor is a plain resistance Ohm.
	LoadResistor LoadKind = iota
	// LoadMotor is a permanent-magnet DC motor:
	//	L di/dt = V_sw - R i - Ke ω,   J dω/dt = Ke i - B ω - T_f  (T_f only while turning).
	LoadMotor
)

func (k LoadKind) String() string {
	switch k {
	case LoadResistor:
		return "resistor"
	case LoadMotor:
		return "motor"
	}
	return fmt.Sprintf("LoadKind(%d)", int(k))
}

// Load is what the switch dumps the charge into.
type Load struct {
	Kind        LoadKind
	Ohm         float64 // resistance, or the motor's armature resistance, ohms (required, > 0)
	InductH     float64 // motor: armature inductance, henries (0: current follows the voltage at once)
	KeVsPerRad  float64 // motor: back-EMF (and torque) constant, V·s/rad = N·m/A
	InertiaKgM2 float64 // motor: rotor and drive-train inertia, kg·m² (required for a motor)
	ViscousNms  float64 // motor: viscous friction, N·m·s/rad
	FrictionNm  float64 // motor: Coulomb (dry) friction torque, N·m
}

// ErrCircuit is wrapped by every error that rejects a circuit.
var ErrCircuit = errors.New("model: invalid circuit")

// FieldError rejects one field of a Circuit (or of Options or a Light).
type FieldError struct {
	Field  string  // e.g. "Storage.CapF"
	Value  float64 // the rejected value
	Reason string  // what was expected
}

func (e *FieldError) Error() string {
	return fmt.Sprintf("model: %s = %g: %s", e.Field, e.Value, e.Reason)
}

func (e *FieldError) Unwrap() error { return ErrCircuit }

func positive(field string, v float64) error {
	if !(v > 0) || math.IsInf(v, 0) {
		return &FieldError{field, v, "must be a positive finite number"}
	}
	return nil
}

func nonNegative(field string, v float64) error {
	if !(v >= 0) || math.IsInf(v, 0) {
		return &FieldError{field, v, "must be zero or a positive finite number"}
	}
	return nil
}

// Validate reports the first field that makes the circuit unusable.
func (c *Circuit) Validate() error {
	checks := []error{
		nonNegative("Cell.IphA", c.Cell.IphA),
		nonNegative("Cell.I0A", c.Cell.I0A),
		nonNegative("Cell.N", c.Cell.N),
		nonNegative("Cell.RsOhm", c.Cell.RsOhm),
		nonNegative("Cell.RshOhm", c.Cell.RshOhm),
		nonNegative("Cell.TempK", c.Cell.TempK),
		nonNegative("Cell.RefWm2", c.Cell.RefWm2),
		positive("Storage.CapF", c.Storage.CapF),
		nonNegative("Storage.LeakOhm", c.Storage.LeakOhm),
		nonNegative("Storage.Branch2F", c.Storage.Branch2F),
		nonNegative("ProbeOhm", c.ProbeOhm),
		nonNegative("Supervisor.QuiescentA", c.Supervisor.QuiescentA),
		nonNegative("Supervisor.MinSupplyV", c.Supervisor.MinSupplyV),
		nonNegative("Switch.OnOhm", c.Switch.OnOhm),
		nonNegative("Switch.DropV", c.Switch.DropV),
	}
	if c.Cell.Cells < 0 {
		checks = append(checks, &FieldError{"Cell.Cells", float64(c.Cell.Cells), "must be zero or more"})
	}
	if c.Storage.Branch2F > 0 {
		checks = append(checks, positive("Storage.Branch2Ohm", c.Storage.Branch2Ohm))
	}
	checks = append(checks, c.Trigger.validate()...)
	if c.Trigger.Kind != TriggerNone {
		checks = append(checks, c.Load.validate()...)
	}
	for _, err := range checks {
		if err != nil {
			return err
		}
	}
	return nil
}

func (t *Trigger) validate() []error {
	switch t.Kind {
	case TriggerNone:
		return nil
	case TriggerVoltage:
		errs := []error{positive("Trigger.OnV", t.OnV), nonNegative("Trigger.OffV", t.OffV)}
		if t.OffV >= t.OnV {
			errs = append(errs, &FieldError{"Trigger.OffV", t.OffV, "must be below Trigger.OnV"})
		}
		return errs
	case TriggerHold:
		errs := []error{positive("Trigger.OnV", t.OnV), nonNegative("Trigger.OffV", t.OffV),
			positive("Trigger.HoldF", t.HoldF), nonNegative("Trigger.DiodeV", t.DiodeV)}
		if t.OffV >= t.OnV {
			errs = append(errs, &FieldError{"Trigger.OffV", t.OffV, "must be below Trigger.OnV"})
		}
		return errs
	case TriggerTimer:
		errs := []error{positive("Trigger.PeriodS", t.PeriodS), positive("Trigger.PulseS", t.PulseS),
			nonNegative("Trigger.PhaseS", t.PhaseS)}
		if t.PulseS >= t.PeriodS {
			errs = append(errs, &FieldError{"Trigger.PulseS", t.PulseS, "must be shorter than Trigger.PeriodS"})
		}
		return errs
	case TriggerPlateau:
		errs := []error{positive("Trigger.PlateauA", t.PlateauA), positive("Trigger.ArmV", t.ArmV),
			nonNegative("Trigger.OffV", t.OffV), nonNegative("Trigger.PulseS", t.PulseS)}
		if t.OffV >= t.ArmV {
			errs = append(errs, &FieldError{"Trigger.OffV", t.OffV, "must be below Trigger.ArmV"})
		}
		if t.OffV == 0 && !(t.PulseS > 0) {
			errs = append(errs, &FieldError{"Trigger.PulseS", t.PulseS, "a plateau trigger needs a release: OffV or PulseS"})
		}
		return errs
	}
	return []error{&FieldError{"Trigger.Kind", float64(t.Kind), "unknown trigger kind"}}
}

func (l *Load) validate() []error {
	errs := []error{positive("Load.Ohm", l.Ohm)}
	switch l.Kind {
	case LoadResistor:
	case LoadMotor:
		errs = append(errs, nonNegative("Load.InductH", l.InductH), positive("Load.KeVsPerRad", l.KeVsPerRad),
			positive("Load.InertiaKgM2", l.InertiaKgM2), nonNegative("Load.ViscousNms", l.ViscousNms),
			nonNegative("Load.FrictionNm", l.FrictionNm))
	default:
		errs = append(errs, &FieldError{"Load.Kind", float64(l.Kind), "unknown load kind"})
	}
	return errs
}

// Stored returns the energy held in the circuit's capacitors, joules:
// ½ C V² + ½ C2 V2² + ½ Ch Vh².
func (c *Circuit) Stored(s State) float64 {
	e := 0.5 * c.Storage.CapF * s.V * s.V
	e += 0.5 * c.Storage.Branch2F * s.Branch2V * s.Branch2V
	if c.Trigger.Kind == TriggerHold {
		e += 0.5 * c.Trigger.HoldF * s.HoldV * s.HoldV
	}
	return e
}

// State is the circuit's state at one instant.
type State struct {
	V         float64 // storage node, volts
	Branch2V  float64 // slow branch capacitor, volts
	HoldV     float64 // hold capacitor, volts
	MotorA    float64 // motor current, amperes
	LoadA     float64 // current the load draws from the storage node, amperes (0 while off)
	SpeedRadS float64 // motor speed, rad/s
	On        bool    // switch state
}
