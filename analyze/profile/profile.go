package profile

// Profile is one robot and its probe, as loaded from a bench profile. Every quantity is a
// plain float64 in SI units (farads, volts, amperes, ohms, seconds, henries, joules,
// kilogram square metres, newton metres); the field name ends in the unit. An optional
// quantity that was not given is 0 unless its doc says otherwise.
type Profile struct {
	Name  string // robot name, e.g. "Wren"; default: the file name without extension
	Notes string // free text; default ""

	Storage     Storage
	Trigger     Trigger
	Switch      Switch
	Load        LoadSpec
	Cell        Cell
	ADC         ADC
	Channels    []Channel    // at least one; exactly one reads NodeVcap
	Calibration *Calibration // nil when the profile has no [calibration] table
	Light       *Light       // nil when the profile has no [light] table
}

// StorageKind is the technology of the storage capacitor.
type StorageKind string

const (
	Electrolytic   StorageKind = "electrolytic"   // aluminium electrolytic
	Supercapacitor StorageKind = "supercapacitor" // electric double-layer capacitor
)

// Storage is the capacitor the cell charges and the load empties ([storage]).
type Storage struct {
	Kind      StorageKind // required
	CapF      float64     // nominal capacitance, F; required, > 0
	Tolerance Tolerance   // IEC 60062 letter; default M (±20 %), the usual electrolytic tolerance
	RatedV    float64     // rated voltage, V; required, > 0 and at least Trigger.OnV
	ESROhm    float64     // equivalent series resistance, Ω; 0 = not known
	LeakA     float64     // measured leakage current, A; 0 = not measured
	LeakV     float64     // voltage at which LeakA was measured, V; default Trigger.OnV when LeakA is given
	// BranchOhm and BranchF are the slow second R-C branch of the two-branch
	// supercapacitor model (charge redistribution). Both 0 = single branch.
	BranchOhm float64
	BranchF   float64
}

// TriggerKind is what makes the circuit fire.
type TriggerKind string

const (
	Voltage TriggerKind = "voltage" // fires when the storage voltage reaches OnV
	Timer   TriggerKind = "timer"   // fires every PeriodS for PulseS
	Plateau TriggerKind = "plateau" // fires when the charging current falls below ThresholdA
)

// Release is how a voltage trigger lets go.
type Release string

const (
	// ReleaseHold: a diode-isolated hold capacitor keeps the supervisor above its threshold
	// after the fire; it releases once the supervisor's quiescent current has drained the
	// hold capacitor by the supervisor's hysteresis.
	ReleaseHold Release = "hold"
	// ReleaseFixed: the trigger lets go when the storage voltage falls to OffV.
	ReleaseFixed Release = "fixed"
)

// Trigger is the circuit that switches the load on ([trigger]).
type Trigger struct {
	Kind        TriggerKind // required
	Release     Release     // voltage triggers only; default ReleaseFixed
	OnV         float64     // voltage: storage voltage at which it fires, V; required for voltage
	OffV        float64     // storage voltage at release, V; required for fixed release, nominal (optional) for hold release; 0 = not given
	AccuracyPct float64     // stated threshold accuracy, ± %; 0 = not stated
	QuiescentA  float64     // supervisor or timer supply current, A; required for hold release
	HoldF       float64     // hold release: hold capacitance, F; required
	HysteresisV float64     // hold release: supervisor hysteresis, V; required
	DiodeV      float64     // hold release: isolation diode forward drop, V; 0 = not stated
	PeriodS     float64     // timer: period, s; required for timer
	PulseS      float64     // timer: on time, s; required for timer. Plateau: fixed pulse, s, if OffV is 0
	ThresholdA  float64     // plateau: charging current below which it fires, A; required for plateau
}

// Switch is the transistor between the storage capacitor and the load ([switch]).
// At most one of OnOhm and DropV is given; both 0 means an ideal switch.
type Switch struct {
	OnOhm float64 // on-resistance (MOSFET), Ω
	DropV float64 // saturation drop (bipolar), V
}

// LoadKind is what the fire dumps the charge into.
type LoadKind string

const (
	Resistor LoadKind = "resistor"
	Motor    LoadKind = "motor" // permanent-magnet DC motor
)

// LoadSpec is what the charge is dumped into ([load]).
type LoadSpec struct {
	Kind LoadKind // required
	Ohm  float64  // resistor: resistance, Ω; required for a resistor

	ArmatureOhm float64 // motor: armature resistance, Ω; required for a motor
	ArmatureH   float64 // motor: armature inductance, H; 0 = not known
	BackEMFVs   float64 // motor: back-EMF constant, V·s/rad (equal to the torque constant in N·m/A); 0 = not known
	InertiaKgM2 float64 // motor: rotor (and gear) inertia, kg·m²; 0 = not known
	FrictionNm  float64 // motor: Coulomb friction torque, N·m; 0 = not known
	DampingNmS  float64 // motor: viscous friction, N·m·s/rad; 0 = not known
	StartJ      float64 // energy the motor needs to start turning, J; 0 = not known
	StartA      float64 // current at which it starts turning, A; 0 = not known
}

// Cell is the solar cell or panel ([cell]). Voc and Isc are those of the whole panel at
// RefWm2, as printed on its label or measured.
type Cell struct {
	VocV        float64 // open-circuit voltage, V; required
	IscA        float64 // short-circuit current, A; required
	SeriesCells int     // cells in series; default 1
	RefWm2      float64 // irradiance at which VocV and IscA hold, W/m²; default 1000
	// Optional single-diode parameters of the whole panel; 0 = not known (the model
	// fits or assumes them).
	Ideality    float64 // diode ideality factor per cell (dimensionless)
	SaturationA float64 // diode saturation current, A
	SeriesOhm   float64 // series resistance, Ω
	ShuntOhm    float64 // shunt resistance, Ω
	TempK       float64 // cell temperature, K; default 298.15
}

