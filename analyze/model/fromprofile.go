package model

import (
	"fmt"
	"math"
	"time"

	"capcycle/analyze/profile"
)

// Assumptions FromProfile makes for what a bench profile leaves out.
const (
	// AssumedIdeality is the per-cell diode ideality when the profile gives none (common
	// practice, no source; the same figure package predict assumes).
	AssumedIdeality = 1.5
	// AssumedMinSupplyV is the supply below which a supervisor's quiescent current fades
	// (typical of micropower supervisors; from memory).
	AssumedMinSupplyV = 1.0
	// AssumedDiodeV is the hold diode's drop when the profile does not state it (a small
	// Schottky diode at microamps; common practice, no source).
	AssumedDiodeV = 0.3
	// AssumedArmFraction and AssumedArmMarginV: a plateau trigger without an on_v is armed
	// above this share of the cell's rated open-circuit voltage, or this far above its
	// release voltage when that is higher (our own choices; see PlateauArmV).
	AssumedArmFraction = profile.AssumedPlateauArmFraction
	AssumedArmMarginV  = profile.AssumedPlateauArmMarginV
)

// Clouds of a windowsill day with a cloud seed (our own numbers for a day of fair-weather
// cumulus): three-minute clouds every quarter hour or so, taking most of the direct sunlight.
const (
	profileCloudS     = 180
	profileCloudGapS  = 900
	profileCloudDepth = 0.8
)

// FromProfile builds the circuit and its light from a bench profile.
//
// The cell's single-diode parameters that the profile does not give are filled in: the
// ideality is AssumedIdeality per cell, a missing series or shunt resistance is ideal
// (zero, infinite), and the photocurrent and saturation current are solved from the rated
// Isc and Voc so that the model reproduces both exactly (or, with saturation_a given, from
// Isc alone). The storage leakage is leak_v/leak_a when measured, otherwise none; the
// probe is the divider on the vcap channel, and a current-sense shunt (an iload channel)
// adds to the switch's on-resistance. A voltage trigger with hold release becomes
// TriggerHold with the supervisor's threshold at on_v - diode_v on the hold capacitor and
// its release hysteresis_v below that. A motor whose back-EMF constant or inertia is not
// known is simulated as its armature resistance. ESR is not modelled.
//
// The light is nil when the profile has no [light] table. A windowsill day starts at
// 00:00 UTC of its date, which the model reads as local solar time (longitude 0).
func FromProfile(p *profile.Profile) (*Circuit, Light, error) {
	if p == nil {
		return nil, nil, fmt.Errorf("model: no profile")
	}
	cell, err := cellFromProfile(&p.Cell)
	if err != nil {
		return nil, nil, fmt.Errorf("model: profile %s: %w", p.Name, err)
	}
	c := &Circuit{
		Cell: cell,
		Storage: Storage{
			CapF:       p.Storage.CapF,
			Branch2F:   p.Storage.BranchF,
			Branch2Ohm: p.Storage.BranchOhm,
		},
		Supervisor: Supervisor{QuiescentA: p.Trigger.QuiescentA, MinSupplyV: AssumedMinSupplyV},
		Switch:     Switch{OnOhm: p.Switch.OnOhm, DropV: p.Switch.DropV},
	}
	if p.Storage.LeakA > 0 {
		lv := p.Storage.LeakV
		if lv == 0 {
			lv = p.Trigger.OnV
		}
		if lv > 0 {
			c.Storage.LeakOhm = lv / p.Storage.LeakA
		}
	}
	for _, ch := range p.Channels {
		switch ch.Node {
		case profile.NodeVcap:
			if r := ch.LoadOhm(); !math.IsInf(r, 0) && r > 0 {
				c.ProbeOhm = r
			}
		case profile.NodeIload:
			// The current-sense shunt is in the load's return: in series with the
			// switch, so it counts with its on-resistance.
			c.Switch.OnOhm += ch.ShuntOhm
		}
	}
	c.Trigger = triggerFromProfile(&p.Trigger, &p.Cell)
	c.Load = loadFromProfile(&p.Load)
	if err := c.Validate(); err != nil {
		return nil, nil, fmt.Errorf("model: profile %s: %w", p.Name, err)
	}
	light, err := lightFromProfile(p.Light)
	if err != nil {
		return nil, nil, fmt.Errorf("model: profile %s: %w", p.Name, err)
	}
	return c, light, nil
}

