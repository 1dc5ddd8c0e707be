package profile

import (
	"fmt"
	"math"

	"capcycle/analyze/units"
)

// Derived holds figures that follow from a profile. A figure that cannot be worked out
// from what the profile gives is NaN; the doc of each field says what it needs.
type Derived struct {
	Channels []ChannelFigures // one per profile channel, in order

	// The probe on the storage capacitor (the vcap channel and any other divider on it).
	ProbeRatio   float64 // divider ratio of the vcap channel
	ProbeLoadOhm float64 // resistance the vcap divider puts across the capacitor, Ω (+Inf for none)
	ProbeAtV     float64 // voltage at which ProbeLoadA is given: Trigger.OnV, or Storage.RatedV without one
	ProbeLoadA   float64 // current the vcap divider draws at ProbeAtV, A
	ProbeTauS    float64 // CapF·ProbeLoadOhm: how fast the probe alone would drain the capacitor, s

	// Energy.
	CapMinF, CapMaxF float64 // capacitance range allowed by the tolerance letter, F
	StoredAtOnJ      float64 // ½·C·Von², J; needs OnV
	EnergyPerPulseJ  float64 // ½·C·(Von²−Voff²), J; needs OnV and OffV
	EnergyMinJ       float64 // EnergyPerPulseJ at CapMinF
	EnergyMaxJ       float64 // EnergyPerPulseJ at CapMaxF

	// Leakage.
	LeakLimitA    float64 // datasheet leakage limit of an aluminium electrolytic at rated voltage (see ElectrolyticLeakLimitA); NaN for supercapacitors
	LeakLimitRule string  // the rule LeakLimitA comes from, or why there is none

	// Trigger.
	HoldDrainA float64 // hold release: quiescent current plus any vhold divider current at the threshold, A
	HoldTimeS  float64 // hold release: HoldF·HysteresisV/HoldDrainA, the time the trigger stays on, s

	// Charging at the cell's rated short-circuit current (no losses): lower bounds.
	FirstChargeMinS float64 // CapF·OnV/IscA: from 0 V to the first fire, s; needs OnV
	RechargeMinS    float64 // CapF·(OnV−OffV)/IscA: from release to the next fire, s; needs OnV and OffV
	DrainAtOnA      float64 // steady drain at OnV besides the load: probe + quiescent + leakage (measured, scaled to OnV), A

	// The light of a [light] table of kind "constant" (a windowsill day needs the
	// circuit model's sun: run the simulation). NaN without one.
	LightWm2   float64 // the irradiance, W/m²
	LightCellA float64 // what the cell gives at on_v in that light, at most (see below), A; needs OnV
	LightVocV  float64 // the cell's open-circuit voltage in that light, at most (see below), V

	Warnings []string // things in the profile that deserve a second look
}

// ChannelFigures are the derived figures of one ADC channel.
type ChannelFigures struct {
	Node       Node
	ADC        int
	Ratio      float64 // divider ratio
	LoadOhm    float64 // resistance the divider puts across its node, Ω (+Inf for none)
	SourceOhm  float64 // Thevenin resistance the ADC pin sees (top ∥ bottom + series), Ω
	FullScaleV float64 // node voltage at the top of the ADC range, V
	LSBV       float64 // node voltage per ADC count, V
	ExpectedV  float64 // highest voltage expected at the node (rated voltage, cell Voc, ...), V
	LoadA      float64 // divider current at ExpectedV, A

	// A NodeIload channel reads a current: FullScaleV and LSBV are then at the ADC pin
	// (the amplifier output), ExpectedV and LoadA are NaN, and these give the current.
	// All three are NaN for a voltage channel.
	FullScaleA float64 // load current at the top of the ADC range, (Gain·reference + OffsetV)/(ShuntOhm·AmpGain), A
	LSBA       float64 // load current per ADC count, A
	ExpectedA  float64 // highest load current expected: (V − switch drop)/(load + switch on + shunt resistance) at on_v (else rated_v), A; the motor's stall current

	// With a pin capacitor (PinF): the time constant SourceOhm·PinF with which the pin
	// follows the node, s, and the least pin capacitance that keeps the charge the
	// converter's sampling capacitor takes from the pin below half a count,
	// adcSampleF·2^(bits+1), F. PinTauS is 0 without a pin capacitor.
	PinTauS float64
	PinMinF float64
}

// adcSourceOhmMax is the source impedance the ATmega328P-class ADC is designed for
// ("optimized for an output impedance of approximately 10 kΩ or less"; from memory of the
// ATmega328P datasheet, ADC section). Above it, a capacitor at the pin is needed.
const adcSourceOhmMax = 10e3

