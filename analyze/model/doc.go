// Package model is the circuit model of a solar engine and its simulator.
//
// # The circuit
//
// A solar cell charges a storage capacitor; a trigger switches a transistor that dumps the
// charge into a load; the switch opens again and the capacitor recharges. The storage node
// obeys
//
//	C dV/dt = I_cell(V, G) - I_leak(V) - I_probe(V) - I_branch - I_q - I_load(V, on)
//
// with the parts described by the fields of Circuit (all SI units):
//
//   - Cell: the single-diode model with Ns cells in series, solved explicitly for I(V) with
//     the Lambert W function (Jain and Kapoor, 2004), the photocurrent proportional to the
//     irradiance G. The thermal voltage kT/q uses the exact CODATA 2018 constants.
//   - Storage: the capacitance with its parallel leakage and, for a supercapacitor, a second
//     slow R-C branch that soaks up and gives back charge (the two-branch model of Zubieta
//     and Bonert, 2000).
//   - ProbeOhm: the divider the ADC reads through is itself a load.
//   - Supervisor: the trigger's quiescent current, which fades as its supply collapses.
//   - Trigger: a voltage threshold with a fixed release, a voltage supervisor with a
//     diode-isolated hold capacitor, a timer, or a plateau detector.
//   - Switch and Load: on-resistance and saturation drop; a resistor or a DC motor.
//
// # The simulator
//
// Simulate integrates with the adaptive Dormand-Prince 5(4) method. Every discrete change
// (fire, reset, the hold diode starting or stopping to conduct) is an event: a sign change
// of an event function over a step is located on the step's continuous extension by
// regula falsi, the step is cut there, and integration restarts in the new mode. Event
// instants are therefore exact to the integrator's tolerance (well below a microsecond),
// not to the nearest step or sample.
//
// The trajectory is delivered at a fixed rate through Options.OnSample, or pulled one
// sample at a time from a Sampler (for a virtual board), so a day-long run never holds its
// samples. A small motor's armature current, whose L/R lag is tens of microseconds, is
// taken to follow the voltage at once (Options.QuasiStaticS) rather than forcing
// microsecond steps through every pulse; a dry-friction stop is an event of its own. Result carries the event list, the cycles and the energy bookkeeping: what the
// cell delivered, what went into the load, and what leakage, the probe, the supervisor,
// the hold diode and the slow branch took; it balances against the change of ½CV².
//
// # Light
//
// Constant, Piecewise (linear between points) and WindowDay (the sun through a window:
// the sun's position by the NOAA equations with Spencer's 1971 series, the sky's clearness
// from the diffuse share by the correlation of Erbs, Klein and Duffie (1982), the angle of
// incidence on the window's plane, and seeded passing clouds).
//
// # Profiles
//
// FromProfile turns a bench profile (package profile) into a Circuit and its Light, filling
// what the profile leaves out with stated assumptions (the Assumed... constants).
//
// # Scenarios
//
// Scenario("wren") is a small solar rover on a sunny kitchen sill that fires every few
// seconds in sun; Scenario("fern") is a solar chime sculpture in a shaded north window that
// charges and then stalls below its trigger.
//
// # Caution
//
// A simulation is not a safety analysis. Charged capacitors can deliver large currents; a
// shorted supercapacitor can burn or melt wiring; an electrolytic capacitor reversed or over
// its voltage rating can vent. Keep to the part makers' ratings and your local codes.
package model
