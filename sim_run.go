package coilkick

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"strconv"

	"coilkick/circuit"
)

// Default integrator settings.
const (
	DefaultTolerance = 1e-8    // relative
	DefaultMaxSteps  = 2000000 // attempted steps
)

// Options tunes a simulation; zero fields take the scenario's solver
// settings, then the defaults.
type Options struct {
	Tolerance float64 // relative tolerance of the integrator
	MaxSteps  int
	NoTrace   bool // skip recording the time series (faster for sweeps)
	// WindingTemperature, HousingTemperature (K): starting temperatures of
	// the thermal model; 0 takes the model's (Model.Temperature, and the
	// ambient for the housing).
	WindingTemperature, HousingTemperature float64
	// Overrides for studies: a supply voltage (V), or a fixed winding
	// temperature (K) with the thermal model switched off; 0 keeps the
	// model's.
	SupplyVoltage, FixedTemperature float64
	// Energize, Deenergize, End (s) override the scenario's timing when End > 0.
	Energize, Deenergize, End float64
	// SampleTimes (s, ascending): the coil current is also recorded at
	// these instants from the integrator's dense output, into
	// Result.Samples.
	SampleTimes []float64
	// FollowRing keeps the switch node's ring after turn-off cycle by
	// cycle instead of retiring it to its energy once it can no longer
	// reach a threshold (sim_ring.go): slower, the same figures.
	FollowRing bool
	// FollowPeriods integrates every period of a chopped hold instead of
	// repeating its periodic steady state (sim_periodic.go): slower, the same
	// figures.
	FollowPeriods bool
	// BlockPlunger holds the plunger at its rest stop for the whole run
	// (a stuck valve, for the end-of-stroke signature study): its mode
	// stays "at rest" whatever the pull, so it never moves and does no work.
	BlockPlunger bool
	// ImposedVelocity (m/s, negative: closing), when not 0, moves the
	// plunger at this constant velocity from the rest gap from the energize
	// command on, whatever the forces (the mechanics are off; the magnetic
	// force's work is still booked): a test and study facility for the
	// electrical side of a moving plunger (the back-EMF). It sticks at the
	// stop it reaches.
	ImposedVelocity float64
}

// Trace is the recorded time series, one sample per accepted step and one
// on each side of every event. Units: s, A, V, m, m/s, N.
type Trace struct {
	Time          []float64
	Current       []float64
	CoilVoltage   []float64
	SwitchVoltage []float64
	Gap           []float64
	Velocity      []float64
	MagneticForce []float64 // pull toward the seat
	PassiveForce  []float64 // spring + load − damping, pushing the gap open
	// WindingTemperature (K): constant unless the scenario has a thermal model.
	WindingTemperature []float64
	// Thinned: the trace grew past MaxTraceRows and was thinned this many
	// times, each time to the rows of the lowest and highest current in each
	// run of four (the envelope stays; 0: every step is there).
	Thinned int
}

// MaxTraceRows bounds the trace kept in memory (about 80 MB): a long run
// keeps the envelope of its current, not every step. Figures and events
// are computed during the run and do not depend on it.
const MaxTraceRows = 1 << 20

// traceRows is MaxTraceRows (a variable so that a test can lower it).
var traceRows = MaxTraceRows

// columns returns the trace's columns other than time.
func (tr *Trace) columns() [8]*[]float64 {
	return [...]*[]float64{&tr.Current, &tr.CoilVoltage, &tr.SwitchVoltage, &tr.Gap, &tr.Velocity,
		&tr.MagneticForce, &tr.PassiveForce, &tr.WindingTemperature}
}

// thin halves the trace: of each run of four rows it keeps those of the
// lowest and the highest current, in time order.
func (tr *Trace) thin() {
	n := len(tr.Time)
	keep := make([]int, 0, n/2+2)
	for k := 0; k < n; k += 4 {
		end := min(k+4, n)
		lo, hi := k, k
		for j := k; j < end; j++ {
			if tr.Current[j] < tr.Current[lo] {
				lo = j
			}
			if tr.Current[j] > tr.Current[hi] {
				hi = j
			}
		}
		if lo > hi {
			lo, hi = hi, lo
		}
		keep = append(keep, lo)
		if hi != lo {
			keep = append(keep, hi)
		}
	}
	c8 := tr.columns()
	cols := append(c8[:], &tr.Time)
	for _, c := range cols {
		for i, j := range keep {
			(*c)[i] = (*c)[j]
		}
		*c = (*c)[:len(keep)]
	}
	tr.Thinned++
}

func (tr *Trace) add(t float64, o outputs) {
	if len(tr.Time) >= traceRows {
		tr.thin()
	}
	tr.Time = append(tr.Time, t)
	tr.Current = append(tr.Current, o.Current)
	tr.CoilVoltage = append(tr.CoilVoltage, o.CoilVoltage)
	tr.SwitchVoltage = append(tr.SwitchVoltage, o.SwitchVoltage)
	tr.Gap = append(tr.Gap, o.Gap)
	tr.Velocity = append(tr.Velocity, o.Velocity)
	tr.MagneticForce = append(tr.MagneticForce, o.MagneticForce)
	tr.PassiveForce = append(tr.PassiveForce, o.PassiveForce)
	tr.WindingTemperature = append(tr.WindingTemperature, o.WindingTemperature)
}

// Event is something that happened during a run.
type Event struct {
	Time float64 // s
	What string
	// Part and Kind describe a conduction event (the part that starts or
	// stops conducting); Kind is EventOther for the rest.
	Part string
	Kind EventKind
	// Speed (m/s): of an impact.
	Speed float64
}

// EventKind classifies events for CompactEvents.
type EventKind int

// Event kinds.
const (
	EventOther EventKind = iota
	EventConductionStart
	EventConductionEnd
	EventImpact // Part: "seat" or "rest-stop"; Speed set
)

// SolverStats counts the integrator's work.
type SolverStats struct {
	Steps, Rejected, Events, Evaluations int
	// StiffSteps: accepted steps taken by the implicit (Rosenbrock) method.
	StiffSteps int
	// PeriodsRepeated: periods of a chopped hold's periodic steady state
	// repeated instead of integrated (sim_periodic.go).
	PeriodsRepeated int
	Method          string
}

