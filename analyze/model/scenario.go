package model

import (
	"embed"
	"errors"
	"fmt"
	"slices"
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

// scenarioFiles are the bench profiles of the demo scenarios, the one copy of each:
// the tests, the README's walk-throughs and the binary all read these files.
//
//go:embed scenarios/wren.toml scenarios/fern.toml
var scenarioFiles embed.FS

// ScenarioProfile returns the bench profile (TOML text) of a built-in scenario by name
// (case-insensitive).
func ScenarioProfile(name string) ([]byte, error) {
	n := strings.ToLower(name)
	b, err := scenarioFiles.ReadFile("scenarios/" + n + ".toml")
	if err != nil || !slices.Contains(ScenarioNames(), n) {
		return nil, fmt.Errorf("%w %q (known: %s)", ErrUnknownScenario, name, strings.Join(ScenarioNames(), ", "))
	}
	return b, nil
}

// Scenario returns a built-in scenario by name (case-insensitive): FromProfile of its
// bench profile (ScenarioProfile, the files in analyze/model/scenarios):
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
	b, err := ScenarioProfile(name)
	if err != nil {
		return nil, err
	}
	n := strings.ToLower(name)
	p, err := profile.Parse(n+".toml", b)
	if err != nil {
		return nil, fmt.Errorf("model: built-in scenario %s: %w", n, err)
	}
	desc := map[string]string{
		"wren": "small solar rover on a sunny kitchen sill",
		"fern": "solar chime sculpture in a shaded north window",
	}[n]
	c, l, err := FromProfile(p)
	if err != nil {
		return nil, err
	}
	start, _ := time.Parse(time.DateOnly, p.Light.Date)
	return &Scene{Name: p.Name, Description: desc, Circuit: c, Light: l, Start: start}, nil
}
