package circuit

import (
	"errors"
	"fmt"
	"math"
)

// ControlMode is how the driver drives the coil while it is energized.
type ControlMode int

// Control modes.
const (
	Constant  ControlMode = iota // switch on for the whole energized time
	PWM                          // fixed-frequency voltage PWM at a duty
	PeakHold                     // regulate a peak current for a time, then a hold current
	BoostHold                    // a boost supply voltage for a time, then the normal supply
)

var controlNames = [...]string{"constant", "pwm", "peak and hold", "boost then hold"}

func (m ControlMode) String() string {
	if m < 0 || int(m) >= len(controlNames) {
		return fmt.Sprintf("ControlMode(%d)", int(m))
	}
	return controlNames[m]
}

// Regulation is how a peak-and-hold driver keeps the current at its target.
type Regulation int

// Regulations.
const (
	// Hysteresis: switch off when the current reaches target + band/2,
	// on again when it falls to target − band/2.
	Hysteresis Regulation = iota
	// FixedFrequency: switch on at the start of every period, off when the
	// current reaches the target (peak-current cut-off).
	FixedFrequency
)

// Control is the driver's control law (SI units).
type Control struct {
	Mode      ControlMode
	Frequency float64 // Hz: PWM frequency, or the chopping frequency of FixedFrequency
	Duty      float64 // PWM on-time fraction, 0..1

	PeakCurrent float64 // A
	PeakTime    float64 // s, from the energize command
	HoldCurrent float64 // A
	Regulation  Regulation
	Band        float64 // A, full hysteresis band
	// FastDecay: between chopping pulses (and PWM off-times) the current
	// decays through the turn-off path (the suppression part or the bridge);
	// otherwise through the slow recirculation path.
	FastDecay bool

	BoostVoltage float64 // V
	BoostTime    float64 // s, from the energize command

	// ReversePulse (s): with a bridge, drive the coil in reverse for this
	// long after the de-energize command (0: just let the diodes return
	// the current).
	ReversePulse float64
	// ReverseDelay (s): start that reverse pulse this long after the
	// de-energize command; meanwhile the bridge is off (its diodes return
	// the coil current, then the coil is open). 0: at once.
	ReverseDelay float64

	// BrakeAt, BrakeFor (s): a soft-landing brake of a constant or PWM
	// drive. The switch turns off BrakeAt after the energize command and
	// stays off for BrakeFor (a constant drive's current decays through the
	// turn-off path, the suppression part; a PWM's as in its off-times),
	// then the drive goes on (a PWM's edges run on beneath the brake, by
	// their period index). BrakeFor 0: no brake.
	BrakeAt, BrakeFor float64
}

// Validate reports a control law that cannot run with the drive d.
func (c *Control) Validate(d *Drive) error {
	if err := c.validateMode(d.Supply.Voltage); err != nil {
		return err
	}
	if err := c.validateBrake(); err != nil {
		return err
	}
	return c.validateWith(d)
}

// validateBrake checks a soft-landing brake: constant or PWM drive, a
// start after the energize command and a length > 0 (both finite).
func (c *Control) validateBrake() error {
	switch {
	case c.BrakeAt == 0 && c.BrakeFor == 0:
		return nil
	case c.Mode != Constant && c.Mode != PWM:
		return errors.New("circuit: a brake interval needs the constant or the pwm drive")
	case !(c.BrakeAt > 0) || !(c.BrakeFor > 0) || math.IsInf(c.BrakeAt+c.BrakeFor, 0):
		return errors.New("circuit: a brake needs a start > 0 and a length > 0 (both finite)")
	}
	return nil
}

// WithBrake returns c with the brake interval: off at (s) after energize
// for length (s); 0, 0: none. The constant drive has no recirculation
// path, so its brake decays through the turn-off path (the suppression
// part): FastDecay is set with a brake. A PWM keeps its own decay.
func (c Control) WithBrake(at, length float64) Control {
	c.BrakeAt, c.BrakeFor = at, length
	if c.Mode == Constant {
		c.FastDecay = length > 0
	}
	return c
}

// Brakes reports whether the control has a brake interval.
func (c *Control) Brakes() bool { return c.BrakeFor > 0 }

// validateMode checks the settings of the control mode; supply (V) is the
// normal supply, which a boost must exceed.
func (c *Control) validateMode(supply float64) error {
	switch c.Mode {
	case Constant:
	case PWM:
		if !(c.Frequency > 0) || !(c.Duty > 0 && c.Duty <= 1) {
			return errors.New("circuit: pwm needs a frequency > 0 and a duty in (0, 1]")
		}
	case PeakHold:
		return c.validatePeakHold()
	case BoostHold:
		if !(c.BoostVoltage > supply) || !(c.BoostTime > 0) {
			return errors.New("circuit: boost then hold needs a boost voltage above the supply and a boost time > 0")
		}
	default:
		return fmt.Errorf("circuit: unknown control mode %d", int(c.Mode))
	}
	return nil
}

