package model

import (
	"fmt"
	"math"
)

// State vector layout. The first nDyn components are the circuit's states and are under
// error control; the rest are running energy integrals used for the bookkeeping.
const (
	iV       = iota // storage node, V
	iVb             // slow branch, V
	iVh             // hold capacitor, V
	iI              // motor current, A
	iW              // motor speed, rad/s
	iEHarv          // ∫ V I_cell dt
	iELoad          // ∫ V I_load dt
	iELeak          // ∫ V I_leak dt
	iEProbe         // ∫ V I_probe dt
	iEQ             // ∫ S I_q dt
	iEDiode         // ∫ V_d I_d dt
	iEBranch        // ∫ (V - Vb) I_b dt
	nState
)

const nDyn = iEHarv

type vec [nState]float64

// mode is the discrete state: switch on, isolation diode conducting, motor held at rest by
// dry friction.
type mode struct{ on, conducting, stopped bool }

// aux carries quantities the event functions need besides the state.
type aux struct {
	inet  float64 // C dV/dt, the net current into the storage capacitor
	id    float64 // isolation diode current
	iload float64 // load current
}

// transition is a discrete change the event functions watch for.
type transition int

const (
	trFire transition = iota
	trRelease
	trDiodeOn
	trDiodeOff
	trMotorStop  // the motor's speed reaches zero under dry friction
	trMotorStart // the motor's torque overcomes dry friction
)

// Dormand and Prince (1980) RK5(4)7M coefficients, with the dense output of Hairer,
// Nørsett and Wanner, "Solving Ordinary Differential Equations I", 2nd ed., section II.6
// (the DOPRI5 code's CONTD5).
const (
	c2, c3, c4, c5 = 1.0 / 5, 3.0 / 10, 4.0 / 5, 8.0 / 9

	a21 = 1.0 / 5
	a31 = 3.0 / 40
	a32 = 9.0 / 40
	a41 = 44.0 / 45
	a42 = -56.0 / 15
	a43 = 32.0 / 9
	a51 = 19372.0 / 6561
	a52 = -25360.0 / 2187
	a53 = 64448.0 / 6561
	a54 = -212.0 / 729
	a61 = 9017.0 / 3168
	a62 = -355.0 / 33
	a63 = 46732.0 / 5247
	a64 = 49.0 / 176
	a65 = -5103.0 / 18656
	a71 = 35.0 / 384
	a73 = 500.0 / 1113
	a74 = 125.0 / 192
	a75 = -2187.0 / 6784
	a76 = 11.0 / 84

	e1 = 71.0 / 57600
	e3 = -71.0 / 16695
	e4 = 71.0 / 1920
	e5 = -17253.0 / 339200
	e6 = 22.0 / 525
	e7 = -1.0 / 40

	d1 = -12715105075.0 / 11282082432
	d3 = 87487479700.0 / 32700410799
	d4 = -10690763975.0 / 1880347072
	d5 = 701980252875.0 / 199316789632
	d6 = -1453857185.0 / 822651844
	d7 = 69997945.0 / 29380423
)

// engine integrates one circuit forward in time, one accepted step at a time.
type engine struct {
	c  Circuit
	ce cellEval
	lc *lightCache

	// derived constants
	gLeak, gProbe, gBranch float64
	hasBranch, hold, motor bool
	useL                   bool  // integrate the armature inductance
	active                 []int // indices under error control

	rtol    float64
	atol    vec
	maxStep float64
	endS    float64 // +Inf for an endless run

	t  float64
	y  vec
	f  vec // derivative at (t, y) in mode m
	ax aux
	m  mode
	h  float64

	// dense output of the last step, valid on [t0, t0+hd] (possibly cut short by an event at
	// validEnd).
	t0, hd   float64
	validEnd float64
	r        [5]vec

	stepMode mode // the mode the last step was taken in

	nextTimed float64 // next timer transition, +Inf if none
	timerK    int64

	events []Event
	cycles []Cycle
	cyc    cycleAcc
	start  vec
	start0 float64 // stored energy at the start

	steps, rejected, evals int
}

