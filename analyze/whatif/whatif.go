package whatif

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"

	"capcycle/analyze/eseries"
	"capcycle/analyze/model"
	"capcycle/analyze/predict"
	"capcycle/analyze/units"
)

// Answer is the prediction for one circuit at one light.
type Answer struct {
	predict.Figures
	LightWm2 float64 // the irradiance the prediction ran at
	// EnergyPerDayJ is what the capacitor gives up to the load per day: energy per pulse ×
	// fires per hour × SunHours (0 when it never fires).
	EnergyPerDayJ float64
	SunHours      float64
}

// Evaluate predicts the steady cycle of c under irradiance g (W/m²); sunHours is the
// number of hours a day at that light, for the energy per day.
func Evaluate(c *model.Circuit, g, sunHours float64) (Answer, error) {
	f, err := predict.Steady(c, g, nil)
	if err != nil {
		return Answer{}, err
	}
	a := Answer{Figures: f, LightWm2: g, SunHours: sunHours}
	if f.Fires {
		a.EnergyPerDayJ = f.EnergyJ * f.FiresPerHour * sunHours
	}
	return a, nil
}

// Target is a figure to reach: "pulse", "period", "charge" (seconds) or "energy" (joules).
type Target struct {
	Figure string
	Value  float64
}

// String writes the target as ParseTarget reads it ("pulse=500 ms").
func (t Target) String() string {
	unit := units.Second
	if t.Figure == "energy" {
		unit = "J"
	}
	return t.Figure + "=" + units.Format(t.Value, unit)
}

// ParseTarget reads "pulse=0.5s", "period=30s", "charge=20s" or "energy=5mJ".
func ParseTarget(s string) (Target, error) {
	name, val, ok := strings.Cut(s, "=")
	if !ok {
		return Target{}, fmt.Errorf("whatif: target %q: want figure=value, e.g. pulse=0.5s", s)
	}
	name = strings.ToLower(strings.TrimSpace(name))
	unit := "s"
	switch name {
	case "pulse", "period", "charge":
	case "energy":
		unit = "J"
	default:
		return Target{}, fmt.Errorf("whatif: target %q: figure must be pulse, period, charge or energy", s)
	}
	v, err := units.ParsePositive(strings.TrimSpace(val), unit)
	if err != nil {
		return Target{}, fmt.Errorf("whatif: target %s: %w", s, err)
	}
	return Target{Figure: name, Value: v}, nil
}

func (t Target) of(f predict.Figures) float64 {
	if !f.Fires {
		return math.NaN()
	}
	switch t.Figure {
	case "pulse":
		return f.PulseS
	case "period":
		return f.PeriodS
	case "charge":
		return f.ChargeS
	}
	return f.EnergyJ
}

// DefaultPart is the part Search varies for a target when none is named: the hold
// capacitor sets the pulse of a hold trigger, the load the pulse otherwise, the storage
// capacitor the period, charge time and energy.
func DefaultPart(c *model.Circuit, t Target) string {
	switch {
	case t.Figure == "pulse" && c.Trigger.Kind == model.TriggerHold:
		return "hold"
	case t.Figure == "pulse" && c.Trigger.Kind == model.TriggerTimer:
		return "pulse"
	case t.Figure == "pulse":
		return "load"
	case t.Figure == "period" && c.Trigger.Kind == model.TriggerTimer:
		return "period"
	}
	return "cap"
}

// Proposal is one candidate value of the varied part with its prediction.
type Proposal struct {
	Label  string // "exact", "E6 below", "E6 above"
	Value  float64
	Answer Answer
}

// ErrUnreachable is returned (wrapped) when no value of the part within four decades of the
// present one reaches the target.
var ErrUnreachable = errors.New("whatif: target not reachable")

// ErrNeverFires is returned (wrapped) when the circuit fires for no value of the part
// the search tried: the target is out of reach because of the light or the drains, not
// because of the part.
var ErrNeverFires = errors.New("whatif: the circuit never fires")

