// Package profile reads the bench profile: a TOML file that describes one robot (its
// storage capacitor, trigger, switch, load and solar cell) and the probe that watches it
// (the dividers in front of the ADC, the ADC reference and the calibration).
//
// # The file
//
// Every key that holds a quantity ends in its unit (cap_f, on_v, quiescent_a, top_ohm,
// period_s), and its value is either a TOML number in that unit or a text in engineering
// notation read with package units ("4700u", "4.7 mF", "1meg", "2.7V"):
//
//	[storage]
//	kind = "electrolytic"      # or "supercapacitor"
//	cap_f = "4700u"
//	tolerance = "M"            # IEC 60062 letter; M = ±20 %
//	rated_v = 6.3
//
//	[trigger]
//	kind = "voltage"           # or "timer", "plateau"
//	release = "hold"           # diode-isolated hold capacitor; or "fixed" (off_v)
//	on_v = 2.7
//	...
//
//	[[channel]]                # one per ADC input; one must read node "vcap"
//	node = "vcap"
//	adc = 0
//	top_ohm = "1meg"
//	bottom_ohm = "1meg"
//
//	[[channel]]                # optional: the load current through a low-side shunt
//	node = "iload"
//	adc = 2
//	shunt_ohm = 1              # adc_v = I_load · shunt_ohm · amp_gain
//	amp_gain = 20
//
// Tables: storage, trigger, switch (optional), load, cell, adc, channel (one or more),
// calibration (optional), light (optional, for the virtual robot). [Template] returns a
// fully commented file for each trigger kind; the fields of [Profile] document every key,
// its unit and its default.
//
// # Errors
//
// Unknown keys (including keys that differ only in case), values of the wrong type or unit,
// missing required keys and impossible values (a negative capacitance, off_v at or above
// on_v, a rated voltage below on_v, an unknown tolerance letter, two channels on one ADC
// input, ...) are reported as an [*Error] that names the file, the line of the key (found
// in the source text) and what was expected:
//
//	wren.toml:12: trigger.off_v: off_v 2.90 V must be below on_v 2.70 V
//
// Parse stops at the first problem. errors.Is tells the kind: [ErrSyntax], [ErrUnknownKey],
// [ErrMissing], [ErrType], [ErrValue].
//
// Parse is the one validation every command uses (profile check, analyze, record,
// report, simulate, whatif, robot, demo), so what "profile check" passes every command
// accepts. Besides the rules above it refuses values outside a plausible range (the table
// in plausible.go, each range with its source or marked "common practice, no source"):
// a capacitance of 1e308 F, a hold capacitor of 1e-300 F, a reference of 500 V, a divider
// resistor of 1 mΩ (typed "1M": a bare M is milli, "1meg" is mega; the message says so),
// an explicit bottom_ohm = 0, an ADC input the board does not have (it records ADC0..ADC3,
// MaxADCInputs, with vcap on ADC0), and a cell or trigger the circuit model could not
// build (a panel voltage on one cell, resistances that leave no diode, a hysteresis past
// the assumed hold diode drop).
//
// # Derived figures
//
// [Derive] computes what follows from the profile: each channel's divider ratio, full
// scale and resolution at the node (for an iload channel, the full-scale current
// reference/(shunt·gain) and the current per count), the current the probe draws at the trigger voltage,
// the energy per pulse ½·C·(Von²−Voff²) with its tolerance range, the datasheet leakage
// limit of an aluminium electrolytic (I = 0.01·C·V or 3 µA, whichever is greater, with C
// in µF and V the rated voltage, after 2 minutes at 20 °C), the hold time of a hold-
// capacitor trigger, and lower bounds on the charging times. With a constant [light] it
// gives the cell's open-circuit voltage and its current at on_v in that light (the
// single-diode model through the rated points) and warns when the drains at on_v take all
// of it, so that the circuit never fires; a divider above 10 kΩ without a pin capacitor
// (pin_f) is a warning too.
package profile
