package profile

// The raw* types mirror the file. Every leaf is a rawValue, which takes whatever TOML
// value is written, so that type mistakes are reported by the conversion with the key's
// line and the expected unit rather than by the decoder.

// rawValue is one TOML value as written: int64, float64, string, bool, a date, ...
type rawValue struct {
	v   any
	set bool
}

// UnmarshalTOML implements toml.Unmarshaler and never fails.
func (r *rawValue) UnmarshalTOML(v any) error {
	r.v, r.set = v, true
	return nil
}

type rawProfile struct {
	Name        rawValue        `toml:"name"`
	Notes       rawValue        `toml:"notes"`
	Storage     *rawStorage     `toml:"storage"`
	Trigger     *rawTrigger     `toml:"trigger"`
	Switch      *rawSwitch      `toml:"switch"`
	Load        *rawLoad        `toml:"load"`
	Cell        *rawCell        `toml:"cell"`
	ADC         *rawADC         `toml:"adc"`
	Channel     []rawChannel    `toml:"channel"`
	Calibration *rawCalibration `toml:"calibration"`
	Light       *rawLight       `toml:"light"`
}

type rawStorage struct {
	Kind      rawValue `toml:"kind"`
	CapF      rawValue `toml:"cap_f"`
	Tolerance rawValue `toml:"tolerance"`
	RatedV    rawValue `toml:"rated_v"`
	ESROhm    rawValue `toml:"esr_ohm"`
	LeakA     rawValue `toml:"leak_a"`
	LeakV     rawValue `toml:"leak_v"`
	BranchOhm rawValue `toml:"branch_ohm"`
	BranchF   rawValue `toml:"branch_f"`
}

type rawTrigger struct {
	Kind        rawValue `toml:"kind"`
	Release     rawValue `toml:"release"`
	OnV         rawValue `toml:"on_v"`
	OffV        rawValue `toml:"off_v"`
	AccuracyPct rawValue `toml:"accuracy_pct"`
	QuiescentA  rawValue `toml:"quiescent_a"`
	HoldF       rawValue `toml:"hold_f"`
	HysteresisV rawValue `toml:"hysteresis_v"`
	DiodeV      rawValue `toml:"diode_v"`
	PeriodS     rawValue `toml:"period_s"`
	PulseS      rawValue `toml:"pulse_s"`
	ThresholdA  rawValue `toml:"threshold_a"`
}

type rawSwitch struct {
	OnOhm rawValue `toml:"on_ohm"`
	DropV rawValue `toml:"drop_v"`
}

type rawLoad struct {
	Kind        rawValue `toml:"kind"`
	Ohm         rawValue `toml:"ohm"`
	ArmatureOhm rawValue `toml:"armature_ohm"`
	ArmatureH   rawValue `toml:"armature_h"`
	BackEMFVs   rawValue `toml:"back_emf_v_s"`
	InertiaKgM2 rawValue `toml:"inertia_kg_m2"`
	FrictionNm  rawValue `toml:"friction_n_m"`
	DampingNmS  rawValue `toml:"damping_n_m_s"`
	StartJ      rawValue `toml:"start_j"`
	StartA      rawValue `toml:"start_a"`
}

type rawCell struct {
	VocV        rawValue `toml:"voc_v"`
	IscA        rawValue `toml:"isc_a"`
	SeriesCells rawValue `toml:"series_cells"`
	RefWm2      rawValue `toml:"ref_w_m2"`
	Ideality    rawValue `toml:"ideality"`
	SaturationA rawValue `toml:"saturation_a"`
	SeriesOhm   rawValue `toml:"series_ohm"`
	ShuntOhm    rawValue `toml:"shunt_ohm"`
	TempK       rawValue `toml:"temp_k"`
}

type rawADC struct {
	Reference  rawValue `toml:"reference"`
	ReferenceV rawValue `toml:"reference_v"`
	Bits       rawValue `toml:"bits"`
}

type rawChannel struct {
	Node      rawValue `toml:"node"`
	ADC       rawValue `toml:"adc"`
	TopOhm    rawValue `toml:"top_ohm"`
	BottomOhm rawValue `toml:"bottom_ohm"`
	SeriesOhm rawValue `toml:"series_ohm"`
	Gain      rawValue `toml:"gain"`
	OffsetV   rawValue `toml:"offset_v"`
	ShuntOhm  rawValue `toml:"shunt_ohm"`
	AmpGain   rawValue `toml:"amp_gain"`
	PinF      rawValue `toml:"pin_f"`
}

type rawCalibration struct {
	ResistorOhm rawValue `toml:"resistor_ohm"`
	StartS      rawValue `toml:"start_s"`
	EndS        rawValue `toml:"end_s"`
}

type rawLight struct {
	Kind            rawValue `toml:"kind"`
	IrradianceWm2   rawValue `toml:"irradiance_w_m2"`
	Date            rawValue `toml:"date"`
	LatitudeDeg     rawValue `toml:"latitude_deg"`
	AzimuthDeg      rawValue `toml:"window_azimuth_deg"`
	TiltDeg         rawValue `toml:"window_tilt_deg"`
	DiffuseFraction rawValue `toml:"diffuse_fraction"`
	CloudSeed       rawValue `toml:"cloud_seed"`
}
