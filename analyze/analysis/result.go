package analysis

// Schema is the value of Result.Schema for this version of the analysis JSON.
const Schema = "capcycle.analysis/1"

// Result is the analysis of one capture: the JSON object that "capcycle analyze --json"
// prints and that the report is built from (so a report can be rebuilt from a saved JSON).
//
// The key names are a contract (see DEVELOPERS.md, "Analysis JSON"): add fields, never
// rename or remove them. A value that cannot be determined is null (a nil pointer), never
// a made-up number.
type Result struct {
	Schema    string  `json:"schema"`
	Source    Source  `json:"source"`
	Samples   int     `json:"samples"`
	DurationS float64 `json:"duration_s"`

	Cycles   []Cycle   `json:"cycles"`
	Segments []Segment `json:"segments"`

	Fit          Fit       `json:"fit"`
	EquilibriumV *Estimate `json:"equilibrium_v"`
	Equilibrium  *Settling `json:"equilibrium,omitempty"`
	Capacitance  *Capacity `json:"capacitance,omitempty"`
	Noise        *Noise    `json:"noise,omitempty"`
	// Screen says what was taken out of the samples before the analysis (wild values,
	// held repeats); nil when nothing was.
	Screen   *Screen   `json:"screen,omitempty"`
	Light    []LightPt `json:"light,omitempty"`
	Findings []Finding `json:"findings"`
	// Attribution compares each declared part the capture measured with its declared
	// value, against the part's tolerance; the largest contradiction first.
	Attribution []Attribution `json:"attribution,omitempty"`
	Prediction  *Prediction   `json:"prediction"`
	Declared    *Declared     `json:"declared,omitempty"`
	Envelope    []EnvelopePt  `json:"envelope,omitempty"`

	// Traces are a few measured cycles, decimated, with time relative to the fire, for the
	// overlay plot; ModelTrace is the fitted model's cycle on the same axis.
	Traces     []Trace `json:"traces,omitempty"`
	ModelTrace *Trace  `json:"model_trace,omitempty"`
	// CycleDensity is every cycle at once: how many cycles passed through each cell of a
	// grid of time since the fire × voltage.
	CycleDensity *CycleDensity `json:"cycle_density,omitempty"`
	// LeakTrace holds the dark-decay (or plateau-approach) points the leak fit used, and
	// LeakModel the fitted curve over them.
	LeakTrace *Trace `json:"leak_trace,omitempty"`
	LeakModel *Trace `json:"leak_model,omitempty"`

	// Notes say, in words, what the capture could and could not determine (for example,
	// that without the capacitance only time constants and currents over C are known).
	Notes []string `json:"notes,omitempty"`
}

// Trace is a short waveform: time in seconds (relative to a stated origin) and volts.
type Trace struct {
	Label string    `json:"label,omitempty"`
	TS    []float64 `json:"t_s"`
	V     []float64 `json:"v"`
}

// CycleDensity counts the cycles of a capture, aligned at their fires, on a grid of time
// since the fire (logarithmic: ColsPerDecade columns a decade, the first starting at T0S)
// × voltage (rows VStepV high from 0 V). Counts[c][r] is the number of cycles whose mean
// voltage within column c falls in row r, so a column's counts add up to the cycles that
// reached that time; Cycles is the number of cycles accumulated (every fire found).
type CycleDensity struct {
	Cycles        int     `json:"cycles"`
	T0S           float64 `json:"t0_s"`
	ColsPerDecade int     `json:"cols_per_decade"`
	VStepV        float64 `json:"v_step_v"`
	Counts        [][]int `json:"counts"`
}

// Source describes the capture the analysis read.
type Source struct {
	Path     string            `json:"path"`
	Profile  string            `json:"profile,omitempty"`
	StartRFC string            `json:"start,omitempty"` // RFC 3339, from the capture metadata
	Meta     map[string]string `json:"meta,omitempty"`  // the capture's "# key: value" lines
	GapsS    float64           `json:"gaps_s"`          // total time inside gaps
	Lost     int               `json:"lost_samples"`    // samples the recorder counted as lost
	// Columns names the columns read, when they are not the capture format's own
	// (time_s, vcap_v, iload_a): a foreign CSV whose columns were picked by name.
	Columns *Columns `json:"columns,omitempty"`
	// OriginS is what the reader subtracted from time stamps that start far from zero
	// (epoch seconds or milliseconds, in seconds): time_s of the analysis plus OriginS is
	// the capture's own time stamp. 0 when the capture starts near zero.
	OriginS float64 `json:"origin_s,omitempty"`
	// Warnings are the reader's complaints about lines it read past (file:line and what
	// was expected; nothing in such a line was used as data): the first 100, of
	// WarningCount in all.
	Warnings     []string `json:"warnings,omitempty"`
	WarningCount int      `json:"warning_count,omitempty"`
}