// validatePeakHold checks the currents, the peak time and the regulation
// of a peak-and-hold control.
func (c *Control) validatePeakHold() error {
	switch {
	case !(c.PeakCurrent > 0) || !(c.HoldCurrent > 0) || !(c.PeakTime > 0):
		return errors.New("circuit: peak and hold needs a peak current, a peak time and a hold current")
	case c.HoldCurrent > c.PeakCurrent:
		return errors.New("circuit: the hold current must not exceed the peak current")
	case c.Regulation != Hysteresis && c.Regulation != FixedFrequency:
		return fmt.Errorf("circuit: unknown regulation %d", int(c.Regulation))
	case c.Regulation == Hysteresis && !(c.Band > 0 && c.Band < 2*c.HoldCurrent):
		return errors.New("circuit: hysteresis needs a band > 0 and below twice the hold current")
	case c.Regulation == FixedFrequency && !(c.Frequency > 0):
		return errors.New("circuit: fixed-frequency chopping needs a frequency > 0")
	}
	return nil
}

// validateWith checks what the control needs of the drive: a reverse pulse
// needs the H-bridge, and slow-decay chopping the recirculation path.
func (c *Control) validateWith(d *Drive) error {
	if !(c.ReversePulse >= 0) {
		return errors.New("circuit: reverse pulse must not be negative")
	}
	if !(c.ReverseDelay >= 0) {
		return errors.New("circuit: reverse pulse delay must not be negative")
	}
	if c.ReversePulse > 0 && d.Suppressor.Kind != Bridge {
		return errors.New("circuit: a reverse pulse needs the reverse drive (H-bridge)")
	}
	if !c.FastDecay && c.Mode != Constant && c.Mode != BoostHold && !(d.Recirc.Drop >= 0 && d.Recirc.Resistance >= 0) {
		return errors.New("circuit: slow decay needs a recirculation path")
	}
	return nil
}

// PhaseTime returns the length of the peak or boost phase (s), 0 when the
// mode has none.
func (c *Control) PhaseTime() float64 {
	switch c.Mode {
	case PeakHold:
		return c.PeakTime
	case BoostHold:
		return c.BoostTime
	}
	return 0
}

// Chops reports whether the control switches during the energized time.
func (c *Control) Chops() bool { return c.Mode == PWM || c.Mode == PeakHold }

// Controller runs a Control during one energized interval. It is a small
// state machine driven by time events (PWM edges, chopping periods, phase
// ends) and by current guards (hysteresis thresholds, peak cut-off).
type Controller struct {
	Control
	t0     float64 // energize time
	active bool
	on     bool    // switch commanded on
	period int     // index of the current PWM/chopping period
	edgeAt float64 // next PWM or chopping edge
	// held: the peak or boost phase is over. It changes only at the
	// phase-end time event, so that the guards are smooth between events.
	held bool
	// braking: inside the brake interval (the switch is held off).
	braking bool
}

// Start begins the energized interval at time t: the switch turns on.
func (c *Controller) Start(t float64) {
	c.t0, c.active, c.on, c.period, c.held, c.braking = t, true, true, 0, false, false
	c.edgeAt = math.Inf(1)
	switch {
	case c.Mode == PWM:
		if c.Duty < 1 {
			c.edgeAt = t + c.Duty/c.Frequency
		}
	case c.Mode == PeakHold && c.Regulation == FixedFrequency:
		c.edgeAt = t + 1/c.Frequency
	}
}

// Held reports whether the peak or boost phase is over.
func (c *Controller) Held() bool { return c.held }

// Periodic reports whether the control's edges are scheduled by time at a
// fixed frequency (PWM, fixed-frequency chopping); hysteresis chopping
// follows the current instead.
func (c *Controller) Periodic() bool {
	return c.Mode == PWM || (c.Mode == PeakHold && c.Regulation == FixedFrequency)
}

// Skip advances the controller by n whole periods, for a run that repeats
// a periodic steady state: the period index and the next edge move on by
// n periods (computed from the index, as every edge). It returns the time
// of the present period's start after the skip. Only for Periodic
// controls, called at a period's start (just after its turn-on edge).
func (c *Controller) Skip(n int) float64 {
	c.period += n
	start := c.t0 + float64(c.period)/c.Frequency
	switch c.Mode {
	case PWM:
		c.edgeAt = c.t0 + (float64(c.period)+c.Duty)/c.Frequency
	case PeakHold:
		c.edgeAt = c.t0 + float64(c.period+1)/c.Frequency
	}
	return start
}