// Result is the outcome of one simulated actuation.
type Result struct {
	// Samples is the coil current (A) at Options.SampleTimes.
	Samples []float64
	Metrics Metrics
	Events  []Event
	Trace   Trace
	Stats   SolverStats
}

// run adapts the coupled system to the integrator and records the run.
type run struct {
	*system
	tOn, tOff, tEnd float64
	energized       bool
	offDone         bool // de-energize command given
	res             *Result
	noTrace         bool
	pulses          bool // an H-bridge's pulses drive (Model.Pulses): its events are named so

	ctl           circuit.Controller
	baseV0        float64         // V, the normal supply voltage
	tRevEnd       float64         // end of a timed reverse pulse (+Inf: none)
	tRevStart     float64         // start of a delayed reverse pulse (+Inf: none)
	tRing         float64         // next ring-retirement check (+Inf: none)
	bounceRun     int             // consecutive bounces at one stop (the Zeno guard)
	bounceAtSeat  bool            // bounceRun counts at the seat
	noRetire      bool            // follow the ring cycle by cycle
	ringBandAt    float64         // V, the coil-voltage band the retired ring must stay within
	ringUnsafe    bool            // the retired ring's envelope came near a threshold
	scale         []float64       // the integrator's state scales (sim_ring.go activates sRing)
	cols          []int           // scratch for dynamic
	per           periodic        // turn-ons of a chopped hold (sim_periodic.go)
	noFastForward bool            // integrate every period
	tol           float64         // the integrator's relative tolerance
	off           [nState]float64 // state at the de-energize command
	window        holdWindow      // the hold figures' window
	swEst         float64         // J, estimated switching loss (edge times), not in the balance

	riseTime, fallTime float64

	sampleTimes []float64
	sampleNext  int

	decayArmed     bool
	decayThreshold float64
	decaySign      float64 // sign of the turn-off current

	g     [maxGuardCount]float64
	ys    [nState]float64 // scratch
	capE0 float64
	wf0   float64
}

func (r *run) note(t float64, format string, args ...any) {
	r.res.Events = append(r.res.Events, Event{Time: t, What: fmt.Sprintf(format, args...)})
}

// noteImpact records an impact at a stop ("seat" or "rest-stop").
func (r *run) noteImpact(t float64, stop string, speed float64) {
	r.res.Events = append(r.res.Events, Event{Time: t, Part: stop, Kind: EventImpact, Speed: speed,
		What: fmt.Sprintf("%s impact at %.3g m/s", stop, speed)})
}

// noteConduction records that part starts (or stops) conducting.
func (r *run) noteConduction(t float64, part string, start bool) {
	e := Event{Time: t, Part: part, Kind: EventConductionStart, What: "conduction through the " + part + " starts"}
	if !start {
		e.Kind, e.What = EventConductionEnd, "conduction through the "+part+" ends"
	}
	r.res.Events = append(r.res.Events, e)
}

func (r *run) nextTimeEvent(t float64) float64 {
	next := math.Inf(1)
	for _, te := range [...]float64{r.tOn, r.window.start, r.tOff, r.tRevStart, r.tRevEnd, r.tEnd, r.tRing, r.ctl.NextTime(t)} {
		if te > t && te < next {
			next = te
		}
	}
	return next
}

func (r *run) guards(t float64, y, g []float64) int {
	_, n := r.guardsAt(y, g)
	i := r.lastCurrent
	n += r.ctl.Guards(t, i, g[n:])
	if r.decayArmed {
		g[n] = r.decayThreshold - r.decaySign*i // signed: the current may overshoot zero within a step
		n++
	}
	return n
}

// stiff reports whether the present modes have a fast mode an explicit
// method would have to resolve: an RC snubber (its capacitor charges
// through the switch and source in microseconds in every mode), or the
// switch node's capacitance discharging through the eddy-current turn while
// nothing pins the node (C·(Re + R), nanoseconds).
func (r *run) stiff() bool {
	if r.drive.Suppressor.Kind == circuit.Snubber {
		return true
	}
	return r.eddy > 0 && r.cmode == circuit.Off && r.drive.HasSwitchCap()
}

// dynamic returns the fed-back states that can change in the present
// modes: the flux; gap and velocity while the plunger moves; the switch
// node while nothing pins it; the snubber and bulk capacitors when fitted;
// the temperatures with a thermal model; the retired ring's energy.
func (r *run) dynamic() []int {
	cols := r.cols[:0]
	cols = append(cols, sFlux)
	if r.mmode == mechFree {
		cols = append(cols, sGap, sVel)
	}
	if r.cmode == circuit.Off && r.drive.HasSwitchCap() {
		cols = append(cols, sSwitchC)
	}
	if r.drive.Suppressor.Kind == circuit.Snubber {
		cols = append(cols, sSnubberC)
	}
	if r.bulkC > 0 {
		cols = append(cols, sBus)
	}
	if r.thermal != nil {
		cols = append(cols, sWinding, sHousing)
	}
	if r.ringRetired {
		cols = append(cols, sRing)
	}
	return cols
}

// settleTol is how far past zero a guard must be for settle to change
// mode (V, A, N or m: all far below anything that matters).
const settleTol = 1e-9