// Columns are the columns of a foreign CSV the analysis read, by their header names, and
// the factor that took each to seconds, volts or amperes.
type Columns struct {
	Time         string  `json:"time"`
	Volt         string  `json:"volt"`
	Current      string  `json:"current,omitempty"`
	TimeScale    float64 `json:"time_scale"`
	VoltScale    float64 `json:"volt_scale"`
	CurrentScale float64 `json:"current_scale,omitempty"`
}

// Estimate is a fitted or measured value with its standard uncertainty. SD is nil when
// the uncertainty is unknown (for example, a declared value).
//
// SD is always a standard uncertainty of Value in the sense of the GUM (JCGM 100:2008,
// 2.3.1): for a mean over cycles the standard error of that mean, never the scatter of
// the cycles themselves (that is Spread). When Budget lists components, SD is their
// combined standard uncertainty (root sum of squares, JCGM 100:2008, 5.1.2, the
// components taken as uncorrelated).
type Estimate struct {
	Value float64  `json:"value"`
	SD    *float64 `json:"sd"`
	// Lo95 and Hi95 bound the 95 % confidence interval when it is known.
	Lo95 *float64 `json:"lo95,omitempty"`
	Hi95 *float64 `json:"hi95,omitempty"`
	// Origin says where the value comes from: "fitted", "measured", "declared" or "flag".
	Origin Origin `json:"origin,omitempty"`
	// Spread is, for a value that is a mean over cycles, the standard deviation from
	// cycle to cycle (how much one cycle differs from the next), in Value's unit; nil
	// for anything else.
	Spread *float64 `json:"spread,omitempty"`
	// Budget lists the standard-uncertainty components that SD combines, when more than
	// the fit's own enter (see UncertaintySource); nil when SD is the fit's alone.
	Budget []Component `json:"budget,omitempty"`
}

// Component is one standard-uncertainty component of an Estimate, in Value's unit.
type Component struct {
	Source UncertaintySource `json:"source"`
	U      float64           `json:"u"`
}

// Cycle is one fire and the reset that follows it.
type Cycle struct {
	Index   int       `json:"index"`
	FireS   float64   `json:"fire_s"`   // onset of the fast fall, seconds from capture start
	FireV   float64   `json:"fire_v"`   // the peak before the fall, volts
	ResetS  float64   `json:"reset_s"`  // end of the fall, charging resumes
	ResetV  float64   `json:"reset_v"`  // the trough, volts
	ChargeS *float64  `json:"charge_s"` // from the previous reset to this fire; null for the first cycle
	PulseS  float64   `json:"pulse_s"`  // reset_s - fire_s
	EnergyJ *float64  `json:"energy_j"` // ½C(fire_v² − reset_v²), null when C is unknown
	Kind    CycleKind `json:"kind"`     // "full" or "chatter"
	// Isc is the cell's short-circuit current (or, without C, Isc/C in V/s) fitted from this
	// cycle's charging segment: a light-level trace.
	LightA *float64 `json:"light_a,omitempty"`
	// For a plateau trigger: the net charging slope at the fire (the current over C at
	// which it fired), and that current when the capacitance is known.
	FireSlopeVPerS *float64 `json:"fire_slope_v_per_s,omitempty"`
	FireA          *float64 `json:"fire_a,omitempty"`
	// Motion, when the pulses show a motor's back-EMF: "running" when the motor turned
	// during this pulse, "stalled" when it did not.
	Motion Motion `json:"motion,omitempty"`
}

// Segment is a stretch of the capture of one kind.
type Segment struct {
	Kind   SegmentKind `json:"kind"` // "charging", "firing", "dark-decay", "plateau", "saturated", "gap"
	StartS float64     `json:"start_s"`
	EndS   float64     `json:"end_s"`
	StartV float64     `json:"start_v"`
	EndV   float64     `json:"end_v"`
}

