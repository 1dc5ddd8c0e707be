package predict

import (
	"errors"
	"fmt"
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
)

// ErrUnderdetermined is returned (wrapped) by FromResult when the analysis lacks a part the
// circuit cannot do without.
var ErrUnderdetermined = errors.New("predict: the analysis does not determine the circuit")

// defaultIdeality is the diode ideality per cell assumed when only Voc and Isc are known
// (between 1 for an ideal diode and 2; common practice, no source).
const defaultIdeality = 1.5

// FromResult builds the circuit an analysis measured, for predictions without a bench
// profile: a voltage trigger with a fixed release at the fitted on and off voltages (or a
// timer at the fitted period and pulse), the fitted load, leakage, probe and quiescent draw,
// and the fitted cell (or one made from the declared Voc and Isc).
//
// Without a known capacitance only time constants and currents over C are identifiable;
// the circuit then has C = 1 F and every resistance and current scaled to it, which
// predicts times and voltages correctly but not energies. normalised reports that case.
func FromResult(r *analysis.Result) (c *model.Circuit, normalised bool, err error) {
	capF := 0.0
	if r.Capacitance != nil && r.Capacitance.F.Value > 0 {
		capF = r.Capacitance.F.Value
	} else if r.Declared != nil && r.Declared.CapF != 0 && r.Declared.CapF > 0 {
		capF = r.Declared.CapF
	}
	if capF == 0 {
		capF, normalised = 1, true
	}
	c = &model.Circuit{Storage: model.Storage{CapF: capF}}
	ft := r.Fit.Trigger
	switch {
	case ft.Kind == "timer" && ft.PeriodS != nil && ft.PulseS != nil:
		c.Trigger = model.Trigger{Kind: model.TriggerTimer, PeriodS: ft.PeriodS.Value, PulseS: ft.PulseS.Value}
	case ft.OnV != nil && ft.OffV != nil && ft.OffV.Value < ft.OnV.Value:
		c.Trigger = model.Trigger{Kind: model.TriggerVoltage, OnV: ft.OnV.Value, OffV: ft.OffV.Value}
	case r.Declared != nil && r.Declared.OnV != 0 && r.Declared.OffV != 0 && r.Declared.OffV < r.Declared.OnV:
		c.Trigger = model.Trigger{Kind: model.TriggerVoltage, OnV: r.Declared.OnV, OffV: r.Declared.OffV}
	default:
		return nil, false, fmt.Errorf("%w: no trigger voltages (fitted or declared)", ErrUnderdetermined)
	}
	ohm := func(e *analysis.Estimate, tau *analysis.Estimate) float64 {
		if e != nil && e.Value > 0 && !normalised {
			return e.Value
		}
		if tau != nil && tau.Value > 0 && !math.IsInf(tau.Value, 0) {
			return tau.Value / capF
		}
		return 0
	}
	c.Load = model.Load{Ohm: ohm(r.Fit.Load.Ohm, r.Fit.Load.TauS)}
	if c.Load.Ohm == 0 && r.Declared != nil && r.Declared.LoadOhm != 0 && !normalised {
		c.Load.Ohm = r.Declared.LoadOhm
	}
	if c.Load.Ohm <= 0 {
		return nil, false, fmt.Errorf("%w: no load resistance or time constant", ErrUnderdetermined)
	}
	c.Storage.LeakOhm = ohm(r.Fit.Leak.Ohm, nil)
	if e := r.Fit.Leak.ProbeOhm; e != nil && e.Value > 0 && !normalised {
		c.ProbeOhm = e.Value
	} else if r.Declared != nil && r.Declared.ProbeOhm != 0 && !normalised {
		c.ProbeOhm = r.Declared.ProbeOhm
	}
	if c.Storage.LeakOhm == 0 && r.Fit.Leak.TauS != nil && r.Fit.Leak.TauS.Value > 0 {
		// The time constant of every linear drain together; the probe's share, if known,
		// is split off.
		total := r.Fit.Leak.TauS.Value / capF
		if c.ProbeOhm > 0 && c.ProbeOhm > total {
			c.Storage.LeakOhm = 1 / (1/total - 1/c.ProbeOhm)
		} else {
			c.Storage.LeakOhm = total
		}
	}
	if q := r.Fit.Leak.QuiescentA; q != nil && q.Value > 0 {
		c.Supervisor.QuiescentA = q.Value
	}
	cf := r.Fit.Cell
	switch {
	case cf.IscA != nil && cf.I0A != nil && cf.N != nil:
		c.Cell = model.Cell{IphA: cf.IscA.Value, I0A: cf.I0A.Value, N: cf.N.Value, Cells: 1}
		if cf.RsOhm != nil {
			c.Cell.RsOhm = cf.RsOhm.Value
		}
		if cf.RshOhm != nil {
			c.Cell.RshOhm = cf.RshOhm.Value
		}
	case r.Declared != nil && r.Declared.VocV != 0 && r.Declared.IscA != 0:
		c.Cell = CellFromRatings(r.Declared.VocV, r.Declared.IscA, 1, 0)
	default:
		return nil, false, fmt.Errorf("%w: no cell parameters (fitted, or declared Voc and Isc)", ErrUnderdetermined)
	}
	if err := c.Validate(); err != nil {
		return nil, false, fmt.Errorf("predict: circuit from the analysis: %w", err)
	}
	return c, normalised, nil
}

// CellFromRatings makes a single-diode cell string from its rated open-circuit voltage and
// short-circuit current at the reference irradiance (cells in series; tempK 0 means 25 °C),
// with an ideal series and shunt and the per-cell ideality 1.5 (common practice, no
// source): I0 = Isc/(exp(Voc/(n·Ns·Vt)) − 1). When cells is 1 for a panel of unknown make-up,
// the ideality is scaled so that n·Ns matches a silicon-like 0.55 V per cell.
func CellFromRatings(vocV, iscA float64, cells int, tempK float64) model.Cell {
	n := defaultIdeality
	if cells <= 1 {
		cells = 1
		n = defaultIdeality * math.Max(1, math.Round(vocV/0.55))
	}
	if tempK == 0 {
		tempK = model.DefaultTempK
	}
	vt := model.ThermalVoltage(tempK)
	i0 := iscA / math.Expm1(vocV/(n*float64(cells)*vt))
	return model.Cell{IphA: iscA, I0A: i0, N: n, Cells: cells, TempK: tempK}
}