func (r *run) event(t float64, y []float64, k int) (bool, error) {
	m := &r.res.Metrics
	if k < 0 {
		// Several commands may fall on the same instant: apply them all.
		if t == r.tOn {
			r.energize(t, y)
		}
		if r.ctl.Active() {
			r.ctl.AtTime(t)
			r.applyCommand(t, y)
			r.noteBrake(t, y)
		}
		if t == r.window.start {
			r.window.begin(y, r.swEst, r.current(y))
		}
		if t == r.tOff {
			r.deenergize(t, y)
		}
		if t == r.tRevStart {
			r.startReverse(t, y)
		}
		if t == r.tRevEnd && r.cmode == circuit.BridgeReverse {
			i := r.current(y)
			r.cmode = r.turnOffMode(i)
			r.note(t, "%s pulse ends at %.4g A", map[bool]string{false: "reverse", true: "release"}[r.pulses], i)
		}
		if t == r.tRing {
			r.tryRetireRing(t, y)
		}
		if t == r.tEnd {
			return true, nil
		}
	} else {
		nc, n := r.guardsAt(y, r.g[:])
		nctl := r.ctl.Guards(t, r.current(y), r.g[n:])
		switch {
		case k < nc:
			r.circuitChange(t, y, r.drive.Target(r.cmode, k))
		case k < n:
			r.mechEvent(t, y)
		case k < n+nctl:
			r.ctl.AtGuard(k - n)
			r.applyCommand(t, y)
		default: // the decay monitor
			r.decayArmed = false
			m.CurrentDecay = Interval{true, t - r.tOff}
		}
	}
	if err := r.settle(t, y); err != nil {
		return false, err
	}
	o := r.out(y)
	r.peaks(o)
	if !r.noTrace {
		r.res.Trace.add(t, o)
	}
	return false, nil
}

// applyCommand makes the switch follow the controller while energized.
func (r *run) applyCommand(t float64, y []float64) {
	want := r.ctl.On()
	r.v0 = r.ctl.SupplyVoltage(t, r.baseV0)
	switch {
	case want && r.cmode != circuit.On:
		r.switchOn(t, y)
		r.per.pending = true
		r.window.turnOn(t)
	case !want && r.cmode == circuit.On:
		i := r.current(y)
		r.swEst += 0.5 * r.edgeVoltageOff(i, y) * math.Abs(i) * r.fallTime
		vsw := r.pt.SwitchVoltage
		mode := r.chopOffMode(i)
		if mode == circuit.Recirc && r.drive.HasSwitchCap() {
			r.chargeNode(y, i)
		}
		r.cmode = mode
		y[sSwitchC] = vsw
	}
}

// chargeNode moves the switch node from its on-state voltage to the
// recirculation path's at a chopping switch-off: the coil current charges
// the node's capacitances in nanoseconds, a singular perturbation of the
// run. The switch capacitance's charge Coss·ΔV comes from the supply (the
// winding capacitance's returns to the rail), the capacitors take their
// energy change, and the coil the rest: its flux moves by that energy over
// the current, so that the energy balance stays closed (the On → Recirc
// jump would otherwise create the capacitors' energy from nothing).
func (r *run) chargeNode(y []float64, i float64) {
	r.solve(y)
	vBefore := r.pt.SwitchVoltage
	before := r.storedCapEnergy(y)
	keep := r.cmode
	r.cmode = circuit.Recirc
	r.solve(y)
	vAfter := r.pt.SwitchVoltage
	r.cmode = keep
	source := r.fromRail(y, r.drive.Switch.OutputCapacitance*(vAfter-vBefore))
	r.cmode = circuit.Recirc
	after := r.storedCapEnergy(y) // with the bulk capacitor's share drawn
	r.cmode = keep
	if i > 0 {
		y[sFlux] += (source + before - after) / i
	}
}

// fromRail draws the charge dq (C) from the drive's supply terminals at
// once: from the bulk capacitor when fitted (its stored energy falls), else
// from the ideal source, whose energy it returns (J; 0 with a bulk
// capacitor).
func (r *run) fromRail(y []float64, dq float64) float64 {
	if r.bulkC > 0 {
		y[sBus] -= dq / r.bulkC
		return 0
	}
	y[qSupply] += r.v0 * dq
	y[qSupplyQ] += dq
	return r.v0 * dq
}

// chopOffMode is the mode a chopping switch-off takes with coil current
// i: the turn-off path for fast decay, else the recirculation path.
func (r *run) chopOffMode(i float64) circuit.Mode {
	switch {
	case r.ctl.FastDecay:
		return r.turnOffMode(i)
	case i > 0:
		return circuit.Recirc
	}
	return circuit.Off
}

// edgeVoltageOff returns the switch voltage just after a turn-off edge in
// the mode the current will take (for the switching-loss estimate).
func (r *run) edgeVoltageOff(i float64, y []float64) float64 {
	keep := r.cmode
	r.cmode = r.chopOffMode(i)
	r.solve(y)
	v := math.Abs(r.pt.SwitchVoltage)
	r.cmode = keep
	r.solve(y)
	return v
}

// switchOn turns the switch on, booking the capacitive turn-on loss and
// the estimated edge loss.
func (r *run) switchOn(t float64, y []float64) {
	r.solve(y)
	vBefore := math.Abs(r.pt.SwitchVoltage)
	vcBefore := r.pt.CoilVoltage
	before := r.storedCapEnergy(y)
	r.cmode = circuit.On
	r.solve(y)
	// The switch capacitance discharges through the switch; the winding
	// capacitance charges to the new coil voltage from the supply through
	// it (charge Cw·Δv_coil). What the capacitors and the supply give up
	// is the capacitive turn-on loss.
	source := 0.0
	if cw := r.drive.CoilCapacitance; cw > 0 {
		source = r.fromRail(y, cw*(r.pt.CoilVoltage-vcBefore))
	}
	after := r.storedCapEnergy(y)
	if loss := before + source - after; loss > 0 {
		y[qSwitch] += loss
	}
	i := r.current(y)
	// Linear-ramp switching-loss estimate: E = ½·V·I·t_edge per edge
	// (idealised switching waveforms, e.g. Mohan, Undeland & Robbins,
	// Power Electronics, ch. 2; from memory).
	r.swEst += 0.5 * vBefore * math.Abs(i) * r.riseTime
}

func (r *run) energize(t float64, y []float64) {
	r.energized = true
	r.ctl.Start(t)
	r.v0 = r.ctl.SupplyVoltage(t, r.baseV0)
	r.switchOn(t, y)
	if r.imposed != 0 {
		r.mmode, y[sVel] = mechFree, r.imposed
	}
	if r.pulses {
		r.note(t, "latch pulse starts (H-bridge, forward)")
		return
	}
	r.note(t, "energize (%v drive)", r.ctl.Mode)
}