// cellFromProfile solves Iph and I0 from the ratings. The single-diode equation at the
// two rated points is linear in (Iph, I0):
//
//	short circuit (0, Isc):  Iph - I0 expm1(Isc Rs/a) = Isc (1 + Rs/Rsh)
//	open circuit (Voc, 0):   Iph - I0 expm1(Voc/a)    = Voc/Rsh
func cellFromProfile(pc *profile.Cell) (Cell, error) {
	c := Cell{
		N:      pc.Ideality,
		RsOhm:  pc.SeriesOhm,
		RshOhm: pc.ShuntOhm,
		Cells:  max(pc.SeriesCells, 1),
		TempK:  pc.TempK,
		RefWm2: pc.RefWm2,
	}
	if c.N == 0 {
		c.N = AssumedIdeality
	}
	e := c.eval()
	gsh := 0.0
	if c.RshOhm > 0 {
		gsh = 1 / c.RshOhm
	}
	isc, voc := pc.IscA, pc.VocV
	if !(isc > 0) || !(voc > 0) {
		return Cell{}, fmt.Errorf("cell needs a positive isc_a and voc_v, got %g A and %g V", isc, voc)
	}
	e1 := math.Expm1(isc * c.RsOhm / e.a)
	if pc.SaturationA > 0 {
		c.I0A = pc.SaturationA
		c.IphA = isc*(1+c.RsOhm*gsh) + c.I0A*e1
		return c, nil
	}
	e2 := math.Expm1(voc / e.a)
	i0 := (isc*(1+c.RsOhm*gsh) - voc*gsh) / (e2 - e1)
	if !(i0 > 0) || math.IsInf(i0, 0) {
		return Cell{}, fmt.Errorf("cell: no diode fits isc_a %g A and voc_v %g V with the given series and shunt resistance", isc, voc)
	}
	c.I0A = i0
	c.IphA = voc*gsh + i0*e2
	return c, nil
}

func triggerFromProfile(pt *profile.Trigger, pc *profile.Cell) Trigger {
	switch pt.Kind {
	case profile.Voltage:
		if pt.Release == profile.ReleaseHold {
			vd := pt.DiodeV
			if vd == 0 {
				vd = AssumedDiodeV
			}
			on := pt.OnV - vd
			return Trigger{Kind: TriggerHold, OnV: on, OffV: on - pt.HysteresisV, HoldF: pt.HoldF, DiodeV: vd}
		}
		return Trigger{Kind: TriggerVoltage, OnV: pt.OnV, OffV: pt.OffV}
	case profile.Timer:
		return Trigger{Kind: TriggerTimer, PeriodS: pt.PeriodS, PulseS: pt.PulseS}
	case profile.Plateau:
		t := Trigger{Kind: TriggerPlateau, PlateauA: pt.ThresholdA, ArmV: PlateauArmV(pt, pc.VocV), OffV: pt.OffV}
		if pt.OffV == 0 {
			t.PulseS = pt.PulseS
		}
		return t
	}
	return Trigger{}
}

// PlateauArmV is the storage voltage at or above which a plateau trigger may fire (it is
// armed): the profile's on_v when given (the profile requires it above off_v); otherwise
// the larger of AssumedArmFraction of the cell's rated Voc and off_v + AssumedArmMarginV,
// so that the trigger is always armed above its release.
func PlateauArmV(pt *profile.Trigger, vocV float64) float64 { return profile.PlateauArmV(pt, vocV) }

func loadFromProfile(pl *profile.LoadSpec) Load {
	if pl.Kind == profile.Motor {
		if pl.BackEMFVs > 0 && pl.InertiaKgM2 > 0 {
			fr := pl.FrictionNm
			if fr == 0 && pl.StartA > 0 {
				fr = pl.BackEMFVs * pl.StartA // the torque at the current where it starts
			}
			return Load{Kind: LoadMotor, Ohm: pl.ArmatureOhm, InductH: pl.ArmatureH, KeVsPerRad: pl.BackEMFVs,
				InertiaKgM2: pl.InertiaKgM2, ViscousNms: pl.DampingNmS, FrictionNm: fr}
		}
		return Load{Kind: LoadResistor, Ohm: pl.ArmatureOhm}
	}
	return Load{Kind: LoadResistor, Ohm: pl.Ohm}
}

func lightFromProfile(pl *profile.Light) (Light, error) {
	if pl == nil {
		return nil, nil
	}
	switch pl.Kind {
	case profile.Constant:
		return Constant(pl.IrradianceWm2), nil
	case profile.Windowsill:
		day, err := time.Parse(time.DateOnly, pl.Date)
		if err != nil {
			return nil, fmt.Errorf("light date %q: %w", pl.Date, err)
		}
		w := &WindowDay{
			Start: day, LatitudeDeg: pl.LatitudeDeg, AzimuthDeg: pl.AzimuthDeg, TiltDeg: pl.TiltDeg,
			DiffuseFraction: pl.DiffuseFraction,
		}
		if pl.CloudSeed != 0 {
			w.Seed = uint64(pl.CloudSeed)
			w.CloudS, w.CloudGapS, w.CloudDepth = profileCloudS, profileCloudGapS, profileCloudDepth
		}
		return w, nil
	}
	return nil, fmt.Errorf("light kind %q unknown", pl.Kind)
}
