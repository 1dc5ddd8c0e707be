package whatif

import (
	"context"
	"errors"
	"fmt"
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
	"capcycle/analyze/predict"
	"capcycle/analyze/units"
)

// Question is one what-if question: a circuit (declared, or fitted to a capture), the
// light to predict at, the changes to make and a target to reach.
type Question struct {
	Name    string         // the circuit's name, for the answer
	Circuit *model.Circuit // the circuit as it is
	Note    string         // a caveat to pass on (e.g. energies per farad)

	// Result is the analysis of a capture of this circuit (nil: none): its measured light
	// and, for a day-long capture, its hours of light are used when LightWm2 and
	// SunHours are not given.
	Result *analysis.Result
	// ProfileLight is the profile's light (nil: none): a constant level, or a windowsill
	// day whose mean over its daylight hours is used when nothing else gives the light.
	ProfileLight model.Light

	LightWm2 float64 // the irradiance, W/m²; 0: choose (see above)
	// LightFrom says where a given LightWm2 comes from, for the answer (default "given").
	LightFrom string
	SunHours  float64 // hours a day at that light; 0: choose, else 8

	Changes []Change // the changes to make (none: only the circuit as it is)
	Target  *Target  // a figure to reach (nil: no search)
	Vary    string   // the part the search varies ("": DefaultPart)
}

// Report is the answer to a Question, as "capcycle whatif --json" writes it.
type Report struct {
	Profile   string  `json:"profile"`
	Note      string  `json:"note,omitempty"`
	LightWm2  float64 `json:"light_wm2"`
	LightFrom string  `json:"light_from"`
	SunHours  float64 `json:"sun_hours"`
	// EnergyPerDayFrom says where the energies per day come from: "model" (energy per
	// pulse × fires per hour × sun hours at the one light), or "measured" (a day-long
	// analysis: the energy its fires delivered per day, and for the changed circuit and
	// the proposals that scaled by the model's ratio to the circuit as it is).
	EnergyPerDayFrom string     `json:"energy_per_day_from"`
	Base             Figures    `json:"base"`
	Changes          []string   `json:"changes,omitempty"`
	Changed          *Figures   `json:"changed,omitempty"`
	Target           string     `json:"target,omitempty"`
	Vary             string     `json:"vary,omitempty"`
	Proposals        []Proposed `json:"proposals,omitempty"`
}

// Figures are one circuit's predicted figures; null where they do not apply (a circuit
// that never fires has only its equilibrium).
type Figures struct {
	Fires         bool     `json:"fires"`
	PeriodS       *float64 `json:"period_s"`
	ChargeS       *float64 `json:"charge_s"`
	PulseS        *float64 `json:"pulse_s"`
	FireV         *float64 `json:"fire_v"`
	ResetV        *float64 `json:"reset_v"`
	EnergyJ       *float64 `json:"energy_j"`
	DutyCycle     *float64 `json:"duty_cycle"`
	FiresPerHour  *float64 `json:"fires_per_h"`
	EnergyPerDayJ *float64 `json:"energy_per_day_j"`
	EquilibriumV  *float64 `json:"equilibrium_v"`
}

// Proposed is one value the target search proposes, with its figures.
type Proposed struct {
	Label   string  `json:"label"`
	Value   float64 `json:"value"`
	Text    string  `json:"text"`
	Figures Figures `json:"figures"`
}

// ErrNoLight is returned when nothing gives a light to predict at.
var ErrNoLight = errors.New("whatif: no light to predict at: give the irradiance, an analysis, or a [light] table in the profile")

// ErrBadVary is returned (wrapped) when the search is to vary a part there is not.
var ErrBadVary = errors.New("whatif: no such part to vary")

// Ask answers q: the circuit's figures at the light, the changed circuit's, and the
// values of the varied part that reach the target. It stops when ctx is done.
func Ask(ctx context.Context, q *Question) (*Report, error) {
	g, hours, how := chooseLight(q)
	if g <= 0 {
		return nil, ErrNoLight
	}
	rep := &Report{Profile: q.Name, LightWm2: g, SunHours: hours, LightFrom: how, Note: q.Note}
	base, err := Evaluate(q.Circuit, g, hours)
	if err != nil {
		return nil, err
	}
	rep.Base = figuresOf(base)
	changed := q.Circuit
	if len(q.Changes) > 0 {
		var g2 float64
		changed, g2, err = Apply(q.Circuit, g, q.Changes)
		if err != nil {
			return nil, err
		}
		a, err := Evaluate(changed, g2, hours)
		if err != nil {
			return nil, err
		}
		f := figuresOf(a)
		rep.Changed = &f
		for _, ch := range q.Changes {
			rep.Changes = append(rep.Changes, ch.String())
		}
		g = g2
	}
	if q.Target != nil {
		if err := searchInto(ctx, rep, q, changed, g, hours); err != nil {
			return nil, err
		}
	}
	rep.EnergyPerDayFrom = "model"
	if day, ok := measuredDayJ(q.Result); ok {
		rep.scaleDay(day)
	}
	return rep, nil
}