// cycleAcc accumulates the cycle in progress.
type cycleAcc struct {
	startS  float64
	e0      vec     // energy integrals at the start of the cycle
	stored0 float64 // stored energy at the start of the cycle
	fired   bool
	fireS   float64
	fireV   float64
}

func newEngine(c *Circuit, light Light, opt *Options) (*engine, error) {
	if err := c.Validate(); err != nil {
		return nil, err
	}
	if light == nil {
		return nil, fmt.Errorf("model: no light given")
	}
	var o Options
	if opt != nil {
		o = *opt
	}
	if err := o.validate(); err != nil {
		return nil, err
	}
	e := &engine{c: *c, lc: newLightCache(light)}
	e.ce = c.Cell.eval()
	if c.Storage.LeakOhm > 0 {
		e.gLeak = 1 / c.Storage.LeakOhm
	}
	if c.ProbeOhm > 0 {
		e.gProbe = 1 / c.ProbeOhm
	}
	if c.Storage.Branch2F > 0 {
		e.hasBranch = true
		e.gBranch = 1 / c.Storage.Branch2Ohm
	}
	e.hold = c.Trigger.Kind == TriggerHold
	e.motor = c.Load.Kind == LoadMotor && c.Trigger.Kind != TriggerNone
	if e.motor && c.Load.InductH > 0 {
		tauE := c.Load.InductH / (c.Load.Ohm + c.Switch.OnOhm)
		min := o.QuasiStaticS
		if min == 0 {
			min = DefaultQuasiStaticS
		}
		e.useL = min < 0 || tauE >= min
	}
	e.rtol = orDefault(o.RelTol, DefaultRelTol)
	atolV := orDefault(o.AbsTolV, DefaultAbsTolV)
	e.atol[iV], e.atol[iVb], e.atol[iVh] = atolV, atolV, atolV
	e.atol[iI] = atolV / c.Load.Ohm
	e.atol[iW] = atolV / math.Max(c.Load.KeVsPerRad, 1e-6)
	e.active = []int{iV}
	if e.hasBranch {
		e.active = append(e.active, iVb)
	}
	if e.hold {
		e.active = append(e.active, iVh)
	}
	if e.motor {
		if e.useL {
			e.active = append(e.active, iI)
		}
		e.active = append(e.active, iW)
	}
	e.maxStep = orDefault(o.MaxStepS, DefaultMaxStepS)
	e.endS = math.Inf(1)
	if o.DurationS > 0 {
		e.endS = o.DurationS
	}
	e.y[iV] = o.StartV
	e.y[iVb] = o.StartV
	if e.hold {
		e.y[iVh] = math.Max(0, o.StartV-c.Trigger.DiodeV)
	}
	e.m.stopped = e.motor && c.Load.FrictionNm > 0
	e.nextTimed = math.Inf(1)
	if c.Trigger.Kind == TriggerTimer {
		e.nextTimed = c.Trigger.PhaseS
	}
	e.start0 = c.Stored(e.state())
	e.cyc = cycleAcc{startS: 0, stored0: e.start0}
	e.validEnd = 0
	e.ax = e.eval(e.t, &e.y, e.m, &e.f)
	if err := e.settle(); err != nil {
		return nil, err
	}
	e.h = e.initialStep()
	return e, nil
}

// state returns the circuit state at the current time.
func (e *engine) state() State {
	return e.stateOf(&e.y, e.m)
}

func (e *engine) stateOf(y *vec, m mode) State {
	s := State{V: y[iV], On: m.on}
	if e.hasBranch {
		s.Branch2V = y[iVb]
	}
	if e.hold {
		s.HoldV = y[iVh]
		if m.conducting {
			s.HoldV = y[iV] - e.c.Trigger.DiodeV
		}
	}
	if e.motor {
		s.SpeedRadS = y[iW]
		s.MotorA = e.motorCurrent(y, m)
		s.LoadA = s.MotorA
	} else if m.on {
		s.LoadA = e.resistorCurrent(y[iV])
	}
	return s
}

