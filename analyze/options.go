package analyze

import "capcycle/analyze/analysis"

// Options are what the analysis knows besides the capture: values from the bench profile,
// overridden by command-line flags (the command line does that merge; this package takes
// plain numbers). The zero value means "not known" throughout; nil Options are allowed.
type Options struct {
	// Path is the capture's path, recorded in Result.Source. Default "".
	Path string
	// Profile is the profile's name, recorded in Result.Source. Default "".
	Profile string

	// CapF is the storage capacitance in farads; 0 = not known, and then only time
	// constants and currents over C (in V/s) are reported. CapOrigin says where it came
	// from ("declared" for the profile, "flag" for the command line); default "declared".
	CapF      float64
	CapOrigin analysis.Origin
	// CapTol is the capacitance's tolerance code (IEC 60062 letter), for the report.
	CapTol string
	// ProbeOhm is the resistance the probe divider puts across the capacitor; its share
	// of the leak is subtracted and reported apart. 0 = not known (nothing subtracted).
	ProbeOhm float64

	// Declared figures of the circuit, kept in Result.Declared for the parameter table.
	// 0 = not declared.
	OnV, OffV  float64
	LoadOhm    float64
	QuiescentA float64
	VocV, IscA float64

	// CellSeries is the number of cells in series (default 1) and CellTempK the cell's
	// temperature (default 298.15 K), for the single-diode fit.
	CellSeries int
	CellTempK  float64

	// FullScaleV is the ADC's full scale referred to the storage node; samples there are
	// saturated. 0 = not known (no saturation check).
	FullScaleV float64

	// CalResistorOhm, CalStartS and CalEndS describe a calibration stretch: a known
	// resistor was connected across the capacitor (in the dark) between the two times,
	// which measures the capacitance. All three are needed.
	CalResistorOhm     float64
	CalStartS, CalEndS float64

	// Detector overrides (see detect.Config); 0 = estimate from the data. StepV, the ADC
	// step at the storage node, is otherwise taken from the capture's "channel" metadata
	// line (reference / 2^bits / divider * scale * gain) when it has one, else estimated.
	StepV     float64
	NoiseV    float64
	MinSwingV float64
	GapS      float64

	// BatchRows is the number of rows read per batch. Default 65536.
	BatchRows int
	// Progress, when set, is called after each batch with the rows and bytes read so far.
	Progress func(rows int, bytes int64)
	// Post, when set, is called with the finished Result before Run returns: the hook
	// for later stages (findings, prediction) that fill Result.Findings and
	// Result.Prediction. An error from it is returned by Run.
	Post func(*analysis.Result) error
}

func (o *Options) capKnown() bool { return o.CapF > 0 }
