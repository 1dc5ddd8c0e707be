// Package predict says what a circuit should do: the steady cycle it settles into under a
// constant light (charge time, pulse length, fire and reset voltages, energy per pulse),
// or, when it never reaches its trigger, the voltage where the cell's current equals the
// drains. It compares those predictions with the measured cycles of an analysis, for the
// profile's declared parts (nominal) and for the fitted ones.
//
// # Light per cycle
//
// Each measured cycle is predicted at the light measured during its own charge (the
// short-circuit current the analysis recovered from that charge by capacitive-load I-V
// tracing), so a passing cloud is not counted as a model error. The irradiance that
// gives the measured short-circuit current is G = Isc/Iph·G_ref for the circuit's cell.
//
// # What is identifiable
//
// From voltage alone only time constants and currents over C are identifiable. A wrong
// declared capacitance therefore shows up in the nominal prediction only through the
// other parts it is combined with; see DEVELOPERS.md.
package predict
