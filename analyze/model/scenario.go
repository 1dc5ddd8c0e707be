package model

import (
	"errors"
	"fmt"
	"strings"
	"time"

	"capcycle/analyze/profile"
)

// Scene is a ready-made circuit with its light and start: the demo story.
type Scene struct {
	Name        string
	Description string
	Circuit     *Circuit
	Light       Light
	Start       time.Time // wall-clock start of t = 0 (for capture metadata)
	StartV      float64   // node voltage at t = 0, volts
}

// ErrUnknownScenario is returned by Scenario for a name it does not know.
var ErrUnknownScenario = errors.New("model: unknown scenario")

// ScenarioNames lists the built-in scenarios.
func ScenarioNames() []string { return []string{"wren", "fern"} }

// Scenario returns a built-in scenario by name (case-insensitive). Each is FromProfile of
// the bench profile of the same name in testdata/profiles (a test keeps them equal):
//
//   - "wren": a small solar rover on a sunny kitchen sill (south window, midsummer, passing
//     clouds). A voltage supervisor with a diode-isolated hold capacitor fires the motor
//     every second or two in full sun, every few seconds in the morning and evening.
//   - "fern": a solar chime sculpture in a shaded north window in December. Overcast,
//     diffuse light only; its leaky amorphous panel charges the supercapacitor and stalls
//     well below the 4 V trigger, where the cell's current equals what its own shunt, the
//     leakage, the probe and the supervisor take.
//
// The numbers are invented for the demo. Each call returns a fresh copy.
func Scenario(name string) (*Scene, error) {
	var p *profile.Profile
	var desc string
	switch strings.ToLower(name) {
	case "wren":
		p, desc = wrenProfile(), "small solar rover on a sunny kitchen sill"
	case "fern":
		p, desc = fernProfile(), "solar chime sculpture in a shaded north window"
	default:
		return nil, fmt.Errorf("%w %q (known: %s)", ErrUnknownScenario, name, strings.Join(ScenarioNames(), ", "))
	}
	c, l, err := FromProfile(p)
	if err != nil {
		return nil, err
	}
	start, _ := time.Parse(time.DateOnly, p.Light.Date)
	return &Scene{Name: p.Name, Description: desc, Circuit: c, Light: l, Start: start}, nil
}

// wrenProfile is testdata/profiles/wren.toml as loaded.
func wrenProfile() *profile.Profile {
	return &profile.Profile{
		Name:    "Wren",
		Storage: profile.Storage{Kind: profile.Electrolytic, CapF: 4700e-6, RatedV: 6.3, LeakA: 3e-6, LeakV: 2.7},
		Trigger: profile.Trigger{Kind: profile.Voltage, Release: profile.ReleaseHold, OnV: 2.7, OffV: 1.6,
			AccuracyPct: 1.5, QuiescentA: 1e-6, HoldF: 2.2e-6, HysteresisV: 0.05, DiodeV: 0.2},
		Switch: profile.Switch{OnOhm: 0.4},
		Load: profile.LoadSpec{Kind: profile.Motor, ArmatureOhm: 18, ArmatureH: 250e-6, BackEMFVs: 0.8e-3,
			InertiaKgM2: 50e-9, FrictionNm: 30e-6, DampingNmS: 10e-9, StartA: 40e-3},
		Cell:     profile.Cell{VocV: 4.2, IscA: 18e-3, SeriesCells: 5, RefWm2: 1000, TempK: 298.15},
		Channels: []profile.Channel{{Node: profile.NodeVcap, TopOhm: 1e6, BottomOhm: 1e6}, {Node: profile.NodeVcell, ADC: 1, TopOhm: 1e6, BottomOhm: 1e6}},
		Light: &profile.Light{Kind: profile.Windowsill, Date: "2026-06-21", LatitudeDeg: 48.1, AzimuthDeg: 180,
			TiltDeg: 90, DiffuseFraction: 0.25, CloudSeed: 3},
	}
}

// fernProfile is testdata/profiles/fern.toml as loaded.
func fernProfile() *profile.Profile {
	return &profile.Profile{
		Name: "Fern",
		Storage: profile.Storage{Kind: profile.Supercapacitor, CapF: 0.47, RatedV: 5.5, ESROhm: 30, LeakA: 6e-6,
			LeakV: 3.5, BranchOhm: 2.2e3, BranchF: 50e-3},
		Trigger:  profile.Trigger{Kind: profile.Voltage, Release: profile.ReleaseFixed, OnV: 4.0, OffV: 3.2, AccuracyPct: 1.5, QuiescentA: 1.5e-6},
		Switch:   profile.Switch{DropV: 0.2},
		Load:     profile.LoadSpec{Kind: profile.Resistor, Ohm: 47},
		Cell:     profile.Cell{VocV: 5.6, IscA: 12e-3, SeriesCells: 7, RefWm2: 1000, ShuntOhm: 4e3, TempK: 298.15},
		Channels: []profile.Channel{{Node: profile.NodeVcap, TopOhm: 2.2e6, BottomOhm: 1e6}},
		Light: &profile.Light{Kind: profile.Windowsill, Date: "2026-12-02", LatitudeDeg: 52.2, AzimuthDeg: 0,
			TiltDeg: 90, DiffuseFraction: 0.95, CloudSeed: 11},
	}
}
