package coilkick

import (
	"errors"
	"fmt"
	"math"

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
}

func (tr *Trace) add(t float64, o outputs) {
	tr.Time = append(tr.Time, t)
	tr.Current = append(tr.Current, o.Current)
	tr.CoilVoltage = append(tr.CoilVoltage, o.CoilVoltage)
	tr.SwitchVoltage = append(tr.SwitchVoltage, o.SwitchVoltage)
	tr.Gap = append(tr.Gap, o.Gap)
	tr.Velocity = append(tr.Velocity, o.Velocity)
	tr.MagneticForce = append(tr.MagneticForce, o.MagneticForce)
	tr.PassiveForce = append(tr.PassiveForce, o.PassiveForce)
}

// Event is something that happened during a run.
type Event struct {
	Time float64 // s
	What string
}

// SolverStats counts the integrator's work.
type SolverStats struct {
	Steps, Rejected, Events, Evaluations int
	Method                               string
}

// Result is the outcome of one simulated actuation.
type Result struct {
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

	decayArmed     bool
	decayThreshold float64
	decaySign      float64 // sign of the turn-off current

	g     [maxGuardCount]float64
	ys    [nState]float64 // scratch
	yInit [nState]float64
	capE0 float64
	wf0   float64
}

func (r *run) note(t float64, format string, args ...any) {
	r.res.Events = append(r.res.Events, Event{Time: t, What: fmt.Sprintf(format, args...)})
}

func (r *run) nextTimeEvent(t float64) float64 {
	for _, te := range [...]float64{r.tOn, r.tOff, r.tEnd} {
		if te > t {
			return te
		}
	}
	return math.Inf(1)
}

func (r *run) guards(_ float64, y, g []float64) int {
	_, n := r.guardsAt(y, g)
	if r.decayArmed {
		g[n] = r.decayThreshold - r.decaySign*r.current(y) // signed: the current may overshoot zero within a step
		n++
	}
	return n
}

// settleTol is how far past zero a guard must be for settle to change
// mode (V, A, N or m: all far below anything that matters).
const settleTol = 1e-9