// adcSampleF is the converter's sample-and-hold capacitance, 14 pF on the ATmega328P
// (from memory of its datasheet's analog input circuitry figure). A pin capacitor shares
// its charge with it at every conversion; to move the pin by less than half a count it
// must be at least adcSampleF·2^(bits+1) (the charge-sharing rule; common practice, no
// source).
const adcSampleF = 14e-12

// boltzmannOverQ is k/q, the thermal voltage per kelvin, V/K (CODATA 2018, exact:
// 1.380649e-23 J/K over 1.602176634e-19 C; testdata/physical_constants_codata2018.csv).
const boltzmannOverQ = 1.380649e-23 / 1.602176634e-19

// Derive computes the derived figures of p. p must come from Load or Parse.
func Derive(p *Profile) Derived {
	nan := math.NaN()
	d := Derived{
		StoredAtOnJ: nan, EnergyPerPulseJ: nan, EnergyMinJ: nan, EnergyMaxJ: nan,
		HoldDrainA: nan, HoldTimeS: nan, FirstChargeMinS: nan, RechargeMinS: nan, DrainAtOnA: nan,
		LightWm2: nan, LightCellA: nan, LightVocV: nan,
	}
	s, t := p.Storage, p.Trigger
	warn := func(format string, a ...any) { d.Warnings = append(d.Warnings, fmt.Sprintf(format, a...)) }

	for _, ch := range p.Channels {
		d.Channels = append(d.Channels, channelFigures(p, ch))
	}
	d.ProbeLoadOhm, d.ProbeRatio = math.Inf(1), 1
	for _, ch := range p.Channels {
		if ch.Node == NodeVcap {
			d.ProbeRatio, d.ProbeLoadOhm = ch.Ratio(), ch.LoadOhm()
		}
	}
	d.ProbeAtV = t.OnV
	if d.ProbeAtV == 0 {
		d.ProbeAtV = s.RatedV
	}
	d.ProbeLoadA = d.ProbeAtV / d.ProbeLoadOhm
	d.ProbeTauS = s.CapF * d.ProbeLoadOhm

	d.CapMinF, d.CapMaxF = s.Tolerance.Range(s.CapF)
	pulse := func(c float64) float64 { return 0.5 * c * (t.OnV*t.OnV - t.OffV*t.OffV) }
	if t.OnV > 0 {
		d.StoredAtOnJ = 0.5 * s.CapF * t.OnV * t.OnV
		d.FirstChargeMinS = s.CapF * t.OnV / p.Cell.IscA
		if t.OffV > 0 {
			d.EnergyPerPulseJ, d.EnergyMinJ, d.EnergyMaxJ = pulse(s.CapF), pulse(d.CapMinF), pulse(d.CapMaxF)
			d.RechargeMinS = s.CapF * (t.OnV - t.OffV) / p.Cell.IscA
		}
	}

	if s.Kind == Electrolytic {
		d.LeakLimitA, d.LeakLimitRule = ElectrolyticLeakLimitA(s.CapF, s.RatedV)
	} else {
		d.LeakLimitA, d.LeakLimitRule = nan, "no datasheet rule for supercapacitors here: measure the leakage (leak_a)"
	}
	if s.LeakA > 0 && d.LeakLimitA > 0 && s.LeakA > d.LeakLimitA {
		warn("measured leakage %s is above the datasheet limit %s even though it was measured at %s, below the rated %s: the capacitor may be damaged or not yet re-formed",
			units.Format(s.LeakA, units.Ampere), units.Format(d.LeakLimitA, units.Ampere), units.Format(s.LeakV, units.Volt), units.Format(s.RatedV, units.Volt))
	}

	if t.Kind == Voltage && t.Release == ReleaseHold {
		d.HoldDrainA = t.QuiescentA
		for _, ch := range p.Channels {
			if ch.Node == NodeVhold {
				d.HoldDrainA += (t.OnV - t.DiodeV) / ch.LoadOhm()
			}
		}
		d.HoldTimeS = t.HoldF * t.HysteresisV / d.HoldDrainA
		if d.HoldDrainA > 1.5*t.QuiescentA {
			warn("the vhold divider draws more than half as much again as the supervisor: it shortens the hold time to %s",
				units.Format(d.HoldTimeS, units.Second))
		}
	}

	if t.OnV > 0 {
		drain := t.OnV/d.ProbeLoadOhm + t.QuiescentA
		if s.LeakA > 0 && s.LeakV > 0 {
			drain += s.LeakA * t.OnV / s.LeakV // leakage taken as resistive between the two voltages
		}
		d.DrainAtOnA = drain
		if p.Cell.VocV <= t.OnV {
			warn("the cell's open-circuit voltage %s is not above on_v %s: the circuit can never fire",
				units.Format(p.Cell.VocV, units.Volt), units.Format(t.OnV, units.Volt))
		}
		if t.QuiescentA > 0 && d.ProbeLoadA > t.QuiescentA {
			warn("the probe draws %s at %s, more than the trigger's quiescent current %s: it is a real load on the circuit (larger divider resistors draw less)",
				units.Format(d.ProbeLoadA, units.Ampere), units.Format(d.ProbeAtV, units.Volt), units.Format(t.QuiescentA, units.Ampere))
		}
	}
	if t.Kind != Voltage && p.Cell.VocV > s.RatedV {
		warn("the cell's open-circuit voltage %s is above the capacitor's rated %s and a %s trigger does not stop the charge at a voltage",
			units.Format(p.Cell.VocV, units.Volt), units.Format(s.RatedV, units.Volt), t.Kind)
	}
	d.channelWarnings(p, warn)
	d.light(p, warn)
	return d
}

