package report

import (
	"math"
	"strconv"
	"strings"
)

// A finding's numbers carry their unit in the key ("light_wm2", "gap_s"); the page shows
// them in words with the unit after the number ("light 42 W/m²"). Keys named here get
// their own words; ratios (a share, a cut, a change, a difference, a tolerance) are
// fractions of one and read as percentages; the rest are read from the key, the unit from
// its suffix (unitOfKey).
var numberWords = map[string]struct{ label, unit string }{
	"light_wm2":               {"light", "W/m²"},
	"light_factor":            {"light needed", "×"},
	"drain_cut":               {"drain to cut at the trigger", "ratio"},
	"share":                   {"share", "ratio"},
	"largest_share":           {"share of the largest drain", "ratio"},
	"period_change":           {"period shortened by", "ratio"},
	"swing_used":              {"share of the trigger's swing used", "ratio"},
	"diff":                    {"difference from the declared value", "ratio"},
	"tol_minus":               {"tolerance below", "ratio"},
	"tol_plus":                {"tolerance above", "ratio"},
	"period_probe_x10_s":      {"period with a probe of ten times the resistance", "s"},
	"equilibrium_probe_x10_v": {"settling voltage with a probe of ten times the resistance", "V"},
	"equilibrium_sd_v":        {"settling voltage, standard error", "V"},
	"cell_at_trigger_a":       {"cell current at the trigger", "A"},
	"drain_at_trigger_a":      {"drain at the trigger", "A"},
	"quiescent_a":             {"quiescent current", "A"},
	"leak_a":                  {"leakage current", "A"},
	"probe_a":                 {"probe current", "A"},
	"drain_a":                 {"total drain", "A"},
	"gaps":                    {"gaps", "count"},
	"cycles":                  {"cycles", "count"},
	"full_cycles":             {"full cycles", "count"},
	"chatter_cycles":          {"chatter cycles", "count"},
	"lost_samples":            {"samples lost", "count"},
	"accuracy_pct":            {"stated accuracy", "%"},
	"noise_rms_v":             {"noise (RMS)", "V"},
	"adc_step_v":              {"ADC step", "V"},
	"on_v":                    {"trigger on", "V"},
	"off_v":                   {"trigger off", "V"},
}

// numberLabel returns the words and the formatted value of a finding's number.
func numberLabel(key string, v float64) (label, value string) {
	if w, ok := numberWords[key]; ok {
		switch w.unit {
		case "ratio":
			return w.label, plainSig(100*v, 2) + " %"
		case "count":
			return w.label, strconv.FormatFloat(math.Round(v), 'f', 0, 64)
		case "×":
			return w.label, plainSig(v, 2) + " ×"
		case "W/m²":
			return w.label, plainSig(v, 2) + " W/m²"
		}
		return w.label, quantity(v, w.unit)
	}
	name, unit := unitOfKey(key)
	name = strings.ReplaceAll(name, "_", " ")
	name = strings.ReplaceAll(name, " x10", " ×10")
	return name, quantity(v, unit)
}