// Stop ends the energized interval.
func (c *Controller) Stop() { c.active, c.on, c.braking = false, false, false }

// BrakeStart and BrakeEnd return the brake interval's start and end (s;
// +Inf when the control has no brake). The times are computed the same
// way wherever they are used, so that the run lands on them exactly.
func (c *Controller) BrakeStart() float64 {
	if !c.Brakes() {
		return math.Inf(1)
	}
	return c.t0 + c.BrakeAt
}

// BrakeEnd returns the brake interval's end (s; +Inf without a brake); see
// BrakeStart.
func (c *Controller) BrakeEnd() float64 {
	if !c.Brakes() {
		return math.Inf(1)
	}
	return c.t0 + c.BrakeAt + c.BrakeFor
}

// Braking reports whether the brake interval is running (switch held off).
func (c *Controller) Braking() bool { return c.braking }

// On reports whether the switch is commanded on: the control's own
// command, off throughout the brake interval.
func (c *Controller) On() bool { return c.on && !c.braking }

// Active reports whether the interval is running.
func (c *Controller) Active() bool { return c.active }

// PhaseEnd returns the end of the peak or boost phase (+Inf when the mode
// has none).
func (c *Controller) PhaseEnd() float64 {
	switch c.Mode {
	case PeakHold:
		return c.t0 + c.PeakTime
	case BoostHold:
		return c.t0 + c.BoostTime
	}
	return math.Inf(1)
}

// SupplyVoltage returns the source voltage at time t (V): the boost
// voltage during the boost phase, else the normal supply v.
func (c *Controller) SupplyVoltage(t, v float64) float64 {
	if c.active && c.Mode == BoostHold && !c.held {
		return c.BoostVoltage
	}
	return v
}

// Target returns the regulated current (A) in the present phase.
func (c *Controller) Target(float64) float64 {
	if !c.held {
		return c.PeakCurrent
	}
	return c.HoldCurrent
}

// NextTime returns the controller's first scheduled event strictly after
// t (+Inf for none).
func (c *Controller) NextTime(t float64) float64 {
	if !c.active {
		return math.Inf(1)
	}
	next := math.Inf(1)
	if c.edgeAt > t {
		next = c.edgeAt
	}
	if pe := c.PhaseEnd(); !c.held && pe > t && pe < next {
		next = pe
	}
	for _, b := range [...]float64{c.BrakeStart(), c.BrakeEnd()} {
		if b > t && b < next {
			next = b
		}
	}
	return next
}

// AtTime applies the scheduled events at time t.
func (c *Controller) AtTime(t float64) {
	if !c.active {
		return
	}
	if t == c.PhaseEnd() {
		c.held = true
	}
	// The brake overrides the command (On); a PWM's edges go on beneath it.
	switch t {
	case c.BrakeStart():
		c.braking = true
	case c.BrakeEnd():
		c.braking = false
	}
	if t != c.edgeAt {
		return
	}
	switch c.Mode {
	case PWM:
		// Edges are computed from the period index, not accumulated, so
		// that they do not drift over thousands of periods.
		if c.on {
			c.on = false
			c.period++
			c.edgeAt = c.t0 + float64(c.period)/c.Frequency
		} else {
			c.on = true
			c.edgeAt = c.t0 + (float64(c.period)+c.Duty)/c.Frequency
		}
	case PeakHold:
		c.on = true // a new chopping period starts
		c.period++
		c.edgeAt = c.t0 + float64(c.period+1)/c.Frequency
	}
}

// MaxControlGuards is the largest number of guards a Controller reports.
const MaxControlGuards = 1

// Guards writes the current guards at time t and coil current i into g
// and returns how many there are. A guard reaching zero from below is an
// event for AtGuard.
func (c *Controller) Guards(t, i float64, g []float64) int {
	if !c.active || c.Mode != PeakHold {
		return 0
	}
	target := c.Target(t)
	switch {
	case c.on && c.Regulation == Hysteresis:
		g[0] = i - (target + c.Band/2)
	case c.on:
		g[0] = i - target
	case c.Regulation == Hysteresis:
		g[0] = (target - c.Band/2) - i
	default:
		return 0 // off until the next period starts
	}
	return 1
}

// AtGuard applies guard k: the switch toggles.
func (c *Controller) AtGuard(int) { c.on = !c.on }