// channelWarnings warns of each channel's risks: readings that clip (and a pin driven
// beyond its rails), a source impedance too high for the converter without a pin
// capacitor, and a pin capacitor that smooths the fire's drop.
func (d *Derived) channelWarnings(p *Profile, warn func(string, ...any)) {
	for i, f := range d.Channels {
		if f.ExpectedV > f.FullScaleV {
			warn("channel[%d] (%s): the node may reach %s but the ADC full scale is %s: readings clip, and the pin may go above the ADC reference (never let it exceed the reference or the supply, or go below 0 V)",
				i, f.Node, units.Format(f.ExpectedV, units.Volt), units.Format(f.FullScaleV, units.Volt))
		}
		if f.ExpectedA > f.FullScaleA {
			warn("channel[%d] (%s): the load may draw up to %s but the current channel's full scale is %s: readings clip, and the amplifier may drive the pin to its own supply (lower shunt_ohm or amp_gain; never let the pin exceed the reference or the supply, or go below 0 V)",
				i, f.Node, units.Format(f.ExpectedA, units.Ampere), units.Format(f.FullScaleA, units.Ampere))
		}
		switch {
		case f.SourceOhm > adcSourceOhmMax && p.Channels[i].PinF == 0:
			warn("channel[%d] (%s): the ADC pin sees %s, above the ~10 kΩ the converter is designed for; fit a capacitor of at least %s (e.g. 100 nF) from the pin to ground and declare it with pin_f",
				i, f.Node, units.Format(f.SourceOhm, units.Ohm), units.Format(f.PinMinF, units.Farad))
		case p.Channels[i].PinF > 0 && p.Channels[i].PinF < f.PinMinF:
			warn("channel[%d] (%s): pin_f %s is small against the converter's sampling capacitor (about %s): at least %s keeps the charge it takes below half a count",
				i, f.Node, units.Format(p.Channels[i].PinF, units.Farad), units.Format(adcSampleF, units.Farad), units.Format(f.PinMinF, units.Farad))
		}
		if pulse := pulseS(p, *d); f.PinTauS > 0 && pulse > 0 && f.PinTauS > 0.1*pulse {
			warn("channel[%d] (%s): the pin follows the node with τ = %s (source %s × pin_f %s), not fast against the %s pulse: the reading smooths the fire's drop",
				i, f.Node, units.Format(f.PinTauS, units.Second), units.Format(f.SourceOhm, units.Ohm), units.Format(p.Channels[i].PinF, units.Farad), units.Format(pulse, units.Second))
		}
	}
}

// pulseS is the length of a fire as far as the profile says it (a timer's or plateau's
// pulse_s, a hold trigger's hold time), or 0.
func pulseS(p *Profile, d Derived) float64 {
	switch {
	case p.Trigger.PulseS > 0:
		return p.Trigger.PulseS
	case d.HoldTimeS > 0:
		return d.HoldTimeS
	}
	return 0
}

