package analyze

import (
	"capcycle/analyze/analysis"
	"capcycle/analyze/profile"
	"capcycle/logger/capture"
)

// Options are what the analysis knows besides the capture. The zero value means "not
// known" throughout; nil Options are allowed.
type Options struct {
	// Path is the capture's path, recorded in Result.Source. Default "".
	Path string

	// Profile is the bench profile, when there is one: its name goes into Result.Source,
	// and its circuit is the nominal model that the measured cycles are predicted from
	// (Result.Prediction) and the findings judged against. nil: no prediction, and only
	// the findings that need no declared circuit.
	Profile *profile.Profile

	// Declared is the circuit as declared: Declare(Profile), with whatever the caller's
	// flags override. The capacitance (Declared.CapF) turns time constants into ohms and
	// currents over C into amperes; the probe's resistance is taken out of the leak; the
	// full scale marks saturated samples; a calibration stretch measures the capacitance.
	Declared analysis.Declared

	// Detector overrides (see detect.Config); 0 = estimate from the data. StepV, the ADC
	// step at the storage node, is otherwise taken from the capture's "channel" metadata
	// line (reference / 2^bits / divider * scale * gain) when it has one, else estimated.
	StepV     float64
	NoiseV    float64
	MinSwingV float64
	GapS      float64

	// Setup, when set, configures each capture reader before it reads (the column
	// mapping of a foreign CSV, say). File calls it for the reader of the whole file and
	// for the held-out check's reader of its first half. An error from it is returned.
	Setup func(*capture.Reader) error

	// BatchRows is the number of rows read per batch. Default 65536.
	BatchRows int
	// Progress, when set, is called after each batch with the rows and bytes read so far.
	Progress func(rows int, bytes int64)
}

func (o *Options) capKnown() bool { return o.Declared.CapKnown() }

// Declare returns the declared circuit of a bench profile: the figures the analysis
// uses and the parameter table shows. A nil profile declares nothing.
func Declare(p *profile.Profile) analysis.Declared {
	if p == nil {
		return analysis.Declared{}
	}
	d := analysis.Declared{
		CapF: p.Storage.CapF, CapTol: p.Storage.Tolerance.Code, CapOrigin: analysis.OriginDeclared,
		TriggerKind: analysis.TriggerKind(p.Trigger.Kind),
		OnV:         p.Trigger.OnV, OffV: p.Trigger.OffV, QuiescentA: p.Trigger.QuiescentA,
		LoadOhm: p.Load.Ohm,
		VocV:    p.Cell.VocV, IscA: p.Cell.IscA, CellSeries: p.Cell.SeriesCells, CellTempK: p.Cell.TempK,
	}
	if d.LoadOhm == 0 {
		d.LoadOhm = p.Load.ArmatureOhm
	}
	der := profile.Derive(p)
	if der.ProbeLoadOhm > 0 && der.ProbeLoadOhm < 1e300 {
		d.ProbeOhm = der.ProbeLoadOhm
	}
	for _, c := range der.Channels {
		if c.Node == profile.NodeVcap {
			d.FullScaleV = c.FullScaleV
		}
	}
	if c := p.Calibration; c != nil {
		d.Calibration = &analysis.Calibration{ResistorOhm: c.ResistorOhm, StartS: c.StartS, EndS: c.EndS}
	}
	return d
}