func (r *run) deenergize(t float64, y []float64) {
	copy(r.off[:], y)
	r.res.Metrics.SeatedAtTurnOff = r.mmode == mechSeated
	i := r.current(y)
	r.closeWindow(t, y)
	wasOn := r.cmode == circuit.On
	r.solve(y)
	vsw := r.pt.SwitchVoltage
	r.res.Metrics.CurrentAtTurnOff = i
	r.ctl.Stop()
	r.v0 = r.baseV0
	r.energized = false
	r.offDone = true
	if r.drive.Suppressor.Kind == circuit.Bridge && r.ctl.ReversePulse > 0 && r.ctl.ReverseDelay > 0 {
		r.cmode = r.turnOffMode(i)
		r.tRevStart = t + r.ctl.ReverseDelay
	} else if r.drive.Suppressor.Kind == circuit.Bridge && r.ctl.ReversePulse > 0 {
		r.cmode = circuit.BridgeReverse
		r.tRevEnd = t + r.ctl.ReversePulse
		r.res.Metrics.ReverseStart = Interval{true, t}
	} else {
		r.cmode = r.turnOffMode(i)
	}
	y[sSwitchC] = vsw
	if wasOn {
		r.solve(y)
		vEdge := math.Abs(r.pt.SwitchVoltage)
		if r.cmode == circuit.Off {
			vEdge = math.Max(vEdge, r.baseV0) // the node must reach the rail before anything conducts
		}
		r.swEst += 0.5 * vEdge * math.Abs(i) * r.fallTime
	}
	if i != 0 {
		r.decayArmed = true
		r.decayThreshold = DecayFraction * math.Abs(i)
		r.decaySign = math.Copysign(1, i)
	}
	if r.pulses {
		r.note(t, "latch pulse ends at %.4g A", i)
	} else {
		r.note(t, "de-energize at %.4g A", i)
	}
	if r.cmode != circuit.Off {
		r.noteConduction(t, r.drive.ClampName(r.cmode), true)
	}
	r.scheduleRingCheck(t, y)
}

// startReverse starts a delayed reverse pulse (Control.ReverseDelay): the
// bridge, off since the de-energize command (its diodes returning the coil
// current, or the coil open), drives the coil in reverse until tRevEnd.
func (r *run) startReverse(t float64, y []float64) {
	if r.cmode != circuit.Off {
		r.noteConduction(t, r.drive.ClampName(r.cmode), false)
	}
	r.cmode = circuit.BridgeReverse
	r.tRevEnd = t + r.ctl.ReversePulse
	r.res.Metrics.ReverseStart = Interval{true, t}
	r.tRing = math.Inf(1)
	if r.pulses {
		r.note(t, "release pulse starts (H-bridge, reverse) at %.4g A", r.current(y))
	} else {
		r.note(t, "reverse pulse starts at %.4g A", r.current(y))
	}
	r.noteConduction(t, r.drive.ClampName(r.cmode), true)
}

// circuitChange moves the drive to mode to, keeping the state consistent.
func (r *run) circuitChange(t float64, y []float64, to circuit.Mode) {
	from := r.cmode
	if to == circuit.Off {
		r.solve(y)
		y[sSwitchC] = r.pt.SwitchVoltage // capacitor leaves the pinned voltage
		if r.drive.Suppressor.Kind != circuit.Snubber && r.eddy == 0 && r.rp == 0 {
			// The coil current itself reached zero (located to within
			// ~1e-13 s): make it exactly zero, so that the pinned voltage
			// the capacitor keeps is consistent. Zero current is the flux
			// linkage λ(0, x): 0 without a permanent magnet.
			y[sFlux] = zeroCurrentFlux(r.mag, y[sGap])
			r.solve(y)
			y[sSwitchC] = r.pt.SwitchVoltage
		}
		if r.energized && from == circuit.Recirc {
			// chopping: the current ran out between pulses (not logged)
		} else {
			r.noteConduction(t, r.drive.ClampName(from), false)
		}
		if m := &r.res.Metrics; r.offDone && !m.ClampConduction.Happened {
			m.ClampConduction = Interval{true, t - r.tOff}
		}
	} else {
		r.noteConduction(t, r.drive.ClampName(to), true)
	}
	r.cmode = to
	r.scheduleRingCheck(t, y)
}

// mechEvent applies the plunger's mode change: an impact at a stop while
// it moves, or leaving the seat or the rest stop.
func (r *run) mechEvent(t float64, y []float64) {
	switch r.mmode {
	case mechFree:
		r.impact(t, y)
	case mechSeated:
		r.leaveSeat(t, y)
	case mechRest:
		r.leaveRest(t, y)
	}
}

// impact puts the moving plunger at the stop it reached (the seat or the
// rest stop, whichever is nearer) and applies the impact law: it bounces
// back, or it sticks (too slow, moving away from the stop already, or the
// Zeno guard of countBounce).
func (r *run) impact(t float64, y []float64) {
	p := &r.plunger
	v := y[sVel]
	atSeat := y[sGap] <= 0.5*(p.GapMin+p.GapMax)
	if atSeat {
		y[sGap] = p.GapMin
	} else {
		y[sGap] = p.GapMax
	}
	after, stick := p.Impact(v)
	if (atSeat && v >= 0) || (!atSeat && v <= 0) {
		after, stick = 0, true
	}
	zeno := r.countBounce(atSeat, stick)
	if zeno || r.imposed != 0 {
		after, stick = 0, true
	}
	r.recordImpact(t, y, atSeat, stick, v)
	if stick {
		y[sVel] = 0
		if atSeat {
			r.mmode = mechSeated
		} else {
			r.mmode = mechRest
		}
	} else {
		y[sVel] = after
	}
	if zeno {
		r.note(t, "%d bounces in a row at the %s: the plunger is taken as resting there (the bounces accumulate; raise plunger.stick speed to end them sooner)", ZenoBounces, map[bool]string{true: "seat", false: "rest stop"}[atSeat])
	}
}