// light works out what the cell gives in a constant light, and warns when a voltage
// trigger can then never fire. It uses the single-diode model of the whole panel without
// its series resistance (which only lowers the current): the photocurrent scales with
// the irradiance, Iph = IscA·G/RefWm2, and the cell gives
//
//	I(V) = Iph − I0·(exp(V/a) − 1) − V/ShuntOhm,   a = n·Ns·kT/q,
//
// with n the ideality (AssumedIdeality when not given), Ns the cells in series, and I0
// and the photocurrent at RefWm2 solved, as the circuit model solves them, through the
// rated points (0, IscA) and (VocV, 0) (or from saturation_a). LightCellA is I(on_v) and
// LightVocV the V of I(V) = 0: without a series resistance they are the circuit model's
// figures, with one they are upper bounds, so a warning that the circuit never fires is
// safe to believe.
func (d *Derived) light(p *Profile, warn func(string, ...any)) {
	if p.Light == nil || p.Light.Kind != Constant {
		return
	}
	g := p.Light.IrradianceWm2
	d.LightWm2 = g
	var atOn float64
	d.LightVocV, atOn, _ = CellInLight(p, g)
	if p.Trigger.OnV > 0 {
		d.LightCellA = atOn
	}
	if w := NeverFires(p, *d, g, fmt.Sprintf("at %g W/m² (the [light] table)", g)); w != "" {
		warn("%s", w)
	}
}