// resistorCurrent is the current of a resistive load through the closed switch, from the
// storage node at v.
func (e *engine) resistorCurrent(v float64) float64 {
	if vd := v - e.c.Switch.DropV; vd > 0 {
		return vd / (e.c.Load.Ohm + e.c.Switch.OnOhm)
	}
	return 0
}

// quiescent returns the supervisor current at supply s.
func (e *engine) quiescent(s float64) float64 { return e.c.Supervisor.CurrentA(s) }

// motorCurrent returns the armature current: the state when the inductance is integrated,
// otherwise the quasi-static (V_sw - Ke ω)/(R + R_on), never negative (the switch blocks
// reverse current).
func (e *engine) motorCurrent(y *vec, m mode) float64 {
	if !m.on {
		return 0
	}
	l := &e.c.Load
	if e.useL {
		return math.Max(y[iI], 0)
	}
	i := (y[iV] - e.c.Switch.DropV - l.KeVsPerRad*y[iW]) / (l.Ohm + e.c.Switch.OnOhm)
	return math.Max(i, 0)
}

// eval computes dy = f(t, y) in mode m and returns the auxiliary quantities.
func (e *engine) eval(t float64, y *vec, m mode, dy *vec) aux {
	e.evals++
	c := &e.c
	v := y[iV]
	g := e.lc.at(t)
	icell := e.ce.current(v, g)
	ileak := v * e.gLeak
	iprobe := v * e.gProbe
	var ib float64
	dy[iVb] = 0
	if e.hasBranch {
		ib = (v - y[iVb]) * e.gBranch
		dy[iVb] = ib / c.Storage.Branch2F
	}

	var iload float64
	dy[iI], dy[iW] = 0, 0
	if e.motor {
		l := &c.Load
		w := y[iW]
		if m.on {
			if e.useL {
				i := y[iI]
				vsw := v - c.Switch.DropV - c.Switch.OnOhm*i
				di := (vsw - l.Ohm*i - l.KeVsPerRad*w) / l.InductH
				if i <= 0 && di < 0 {
					di = 0
				}
				dy[iI] = di
			}
			iload = e.motorCurrent(y, m)
		}
		if !m.stopped {
			// Dry friction opposes the turning; at rest it holds (mode stopped) until the
			// torque exceeds it (events trMotorStop and trMotorStart).
			dy[iW] = (l.KeVsPerRad*iload - l.ViscousNms*w - l.FrictionNm) / l.InertiaKgM2
		}
	} else if m.on {
		iload = e.resistorCurrent(v)
	}

	sum := icell - ileak - iprobe - ib - iload
	var s, id float64
	if e.hold {
		ch := c.Trigger.HoldF
		if m.conducting {
			s = v - c.Trigger.DiodeV
			iq := e.quiescent(s)
			dv := (sum - iq) / (c.Storage.CapF + ch)
			dy[iV], dy[iVh] = dv, dv
			id = ch*dv + iq
			dy[iEQ] = s * iq
		} else {
			s = y[iVh]
			iq := e.quiescent(s)
			dy[iV] = sum / c.Storage.CapF
			dy[iVh] = -iq / ch
			dy[iEQ] = s * iq
		}
	} else {
		s = v
		iq := e.quiescent(s)
		dy[iV] = (sum - iq) / c.Storage.CapF
		dy[iVh] = 0
		dy[iEQ] = s * iq
	}
	dy[iEHarv] = v * icell
	dy[iELoad] = v * iload
	dy[iELeak] = v * ileak
	dy[iEProbe] = v * iprobe
	dy[iEDiode] = c.Trigger.DiodeV * id
	dy[iEBranch] = (v - y[iVb]) * ib
	return aux{inet: c.Storage.CapF * dy[iV], id: id, iload: iload}
}