// countBounce counts a bounce at one stop (the seat when atSeat) and
// reports whether the plunger is to be taken as resting there (zeno).
// Bounces at one stop whose speeds fall geometrically accumulate at a
// finite time after infinitely many impacts (a Zeno point) when the stick
// speed is tiny: the plunger rests after ZenoBounces of them in a row (the
// speed left is restitution^ZenoBounces of the first impact's). The count
// starts again at the other stop and after the plunger sticks.
func (r *run) countBounce(atSeat, stick bool) (zeno bool) {
	if atSeat != r.bounceAtSeat {
		r.bounceRun, r.bounceAtSeat = 0, atSeat
	}
	if !stick {
		r.bounceRun++
		zeno = r.bounceRun >= ZenoBounces
	}
	if stick || zeno {
		r.bounceRun = 0
	}
	return zeno
}

// recordImpact records an impact at speed v (m/s): at the seat the pull-in
// (the first seating while energized) and the bounces while energized, at
// the rest stop the drop after de-energizing; and the impact event.
func (r *run) recordImpact(t float64, y []float64, atSeat, stick bool, v float64) {
	m := &r.res.Metrics
	i := r.current(y)
	if atSeat {
		if r.energized && !m.PullIn.Happened {
			m.PullIn = Interval{true, t - r.tOn}
			m.SeatImpactSpeed = math.Abs(v)
			m.CurrentAtSeating = i
		}
		if r.energized && !stick {
			m.Bounces++
		}
		if r.cmode == circuit.BridgeReverse && m.Release.Happened && !m.Relatch.Happened {
			m.Relatch = Relatch{true, t, i}
		}
		r.noteImpact(t, "seat", math.Abs(v))
		return
	}
	if r.offDone && !m.Drop.Happened && m.ReleaseNotApplicable() == "" {
		m.Drop = Interval{true, t - r.tOff}
	}
	r.noteImpact(t, "rest-stop", math.Abs(v))
}

// leaveSeat frees the seated plunger: the release after de-energizing, or
// a drop-out while energized (recorded with the pull and the passive force
// at the seat).
func (r *run) leaveSeat(t float64, y []float64) {
	m := &r.res.Metrics
	r.mmode = mechFree
	y[sVel] = 0
	if r.offDone && !m.Release.Happened && m.ReleaseNotApplicable() == "" {
		m.Release = Interval{true, t - r.tOff}
	}
	if m.ReverseStart.Happened && !m.ReleaseAfterReverse.Happened {
		m.ReleaseAfterReverse = Interval{true, t - m.ReverseStart.Seconds}
	}
	if r.energized && !m.DropOut.Happened {
		_, im := r.solve(y)
		p := &r.plunger
		m.DropOut = DropOut{Happened: true, Time: t - r.tOn, InHold: t >= r.window.holdStart, Current: r.current(y),
			Pull: r.mag.Force(im, p.GapMin), Passive: p.PassiveForce(p.GapMin, 0)}
		r.note(t, "leaves the seat while energized (drop-out at %.4g A)", m.DropOut.Current)
	} else {
		r.note(t, "leaves the seat")
	}
}

// leaveRest frees the plunger resting at the rest stop; the first time
// while energized is the motion delay.
func (r *run) leaveRest(t float64, y []float64) {
	m := &r.res.Metrics
	r.mmode = mechFree
	y[sVel] = 0
	if r.energized && !m.MotionDelay.Happened {
		m.MotionDelay = Interval{true, t - r.tOn}
	}
	if r.pm && !r.energized && r.current(y) == 0 {
		p := &r.plunger
		r.note(t, "leaves the rest stop with no current: the permanent magnet's pull %.4g N beats the spring and load %.4g N",
			r.mag.Force(0, p.GapMax), p.PassiveForce(p.GapMax, 0))
		return
	}
	r.note(t, "leaves the rest stop")
}

// settle re-checks the modes until none of their guards is violated.
func (r *run) settle(t float64, y []float64) error {
	for it := 0; it < 20; it++ {
		nc, n := r.guardsAt(y, r.g[:])
		changed := false
		for k := 0; k < nc; k++ {
			if r.g[k] > settleTol {
				r.circuitChange(t, y, r.drive.Target(r.cmode, k))
				changed = true
				break
			}
		}
		if !changed && r.mmode != mechFree && n > nc && r.g[nc] > settleTol {
			r.mechEvent(t, y)
			changed = true
		}
		if !changed {
			nctl := r.ctl.Guards(t, r.current(y), r.g[n:])
			for k := 0; k < nctl; k++ {
				if r.g[n+k] > settleTol {
					r.ctl.AtGuard(k)
					r.applyCommand(t, y)
					changed = true
					break
				}
			}
		}
		if !changed {
			return nil
		}
	}
	nc, n := r.guardsAt(y, r.g[:])
	return fmt.Errorf("modes do not settle at t = %.12g s (circuit %v, plunger %v, guards %v|%v)", t, r.cmode, r.mmode, r.g[:nc], r.g[nc:n])
}

// peaks updates the extremes with the outputs o of the current mode.
func (r *run) peaks(o outputs) {
	m := &r.res.Metrics
	m.PeakCurrent = math.Max(m.PeakCurrent, math.Abs(o.Current))
	m.LowestCurrent = math.Min(m.LowestCurrent, o.Current)
	m.PeakSupplyCurrent = math.Max(m.PeakSupplyCurrent, o.SupplyCurrent)
	m.MinRailVoltage = math.Min(m.MinRailVoltage, o.RailVoltage)
	m.MaxRailVoltage = math.Max(m.MaxRailVoltage, o.RailVoltage)
	r.window.track(o.Current)
	m.PeakSwitchVoltage = math.Max(m.PeakSwitchVoltage, o.SwitchVoltage)
	m.MinSwitchVoltage = math.Min(m.MinSwitchVoltage, o.SwitchVoltage)
	if r.cmode != circuit.On {
		m.PeakClampCurrent = math.Max(m.PeakClampCurrent, o.ClampCurrent)
	}
	r.storageTrack(o)
}

