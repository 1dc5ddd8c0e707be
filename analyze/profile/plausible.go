package profile

import (
	"math"
	"regexp"
	"strings"
)

// Plausible ranges of the profile's quantities. Parse refuses a value outside its range,
// so that what "capcycle profile check" passes, every command (analyze, simulate, whatif,
// record, robot, report) accepts and can compute with: no energy that overflows to +Inf,
// no hold time too short for a simulation step, no reference of 500 V, no divider
// resistor of a milliohm. The ranges are wide, meant to catch typing slips and unit
// mix-ups rather than unusual parts; each says where it comes from. Most are "common
// practice, no source": the span of parts sold for small solar-powered circuits, widened
// by a factor of ten or more. A key that is 0 for "not given" or "none" is not checked
// when it is 0.
//
// The table is keyed by the key path; channel keys are written "channel.KEY".
var plausible = map[string]plausibleRange{
	// Storage: from small ceramic capacitors to the largest single supercapacitor cells
	// (a few thousand farads); common practice, no source.
	"storage.cap_f":      {1e-9, 5000, ""},
	"storage.rated_v":    {0.5, 100, ""}, // a solar engine's store, not a mains capacitor; common practice, no source
	"storage.esr_ohm":    {0, 1e3, ""},
	"storage.leak_a":     {0, 0.1, ""},
	"storage.leak_v":     {0, 100, ""},
	"storage.branch_ohm": {1e-3, 1e8, ""},
	"storage.branch_f":   {1e-9, 5000, ""},

	// Trigger: supervisor thresholds start near 1 V, and below 0.5 V nothing switches a
	// transistor on; common practice, no source.
	"trigger.on_v":         {0.5, 100, ""},
	"trigger.off_v":        {0.01, 100, ""},
	"trigger.quiescent_a":  {0, 0.01, ""},
	"trigger.hold_f":       {10e-12, 1, ""}, // above a pin's stray capacitance (a few pF); common practice, no source
	"trigger.hysteresis_v": {1e-3, 10, ""},
	"trigger.diode_v":      {0, 3.5, ""}, // up to an LED used as a reference; common practice, no source
	"trigger.period_s":     {1e-3, 86400, ""},
	"trigger.pulse_s":      {1e-6, 3600, ""},
	"trigger.threshold_a":  {1e-9, 10, ""},

	"switch.on_ohm": {0, 1e3, ""},
	"switch.drop_v": {0, 5, ""},

	"load.ohm":           {0.01, 1e8, ""},
	"load.armature_ohm":  {0.01, 1e5, ""},
	"load.armature_h":    {0, 1, ""},
	"load.back_emf_v_s":  {0, 1, ""},
	"load.inertia_kg_m2": {0, 1, ""},
	"load.friction_n_m":  {0, 10, ""},
	"load.damping_n_m_s": {0, 10, ""},
	"load.start_j":       {0, 1e3, ""},
	"load.start_a":       {0, 100, ""},

	"cell.voc_v":        {0.1, 100, ""},
	"cell.isc_a":        {1e-9, 100, ""},
	"cell.ref_w_m2":     {1, 1500, ""}, // at most a little above the solar constant, about 1361 W/m² (from memory)
	"cell.ideality":     {0.5, 5, ""},  // 1 to 2 for a junction, more for amorphous cells; common practice, no source
	"cell.saturation_a": {1e-30, 1, ""},
	"cell.series_ohm":   {0, 1e4, ""},
	"cell.shunt_ohm":    {1, 1e12, ""},
	"cell.temp_k":       {200, 400, ""}, // -73 °C to 127 °C

	// The ADC reference: boards run from 1.8 V to 5.5 V supplies and band-gap references
	// are 1.1 V to 2.56 V; common practice, no source.
	"adc.reference_v": {0.5, 6, ""},

	// Divider resistors: below 1 Ω a divider would short the node, above 1 GΩ the pin's
	// own leakage (up to about 1 µA on small microcontrollers, from memory) dominates;
	// common practice, no source.
	"channel.top_ohm":    {1, 1e9, ""},
	"channel.bottom_ohm": {1, 1e9, ""},
	"channel.series_ohm": {1, 1e9, ""},
	"channel.gain":       {0.1, 10, "a calibration gain is close to 1"},
	"channel.offset_v":   {-100, 100, ""},
	"channel.shunt_ohm":  {1e-3, 1e4, ""},
	"channel.amp_gain":   {0.1, 1e4, ""},
	"channel.pin_f":      {1e-12, 1e-3, ""},

	"calibration.resistor_ohm": {1, 1e9, ""},
	"calibration.start_s":      {0, 1e8, ""},
	"calibration.end_s":        {0, 1e8, ""},

	"light.irradiance_w_m2": {0, 1500, ""}, // the solar constant is about 1361 W/m² (from memory)
}

