package profile

import "strings"

// TemplateKinds are the trigger kinds Template knows, in the order help text lists them.
var TemplateKinds = []string{string(Voltage), string(Timer), string(Plateau)}

// Template returns a commented bench profile for a robot with the given trigger kind
// ("voltage", "timer" or "plateau"), filled in with the numbers of Wren, our demo rover,
// so that it passes Parse as it is. It returns "" for any other kind.
func Template(kind string) string {
	trig, ok := templateTriggers[kind]
	if !ok {
		return ""
	}
	return strings.Replace(templateBase, "@TRIGGER@\n", trig, 1)
}

var templateTriggers = map[string]string{
	"voltage": `[trigger]
kind = "voltage"            # "voltage", "timer" or "plateau"
release = "hold"            # "hold": a diode-isolated hold capacitor keeps the supervisor on
                            #   after the fire until its quiescent current has drained the hold
                            #   capacitor by the supervisor's hysteresis;
                            # "fixed": the trigger lets go when the storage voltage falls to off_v
on_v = 2.7                  # storage voltage at which it fires, V (required)
off_v = 1.6                 # storage voltage at release, V (required for "fixed"; for "hold" the
                            #   nominal value seen on the bench, optional)
accuracy_pct = 1.5          # stated threshold accuracy, ±% (optional)
quiescent_a = "1u"          # supervisor supply current, A (required for "hold")
hold_f = "2.2u"             # hold capacitance, F (required for "hold")
hysteresis_v = 0.05         # supervisor hysteresis, V (required for "hold")
diode_v = 0.2               # isolation diode forward drop, V (optional, "hold" only)
`,
	"timer": `[trigger]
kind = "timer"              # "voltage", "timer" or "plateau"
period_s = 20               # time from one fire to the next, s (required)
pulse_s = "80m"             # on time of each fire, s (required, shorter than period_s)
quiescent_a = "2u"          # timer supply current, A (optional)
# on_v = 2.7                # nominal storage voltage at the fire, V (optional; gives the energy per pulse)
# off_v = 1.6               # nominal storage voltage after the pulse, V (optional)
`,
	"plateau": `[trigger]
kind = "plateau"            # "voltage", "timer" or "plateau"
threshold_a = "200u"        # fires when the charging current falls below this, A (required)
pulse_s = "80m"             # fixed on time, s; give either pulse_s or off_v
# off_v = 1.6               # release when the storage voltage falls to this, V
quiescent_a = "3u"          # detector supply current, A (optional)
# on_v = 2.7                # arming voltage: fires only at or above it, V (optional; gives the
                            #   energy per pulse; default the larger of half voc_v and off_v + 50 mV)
`,
}

