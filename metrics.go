package coilkick

import (
	"encoding/json"
	"math"
)

// DecayFraction defines the current decay time: the time from the
// de-energize command until the coil current first falls to this fraction
// of its value at turn-off.
const DecayFraction = 0.01

// Interval is a duration measured from a command (s), or the fact that the
// thing it measures did not happen before the run ended. In JSON it is a
// number of seconds or null.
type Interval struct {
	Happened bool
	Seconds  float64
}

// MarshalJSON writes the seconds, or null when it did not happen.
func (iv Interval) MarshalJSON() ([]byte, error) {
	if !iv.Happened {
		return []byte("null"), nil
	}
	return json.Marshal(iv.Seconds)
}

// Metrics are the figures of one actuation. Times are from the energize
// command (pull-in side) or the de-energize command (release side).
type Metrics struct {
	// MotionDelay: energize → the plunger first leaves the rest stop
	// (the response delay of solenoid standards).
	MotionDelay Interval
	// PullIn: energize → the plunger first reaches the energized stop
	// (response delay + stroke time). Not Happened: it did not pull in.
	PullIn Interval
	// SeatImpactSpeed: plunger speed at that first arrival, m/s.
	SeatImpactSpeed float64
	// Bounces: rebounds from the energized stop while energized.
	Bounces int
	// CurrentAtSeating: coil current at that first arrival, A.
	CurrentAtSeating float64
	// PeakCurrent: largest |coil current| in the run, A.
	PeakCurrent float64
	// CurrentAtTurnOff: coil current at the de-energize command, A.
	CurrentAtTurnOff float64
	// Release: de-energize → the plunger leaves the energized stop (the
	// drop-out delay). Not Happened: it stayed seated.
	Release Interval
	// Drop: de-energize → the plunger reaches the rest stop (drop-out delay
	// + return time).
	Drop Interval
	// CurrentDecay: de-energize → |coil current| first falls to
	// DecayFraction of its turn-off value.
	CurrentDecay Interval
	// ClampConduction: de-energize → the suppression path (clamp, diode,
	// avalanche) first stops conducting, the coil current having reached
	// zero.
	ClampConduction Interval
	// PeakSwitchVoltage, MinSwitchVoltage: extremes of the switch node
	// voltage to ground, V.
	PeakSwitchVoltage, MinSwitchVoltage float64
	// PeakClampCurrent: largest current in the suppression path while the
	// switch is off (snubber: through its resistor; none: through the
	// switch's avalanche or body diode is not counted here), A.
	PeakClampCurrent float64
	// ClampEnergy: energy dissipated in the suppression part over the run
	// (one operation), J.
	ClampEnergy float64
	// AvalancheEnergy: energy dissipated in the switch while in avalanche, J.
	AvalancheEnergy float64
	// DroppedOutEnergized: the plunger left the energized stop while still
	// energized.
	DroppedOutEnergized bool

	// PeakSupplyCurrent: largest current drawn from the supply rail, A.
	PeakSupplyCurrent float64
	// MinRailVoltage: lowest voltage at the drive's supply terminals (the
	// bulk capacitor, or the source behind its resistance), V.
	MinRailVoltage float64
	// MaxRailVoltage: highest voltage at the drive's supply terminals, V
	// (energy returned by a bridge pumps a bulk capacitor up).
	MaxRailVoltage float64
	// SwitchingLossEstimate: the switch's edge losses over the run from
	// the rise and fall times, ½·V·I·t per edge (J); an estimate outside
	// the energy balance.
	SwitchingLossEstimate float64
	// DiodeLoss: energy in the recirculation path and bridge diodes, J.
	DiodeLoss float64
	// EnergyReturned: energy a bridge returned to the supply rail, J.
	EnergyReturned float64
	// FinalWindingTemperature, FinalHousingTemperature (K) at the end of the
	// run (equal to the starting ones without a thermal model).
	FinalWindingTemperature, FinalHousingTemperature float64
	// Hold: figures over the hold window.
	Hold HoldMetrics

	// Energy balance, J: SupplyEnergy = CoilLoss + SourceLoss + SwitchLoss
	// + ClampEnergy + MechanicalWork + EddyLoss + StoredChange + EnergyResidual.
	SupplyEnergy   float64
	CoilLoss       float64 // in the coil resistance
	SourceLoss     float64 // in the supply's source resistance
	SwitchLoss     float64 // conduction, capacitive turn-on, avalanche and body diode
	MechanicalWork float64 // done by the magnetic force on the plunger
	EddyLoss       float64 // in the equivalent eddy-current turn
	StoredChange   float64 // change of magnetic and capacitor energy over the run
	EnergyResidual float64 // what the balance leaves over (numerical error and omitted fast modes)
}

// HoldMetrics describe the hold: measured over the hold window, the
// second half of the time from the end of the peak or boost phase (the
// energize command for constant and PWM drive) to the de-energize command,
// when the drive has settled. Powers are means over the window (W).
type HoldMetrics struct {
	Measured                          bool
	Start, End                        float64 // s, the window
	MeanCurrent, MinCurrent           float64 // A
	MaxCurrent, Ripple                float64 // A, ripple = max − min
	ChoppingFrequency                 float64 // Hz, turn-on edges: (n − 1) over the time from the first to the last in the window
	CoilPower                         float64 // in the coil resistance
	FullVoltageCoilPower              float64 // the coil held at the full supply voltage, V²/R
	SwitchConductionPower, DiodePower float64
	SwitchingPower                    float64 // estimated from the edge times
	SupplyMeanCurrent                 float64 // A
	SupplyPower                       float64
	// ForceMargin: magnetic pull at the lowest hold current over the
	// passive force (spring + load) at the seat; 0 when not seated.
	ForceMargin float64
}

func (m *Metrics) init() {
	m.MinRailVoltage = math.Inf(1)
	m.MinSwitchVoltage = math.Inf(1)
	m.PeakSwitchVoltage = math.Inf(-1)
}

// EnergyResidualRel is the energy-balance residual as a fraction of the
// supply energy.
func (m *Metrics) EnergyResidualRel() float64 {
	if m.SupplyEnergy == 0 {
		return 0
	}
	return math.Abs(m.EnergyResidual) / m.SupplyEnergy
}