// Search finds the value of part that makes the figure reach the target for c at
// irradiance g, by bisection on a logarithmic scale within four decades of the present
// value (the figure must change monotonically with the part there). It returns the exact
// value and the neighbouring standard values of the part's E-series, each predicted. It
// stops with ctx's error when ctx is done.
func Search(ctx context.Context, c *model.Circuit, g, sunHours float64, t Target, partName string) ([]Proposal, error) {
	p, err := LookupPart(partName)
	if err != nil {
		return nil, err
	}
	x0 := p.get(c)
	if !(x0 > 0) {
		return nil, fmt.Errorf("whatif: %s is %g in this circuit; set it first with --set", p.Name, x0)
	}
	eval := func(x float64) (float64, error) {
		if err := ctx.Err(); err != nil {
			return math.NaN(), err
		}
		cc := *c
		p.set(&cc, x)
		f, err := predict.Steady(&cc, g, nil)
		if err != nil {
			return math.NaN(), err
		}
		return t.of(f) - t.Value, nil
	}
	lo, hi, flo, err := bracket(ctx, eval, x0)
	switch {
	case errors.Is(err, ErrNeverFires):
		why := ""
		if f, err := predict.Steady(c, g, nil); err == nil && !math.IsNaN(f.EquilibriumV) {
			why = fmt.Sprintf(": it settles at %s, below the trigger; more light, less drain or a lower trigger first", units.Format(f.EquilibriumV, units.Volt))
		}
		return nil, fmt.Errorf("%w at %.3g W/m² with any %s from %s to %s%s", ErrNeverFires, g, p.Name,
			units.Format(x0/16384, p.Unit), units.Format(x0*16384, p.Unit), why)
	case errors.Is(err, ErrUnreachable):
		return nil, fmt.Errorf("%w by %s within ×1/16000…×16000 of %s", ErrUnreachable, p.Name, units.Format(x0, p.Unit))
	case err != nil:
		return nil, err
	}
	// Bisection on log(x); lo and hi may be in either order.
	for i := 0; i < 60 && math.Abs(hi-lo) > 1e-6; i++ {
		m := 0.5 * (lo + hi)
		fm, err := eval(math.Exp(m))
		if err != nil || math.IsNaN(fm) {
			return nil, fmt.Errorf("whatif: search on %s at %s: %v", p.Name, units.Format(math.Exp(m), p.Unit), err)
		}
		if fm*flo <= 0 {
			hi = m
		} else {
			lo, flo = m, fm
		}
	}
	return proposals(c, g, sunHours, p, math.Exp(0.5*(lo+hi)))
}

// bracket walks outwards from x0 by factors of two, first up, then down (four decades
// each way), until the sign of eval (figure − target, NaN where the circuit does not
// fire) changes between two neighbouring points; it returns them as logarithms, and eval
// at lo. ErrNeverFires when eval is NaN everywhere, ErrUnreachable when its sign never
// changes.
func bracket(ctx context.Context, eval func(float64) (float64, error), x0 float64) (lo, hi, flo float64, err error) {
	f0, err := eval(x0)
	if err != nil {
		return 0, 0, 0, err
	}
	fired := !math.IsNaN(f0)
	for _, dir := range []float64{+1, -1} {
		px, pf := math.Log(x0), f0
		for k := 1; k <= 14; k++ { // 2^14 ≈ 1.6e4: four decades
			x := math.Log(x0) + dir*float64(k)*math.Ln2
			fx, err := eval(math.Exp(x))
			if ctx.Err() != nil {
				return 0, 0, 0, ctx.Err()
			}
			if err != nil || math.IsNaN(fx) {
				continue
			}
			fired = true
			if !math.IsNaN(pf) && fx*pf <= 0 {
				return px, x, pf, nil
			}
			px, pf = x, fx
		}
	}
	if !fired {
		return 0, 0, 0, ErrNeverFires
	}
	return 0, 0, 0, ErrUnreachable
}

// proposals predicts the exact value of part p and its standard neighbours below and
// above (in the part's E-series, when it has one).
func proposals(c *model.Circuit, g, sunHours float64, p *Part, exact float64) ([]Proposal, error) {
	var out []Proposal
	add := func(label string, x float64) error {
		cc := *c
		p.set(&cc, x)
		a, err := Evaluate(&cc, g, sunHours)
		if err != nil {
			return err
		}
		out = append(out, Proposal{Label: label, Value: x, Answer: a})
		return nil
	}
	if err := add("exact", exact); err != nil {
		return nil, err
	}
	if p.Series == "" {
		return out, nil
	}
	s, err := eseries.Get(p.Series)
	if err != nil {
		return nil, err
	}
	below, above := s.Bracket(exact)
	if err := add(p.Series+" below", below); err != nil {
		return nil, err
	}
	if above != below {
		if err := add(p.Series+" above", above); err != nil {
			return nil, err
		}
	}
	return out, nil
}