const templateBase = `# capcycle bench profile: one robot and the probe that watches it.
# Filled in with the numbers of Wren, a small solar rover on a sunny kitchen sill: replace
# them with your own. Check the file with "capcycle profile check FILE".
#
# Quantities: a TOML number in the unit at the end of the key (_f farads, _v volts,
# _a amperes, _ohm ohms, _s seconds, _h henries, _j joules), or a text in engineering
# notation: "4700u", "4.7 mF", "1meg", "10k", "2.7V". SPICE suffixes: f p n u m k meg g t;
# a bare M or m is milli (write "meg" for mega). Optional keys may be left out.

name = "Wren"               # robot name (default: the file name)
notes = "solar rover on a sunny kitchen sill"

[storage]
kind = "electrolytic"       # "electrolytic" or "supercapacitor" (required)
cap_f = "4700u"             # nominal capacitance, F (required)
tolerance = "M"             # IEC 60062 letter: J ±5 %, K ±10 %, M ±20 %, Z -20/+80 %... (default M)
rated_v = 6.3               # rated voltage, V (required; at least the trigger's on_v)
# esr_ohm = 0.5             # equivalent series resistance, Ω
# leak_a = "3u"             # measured leakage current, A ...
# leak_v = 2.7              # ... at this voltage, V (default: on_v)
# branch_ohm = "2.2k"       # supercapacitor only: the slow second R-C branch ...
# branch_f = "50m"          # ... (both or neither)

@TRIGGER@
[switch]                    # the transistor between capacitor and load (optional table)
on_ohm = 0.4                # MOSFET on-resistance, Ω; or instead:
# drop_v = 0.2              # bipolar saturation drop, V (give one of the two, or neither for ideal)

[load]
kind = "motor"              # "motor" or "resistor" (required)
armature_ohm = 18           # winding resistance, Ω (required for a motor)
armature_h = "250u"         # winding inductance, H
back_emf_v_s = "0.8m"       # back-EMF constant, V·s/rad (= torque constant, N·m/A)
inertia_kg_m2 = "50n"       # rotor and gear inertia, kg·m²
friction_n_m = "30u"        # Coulomb friction torque, N·m
damping_n_m_s = "10n"       # viscous friction, N·m·s/rad
# start_j = "2m"            # energy it needs to start turning, J
start_a = "40m"             # current at which it starts turning, A
# For a resistor load instead:  kind = "resistor"  and  ohm = 47

[cell]
voc_v = 4.2                 # panel open-circuit voltage, V (required)
isc_a = "18m"               # panel short-circuit current, A (required)
series_cells = 5            # cells in series (default 1)
# ref_w_m2 = 1000           # irradiance at which voc_v and isc_a hold, W/m² (default 1000)
# ideality = 1.5            # single-diode model, per cell (optional; give what you know):
# saturation_a = "1n"       #   saturation current, A
# series_ohm = 20           #   series resistance, Ω
# shunt_ohm = "50k"         #   shunt resistance, Ω
# temp_k = 298.15           #   cell temperature, K (default 298.15)

[adc]
reference = "avcc"          # "avcc" (the board supply) or "internal" (band-gap) (required)
reference_v = 5.0           # reference voltage, V: measure it (required; 0.5 V to 6 V)
bits = 10                   # converter resolution (default 10)

# One [[channel]] per ADC input. node: "vcap" (storage capacitor, required once),
# "vcell", "vhold" (hold capacitor), "vload" or "iload" (load current). The node voltage is
# gain · adc_v / ratio + offset_v, with ratio = bottom / (top + bottom).
# Keep every ADC pin between 0 V and the reference: choose the divider for the highest
# voltage the node can reach.
[[channel]]
node = "vcap"
adc = 0                     # ADC input number, 0..3 (required; vcap is on 0, as the recorder writes it)
top_ohm = "1meg"            # node to pin, Ω (0 = direct); 1 Ω to 1 GΩ ("1meg", not "1M": M is milli)
bottom_ohm = "1meg"         # pin to ground, Ω (leave it out for none); the divider is a load on the node
# series_ohm = "10k"        # extra series resistor into the pin, Ω
# pin_f = "100n"           # capacitor from the pin to ground, F (0 = none): with a divider above
                            #   ~10 kΩ, fit one of at least 14 pF · 2^(bits+1) (29 nF at 10 bits)
                            #   so the converter's sampling takes no visible charge; it slows the
                            #   pin to τ = (top ∥ bottom + series) · pin_f
# gain = 1.0                # calibration gain (default 1)
# offset_v = 0.0            # calibration offset at the node, V (default 0)

[[channel]]
node = "vcell"
adc = 1
top_ohm = "1meg"
bottom_ohm = "1meg"

# A load-current channel (optional): a low-side shunt in the load's ground return, read
# through a small amplifier; the ADC pin sees I_load · shunt_ohm · amp_gain (here 3 V at
# 150 mA). The analysis then measures the capacitance from the charge each fire draws.
# No divider keys here. Choose shunt and gain so that the pin stays between 0 V and the
# reference at the largest current (the motor's stall current), and keep the amplifier's
# output within the ADC's supply rails (see its maker's ratings).
# [[channel]]
# node = "iload"
# adc = 2
# shunt_ohm = 1             # current-sense shunt, Ω (required for iload)
# amp_gain = 20             # amplifier voltage gain (default 1: the shunt straight on the pin)

# [calibration]             # a stretch with a known resistor across the capacitor, to measure C
# resistor_ohm = "1k"       # the known resistor, Ω (required in this table)
# start_s = 600             # where the stretch starts in the capture, s (default: find it)
# end_s = 900               # where it ends, s

[light]                     # light for the virtual robot (optional table; real captures ignore it)
kind = "windowsill"         # "windowsill" (a day through a window) or "constant"
date = 2026-06-21           # the day
latitude_deg = 48.1         # degrees north (negative: south)
window_azimuth_deg = 180    # where the window faces, degrees clockwise from north (default 180)
window_tilt_deg = 90        # 90 = upright window (default 90)
diffuse_fraction = 0.25     # share of the light that is diffuse, 0..1 (default 0.2)
cloud_seed = 3              # passing clouds; 0 = a clear day
# For a steady light instead:  kind = "constant"  and  irradiance_w_m2 = 300 (W/m², 0 to 1500);
# "profile check" then says what the cell gives at on_v in it, and whether it can ever fire.
`