// measuredDayJ is the energy the fires of a day-long analysis (20 h or more) delivered,
// per day; ok is false without one or without the energies (an unknown capacitance).
func measuredDayJ(r *analysis.Result) (float64, bool) {
	if r == nil || r.DurationS < 20*3600 {
		return 0, false
	}
	sum, n := 0.0, 0
	for _, c := range r.Cycles {
		if c.Kind == analysis.CycleFull && c.EnergyJ != nil {
			sum += *c.EnergyJ
			n++
		}
	}
	if n == 0 {
		return 0, false
	}
	return sum * 86400 / r.DurationS, true
}

// scaleDay puts the measured energy per day in the base column and scales the other
// columns' model figures by their ratio to the base's, so that every column agrees with
// what the capture measured (one light level cannot stand for a day's changing light).
func (r *Report) scaleDay(dayJ float64) {
	base := r.Base.EnergyPerDayJ
	if base == nil || !(*base > 0) {
		return
	}
	k := dayJ / *base
	scale := func(f *Figures) {
		if f != nil && f.EnergyPerDayJ != nil {
			v := *f.EnergyPerDayJ * k
			f.EnergyPerDayJ = &v
		}
	}
	scale(&r.Base)
	scale(r.Changed)
	for i := range r.Proposals {
		scale(&r.Proposals[i].Figures)
	}
	r.EnergyPerDayFrom = "measured"
}

func searchInto(ctx context.Context, rep *Report, q *Question, c *model.Circuit, g, hours float64) error {
	part := q.Vary
	if part == "" {
		part = DefaultPart(c, *q.Target)
	}
	pp, err := LookupPart(part)
	if err != nil {
		return fmt.Errorf("%w: %w", ErrBadVary, err)
	}
	props, err := Search(ctx, c, g, hours, *q.Target, pp.Name)
	if err != nil {
		return err
	}
	rep.Target = q.Target.String()
	rep.Vary = pp.Name
	for _, pr := range props {
		rep.Proposals = append(rep.Proposals, Proposed{Label: pr.Label, Value: pr.Value,
			Text: units.Format(pr.Value, pp.Unit), Figures: figuresOf(pr.Answer)})
	}
	return nil
}

// chooseLight chooses the irradiance and the sun hours: the question's, else what the
// analysis measured, else the profile's light (a constant level, or the mean over the
// daylight hours of its windowsill day); 8 sun hours when nothing says.
func chooseLight(q *Question) (g, hours float64, how string) {
	g, hours = q.LightWm2, q.SunHours
	how = q.LightFrom
	if how == "" {
		how = "given"
	}
	if g <= 0 && q.Result != nil {
		g, how = predict.MeasuredLight(q.Result, q.Circuit), "measured in the analysis"
		if hours <= 0 && q.Result.DurationS >= 20*3600 {
			hours = litHours(q.Result)
		}
	}
	if l := q.ProfileLight; l != nil && (g <= 0 || hours <= 0) {
		mean, lit := dayLight(l)
		if g <= 0 {
			g, how = mean, "the profile's light, mean over its daylight hours"
		}
		if hours <= 0 {
			hours = lit
		}
	}
	if hours <= 0 {
		hours = 8
	}
	return g, hours, how
}

// dayLight samples a light over its first 24 hours every minute: the mean irradiance over
// the minutes above 5 W/m², and how many hours those are.
func dayLight(l model.Light) (mean, hours float64) {
	var sum float64
	var n int
	for t := 0.0; t < 86400; t += 60 {
		if g := l.IrradianceWm2(t); g > 5 {
			sum += g
			n++
		}
	}
	if n == 0 {
		return 0, 0
	}
	return sum / float64(n), float64(n) / 60
}

// litHours is the share of a day-long capture with measurable light, in hours per day.
func litHours(res *analysis.Result) float64 {
	if len(res.Light) < 2 {
		return 0
	}
	var lit, all float64
	for i := 1; i < len(res.Light); i++ {
		dt := res.Light[i].TS - res.Light[i-1].TS
		all += dt
		if res.Light[i].Level > 0.05 {
			lit += dt
		}
	}
	if all <= 0 {
		return 0
	}
	return 24 * lit / all
}

func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func figuresOf(a Answer) Figures {
	f := Figures{Fires: a.Fires, EquilibriumV: finite(a.EquilibriumV)}
	if a.Fires {
		f.PeriodS, f.ChargeS, f.PulseS = finite(a.PeriodS), finite(a.ChargeS), finite(a.PulseS)
		f.FireV, f.ResetV, f.EnergyJ = finite(a.FireV), finite(a.ResetV), finite(a.EnergyJ)
		f.DutyCycle, f.FiresPerHour, f.EnergyPerDayJ = finite(a.DutyCycle), finite(a.FiresPerHour), finite(a.EnergyPerDayJ)
	}
	return f
}