func (r *run) accepted(s *stepView) {
	if r.ringRetired {
		r.checkRetiredRing(s.y1)
	}
	// The outputs depend on the first stateJac components only (the
	// quadratures do not feed back): only those are interpolated.
	ys := r.ys[:stateJac]
	for r.sampleNext < len(r.sampleTimes) && r.sampleTimes[r.sampleNext] <= s.t1 {
		s.interp(r.sampleTimes[r.sampleNext], ys)
		r.res.Samples = append(r.res.Samples, r.current(ys))
		r.sampleNext++
	}
	// Sample inside the step for the peaks.
	for _, th := range [...]float64{1.0 / 3, 2.0 / 3, 1} {
		tt := s.t0 + th*(s.t1-s.t0)
		s.interp(tt, ys)
		o := r.out(ys)
		r.peaks(o)
		if th == 1 && !r.noTrace {
			r.res.Trace.add(s.t1, o)
		}
	}
}

// Simulate runs one actuation of the model: energize, hold, de-energize,
// release, until the scenario's end time.
func Simulate(md *Model, opt *Options) (*Result, error) {
	if opt == nil {
		opt = &Options{}
	}
	tol, maxSteps := solverLimits(md, opt)
	r, y := newRun(md, opt, tol)
	if err := r.start(y); err != nil {
		return nil, err
	}
	res := r.res
	r.scale = md.scales()
	set := odeSettings{RelTol: tol, Scale: r.scale, MaxSteps: maxSteps, MaxStep: r.tEnd / 50,
		NJac: stateJac}
	in := newODE(r, nState, set)
	err := in.run(0, y)
	res.Stats = solverStats(in.stats, r.per.skipped)
	if err != nil {
		return res, fmt.Errorf("%s: simulation failed: %w", sourceName(md), err)
	}
	if r.ringUnsafe {
		// The retired ring's envelope came near a threshold: the averaging
		// was not safe; follow the ring cycle by cycle.
		o := *opt
		o.FollowRing = true
		return Simulate(md, &o)
	}
	r.finish(y)
	if err := res.Metrics.check(); err != nil {
		return res, fmt.Errorf("%s: %w", sourceName(md), err)
	}
	return res, nil
}

// solverLimits returns the relative tolerance and the step budget of a
// run: the options', else the scenario's, else the defaults.
func solverLimits(md *Model, opt *Options) (tol float64, maxSteps int) {
	tol = firstPositive(opt.Tolerance, md.Solver.Tolerance, DefaultTolerance)
	maxSteps = opt.MaxSteps
	if maxSteps <= 0 {
		maxSteps = md.Solver.MaxSteps
	}
	if maxSteps <= 0 {
		maxSteps = DefaultMaxSteps
	}
	return tol, maxSteps
}

// runConditions returns the drive, the timing and the starting winding
// temperature (K) of a run: the model's, with the options' overrides.
func runConditions(md *Model, opt *Options) (drive circuit.Drive, timing TimingSpec, tWinding float64) {
	drive = md.Drive
	if opt.SupplyVoltage > 0 {
		drive.Supply.Voltage = opt.SupplyVoltage
	}
	timing = md.Timing
	if opt.End > 0 {
		timing = TimingSpec{EnergizeAt: opt.Energize, DeenergizeAt: opt.Deenergize, End: opt.End}
	}
	tWinding = md.Temperature
	if opt.FixedTemperature > 0 {
		tWinding = opt.FixedTemperature
	} else if opt.WindingTemperature > 0 {
		tWinding = opt.WindingTemperature
	}
	return drive, timing, tWinding
}

// newRun sets up the coupled system and the run of the model with the
// options and the integrator's relative tolerance tol, and returns it with
// the state at rest at t = 0.
func newRun(md *Model, opt *Options, tol float64) (*run, []float64) {
	drive, timing, tWinding := runConditions(md, opt)
	sys := &system{mag: md.Magnet, plunger: md.Plunger, drive: drive, r: md.Coil.ResistanceAt(tWinding), eddy: md.EddyResistance,
		rp: md.CoreLossResistance, pm: zeroCurrentFlux(md.Magnet, md.Plunger.GapMax) != 0,
		v0: drive.Supply.Voltage, rs: drive.Supply.SourceResistance, bulkC: md.BulkCapacitance,
		coil: md.Coil, ambient: md.Ambient, blocked: opt.BlockPlunger, imposed: opt.ImposedVelocity}
	if md.Thermal != nil && opt.FixedTemperature == 0 {
		sys.thermal = md.Thermal
	}
	if b := md.Plunger.Breaks(); len(b) > 0 {
		sys.loadBreaks = b
	}
	if md.Storage != nil {
		sys.storage, sys.bulkC = md.Storage, md.Storage.Capacitance
	}
	res := &Result{}
	if len(opt.SampleTimes) > 0 {
		res.Samples = make([]float64, 0, len(opt.SampleTimes))
	}
	r := &run{system: sys, tOn: timing.EnergizeAt, tOff: timing.DeenergizeAt, tEnd: timing.End, tRing: math.Inf(1),
		noRetire: opt.FollowRing, cols: make([]int, 0, stateJac), noFastForward: opt.FollowPeriods, tol: tol,
		res: res, noTrace: opt.NoTrace, pulses: md.Pulses, baseV0: drive.Supply.Voltage, tRevEnd: math.Inf(1), tRevStart: math.Inf(1),
		riseTime: md.RiseTime, fallTime: md.FallTime, sampleTimes: opt.SampleTimes}
	r.ctl.Control = md.Control
	r.window = newHoldWindow(r.tOn, r.tOff, md.Control.PhaseTime())
	res.Metrics.init()

	y := make([]float64, nState)
	y[sGap] = md.Plunger.GapMax
	// No current: a permanent magnet's flux linkage only.
	y[sFlux] = zeroCurrentFlux(md.Magnet, md.Plunger.GapMax)
	y[sSwitchC] = drive.Supply.Voltage // at rest the switch node sits at the rail
	y[sBus] = drive.Supply.Voltage
	if sys.storage != nil {
		y[sBus] = sys.storage.startVoltage(drive.Supply.Voltage)
		y[sSwitchC] = y[sBus]
	}
	y[sWinding] = tWinding
	y[sHousing] = tWinding
	if md.Thermal != nil {
		y[sHousing] = md.Ambient
	}
	if opt.HousingTemperature > 0 {
		y[sHousing] = opt.HousingTemperature
	}
	return r, y
}

