// Package whatif answers "what happens if I change this part?" and "which part value gets
// me that pulse?" for a circuit at a given light, from the circuit model.
//
// A Change names a part and its new value ("cap=10000u", "hold=2.2u"); Evaluate predicts
// the steady cycle (period, pulse length, energy per pulse, duty cycle, fires per hour and
// energy per day); Search finds the value of one part that reaches a target figure
// ("pulse=0.5s", "period=30s") and proposes the neighbouring standard values from the
// IEC 60063 E-series, each with its own prediction, because a builder can only buy those.
package whatif