// plausibleRange is a closed range [lo, hi] in the key's SI unit, and an optional reason.
type plausibleRange struct {
	lo, hi float64
	why    string
}

// MaxADCInputs is the number of ADC inputs the capcycle board records (ADC0..ADC3; the
// wire protocol's nch, firmware-protocol/PROTOCOL.md), and the recorder writes ADC0 as
// vcap_v, so a profile's vcap channel is on adc 0.
const MaxADCInputs = 4

// AssumedHoldDiodeV is the hold diode's drop the circuit model assumes when diode_v is not
// given (the model's AssumedDiodeV; a small Schottky diode at microamps, common practice,
// no source). The checks of a hold trigger use it so that a profile Parse accepts is one
// the model accepts.
const AssumedHoldDiodeV = 0.3

// AssumedPlateauArmFraction is the share of the cell's rated open-circuit voltage above
// which the model arms a plateau trigger that has no on_v (the model's AssumedArmFraction).
const AssumedPlateauArmFraction = 0.5

// AssumedPlateauArmMarginV is how far above its release a plateau trigger with no on_v
// arms at least, volts (our own choice), so that it is always armed above its release.
const AssumedPlateauArmMarginV = 0.05

// PlateauArmV is the storage voltage at or above which a plateau trigger may fire (it is
// armed): on_v when given (the profile requires it above off_v); otherwise the larger of
// AssumedPlateauArmFraction of the cell's rated Voc and off_v + AssumedPlateauArmMarginV.
func PlateauArmV(t *Trigger, vocV float64) float64 {
	if t.OnV > 0 {
		return t.OnV
	}
	arm := AssumedPlateauArmFraction * vocV
	if t.OffV > 0 {
		arm = math.Max(arm, t.OffV+AssumedPlateauArmMarginV)
	}
	return arm
}

// AssumedIdeality is the per-cell diode ideality the model takes when the profile gives
// none (the model's AssumedIdeality; common practice, no source).
const AssumedIdeality = 1.5

// MaxVocPerCellV is the highest open-circuit voltage per cell in series that Parse takes:
// single-junction cells give 0.5 V to 1.2 V; common practice, no source. Above it the
// profile most likely lacks series_cells (and the diode model would overflow).
const MaxVocPerCellV = 3.0

var channelIndex = regexp.MustCompile(`^channel\[\d+\]\.`)

// rangeFor returns the plausible range of the key path, if it has one.
func rangeFor(key string) (plausibleRange, bool) {
	k := channelIndex.ReplaceAllString(key, "channel.")
	r, ok := plausible[k]
	return r, ok
}

// milliHint explains a bare "M" in a value that came out far too small.
func milliHint(raw any) string {
	s, ok := raw.(string)
	if !ok {
		return ""
	}
	low := strings.ToLower(s)
	if strings.Contains(s, "M") && !strings.Contains(low, "meg") {
		return " (a bare \"M\" is milli, as in SPICE: write \"" + strings.Replace(s, "M", "meg", 1) + "\" for mega)"
	}
	return ""
}