func (r *run) event(t float64, y []float64, k int) (bool, error) {
	m := &r.res.Metrics
	if k < 0 {
		switch t {
		case r.tEnd:
			return true, nil
		case r.tOn:
			r.energize(t, y)
		case r.tOff:
			r.deenergize(t, y)
		}
	} else {
		nc, n := r.guardsAt(y, r.g[:])
		switch {
		case k < nc:
			r.circuitChange(t, y, r.drive.Target(r.cmode, k))
		case k < n:
			r.mechEvent(t, y)
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

func (r *run) energize(t float64, y []float64) {
	before := r.storedCapEnergy(y)
	r.cmode = circuit.On
	after := r.storedCapEnergy(y)
	if before > after {
		y[qSwitch] += before - after // switch capacitance discharged by the switch: turn-on loss
	}
	r.energized = true
	r.note(t, "energize")
}

func (r *run) deenergize(t float64, y []float64) {
	i := r.current(y)
	vsw := r.pt.SwitchVoltage
	r.res.Metrics.CurrentAtTurnOff = i
	r.cmode = r.drive.TurnOffMode(i)
	y[sSwitchC] = vsw
	r.energized = false
	r.offDone = true
	if i != 0 {
		r.decayArmed = true
		r.decayThreshold = DecayFraction * math.Abs(i)
		r.decaySign = math.Copysign(1, i)
	}
	r.note(t, "de-energize at %.4g A", i)
	if r.cmode != circuit.Off {
		r.note(t, "%s conducts", r.drive.ClampName(r.cmode))
	}
}

// circuitChange moves the drive to mode to, keeping the state consistent.
func (r *run) circuitChange(t float64, y []float64, to circuit.Mode) {
	from := r.cmode
	if to == circuit.Off {
		r.solve(y)
		y[sSwitchC] = r.pt.SwitchVoltage // capacitor leaves the pinned voltage
		if r.drive.Suppressor.Kind != circuit.Snubber && r.eddy == 0 {
			// The coil current itself reached zero (located to within
			// ~1e-13 s): make it exactly zero, so that the pinned voltage
			// the capacitor keeps is consistent. No permanent magnet:
			// zero current is zero flux linkage.
			y[sFlux] = 0
			r.solve(y)
			y[sSwitchC] = r.pt.SwitchVoltage
		}
		r.note(t, "%s stops conducting", r.drive.ClampName(from))
		if m := &r.res.Metrics; r.offDone && !m.ClampConduction.Happened {
			m.ClampConduction = Interval{true, t - r.tOff}
		}
	} else {
		r.note(t, "%s conducts", r.drive.ClampName(to))
	}
	r.cmode = to
}

func (r *run) mechEvent(t float64, y []float64) {
	m := &r.res.Metrics
	p := &r.plunger
	switch r.mmode {
	case mechFree:
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
			r.note(t, "seat impact at %.3g m/s", math.Abs(v))
		} else {
			if r.offDone && !m.Drop.Happened {
				m.Drop = Interval{true, t - r.tOff}
			}
			r.note(t, "rest-stop impact at %.3g m/s", math.Abs(v))
		}
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
	case mechSeated:
		r.mmode = mechFree
		y[sVel] = 0
		if r.offDone && !m.Release.Happened {
			m.Release = Interval{true, t - r.tOff}
		}
		if r.energized {
			m.DroppedOutEnergized = true
		}
		r.note(t, "leaves the seat")
	case mechRest:
		r.mmode = mechFree
		y[sVel] = 0
		if r.energized && !m.MotionDelay.Happened {
			m.MotionDelay = Interval{true, t - r.tOn}
		}
		r.note(t, "leaves the rest stop")
	}
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
	m.PeakSwitchVoltage = math.Max(m.PeakSwitchVoltage, o.SwitchVoltage)
	m.MinSwitchVoltage = math.Min(m.MinSwitchVoltage, o.SwitchVoltage)
	if r.cmode != circuit.On {
		m.PeakClampCurrent = math.Max(m.PeakClampCurrent, o.ClampCurrent)
	}
}

func (r *run) accepted(s *stepView) {
	// Sample inside the step for the peaks.
	for _, th := range [...]float64{0.25, 0.5, 0.75, 1} {
		tt := s.t0 + th*(s.t1-s.t0)
		s.interp(tt, r.ys[:])
		o := r.out(r.ys[:])
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
	tol := firstPositive(opt.Tolerance, md.Solver.Tolerance, DefaultTolerance)
	maxSteps := opt.MaxSteps
	if maxSteps <= 0 {
		maxSteps = md.Solver.MaxSteps
	}
	if maxSteps <= 0 {
		maxSteps = DefaultMaxSteps
	}
	sys := &system{mag: md.Magnet, plunger: md.Plunger, drive: md.Drive, r: md.CoilResistance(), eddy: md.EddyResistance}
	res := &Result{}
	r := &run{system: sys, tOn: md.Timing.EnergizeAt, tOff: md.Timing.DeenergizeAt, tEnd: md.Timing.End,
		res: res, noTrace: opt.NoTrace}
	res.Metrics.init()

	y := make([]float64, nState)
	y[sGap] = md.Plunger.GapMax
	y[sSwitchC] = md.Drive.Supply.Voltage // at rest the switch node sits at the rail
	sys.cmode = circuit.Off
	sys.mmode = mechRest
	if err := r.settle(0, y); err != nil {
		return nil, err
	}
	r.capE0 = sys.storedCapEnergy(y)
	r.wf0 = sys.fieldEnergy(y)
	if !r.noTrace {
		res.Trace.add(0, sys.out(y))
	}
	if r.tOn <= 0 {
		r.energize(0, y)
		if err := r.settle(0, y); err != nil {
			return nil, err
		}
	}

	set := odeSettings{RelTol: tol, Scale: md.scales(), MaxSteps: maxSteps, MaxStep: r.tEnd / 50,
		Stiff: md.Stiff(), NJac: stateJac}
	in := newODE(r, nState, set)
	err := in.run(0, y)
	res.Stats = SolverStats{Steps: in.stats.Steps, Rejected: in.stats.Rejected, Events: in.stats.Events,
		Evaluations: in.stats.Evals, Method: "Dormand–Prince 5(4)"}
	if set.Stiff {
		res.Stats.Method = "Rosenbrock 2(3) (Shampine–Reichelt)"
	}
	if err != nil {
		return res, fmt.Errorf("coilkick: simulation failed: %w", err)
	}
	r.finish(y)
	return res, nil
}

// finish fills the energy figures.
func (r *run) finish(y []float64) {
	m := &r.res.Metrics
	m.SupplyEnergy = y[qSupply]
	m.CoilLoss = y[qCoilR]
	m.SourceLoss = y[qSource]
	m.SwitchLoss = y[qSwitch]
	m.AvalancheEnergy = y[qAval]
	m.ClampEnergy = y[qClamp]
	m.MechanicalWork = y[qMech]
	m.EddyLoss = y[qEddy]
	m.StoredChange = r.fieldEnergy(y) - r.wf0 + r.storedCapEnergy(y) - r.capE0
	m.EnergyResidual = m.SupplyEnergy - (m.CoilLoss + m.SourceLoss + m.SwitchLoss + m.ClampEnergy + m.MechanicalWork + m.EddyLoss + m.StoredChange)
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

var _ = errors.Is