// Fit holds the fitted circuit.
type Fit struct {
	Trigger TriggerFit `json:"trigger"`
	Load    LoadFit    `json:"load"`
	Leak    LeakFit    `json:"leak"`
	Cell    CellFit    `json:"cell"`
}

// TriggerFit is what the fires and resets say about the trigger.
type TriggerFit struct {
	Kind TriggerKind `json:"kind"` // "voltage", "timer", "plateau" or "unknown"
	OnV  *Estimate   `json:"on_v"`
	OffV *Estimate   `json:"off_v"`
	// DriftVPerH is the slope of on_v over the day (volts per hour), with its SD.
	OnDriftVPerH *Estimate `json:"on_drift_v_per_h,omitempty"`
	PeriodS      *Estimate `json:"period_s,omitempty"` // mean interval between fires
	PulseS       *Estimate `json:"pulse_s,omitempty"`
	// DeclaredKind is the bench profile's trigger kind ("" without one), and KindCheck
	// whether the cycles agree with it. When they agree, Kind is the declared kind even
	// where the voltage alone could not tell (under steady light a voltage trigger and a
	// timer look alike). KindBasis says in words how Kind was reached, for example
	// "voltage, as declared; the data agree".
	DeclaredKind TriggerKind `json:"declared_kind,omitempty"`
	KindCheck    KindCheck   `json:"kind_check,omitempty"`
	KindBasis    string      `json:"kind_basis,omitempty"`
	// For a plateau trigger: ThresholdVPerS is the net charging current over C at which
	// it fires (the mean charging slope at the end of each rise, with its cycle-to-cycle
	// SD), and ThresholdA the current itself when the capacitance is known.
	ThresholdVPerS *Estimate `json:"threshold_v_per_s,omitempty"`
	ThresholdA     *Estimate `json:"threshold_a,omitempty"`
}

// LoadFit describes the discharge through the load.
type LoadFit struct {
	TauS *Estimate `json:"tau_s"`
	Ohm  *Estimate `json:"ohm"` // needs the capacitance
	// Resistive is false when the goodness of fit says the load is not a resistor (a motor).
	Resistive *bool     `json:"resistive,omitempty"`
	StartOhm  *Estimate `json:"start_ohm,omitempty"` // effective resistance early in the pulse
	EndOhm    *Estimate `json:"end_ohm,omitempty"`   // and late in it
	RMSResidV *float64  `json:"rms_resid_v,omitempty"`
	// BackEMF is set when pulses are bent by a motor's back-EMF (they last several times
	// the R-C discharge their onset implies). RunningPulses and StalledPulses count the
	// pulses during which the motor turned and those during which it did not (a stalled
	// motor is its armature resistance), with their lengths. With stalled pulses, TauS,
	// Ohm and ArmatureOhm come from them alone.
	BackEMF       *bool     `json:"back_emf,omitempty"`
	RunningPulses int       `json:"running_pulses,omitempty"`
	StalledPulses int       `json:"stalled_pulses,omitempty"`
	RunningPulseS *Estimate `json:"running_pulse_s,omitempty"`
	StalledPulseS *Estimate `json:"stalled_pulse_s,omitempty"`
	ArmatureOhm   *Estimate `json:"armature_ohm,omitempty"`
	// ReleaseStepV is the step up the terminals make when the switch lets go (the drop
	// across a supercapacitor's series resistance as the current stops), and ESROhm that
	// resistance (needs the capacitance).
	ReleaseStepV *Estimate `json:"release_step_v,omitempty"`
	ESROhm       *Estimate `json:"esr_ohm,omitempty"`
}

// LeakFit describes the slow drains of the storage node without light.
type LeakFit struct {
	TauS       *Estimate `json:"tau_s"`
	Ohm        *Estimate `json:"ohm"`
	QuiescentA *Estimate `json:"quiescent_a"`
	// ProbeOhm is the probe divider's known share, subtracted from Ohm and reported apart.
	ProbeOhm *Estimate  `json:"probe_ohm,omitempty"`
	Method   LeakMethod `json:"method,omitempty"` // "dark-decay", "plateau" or ""
}

