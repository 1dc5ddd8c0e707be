package model

import (
	"fmt"
	"strings"
	"time"
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
var ErrUnknownScenario = fmt.Errorf("model: unknown scenario")

// ScenarioNames lists the built-in scenarios.
func ScenarioNames() []string { return []string{"wren", "fern"} }

// Scenario returns a built-in scenario by name (case-insensitive):
//
//   - "wren": a small solar rover on a sunny kitchen sill (south window, midsummer, a few
//     passing clouds). A voltage supervisor with a diode-isolated hold capacitor fires the
//     motor every few seconds while the sun is on the window.
//   - "fern": a solar chime sculpture in a shaded north window in winter. Diffuse light only;
//     the supercapacitor charges and then stalls below the trigger, where the cell's current
//     equals leakage, probe and supervisor draw.
//
// The numbers are invented for the demo. Each call returns a fresh copy.
func Scenario(name string) (*Scene, error) {
	switch strings.ToLower(name) {
	case "wren":
		return wren(), nil
	case "fern":
		return fern(), nil
	}
	return nil, fmt.Errorf("%w %q (known: %s)", ErrUnknownScenario, name, strings.Join(ScenarioNames(), ", "))
}

func wren() *Scene {
	start := time.Date(2026, time.June, 21, 0, 0, 0, 0, time.UTC)
	return &Scene{
		Name:        "Wren",
		Description: "small solar rover on a sunny kitchen sill",
		Circuit: &Circuit{
			// 8-cell panel, about 12 mA short-circuit and 5 V open-circuit at 1000 W/m².
			Cell:       Cell{IphA: 12e-3, I0A: 2e-9, N: 1.5, RsOhm: 8, RshOhm: 5e3, Cells: 8},
			Storage:    Storage{CapF: 4700e-6, LeakOhm: 1.5e6},
			ProbeOhm:   1e6,
			Supervisor: Supervisor{QuiescentA: 1e-6, MinSupplyV: 1.0},
			Trigger:    Trigger{Kind: TriggerHold, OnV: 2.6, OffV: 2.55, HoldF: 10e-6, DiodeV: 0.3},
			Switch:     Switch{DropV: 0.1},
			Load: Load{Kind: LoadMotor, Ohm: 20, KeVsPerRad: 1e-3, InertiaKgM2: 1e-8,
				ViscousNms: 1e-9, FrictionNm: 5e-6},
		},
		Light: &WindowDay{
			Start: start, LatitudeDeg: 48, AzimuthDeg: 180, TiltDeg: 90, DiffuseFraction: 0.2,
			Seed: 7, CloudS: 120, CloudGapS: 1800, CloudDepth: 0.7,
		},
		Start: start,
	}
}

func fern() *Scene {
	start := time.Date(2026, time.December, 2, 0, 0, 0, 0, time.UTC)
	return &Scene{
		Name:        "Fern",
		Description: "solar chime sculpture in a shaded north window",
		Circuit: &Circuit{
			// 6-cell panel, about 8 mA and 3.9 V at 1000 W/m².
			Cell:       Cell{IphA: 8e-3, I0A: 1e-9, N: 1.5, RsOhm: 10, RshOhm: 4e3, Cells: 6},
			Storage:    Storage{CapF: 0.22, LeakOhm: 200e3, Branch2F: 0.05, Branch2Ohm: 2e3},
			ProbeOhm:   100e3,
			Supervisor: Supervisor{QuiescentA: 2e-6, MinSupplyV: 1.0},
			Trigger:    Trigger{Kind: TriggerVoltage, OnV: 3.3, OffV: 2.2},
			Load:       Load{Ohm: 30},
		},
		Light: &WindowDay{
			Start: start, LatitudeDeg: 52, AzimuthDeg: 0, TiltDeg: 90, DiffuseFraction: 0.3,
			Shaded: true,
		},
		Start: start,
	}
}