// Reference is the ADC's voltage reference.
type Reference string

const (
	RefAVCC     Reference = "avcc"     // the board's analogue supply
	RefInternal Reference = "internal" // the on-chip band-gap reference
)

// ADC is the converter on the logging board ([adc]).
type ADC struct {
	Reference  Reference // required
	ReferenceV float64   // reference voltage, V; required (measure it: AVCC is rarely exactly 5 V)
	Bits       int       // resolution; default 10
}

// Node names a point in the circuit that an ADC channel reads.
type Node string

const (
	NodeVcap  Node = "vcap"  // the storage capacitor
	NodeVcell Node = "vcell" // the cell's output
	NodeVhold Node = "vhold" // the hold capacitor
	NodeVload Node = "vload" // the load side of the switch
	// NodeIload is the load current, read as the voltage across a shunt resistor in the
	// load's ground return (low side), usually through a small amplifier. It is a
	// current, not a node voltage: the channel has ShuntOhm and AmpGain instead of a
	// divider.
	NodeIload Node = "iload"
)

// Channel is one ADC input and the divider in front of it ([[channel]]). The node
// voltage is recovered as node_v = GainV * adc_v / Ratio + OffsetV, where Ratio =
// BottomOhm / (TopOhm + BottomOhm), or 1 without a bottom resistor.
//
// A NodeIload channel reads the load current instead, through a shunt of ShuntOhm in the
// load's return and an amplifier of gain AmpGain, so that adc_v = I_load · ShuntOhm ·
// AmpGain. It has no divider (Ratio 1); its "node" is the amplifier output at the pin,
// and the current is I_load = (GainV * adc_v + OffsetV) / VoltsPerAmp().
type Channel struct {
	Node      Node    // required; each node at most once
	ADC       int     // ADC input number, 0..MaxADCInputs-1 (the vcap channel on 0); required; each at most once
	TopOhm    float64 // divider resistor from the node to the ADC pin, Ω; 0 = direct; not for iload
	BottomOhm float64 // divider resistor from the ADC pin to ground, Ω; 0 = none (leave the key out: an explicit 0 is refused); not for iload
	SeriesOhm float64 // extra series resistor into the pin (protection), Ω; 0 = none
	Gain      float64 // calibration gain (dimensionless); default 1
	OffsetV   float64 // calibration offset at the node (iload: at the pin), V; default 0
	ShuntOhm  float64 // iload only: the current-sense shunt, Ω; required there, > 0
	AmpGain   float64 // iload only: the shunt amplifier's voltage gain (dimensionless); default 1 (no amplifier)
	// PinF is a capacitor from the ADC pin to ground, F; 0 = none. It lets a divider of
	// high resistance feed the converter's sampling capacitor (see Derive), and slows
	// the pin: it follows the node with the time constant SourceOhm·PinF.
	PinF float64
}

// IsCurrent reports whether the channel reads the load current (NodeIload) rather than a
// node voltage.
func (c Channel) IsCurrent() bool { return c.Node == NodeIload }

// VoltsPerAmp is the ADC-pin voltage per ampere of load current of a NodeIload channel,
// ShuntOhm·AmpGain (an AmpGain of 0 counts as 1), in V/A. It is 0 for a voltage channel.
func (c Channel) VoltsPerAmp() float64 {
	if !c.IsCurrent() {
		return 0
	}
	g := c.AmpGain
	if g == 0 {
		g = 1
	}
	return c.ShuntOhm * g
}

// Ratio is the divider ratio BottomOhm/(TopOhm+BottomOhm), or 1 without a bottom
// resistor. It is 1 for a NodeIload channel (the amplifier drives the pin directly).
func (c Channel) Ratio() float64 {
	if c.BottomOhm == 0 || c.IsCurrent() {
		return 1
	}
	return c.BottomOhm / (c.TopOhm + c.BottomOhm)
}

// LoadOhm is the resistance the divider puts across the node (TopOhm+BottomOhm), or
// +Inf without a bottom resistor (the ADC pin itself draws next to nothing). It is +Inf
// for a NodeIload channel: a shunt in the load's ground return carries the load current
// and puts nothing across the capacitor.
func (c Channel) LoadOhm() float64 {
	if c.BottomOhm == 0 || c.IsCurrent() {
		return inf
	}
	return c.TopOhm + c.BottomOhm
}

// Calibration is a stretch of the capture during which a known resistor was across the
// storage capacitor, used to measure the capacitance ([calibration]).
type Calibration struct {
	ResistorOhm float64 // the known resistor, Ω; required
	StartS      float64 // start of the stretch in the capture, s; 0 = find it
	EndS        float64 // end of the stretch, s; 0 = find it
}

// LightKind is how the virtual robot's light is made.
type LightKind string

const (
	Constant   LightKind = "constant"   // a steady irradiance
	Windowsill LightKind = "windowsill" // a day of sun through a window
)

// Light is the light the virtual robot sees ([light]); real captures ignore it.
type Light struct {
	Kind            LightKind // required
	IrradianceWm2   float64   // constant: irradiance on the cell, W/m²; required
	Date            string    // windowsill: the day, YYYY-MM-DD; required
	LatitudeDeg     float64   // windowsill: latitude, degrees north (negative south); required
	AzimuthDeg      float64   // windowsill: direction the window faces, degrees clockwise from north
	TiltDeg         float64   // windowsill: window tilt from horizontal, degrees; default 90 (upright)
	DiffuseFraction float64   // windowsill: share of the light that is diffuse, 0..1; default 0.2
	CloudSeed       int64     // windowsill: seed for passing clouds; 0 = a clear day
}