// CellFit holds the single-diode parameters recovered by capacitive-load I-V tracing.
type CellFit struct {
	IscA   *Estimate `json:"isc_a"`
	VocV   *Estimate `json:"voc_v"`
	I0A    *Estimate `json:"i0_a,omitempty"`
	N      *Estimate `json:"n,omitempty"` // diode ideality factor per cell (the cells in series are those of the profile)
	RsOhm  *Estimate `json:"rs_ohm,omitempty"`
	RshOhm *Estimate `json:"rsh_ohm,omitempty"`
	MppV   *float64  `json:"mpp_v,omitempty"`
	MppW   *float64  `json:"mpp_w,omitempty"`
	// IV is the traced curve (volts, amperes) that the fit used, decimated.
	IV [][2]float64 `json:"iv,omitempty"`
}

// Settling describes where the voltage levels off when it never reaches the trigger.
type Settling struct {
	Within1PctS *float64  `json:"within_1pct_s"` // time from the start of the approach to within 1 % of V_eq
	TauS        *Estimate `json:"tau_s"`
}

// Capacity is the storage capacitance the analysis used, and where it came from.
type Capacity struct {
	F   Estimate `json:"f"`
	Tol string   `json:"tolerance_code,omitempty"`
	// Method says how a measured capacitance was found: "calibration-resistor" (a decay
	// through a known resistor) or "current-channel" (the load's charge over the
	// voltage it cost, at every fire); empty when declared.
	Method CapMethod `json:"method,omitempty"`
	Pulses int       `json:"pulses,omitempty"` // current-channel: the fires it rests on
}

// Noise is the sample noise and resolution seen in the capture.
type Noise struct {
	RMSV  float64 `json:"rms_v"`
	StepV float64 `json:"step_v"` // the smallest voltage step seen (ADC LSB)
	// StepOrigin says where StepV comes from: "metadata" (the capture's channel line:
	// reference / 2^bits / divider), "declared" (Options.StepV), "estimated" (from the
	// samples), or "" when no step shows.
	StepOrigin StepOrigin `json:"step_origin,omitempty"`
}

// Screen is what was taken out of the samples before event detection (package
// analyze/screen).
type Screen struct {
	Rows int `json:"rows"` // samples read
	// Wild samples (not a finite number, or an absurd jump that came straight back) were
	// dropped; FirstWildS is the time of the first.
	Wild       int      `json:"wild"`
	FirstWildS *float64 `json:"first_wild_s,omitempty"`
	Held       *Held    `json:"held,omitempty"`
}

// Held describes a held-value staircase: a board that repeats its last value, or a link
// too slow for its rate. Only the first sample of each value was analysed.
type Held struct {
	Repeat            float64 `json:"repeat"`              // median repeats of one value in a fast move
	FastRuns          int     `json:"fast_runs"`           // the runs that rests on
	LoggedSpacingS    float64 `json:"logged_spacing_s"`    // median spacing of the rows
	EffectiveSpacingS float64 `json:"effective_spacing_s"` // median time between new values
	Dropped           int     `json:"dropped"`             // repeats not analysed
}

// LightPt is one point of the light-level trace.
type LightPt struct {
	TS     float64 `json:"t_s"`
	Level  float64 `json:"level"` // relative to the brightest stretch (0..1)
	FiresH float64 `json:"fires_per_h"`
}

// EnvelopePt is one bin of the min/max envelope of the voltage, for plots of long captures.
type EnvelopePt struct {
	TS   float64 `json:"t_s"`
	MinV float64 `json:"min_v"`
	MaxV float64 `json:"max_v"`
}

// Finding is one diagnosis. Code is a short kebab-case word of our own (the list lives in
// DEVELOPERS.md); Numbers carries the figures behind Message, with units in their keys.
type Finding struct {
	Code       string             `json:"code"`
	Severity   Severity           `json:"severity"` // "info", "warn" or "fault"
	Message    string             `json:"message"`
	Suggestion string             `json:"suggestion,omitempty"`
	Numbers    map[string]float64 `json:"numbers"`
}

// Attribution is one declared part against what the capture measured.
type Attribution struct {
	Part     string   `json:"part"` // profile key, e.g. "storage.cap_f"
	Unit     string   `json:"unit"`
	Declared float64  `json:"declared"`
	Measured float64  `json:"measured"`
	SD       *float64 `json:"sd"`
	DiffPct  float64  `json:"diff_pct"` // (measured − declared) / declared, %
	// The band the measurement is judged against, % below and above the declared value,
	// and where it comes from ("tolerance code M", "stated accuracy", "datasheet limit",
	// "two standard errors").
	TolMinusPct float64 `json:"tol_minus_pct"`
	TolPlusPct  float64 `json:"tol_plus_pct"`
	Basis       string  `json:"basis"`
	Within      bool    `json:"within"`
}

