package analyze

import (
	"math"
	"sort"

	"capcycle/analyze/analysis"
	"capcycle/analyze/stats"
)

// runningRatio: a pulse lasting more than this many times the R-C discharge its onset
// implies is bent by back-EMF, a motor that turned (our own threshold: a resistor's pulse
// lasts its R-C time to the release, ratio 1, up to 3 or so with commutation spikes at the
// onset or the reset; the turning motor of testdata/spice/motor-engine.cir, about 20).
const runningRatio = 6

// pulseMotion tells, for each full cycle, whether a motor load turned during the pulse.
// A motor that does not turn is its armature resistance (and inductance): the capacitor
// discharges as through a resistor towards V∞ (the cell keeps charging; the pulse's
// exponential fit gives V∞ when it lies below the reset, else 0), with the time constant
// tau0 = (V_fire − V∞) / (the rate at which the voltage leaves the onset), and reaches
// the release after tau0 ln((V_fire − V∞)/(V_reset − V∞)).
// A motor that turns builds back-EMF: the current, and the fall, slow down, and the
// pulse lasts several times longer (see runningPulses). Running maps each full cycle's
// fall (its swing index) to whether it ran. BackEMF is set when some pulses ran and others did not (a
// motor that stalls for a while), or when all ran: then the load is a motor.
type pulseMotion struct {
	running      map[int]bool
	nRun, nStall int
	stallS, runS []float64 // pulse lengths of each kind
	backEMF      bool
}

func classifyPulses(w *swings) pulseMotion {
	pm := pulseMotion{running: map[int]bool{}}
	var idx []int
	var ratio, logLen []float64
	for _, c := range w.full() {
		s, inf := w.at(c.Swing)
		vinf := 0.0 // where an R-C discharge heads: the cell keeps charging through it
		if inf.exp.ok && inf.exp.vinf < c.ResetV {
			vinf = math.Max(inf.exp.vinf, 0)
		}
		if !(s.OnsetRateVPerS > 0) || !(c.ResetV > vinf) || !(c.FireV > c.ResetV) || !(c.PulseS() > 0) {
			continue
		}
		tau0 := (c.FireV - vinf) / s.OnsetRateVPerS
		rc := tau0 * math.Log((c.FireV-vinf)/(c.ResetV-vinf))
		idx = append(idx, c.Swing)
		ratio = append(ratio, c.PulseS()/math.Max(rc, w.sum.SpacingS))
		logLen = append(logLen, math.Log(c.PulseS()))
	}
	run := runningPulses(ratio, logLen)
	for k, sw := range idx {
		pm.running[sw] = run[k]
		if run[k] {
			pm.nRun++
			pm.runS = append(pm.runS, math.Exp(logLen[k]))
		} else {
			pm.nStall++
			pm.stallS = append(pm.stallS, math.Exp(logLen[k]))
		}
	}
	pm.backEMF = pm.nRun > 0
	return pm
}

// runningPulses decides which pulses ran. The lengths first: when they form two groups
// at least a factor of 4 apart (a motor that stalls for a while), the longer ran if their
// median ratio (pulse over its onset's R-C time) passes runningRatio. One group ran, or
// not, as a whole, by its median ratio: the onset rate of a single pulse is only known
// to a sample spacing, the group's is steadier.
func runningPulses(ratio, logLen []float64) []bool {
	out := make([]bool, len(ratio))
	if len(ratio) == 0 {
		return out
	}
	sorted := append([]float64(nil), logLen...)
	sort.Float64s(sorted)
	cutAt, gap := math.Inf(1), 0.0
	for k := 1; k < len(sorted); k++ {
		if g := sorted[k] - sorted[k-1]; g > gap {
			gap = g
			if g >= math.Log(4) {
				cutAt = (sorted[k] + sorted[k-1]) / 2
			}
		}
	}
	var long []float64
	for k := range ratio {
		if logLen[k] > cutAt || math.IsInf(cutAt, 1) {
			long = append(long, ratio[k])
		}
	}
	if stats.Median(long) <= runningRatio {
		return out
	}
	for k := range out {
		out[k] = logLen[k] > cutAt || math.IsInf(cutAt, 1)
	}
	return out
}

// skip returns the pulses the load's exponential fit leaves out: with a motor that
// stalled at times, the ones that ran (the stalled ones are plain R-C discharges through
// the armature resistance, which the fit then measures); nil otherwise.
func (pm *pulseMotion) skip() map[int]bool {
	if pm.nRun == 0 || pm.nStall == 0 {
		return nil
	}
	out := map[int]bool{}
	for k, run := range pm.running {
		if run {
			out[k] = true
		}
	}
	return out
}

// apply marks each cycle running or stalled and puts the counts into the load's fit,
// when the pulses show back-EMF. With stalled pulses and the capacitance, the load's
// resistance is the armature's.
func (pm *pulseMotion) apply(cs []analysis.Cycle, w *swings, lf *analysis.LoadFit) {
	if !pm.backEMF {
		return
	}
	for k := range cs {
		if k >= len(w.sum.Cycles) {
			break
		}
		if run, ok := pm.running[w.sum.Cycles[k].Swing]; ok && !w.sum.Cycles[k].Chatter {
			cs[k].Motion = analysis.MotionStalled
			if run {
				cs[k].Motion = analysis.MotionRunning
			}
		}
	}
	lf.BackEMF = ptr1(true)
	lf.RunningPulses, lf.StalledPulses = pm.nRun, pm.nStall
	if pm.nStall > 0 && lf.Ohm != nil {
		a := *lf.Ohm
		lf.ArmatureOhm = &a
	}
	lf.RunningPulseS = spread(pm.runS, analysis.OriginMeasured)
	lf.StalledPulseS = spread(pm.stallS, analysis.OriginMeasured)
}

func ptr1(b bool) *bool { return &b }