// watched lists the transitions the event functions watch for in mode m.
func (e *engine) watched(m mode, out *[3]transition) int {
	n := 0
	switch e.c.Trigger.Kind {
	case TriggerVoltage, TriggerHold, TriggerPlateau:
		if !m.on {
			out[n] = trFire
			n++
		} else if e.c.Trigger.Kind != TriggerPlateau || e.c.Trigger.OffV > 0 {
			out[n] = trRelease
			n++
		}
	}
	if e.hold {
		if m.conducting {
			out[n] = trDiodeOff
		} else {
			out[n] = trDiodeOn
		}
		n++
	}
	if e.motor && e.c.Load.FrictionNm > 0 {
		if m.stopped {
			if m.on {
				out[n] = trMotorStart
				n++
			}
		} else {
			out[n] = trMotorStop
			n++
		}
	}
	return n
}

// needsAux reports whether the event function of tr depends on derivatives.
func (e *engine) needsAux(tr transition) bool {
	return tr == trDiodeOff || tr == trMotorStart || (tr == trFire && e.c.Trigger.Kind == TriggerPlateau)
}

// gfun is the event function of tr: the transition happens when it becomes positive.
func (e *engine) gfun(tr transition, y *vec, m mode, ax aux) float64 {
	tg := &e.c.Trigger
	switch tr {
	case trFire:
		switch tg.Kind {
		case TriggerHold:
			return e.supply(y, m) - tg.OnV
		case TriggerPlateau:
			return math.Min(y[iV]-tg.ArmV, tg.PlateauA-ax.inet)
		}
		return y[iV] - tg.OnV
	case trRelease:
		if tg.Kind == TriggerHold {
			return tg.OffV - e.supply(y, m)
		}
		return tg.OffV - y[iV]
	case trDiodeOn:
		return y[iV] - tg.DiodeV - y[iVh]
	case trDiodeOff:
		return -ax.id
	case trMotorStop:
		return -y[iW]
	case trMotorStart:
		return e.c.Load.KeVsPerRad*ax.iload - e.c.Load.FrictionNm
	}
	panic("model: unknown transition")
}

// supply is the supervisor's supply voltage for the hold trigger.
func (e *engine) supply(y *vec, m mode) float64 {
	if m.conducting {
		return y[iV] - e.c.Trigger.DiodeV
	}
	return y[iVh]
}

// apply makes transition tr at the current time and records it.
func (e *engine) apply(tr transition) {
	switch tr {
	case trFire:
		e.m.on = true
		e.y[iI] = 0
		if tg := &e.c.Trigger; tg.Kind == TriggerPlateau && tg.OffV == 0 {
			e.nextTimed = e.t + tg.PulseS
		}
		e.cyc.fired, e.cyc.fireS, e.cyc.fireV = true, e.t, e.y[iV]
		e.events = append(e.events, Event{TS: e.t, Kind: EventFire, V: e.y[iV], HoldV: e.state().HoldV})
	case trRelease:
		e.m.on = false
		e.y[iI] = 0
		e.events = append(e.events, Event{TS: e.t, Kind: EventReset, V: e.y[iV], HoldV: e.state().HoldV})
		e.closeCycle()
	case trDiodeOn:
		e.m.conducting = true
		e.y[iVh] = e.y[iV] - e.c.Trigger.DiodeV
		e.events = append(e.events, Event{TS: e.t, Kind: EventDiodeOn, V: e.y[iV], HoldV: e.y[iVh]})
	case trDiodeOff:
		e.m.conducting = false
		e.y[iVh] = e.y[iV] - e.c.Trigger.DiodeV
		e.events = append(e.events, Event{TS: e.t, Kind: EventDiodeOff, V: e.y[iV], HoldV: e.y[iVh]})
	case trMotorStop:
		e.m.stopped = true
		e.y[iW] = 0
	case trMotorStart:
		e.m.stopped = false
	}
	e.ax = e.eval(e.t, &e.y, e.m, &e.f)
}