// CellInLight returns the cell's open-circuit voltage and its current at the trigger's
// on_v (NaN without one) at irradiance g, W/m², and its photocurrent there, as the light
// figures of Derive (see Derived.light for the model): without a series resistance the
// circuit model's own figures, with one upper bounds.
func CellInLight(p *Profile, g float64) (vocV, atOnA, photoA float64) {
	c := p.Cell
	n := c.Ideality
	if n == 0 {
		n = AssumedIdeality
	}
	a := n * float64(c.SeriesCells) * boltzmannOverQ * c.TempK
	// I0 and the photocurrent at RefWm2 through the rated points (0, Isc) and (Voc, 0)
	// of the full model, series resistance Rs included (as the circuit model does).
	gsh := 0.0
	if c.ShuntOhm > 0 {
		gsh = 1 / c.ShuntOhm
	}
	e1 := math.Expm1(c.IscA * c.SeriesOhm / a)
	i0, iphRef := c.SaturationA, 0.0
	if i0 > 0 {
		iphRef = c.IscA*(1+c.SeriesOhm*gsh) + i0*e1
	} else {
		e2 := math.Expm1(c.VocV / a)
		i0 = (c.IscA*(1+c.SeriesOhm*gsh) - c.VocV*gsh) / (e2 - e1)
		iphRef = c.VocV*gsh + i0*e2
	}
	iph := iphRef * math.Max(g, 0) / c.RefWm2
	cur := func(v float64) float64 {
		i := iph - i0*math.Expm1(v/a) - v*gsh
		if math.IsNaN(i) {
			return math.Inf(-1)
		}
		return i
	}
	// I(V) falls with V: bisect for I = 0 between 0 and the voltage without a shunt.
	lo, hi := 0.0, a*math.Log1p(iph/i0)
	for k := 0; k < 100 && hi-lo > 1e-9; k++ {
		if mid := (lo + hi) / 2; cur(mid) > 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	atOnA = math.NaN()
	if p.Trigger.OnV > 0 {
		atOnA = math.Max(0, cur(p.Trigger.OnV))
	}
	return lo, atOnA, iph
}

// NeverFires returns why a voltage trigger can never fire at irradiance g (W/m²), the
// light described by where ("at 4 W/m² (the [light] table)"): the cell gives no more at
// on_v than the drains there take (d.DrainAtOnA), or its open-circuit voltage is not
// above on_v. It returns "" when it may fire, for other triggers, and without on_v.
func NeverFires(p *Profile, d Derived, g float64, where string) string {
	t, c := p.Trigger, p.Cell
	if t.Kind != Voltage || t.OnV <= 0 || math.IsNaN(d.DrainAtOnA) {
		return ""
	}
	voc, atOn, iph := CellInLight(p, g)
	F := units.Format
	switch {
	case atOn <= d.DrainAtOnA:
		how := fmt.Sprintf(" (of %s of photocurrent", F(iph, units.Ampere))
		if c.ShuntOhm > 0 {
			how += fmt.Sprintf("; its shunt resistance alone takes %s", F(t.OnV/c.ShuntOhm, units.Ampere))
		}
		how += ")"
		return fmt.Sprintf("%s this never fires: the cell gives at most %s at on_v %s%s, the drains at on_v take %s (probe, quiescent current, leakage)",
			where, F(atOn, units.Ampere), F(t.OnV, units.Volt), how, F(d.DrainAtOnA, units.Ampere))
	case voc <= t.OnV:
		return fmt.Sprintf("%s this never fires: the cell's open-circuit voltage falls to about %s, not above on_v %s",
			where, F(voc, units.Volt), F(t.OnV, units.Volt))
	}
	return ""
}

func channelFigures(p *Profile, ch Channel) ChannelFigures {
	nan := math.NaN()
	f := ChannelFigures{Node: ch.Node, ADC: ch.ADC, Ratio: ch.Ratio(), LoadOhm: ch.LoadOhm(),
		FullScaleA: nan, LSBA: nan, ExpectedA: nan}
	f.SourceOhm = ch.SeriesOhm + ch.TopOhm
	if ch.BottomOhm > 0 {
		f.SourceOhm = ch.SeriesOhm + ch.TopOhm*ch.BottomOhm/(ch.TopOhm+ch.BottomOhm)
	}
	f.FullScaleV = ch.Gain*p.ADC.ReferenceV/f.Ratio + ch.OffsetV
	f.LSBV = ch.Gain * p.ADC.ReferenceV / math.Ldexp(1, p.ADC.Bits) / f.Ratio
	switch ch.Node {
	case NodeVcap, NodeVload:
		f.ExpectedV = p.Storage.RatedV
	case NodeVcell:
		f.ExpectedV = p.Cell.VocV
	case NodeVhold:
		f.ExpectedV = p.Storage.RatedV - p.Trigger.DiodeV
	case NodeIload:
		f.ExpectedV = nan
		f.FullScaleA = f.FullScaleV / ch.VoltsPerAmp()
		f.LSBA = f.LSBV / ch.VoltsPerAmp()
		f.ExpectedA = peakLoadA(p, ch.ShuntOhm)
	}
	f.LoadA = f.ExpectedV / f.LoadOhm
	f.PinMinF = adcSampleF * math.Ldexp(1, p.ADC.Bits+1)
	f.PinTauS = f.SourceOhm * ch.PinF
	return f
}

// peakLoadA is the highest current the load draws: at the trigger's on_v (or the rated
// voltage without one), less the switch's drop, through the load (a motor's armature at
// stall), the switch's on-resistance and the shunt. NaN without a load resistance.
func peakLoadA(p *Profile, shuntOhm float64) float64 {
	v := p.Trigger.OnV
	if v == 0 {
		v = p.Storage.RatedV
	}
	r := p.Load.Ohm
	if p.Load.Kind == Motor {
		r = p.Load.ArmatureOhm
	}
	r += p.Switch.OnOhm + shuntOhm
	if !(r > 0) {
		return math.NaN()
	}
	return math.Max(0, v-p.Switch.DropV) / r
}

// ElectrolyticLeakLimitA returns the datasheet DC leakage limit of an aluminium
// electrolytic capacitor of rated capacitance capF (F) and rated voltage ratedV (V), in
// amperes, and the rule used. The rule, with C in µF, V the rated voltage and I in µA,
// measured at rated voltage and 20 °C after 2 minutes, is (source: a general-purpose
// radial aluminium electrolytic series datasheet, quoted in
// testdata/al_electrolytic_leakage_spec.txt):
//
//	6.3 V to 100 V:   I = 0.01·C·V or 3 µA, whichever is greater
//	160 V to 450 V:   I = 0.06·C·V + 10 µA
//
// The low-voltage rule is also used below 6.3 V (an extrapolation, said in the rule
// text). Between 100 V and 160 V and above 450 V it returns NaN. The limit is for the
// rated voltage; the leakage at a lower working voltage is usually much smaller.
func ElectrolyticLeakLimitA(capF, ratedV float64) (float64, string) {
	cuF := capF * 1e6
	switch {
	case ratedV <= 100:
		rule := "0.01·C·V or 3 µA, whichever is greater (C in µF, rated V, after 2 min at 20 °C)"
		if ratedV < 6.3 {
			rule += "; the rule is stated for 6.3 V to 100 V and is extrapolated here"
		}
		return math.Max(0.01*cuF*ratedV, 3) * 1e-6, rule
	case ratedV >= 160 && ratedV <= 450:
		return (0.06*cuF*ratedV + 10) * 1e-6, "0.06·C·V + 10 µA (C in µF, rated V, after 2 min at 20 °C)"
	}
	return math.NaN(), fmt.Sprintf("no datasheet rule at hand for a rated voltage of %s", units.Format(ratedV, units.Volt))
}