// start puts the run at rest at t = 0 (switch off, plunger at the rest
// stop, modes settled), takes the stored energies the balance starts from
// and the first trace row, and energizes when the energize time is 0.
func (r *run) start(y []float64) error {
	r.cmode = circuit.Off
	r.mmode = mechRest
	if err := r.settle(0, y); err != nil {
		return err
	}
	r.capE0 = r.storedCapEnergy(y)
	r.wf0 = r.fieldEnergy(y)
	r.storageStart(y)
	if !r.noTrace {
		r.res.Trace.add(0, r.out(y))
	}
	if r.tOn <= 0 {
		r.energize(0, y)
		if err := r.settle(0, y); err != nil {
			return err
		}
	}
	return nil
}

// solverStats reports the integrator's work st and the periods a periodic
// steady state repeated, naming the methods used.
func solverStats(st odeStats, periodsRepeated int) SolverStats {
	stats := SolverStats{Steps: st.Steps, Rejected: st.Rejected, Events: st.Events,
		Evaluations: st.Evals, StiffSteps: st.StiffSteps, Method: "Dormand–Prince 5(4)",
		PeriodsRepeated: periodsRepeated}
	switch {
	case st.StiffSteps == st.Steps && st.Steps > 0:
		stats.Method = rodas5p.name
	case st.StiffSteps > 0:
		stats.Method = fmt.Sprintf("Dormand–Prince 5(4), %s where stiff (%d steps)", rodas5p.name, st.StiffSteps)
	}
	return stats
}

// words writes a Go field name as lower-case words for a message
// ("PeakSwitchVoltage" → "peak switch voltage"), the names the reports use.
func words(name string) string {
	var b []byte
	for k := 0; k < len(name); k++ {
		c := name[k]
		if c >= 'A' && c <= 'Z' {
			if k > 0 && !(name[k-1] >= 'A' && name[k-1] <= 'Z') {
				b = append(b, ' ')
			}
			c += 'a' - 'A'
		}
		b = append(b, c)
	}
	return string(b)
}

// sourceName names the scenario in messages.
func sourceName(md *Model) string {
	if md.Source != "" {
		return md.Source
	}
	if md.Name != "" {
		return fmt.Sprintf("scenario %q", md.Name)
	}
	return "scenario"
}

// ZenoBounces is the number of bounces in a row at one stop after which
// the plunger rests there.
const ZenoBounces = 100

// ResidualLimit is the bound of a run's energy residual: a run whose
// energy balance leaves more than this fraction of the largest energy
// that flowed unexplained has failed (a sign or
// coupling error, or an integration gone wrong); its figures are not
// trustworthy. The demos leave 1e-8 to 1e-6.
const ResidualLimit = 1e-4

// ErrRunInvalid is matched (errors.Is) by a run that finished but whose
// figures cannot be trusted: a non-finite figure, or an energy balance
// that does not close.
var ErrRunInvalid = errors.New("the run's figures are not trustworthy")

// check refuses a run whose figures are not finite or whose energy balance
// does not close.
func (m *Metrics) check() error {
	if name := nonFinite(reflect.ValueOf(m).Elem(), ""); name != "" {
		return fmt.Errorf("%w: the figure %q is not a finite number (an input far outside its range?)", ErrRunInvalid, name)
	}
	if r := m.EnergyResidualRel(); r > ResidualLimit {
		return fmt.Errorf("%w: the energy balance leaves %.2g of the largest energy that flowed (%.4g J) unexplained, above %g; tighten solver.tolerance, or check the inputs", ErrRunInvalid, r, m.EnergyFlow(), ResidualLimit)
	}
	return nil
}

// nonFinite returns the path of the first float field of v that is NaN or
// infinite, its field names as words after path ("" if none; "value" for
// a bare float).
func nonFinite(v reflect.Value, path string) string {
	p, bad := firstNonFinite(v)
	switch {
	case !bad:
		return ""
	case path != "" && p != "":
		return path + " " + p
	case path+p == "":
		return "value"
	}
	return path + p
}

// firstNonFinite reports whether v holds a NaN or infinite float and the
// field names down to the first one as words; the names are built only
// for the field that is not finite (a run's check walks every figure).
func firstNonFinite(v reflect.Value) (string, bool) {
	switch v.Kind() {
	case reflect.Float64:
		f := v.Float()
		return "", math.IsNaN(f) || math.IsInf(f, 0)
	case reflect.Struct:
		for k := 0; k < v.NumField(); k++ {
			if p, bad := firstNonFinite(v.Field(k)); bad {
				name := words(v.Type().Field(k).Name)
				if p != "" {
					name += " " + p
				}
				return name, true
			}
		}
	}
	return "", false
}

// finish fills the energy figures.
func (r *run) finish(y []float64) {
	m := &r.res.Metrics
	m.SupplyEnergy = y[qSupply]
	m.CoilLoss = y[qCoilR]
	m.SourceLoss = y[qSource]
	m.SwitchLoss = y[qSwitch]
	if r.offDone {
		// Split at the de-energize command: the turn-off pulse against
		// what chopping put through the same parts while energized.
		m.ClampEnergy = y[qClamp] - r.off[qClamp]
		m.ChopClampEnergy = r.off[qClamp]
		m.AvalancheEnergy = y[qAval] - r.off[qAval]
		m.ChopAvalancheEnergy = r.off[qAval]
		m.OffDiodeLoss = y[qDiode] - r.off[qDiode]
	} else {
		m.ChopClampEnergy = y[qClamp]
		m.ChopAvalancheEnergy = y[qAval]
	}
	m.SuppressionLoss = y[qClamp]
	m.MechanicalWork = y[qMech]
	m.EddyLoss = y[qEddy]
	m.CoreLoss = y[qCore]
	m.DiodeLoss = y[qDiode]
	m.EnergyReturned = y[qReturned]
	m.SwitchingLossEstimate = r.swEst
	m.FinalRingEnergy = y[sRing]
	m.FinalWindingTemperature = y[sWinding]
	m.FinalHousingTemperature = y[sHousing]
	m.FinalGap = y[sGap]
	m.StoredChange = r.fieldEnergy(y) - r.wf0 + r.storedCapEnergy(y) - r.capE0
	r.storageFinish(y)
	m.EnergyResidual = m.SupplyEnergy - (m.CoilLoss + m.SourceLoss + m.SwitchLoss + m.SuppressionLoss + m.DiodeLoss + m.MechanicalWork + m.EddyLoss + m.CoreLoss + m.StoredChange)
}