// energyNow returns the energy bookkeeping from the integrals in y since e0.
func (e *engine) energySince(e0 *vec, stored0 float64) Energy {
	y := &e.y
	return Energy{
		HarvestedJ:  y[iEHarv] - e0[iEHarv],
		LoadJ:       y[iELoad] - e0[iELoad],
		LeakJ:       y[iELeak] - e0[iELeak],
		ProbeJ:      y[iEProbe] - e0[iEProbe],
		QuiescentJ:  y[iEQ] - e0[iEQ],
		DiodeJ:      y[iEDiode] - e0[iEDiode],
		BranchJ:     y[iEBranch] - e0[iEBranch],
		StoredDiffJ: e.c.Stored(e.state()) - stored0,
	}
}

func (e *engine) closeCycle() {
	cy := Cycle{
		Index:  len(e.cycles),
		StartS: e.cyc.startS,
		FireS:  math.NaN(), FireV: math.NaN(),
		ResetS: e.t, ResetV: e.y[iV],
		Energy: e.energySince(&e.cyc.e0, e.cyc.stored0),
	}
	if e.cyc.fired {
		cy.FireS, cy.FireV = e.cyc.fireS, e.cyc.fireV
	}
	e.cycles = append(e.cycles, cy)
	e.cyc = cycleAcc{startS: e.t, e0: e.y, stored0: e.c.Stored(e.state())}
}

// settle applies every transition whose event function is already positive at the
// current time (for example a start above the trigger), a bounded number of times.
func (e *engine) settle() error {
	for range 8 {
		var trs [3]transition
		n := e.watched(e.m, &trs)
		fired := false
		for _, tr := range trs[:n] {
			if e.gfun(tr, &e.y, e.m, e.ax) > 0 {
				e.apply(tr)
				fired = true
				break
			}
		}
		if !fired {
			return nil
		}
	}
	return fmt.Errorf("model: the switch chatters at t = %.9g s (V = %.6g V): no stable state", e.t, e.y[iV])
}

// norm returns the RMS of x scaled by the tolerances over the active components.
func (e *engine) norm(x, y0, y1 *vec) float64 {
	var s float64
	for _, i := range e.active {
		sc := e.atol[i] + e.rtol*math.Max(math.Abs(y0[i]), math.Abs(y1[i]))
		q := x[i] / sc
		s += q * q
	}
	return math.Sqrt(s / float64(len(e.active)))
}

// initialStep chooses a first step from the current derivative (Hairer, Nørsett and
// Wanner, section II.4, "starting step size").
func (e *engine) initialStep() float64 {
	d0 := e.norm(&e.y, &e.y, &e.y)
	d1 := e.norm(&e.f, &e.y, &e.y)
	h0 := 1e-6
	if d0 > 1e-5 && d1 > 1e-5 {
		h0 = 0.01 * d0 / d1
	}
	h0 = math.Min(h0, e.maxStep)
	var y1, f1, diff vec
	for i := range y1 {
		y1[i] = e.y[i] + h0*e.f[i]
	}
	e.eval(e.t+h0, &y1, e.m, &f1)
	for i := range diff {
		diff[i] = f1[i] - e.f[i]
	}
	d2 := e.norm(&diff, &e.y, &e.y) / h0
	var h1 float64
	if math.Max(d1, d2) <= 1e-15 {
		h1 = math.Max(1e-6, h0*1e-3)
	} else {
		h1 = math.Pow(0.01/math.Max(d1, d2), 1.0/5)
	}
	return math.Min(math.Min(100*h0, h1), e.maxStep)
}

// dense evaluates the continuous extension of the last step at t.
func (e *engine) dense(t float64, out *vec) {
	th := (t - e.t0) / e.hd
	th1 := 1 - th
	r := &e.r
	for i := range out {
		out[i] = r[0][i] + th*(r[1][i]+th1*(r[2][i]+th*(r[3][i]+th1*r[4][i])))
	}
}

