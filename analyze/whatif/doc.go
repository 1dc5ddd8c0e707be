// Package whatif answers "what happens if I change this part?" and "which part value gets
// me that pulse?" for a circuit at a given light, from the circuit model.
//
// # A question and its answer
//
// A Question holds the circuit (declared in a profile, or fitted to a capture by package
// predict), the light, the changes and a target. Ask answers it with a Report, the JSON
// that "capcycle whatif --json" writes and WriteText the table it prints:
//
//	q := &whatif.Question{Name: "Wren", Circuit: c, LightWm2: 300,
//		Changes: []whatif.Change{{Part: "cap", Value: 10e-3}}}
//	rep, err := whatif.Ask(ctx, q)
//
// # The light
//
// A prediction is a steady cycle at one irradiance. When the question gives none, Ask
// takes the light the analysis measured (the median over the cycles of the irradiance
// each cycle's charge implies; see predict.MeasuredLight), else the profile's light: a
// constant level, or the mean of its windowsill day over the minutes above 5 W/m². The
// hours a day at that light (for the energy per day) come from a day-long analysis's
// light trace, else from the profile's day, else 8.
//
// # Parts, changes and targets
//
// A Change names a part and its new value ("cap=10000u", "hold=2.2u"; PartNames lists
// the parts); Evaluate predicts the steady cycle (period, pulse length, energy per pulse,
// duty cycle, fires per hour and energy per day); Search finds the value of one part that
// reaches a target figure ("pulse=0.5s", "period=30s") by bisection on a logarithmic
// scale, and proposes the neighbouring standard values from the IEC 60063 E-series, each
// with its own prediction, because a builder can only buy those. Search stops when its
// context is done.
package whatif