func firstPositive(v ...float64) float64 {
	for _, x := range v {
		if x > 0 {
			return x
		}
	}
	return 0
}

// ErrStepBudget is matched (errors.Is) by a failure to finish within the
// step budget.
var ErrStepBudget = errStepBudget

// holdWindow is where the hold figures are measured: the second half of
// the hold phase (after the peak or boost phase, if any), up to the
// de-energize command. It keeps the state at its start, for the
// quadratures' increments over it (∫i, ∫R·i², ∫P), the coil current's
// extremes in it, and the switch's turn-on edges in it, for the chopping
// frequency.
type holdWindow struct {
	start     float64 // s, the window's start (its end is the de-energize command); +Inf: none
	holdStart float64 // s, start of the hold phase (end of the peak or boost phase)
	open      bool    // the window has started and not yet closed
	// at is the state at the window's start.
	at                     [nState]float64
	swEst                  float64 // J, the switching-loss estimate at the window's start
	minCurrent, maxCurrent float64 // A, coil current extremes in the window
	edges                  int     // switch turn-on edges inside the window
	firstEdge, lastEdge    float64 // s, the first and the last of them
}

// newHoldWindow places the window for energize and de-energize times tOn,
// tOff and a peak or boost phase of phase (s, 0 for none): the second half
// of the hold phase; none when the phase outlasts the energized time.
func newHoldWindow(tOn, tOff, phase float64) holdWindow {
	holdStart := tOn
	if phase > 0 {
		holdStart += phase
	}
	w := holdWindow{start: math.Inf(1), holdStart: holdStart}
	if holdStart < tOff {
		w.start = holdStart + 0.5*(tOff-holdStart)
	}
	return w
}

// begin opens the window with the state y, the switching-loss estimate
// swEst (J) and the coil current i (A) at its start.
func (w *holdWindow) begin(y []float64, swEst, i float64) {
	w.open = true
	copy(w.at[:], y)
	w.swEst = swEst
	w.minCurrent, w.maxCurrent = i, i
	w.edges = 0
}

// turnOn counts a switch turn-on edge at t while the window is open.
func (w *holdWindow) turnOn(t float64) {
	if !w.open {
		return
	}
	if w.edges == 0 {
		w.firstEdge = t
	}
	w.lastEdge = t
	w.edges++
}

// track widens the current's extremes to i (A) while the window is open.
func (w *holdWindow) track(i float64) {
	if w.open {
		w.minCurrent = math.Min(w.minCurrent, i)
		w.maxCurrent = math.Max(w.maxCurrent, i)
	}
}

// repeatPeriods books n periods of length period (s), with edges turn-on
// edges each, that a periodic steady state repeated (sim_periodic.go)
// while the window is open.
func (w *holdWindow) repeatPeriods(n, edges int, period float64) {
	if w.open {
		w.edges += n * edges
		w.lastEdge += float64(n) * period
	}
}

// closeWindow computes the hold figures at the end of the hold window.
func (r *run) closeWindow(t float64, y []float64) {
	w := &r.window
	if !w.open {
		return
	}
	w.open = false
	m := &r.res.Metrics
	h := &m.Hold
	T := t - w.start
	if !(T > 0) {
		return
	}
	h.Measured = true
	h.Start, h.End = w.start, t
	h.MeanCurrent = (y[qCharge] - w.at[qCharge]) / T
	h.MinCurrent, h.MaxCurrent = w.minCurrent, w.maxCurrent
	h.Ripple = w.maxCurrent - w.minCurrent
	h.Chopped = r.ctl.Chops()
	h.EndCurrent = r.current(y)
	if h.Chopped && w.edges >= 2 {
		// whole periods between the first and last turn-on in the window
		h.ChoppingFrequency = roundSignificant(float64(w.edges-1)/(w.lastEdge-w.firstEdge), 9)
	}
	if !h.Chopped {
		ron := r.drive.Switch.OnResistance
		if r.drive.Suppressor.Kind == circuit.Bridge {
			ron *= 2
		}
		h.SteadyCurrent = r.baseV0 / (r.resistance(y) + ron + r.steadyResistance())
		h.Settled = math.Abs(h.EndCurrent-h.SteadyCurrent) <= SettleFraction*math.Abs(h.SteadyCurrent)
	}
	h.CoilPower = (y[qCoilR] - w.at[qCoilR]) / T
	h.FullVoltageCoilPower = r.baseV0 * r.baseV0 / r.r
	h.SwitchConductionPower = (y[qSwitch] - w.at[qSwitch] - (y[qAval] - w.at[qAval])) / T
	h.DiodePower = (y[qDiode] - w.at[qDiode]) / T
	if h.Chopped {
		h.ClampPower = (y[qClamp] - w.at[qClamp]) / T
		h.AvalanchePower = (y[qAval] - w.at[qAval]) / T
	}
	h.SwitchingPower = (r.swEst - w.swEst) / T
	h.SupplyMeanCurrent = (y[qSupplyQ] - w.at[qSupplyQ]) / T
	h.SupplyPower = (y[qSupply] - w.at[qSupply]) / T
	p := &r.plunger
	if need := p.PassiveForce(p.GapMin, 0); need > 0 {
		// The weakest point of the ripple must hold the plunger at the seat.
		h.ForceMargin = r.mag.Force(w.minCurrent, p.GapMin) / need
	}
}

// roundSignificant rounds x to n significant decimal digits.
func roundSignificant(x float64, n int) float64 {
	v, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', n, 64), 64)
	if err != nil {
		return x
	}
	return v
}