// advance takes one accepted step (or stops at an event or a timer instant inside it).
// Afterwards the dense output is valid on [e.t0, e.validEnd] and the engine stands at
// e.validEnd = e.t. It returns false when the run has reached its end.
func (e *engine) advance() (bool, error) {
	if e.t >= e.endS {
		return false, nil
	}
	var ks dpStages
	y0 := e.y
	ks.k[0] = e.f
	for {
		h := math.Min(e.h, e.maxStep)
		limit := math.Min(e.endS, e.nextTimed)
		clipped := false
		if e.t+h >= limit {
			h = limit - e.t
			clipped = true
		}
		if h <= 1e-13*math.Max(1, math.Abs(e.t)) && !clipped {
			return false, fmt.Errorf("model: step size underflow at t = %.9g s (V = %.6g V)", e.t, e.y[iV])
		}
		t := e.t
		t1 := t + h
		if clipped {
			t1 = limit
		}
		y1, ax1, err := e.dpStep(t, h, t1, e.m, &y0, &ks)
		if err > 1 || math.IsNaN(err) {
			e.rejected++
			fac := 0.2
			if !math.IsNaN(err) {
				fac = math.Max(0.2, 0.9*math.Pow(err, -0.2))
			}
			e.h = h * math.Min(fac, 0.9)
			continue
		}
		e.steps++
		e.setDense(t, h, &y0, &y1, &ks)
		fac := 5.0
		if err > 0 {
			fac = math.Min(5, math.Max(0.2, 0.9*math.Pow(err, -0.2)))
		}
		e.h = h * fac
		return e.accept(t, t1, &y0, &y1, &ks.k[6], ax1, clipped)
	}
}

// dpStages are the seven stage derivatives of a Dormand-Prince step; k[0] is f(t, y0)
// and k[6] f(t1, y1) (first same as last).
type dpStages struct{ k [7]vec }

// dpStep takes one Dormand-Prince 5(4) step of size h from (t, y0) in mode m, ending at
// t1 (t + h, or a timed limit exactly): the new state, its aux values and the error
// estimate's norm (above 1: reject).
func (e *engine) dpStep(t, h, t1 float64, m mode, y0 *vec, ks *dpStages) (y1 vec, ax1 aux, errNorm float64) {
	k1, k2, k3, k4, k5, k6, k7 := &ks.k[0], &ks.k[1], &ks.k[2], &ks.k[3], &ks.k[4], &ks.k[5], &ks.k[6]
	var yt vec
	for i := range yt {
		yt[i] = y0[i] + h*a21*k1[i]
	}
	e.eval(t+c2*h, &yt, m, k2)
	for i := range yt {
		yt[i] = y0[i] + h*(a31*k1[i]+a32*k2[i])
	}
	e.eval(t+c3*h, &yt, m, k3)
	for i := range yt {
		yt[i] = y0[i] + h*(a41*k1[i]+a42*k2[i]+a43*k3[i])
	}
	e.eval(t+c4*h, &yt, m, k4)
	for i := range yt {
		yt[i] = y0[i] + h*(a51*k1[i]+a52*k2[i]+a53*k3[i]+a54*k4[i])
	}
	e.eval(t+c5*h, &yt, m, k5)
	for i := range yt {
		yt[i] = y0[i] + h*(a61*k1[i]+a62*k2[i]+a63*k3[i]+a64*k4[i]+a65*k5[i])
	}
	e.eval(t+h, &yt, m, k6)
	for i := range y1 {
		y1[i] = y0[i] + h*(a71*k1[i]+a73*k3[i]+a74*k4[i]+a75*k5[i]+a76*k6[i])
	}
	ax1 = e.eval(t1, &y1, m, k7)
	var errv vec
	for i := range errv {
		errv[i] = h * (e1*k1[i] + e3*k3[i] + e4*k4[i] + e5*k5[i] + e6*k6[i] + e7*k7[i])
	}
	return y1, ax1, e.norm(&errv, y0, &y1)
}

// setDense sets the dense output's coefficients for the accepted step from (t, y0) of
// size h, and the mode it was taken in.
func (e *engine) setDense(t, h float64, y0, y1 *vec, ks *dpStages) {
	k1, k3, k4, k5, k6, k7 := &ks.k[0], &ks.k[2], &ks.k[3], &ks.k[4], &ks.k[5], &ks.k[6]
	for i := range y1 {
		ydiff := y1[i] - y0[i]
		bspl := h*k1[i] - ydiff
		e.r[0][i] = y0[i]
		e.r[1][i] = ydiff
		e.r[2][i] = bspl
		e.r[3][i] = ydiff - h*k7[i] - bspl
		e.r[4][i] = h * (d1*k1[i] + d3*k3[i] + d4*k4[i] + d5*k5[i] + d6*k6[i] + d7*k7[i])
	}
	e.t0, e.hd = t, h
	e.stepMode = e.m
}