// Declared is the circuit as declared: the bench profile's values, overridden by the
// command line's flags. It is the one description of the declared circuit from the profile
// through the flags to the analysis JSON (where it feeds the parameter table). A zero value
// means "not declared" and is left out of the JSON.
type Declared struct {
	CapF   float64 `json:"cap_f,omitempty"`              // storage capacitance, F
	CapTol string  `json:"cap_tolerance_code,omitempty"` // its tolerance letter (IEC 60062)
	// CapOrigin says where CapF comes from: OriginDeclared (the profile, the default)
	// or OriginFlag (the command line).
	CapOrigin Origin `json:"cap_origin,omitempty"`
	// TriggerKind is the profile's trigger.kind ("" when not declared).
	TriggerKind TriggerKind `json:"trigger_kind,omitempty"`
	OnV         float64     `json:"on_v,omitempty"`        // trigger threshold, V
	OffV        float64     `json:"off_v,omitempty"`       // trigger release, V
	LoadOhm     float64     `json:"load_ohm,omitempty"`    // load resistance (a motor's armature), Ω
	ProbeOhm    float64     `json:"probe_ohm,omitempty"`   // what the probe divider puts across the capacitor, Ω
	QuiescentA  float64     `json:"quiescent_a,omitempty"` // the trigger's quiescent current, A
	VocV        float64     `json:"voc_v,omitempty"`       // cell open-circuit voltage at its rating, V
	IscA        float64     `json:"isc_a,omitempty"`       // cell short-circuit current at its rating, A
	CellSeries  int         `json:"cell_series,omitempty"` // cells in series in the panel (0: 1)
	CellTempK   float64     `json:"cell_temp_k,omitempty"` // cell temperature, K (0: 298.15 K)
	// FullScaleV is the ADC's full scale referred to the storage node: samples there are
	// saturated.
	FullScaleV float64 `json:"full_scale_v,omitempty"`
	// Calibration is a stretch during which a known resistor was across the capacitor
	// (in the dark), which measures the capacitance; nil for none.
	Calibration *Calibration `json:"calibration,omitempty"`
}

// Calibration describes a calibration stretch: ResistorOhm across the capacitor from
// StartS to EndS (seconds from the capture's start).
type Calibration struct {
	ResistorOhm float64 `json:"resistor_ohm"`
	StartS      float64 `json:"start_s"`
	EndS        float64 `json:"end_s"`
}

// CapKnown reports whether the capacitance is declared.
func (d *Declared) CapKnown() bool { return d != nil && d.CapF > 0 }

// IsZero reports whether nothing is declared.
func (d *Declared) IsZero() bool { return d == nil || *d == Declared{} }

// Prediction compares measured cycles with the model's, nominal and fitted.
type Prediction struct {
	Cycles  []PredictedCycle `json:"cycles"`
	Nominal *ErrorSummary    `json:"nominal"`
	Fitted  *ErrorSummary    `json:"fitted"`
	HeldOut *ErrorSummary    `json:"held_out,omitempty"`
}

// PredictedCycle is one measured cycle beside its two predictions.
type PredictedCycle struct {
	Index    int        `json:"index"`
	Measured CycleFigs  `json:"measured"`
	Nominal  *CycleFigs `json:"nominal"`
	Fitted   *CycleFigs `json:"fitted"`
}

// CycleFigs are the figures compared for each cycle.
type CycleFigs struct {
	ChargeS *float64 `json:"charge_s"`
	PulseS  *float64 `json:"pulse_s"`
	FireV   *float64 `json:"fire_v"`
	ResetV  *float64 `json:"reset_v"`
	EnergyJ *float64 `json:"energy_j"`
}

// ErrorSummary sums up prediction errors of charge time (the headline figure) and the rest.
type ErrorSummary struct {
	N             int      `json:"n"`
	BiasPct       *float64 `json:"bias_pct"`
	MAPEPct       *float64 `json:"mape_pct"`
	RMSS          *float64 `json:"rms_s"`
	Within10Pct   *float64 `json:"within_10pct"` // share of cycles (0..1)
	PulseMAPEPct  *float64 `json:"pulse_mape_pct,omitempty"`
	EnergyMAPEPct *float64 `json:"energy_mape_pct,omitempty"`
}
