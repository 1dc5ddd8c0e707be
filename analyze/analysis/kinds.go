package analysis

// The enumerations of the analysis JSON. Each is a string type whose values are written
// to JSON exactly as the constants below say; a consumer that reads the JSON into plain
// strings sees the same words. Compare with the constants, never with literals.

// CycleKind tells a full cycle from chatter.
type CycleKind string

const (
	// CycleFull is a fire that swings the node by a useful amount.
	CycleFull CycleKind = "full"
	// CycleChatter is a fire with a tiny swing: the trigger flickers at its threshold.
	CycleChatter CycleKind = "chatter"
)

// SegmentKind names a stretch of the capture (see detect's segment kinds, which use the
// same words).
type SegmentKind string

const (
	SegmentCharging  SegmentKind = "charging"
	SegmentFiring    SegmentKind = "firing"
	SegmentDarkDecay SegmentKind = "dark-decay"
	SegmentPlateau   SegmentKind = "plateau"
	SegmentSaturated SegmentKind = "saturated"
	SegmentGap       SegmentKind = "gap"
)

// TriggerKind is the kind of trigger the fires point to.
type TriggerKind string

const (
	TriggerVoltage TriggerKind = "voltage" // fires at a voltage threshold
	TriggerTimer   TriggerKind = "timer"   // fires at fixed intervals
	TriggerPlateau TriggerKind = "plateau" // fires when the charging current falls off
	TriggerUnknown TriggerKind = "unknown" // the capture cannot tell
)

// KindCheck says whether the cycles agree with the declared trigger kind.
type KindCheck string

const (
	KindAgree      KindCheck = "agree"          // the cycles look as the declared kind makes them
	KindContradict KindCheck = "contradict"     // they do not (a finding says how)
	KindTooFew     KindCheck = "too-few-cycles" // fewer than 3 full cycles: no check
)

// Motion says whether a motor load turned during a pulse.
type Motion string

const (
	MotionRunning Motion = "running" // bent by back-EMF: the motor turned
	MotionStalled Motion = "stalled" // a plain R-C discharge through the armature
)

// Origin says where a value comes from.
type Origin string

const (
	OriginFitted   Origin = "fitted"   // a fit's parameter
	OriginMeasured Origin = "measured" // read from the samples (a mean, a median)
	OriginDeclared Origin = "declared" // the bench profile
	OriginFlag     Origin = "flag"     // the command line
)

// LeakMethod says which stretch of the capture the leak was fitted on.
type LeakMethod string

const (
	LeakDarkDecay LeakMethod = "dark-decay" // a slow fall with no light
	LeakPlateau   LeakMethod = "plateau"    // the approach to a plateau below the trigger
	LeakNone      LeakMethod = ""           // not fitted
)

// CapMethod says how a measured capacitance was found.
type CapMethod string

const (
	CapDeclared       CapMethod = ""                     // not measured: the declared value
	CapCalibrationRes CapMethod = "calibration-resistor" // a decay through a known resistor
	CapCurrentChannel CapMethod = "current-channel"      // the load's charge over the voltage it cost
)

// StepOrigin says where the ADC step at the storage node comes from.
type StepOrigin string

const (
	StepNone      StepOrigin = ""          // no step shows
	StepMetadata  StepOrigin = "metadata"  // the capture's channel line
	StepDeclared  StepOrigin = "declared"  // given by the caller
	StepEstimated StepOrigin = "estimated" // from the samples
)

// Severity ranks a finding.
type Severity string

const (
	Info  Severity = "info"  // a figure worth knowing
	Warn  Severity = "warn"  // works, but something is off
	Fault Severity = "fault" // does not work as built
)

// UncertaintySource names a component of an uncertainty budget (the GUM's "sources of
// uncertainty", JCGM 100:2008, 3.3.2).
type UncertaintySource string

const (
	// SourceFit is the statistical part: the scatter of the samples about the fit, or of
	// the cycles about their mean (a Type A evaluation, JCGM 100:2008, 4.2).
	SourceFit UncertaintySource = "fit"
	// SourceCapacitance is the capacitance's own uncertainty: measured, its standard
	// error; declared, its tolerance band taken as a rectangular distribution (a Type B
	// evaluation, JCGM 100:2008, 4.3.7).
	SourceCapacitance UncertaintySource = "capacitance"
	// SourceADCStep is the ADC's resolution where a reading rests on one sample.
	SourceADCStep UncertaintySource = "adc step"
	// SourceTiming is the sample spacing: where between two samples an event fell.
	SourceTiming UncertaintySource = "timing"
	// SourceModel is the model's discrepancy: the fitted form is not the circuit's own.
	SourceModel UncertaintySource = "model"
)

// CountCycles counts the full cycles and the chatter among cs.
func CountCycles(cs []Cycle) (full, chatter int) {
	for _, c := range cs {
		switch c.Kind {
		case CycleFull:
			full++
		case CycleChatter:
			chatter++
		}
	}
	return full, chatter
}