// accept moves the engine to the end of an accepted step, or to the first event inside
// it (which it applies), and makes a timed transition that ends the step.
func (e *engine) accept(t, t1 float64, y0, y1, k7 *vec, ax1 aux, clipped bool) (bool, error) {
	if tr, te, ok := e.locate(t, t1, y0, y1, e.ax, ax1); ok {
		e.t = te
		e.dense(te, &e.y)
		e.validEnd = te
		e.ax = e.eval(te, &e.y, e.m, &e.f)
		e.apply(tr)
		if err := e.settle(); err != nil {
			return false, err
		}
		e.h = e.initialStep()
		return true, nil
	}
	e.t, e.y, e.f, e.ax = t1, *y1, *k7, ax1
	e.validEnd = t1
	if clipped && t1 == e.nextTimed {
		e.timerTransition()
		if err := e.settle(); err != nil {
			return false, err
		}
		e.h = e.initialStep()
	}
	return true, nil
}

// timerTransition switches a timer trigger at e.nextTimed and schedules the next one.
func (e *engine) timerTransition() {
	tg := &e.c.Trigger
	if tg.Kind == TriggerPlateau {
		e.nextTimed = math.Inf(1)
		e.apply(trRelease)
		return
	}
	if !e.m.on {
		e.apply(trFire)
		e.nextTimed = e.t + tg.PulseS
		return
	}
	e.apply(trRelease)
	e.timerK++
	e.nextTimed = tg.PhaseS + float64(e.timerK)*tg.PeriodS
	if e.nextTimed <= e.t {
		e.nextTimed = e.t + tg.PeriodS - tg.PulseS
	}
}

// locate finds the earliest event inside the step [ta, tb] from the sign of the event
// functions at both ends, refined on the dense output by the Illinois variant of regula
// falsi. It returns the instant just past the crossing (where g > 0).
func (e *engine) locate(ta, tb float64, ya, yb *vec, axa, axb aux) (transition, float64, bool) {
	var trs [3]transition
	n := e.watched(e.m, &trs)
	best := math.Inf(1)
	var bestTr transition
	found := false
	for _, tr := range trs[:n] {
		ga := e.gfun(tr, ya, e.m, axa)
		gb := e.gfun(tr, yb, e.m, axb)
		if !(ga <= 0 && gb > 0) {
			continue
		}
		te := e.root(tr, ta, tb, ga, gb)
		if te < best {
			best, bestTr, found = te, tr, true
		}
	}
	return bestTr, best, found
}

// eventTolS is the width to which an event instant is bracketed, seconds.
const eventTolS = 1e-9

func (e *engine) root(tr transition, a, b, ga, gb float64) float64 {
	var y, dy vec
	g := func(t float64) float64 {
		e.dense(t, &y)
		var ax aux
		if e.needsAux(tr) {
			ax = e.eval(t, &y, e.m, &dy)
		}
		return e.gfun(tr, &y, e.m, ax)
	}
	side := 0
	for range 100 {
		if b-a <= eventTolS {
			break
		}
		t := (a*gb - b*ga) / (gb - ga)
		if !(t > a && t < b) {
			t = 0.5 * (a + b)
		}
		// Keep the bracket shrinking from both sides near the end.
		if b-a < 64*eventTolS {
			t = 0.5 * (a + b)
		}
		gt := g(t)
		if gt > 0 {
			b, gb = t, gt
			if side == 1 {
				ga /= 2
			}
			side = 1
		} else {
			a, ga = t, gt
			if side == -1 {
				gb /= 2
			}
			side = -1
		}
	}
	return b
}
