package diagnose

// Finding codes. Each is documented where it is raised and listed in DEVELOPERS.md.
const (
	CodeCycling        = "cycling"               // info: the circuit fires; the headline figures
	CodeNeverFires     = "never-reaches-trigger" // fault: settles below the trigger voltage
	CodeNoDump         = "no-dump"               // fault: passes the trigger but nothing discharges it
	CodeStillCharging  = "still-charging"        // info: the capture ended while the node was still charging below the trigger
	CodeChatter        = "chatter"               // warn: fires with tiny swings
	CodeWeakPulse      = "weak-pulse"            // warn: energy per pulse below what the load needs to start
	CodeEarlyRelease   = "early-release"         // warn: the trigger lets go well above its release voltage
	CodeLeakyCap       = "leaky-capacitor"       // warn: leakage above the capacitor's datasheet limit
	CodeProbeHeavy     = "probe-heavy"           // warn: the probe divider draws over 10 % of the drain
	CodeClipping       = "adc-clipping"          // warn: samples at the ADC's full scale
	CodeGaps           = "capture-gaps"          // info or warn: stretches with no samples
	CodeLost           = "lost-samples"          // warn: samples the recorder counted as lost
	CodeNoisy          = "noisy-capture"         // warn: noise comparable with the steps the analysis needs
	CodeWild           = "wild-samples"          // warn: absurd samples dropped before the analysis
	CodeHeld           = "held-samples"          // warn: a held-value staircase; analysed at its effective rate
	CodeKindDiffers    = "trigger-kind-differs"  // warn: the cycles do not look as the declared trigger kind makes them
	CodeMotorStalled   = "motor-stalled"         // warn: some pulses did not turn the motor
	CodeCapOffNominal  = "capacitance-off-nominal"
	CodeTrigOffNominal = "trigger-off-nominal"
)

// Codes lists every finding code with its meaning, for documentation and tests.
var Codes = map[string]string{
	CodeCycling:        "the circuit fires; period, pulse and energy per pulse (info)",
	CodeNeverFires:     "the voltage settles below the trigger; how much more light, less drain or lower trigger would make it fire",
	CodeNoDump:         "the voltage passes the trigger and keeps rising or clips: the switching path, not the energy, is at fault",
	CodeStillCharging:  "the capture ended while the voltage was still rising below the trigger: record longer",
	CodeChatter:        "fires with tiny swings; the hold capacitance needed for a useful swing",
	CodeWeakPulse:      "energy per pulse below what the load needs to start",
	CodeEarlyRelease:   "the trigger releases well above its declared release voltage",
	CodeLeakyCap:       "capacitor leakage above its datasheet limit",
	CodeProbeHeavy:     "the probe divider draws more than 10 % of the node's drain (a warning when it changes the period by 5 % or more, or keeps the circuit from firing)",
	CodeClipping:       "samples at the ADC's full scale: the divider ratio is too small",
	CodeGaps:           "stretches of the capture with no samples",
	CodeLost:           "samples the recorder counted as lost",
	CodeNoisy:          "noise comparable with the voltage steps the analysis needs",
	CodeWild:           "samples that are not a number, or absurd jumps that come straight back (one cell of 1e300 V), were dropped before the analysis",
	CodeHeld:           "the board repeated its last value (or the link was too slow for its rate): only the first of each was analysed, at the effective sample rate",
	CodeKindDiffers:    "the cycles do not look as the declared trigger kind makes them (a voltage trigger's steady fire voltage, a timer's steady intervals, a plateau trigger's levelled charge)",
	CodeMotorStalled:   "some pulses did not turn the motor (plain R-C discharges through the armature, far shorter than when it turns): something held it, or the pulse was too weak to start it",
	CodeCapOffNominal:  "the measured capacitance is outside its tolerance",
	CodeTrigOffNominal: "the measured trigger voltage is outside the part's stated accuracy",
}
