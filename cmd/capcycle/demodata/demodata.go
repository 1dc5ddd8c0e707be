// Package demodata holds the bench profiles of the demo scenarios, built into the
// capcycle binary so that "capcycle demo" works from any directory: Wren, a small solar
// rover on a sunny kitchen sill, and Fern, a solar chime sculpture in a shaded north
// window. The files are copies of testdata/profiles/wren.toml and fern.toml at the top
// of the module; a test keeps them identical.
package demodata

import (
	"embed"
	"fmt"
)

//go:embed wren.toml fern.toml
var files embed.FS

// Names lists the demo scenarios in the order the demo runs and prints them.
func Names() []string { return []string{"wren", "fern"} }

// Profile returns the bench profile (TOML text) of the scenario name ("wren" or "fern").
func Profile(name string) ([]byte, error) {
	b, err := files.ReadFile(name + ".toml")
	if err != nil {
		return nil, fmt.Errorf("demodata: no profile for scenario %q", name)
	}
	return b, nil
}
