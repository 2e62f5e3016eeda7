package coilkick

import (
	"encoding/json"
	"fmt"
	"math"
)

// DecayFraction defines the current decay time: the time from the
// de-energize command until the coil current first falls to this fraction
// of its value at turn-off.
const DecayFraction = 0.01

// BrakeMetrics describe the brake interval of a constant drive: the switch
// held off while energized, the current decaying through the suppression
// part (circuit.Control.BrakeAt).
type BrakeMetrics struct {
	// Happened: the brake began before the de-energize command.
	Happened bool
	// Start: energize → the switch turns off (s); End: energize → it turns
	// on again (s), when Ended (false: de-energized first).
	Start, End float64
	Ended      bool
	// CurrentAtStart, CurrentAtEnd: coil current at those instants (A).
	CurrentAtStart, CurrentAtEnd float64
	// GapAtStart (m) and SpeedAtStart (m/s, ≥ 0: toward the seat) of the
	// plunger when the brake began.
	GapAtStart, SpeedAtStart float64
}

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
	// LowestCurrent: the most negative coil current in the run (a reverse
	// pulse's), A; 0 when the current never reverses.
	LowestCurrent float64
	// Relatch: the plunger, released during a reverse pulse, seated again
	// while that pulse was still on (the reverse current beyond the
	// magnet's equivalent current pulls it in the other direction).
	Relatch Relatch
	// ReverseStart: the run time (s) a reverse pulse started (an H-bridge's
	// release pulse); not Happened: none.
	ReverseStart Interval
	// ReleaseAfterReverse: the reverse pulse's start → the plunger first
	// leaves the energized stop after it; not Happened: it did not (or
	// there was no reverse pulse).
	ReleaseAfterReverse Interval
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
	// ClampEnergy: energy the suppression part absorbs at turn-off, from
	// the de-energize command to the end of the run (the turn-off pulse:
	// until its conduction ends, and any later ringing), J. Energy it takes
	// while the drive is energized (fast-decay chopping sends the off-times
	// through it) is not in it: see ChopClampEnergy and Hold.ClampPower.
	// This is the figure a part's energy-per-pulse rating is compared with.
	ClampEnergy float64
	// ChopClampEnergy: energy the suppression part absorbed while the drive
	// was energized (fast-decay chopping), J.
	ChopClampEnergy float64
	// AvalancheEnergy: energy dissipated in the switch in avalanche after
	// the de-energize command (the single turn-off pulse), J.
	AvalancheEnergy float64
	// ChopAvalancheEnergy: avalanche energy while energized (fast-decay
	// chopping with no suppression part: repetitive avalanche), J.
	ChopAvalancheEnergy float64
	// OffDiodeLoss: energy in the bridge or recirculation diodes after the
	// de-energize command (reverse drive: the bridge diodes' share of the
	// turn-off), J.
	OffDiodeLoss float64
	// DropOut: the plunger left the energized stop while still energized.
	DropOut DropOut
	// FinalGap: the working gap at the end of the run, m.
	FinalGap float64
	// SeatedAtTurnOff: the plunger was held at the energized stop at the
	// de-energize command. Release and drop are measured only then.
	SeatedAtTurnOff bool
	// RingRetired: de-energize → the switch node's ring was retired to its
	// averaged energy (sim_ring.go); not Happened when it was followed to the
	// end. RingEnergy (J): its energy then; FinalRingEnergy (J): at the end.
	RingRetired                 Interval
	RingEnergy, FinalRingEnergy float64

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
	// Brake: the soft-landing brake interval of a constant drive
	// (drive.brake at, drive.brake for); Happened false without one.
	Brake BrakeMetrics
	// Storage: the storage capacitor of a capacitor-discharge drive
	// (supply.storage capacitor); Fitted false without one.
	Storage StorageMetrics

	// Energy balance, J: SupplyEnergy = CoilLoss + SourceLoss + SwitchLoss
	// + SuppressionLoss + DiodeLoss + MechanicalWork + EddyLoss + CoreLoss
	// + StoredChange + EnergyResidual.
	SupplyEnergy    float64
	CoilLoss        float64 // in the coil resistance
	SourceLoss      float64 // in the supply's source resistance
	SwitchLoss      float64 // conduction, capacitive turn-on, avalanche and body diode
	SuppressionLoss float64 // in the suppression part over the whole run: ClampEnergy + ChopClampEnergy
	MechanicalWork  float64 // done by the magnetic force on the plunger
	EddyLoss        float64 // in the equivalent eddy-current turn
	CoreLoss        float64 // in the coil's core-loss resistance
	StoredChange    float64 // change of magnetic and capacitor energy over the run
	EnergyResidual  float64 // what the balance leaves over (numerical error and omitted fast modes)
}

// HoldMetrics describe the hold: measured over the hold window, the
// second half of the time from the end of the peak or boost phase (the
// energize command for constant and PWM drive) to the de-energize command,
// when the drive has settled. Powers are means over the window (W).
type HoldMetrics struct {
	Measured   bool
	Start, End float64 // s, the window
	// Chopped: the drive switches during the hold (PWM, peak-and-hold).
	// Ripple and chopping frequency exist only then; a constant-voltage hold
	// reports whether its current has settled instead.
	Chopped                 bool
	MeanCurrent, MinCurrent float64 // A
	MaxCurrent, Ripple      float64 // A, ripple = max − min (chopped drives)
	// ChoppingFrequency (Hz): turn-on edges, (n − 1) over the time from the
	// first to the last in the window, rounded to 9 significant digits (the
	// edge times carry floating-point round-off of about 1e-16 of the run
	// time; an exact 20 kHz controller reports 20 kHz).
	ChoppingFrequency float64
	// EndCurrent: coil current at the end of the window (A).
	EndCurrent float64
	// SteadyCurrent: constant-voltage hold only, the current the coil
	// settles to, V/(R + switch + source resistance) with the winding
	// resistance at the end of the window (A).
	SteadyCurrent float64
	// Settled: constant-voltage hold only, EndCurrent lies within
	// SettleFraction of SteadyCurrent.
	Settled                           bool
	CoilPower                         float64 // in the coil resistance
	FullVoltageCoilPower              float64 // the coil held at the full supply voltage, V²/R
	SwitchConductionPower, DiodePower float64
	// ClampPower, AvalanchePower: in the suppression part and in the
	// switch's avalanche while chopping (fast decay sends the off-times
	// through them; 0 for slow decay).
	ClampPower, AvalanchePower float64
	SwitchingPower             float64 // estimated from the edge times
	SupplyMeanCurrent          float64 // A
	SupplyPower                float64
	// ForceMargin: magnetic pull at the seated gap at the lowest hold
	// current over the passive force (spring + load) at the seat, whether
	// or not the plunger stayed there.
	ForceMargin float64
}

// SettleFraction defines a settled constant-voltage hold: the coil current
// at the end of the hold window is within this fraction of V/R.
const SettleFraction = 0.01

// DropOut describes the plunger leaving the energized stop while the drive
// is still energized.
type DropOut struct {
	Happened bool
	Time     float64 // s after the energize command
	InHold   bool    // after the peak or boost phase (always, for constant and PWM drive)
	Current  float64 // A, coil current at that instant
	Pull     float64 // N, magnetic pull at the seated gap at that instant
	Passive  float64 // N, spring + load at the seated gap, pushing it open
}

// ReleaseNotApplicable reports why release and drop times do not apply to
// the run ("" when they do): the plunger never pulled in, or it dropped out
// while energized and was not seated at the de-energize command.
func (m *Metrics) ReleaseNotApplicable() string {
	switch {
	case !m.PullIn.Happened:
		return "not applicable: did not pull in"
	case !m.DropOut.Happened || m.SeatedAtTurnOff:
		return ""
	case m.DropOut.InHold:
		return "not applicable: dropped out during the hold"
	}
	return "not applicable: dropped out while energized"
}

func (m *Metrics) init() {
	m.MinRailVoltage = math.Inf(1)
	m.MinSwitchVoltage = math.Inf(1)
	m.PeakSwitchVoltage = math.Inf(-1)
}

// EnergyFlow returns the largest energy that flowed in the run (J): the
// supply's, a loss, the mechanical work or the change of stored energy.
// The residual is judged against it, so that a run fed from a charged
// capacitor (no supply energy) is judged too.
func (m *Metrics) EnergyFlow() float64 {
	e := 0.0
	for _, v := range [...]float64{m.SupplyEnergy, m.CoilLoss, m.SourceLoss, m.SwitchLoss, m.SuppressionLoss,
		m.DiodeLoss, m.MechanicalWork, m.EddyLoss, m.CoreLoss, m.StoredChange, m.EnergyReturned} {
		e = math.Max(e, math.Abs(v))
	}
	return e
}

// EnergyResidualRel is the energy-balance residual as a fraction of the
// largest energy that flowed (EnergyFlow; for the usual run that is the
// supply energy).
func (m *Metrics) EnergyResidualRel() float64 {
	e := m.EnergyFlow()
	if e == 0 {
		if m.EnergyResidual == 0 {
			return 0
		}
		return math.Inf(1)
	}
	return math.Abs(m.EnergyResidual) / e
}

// CompactRepeat is the number of conductions of one part, in a row, from
// which CompactEvents writes them as one line; CompactImpacts the number of
// impacts at one stop.
const (
	CompactRepeat  = 3
	CompactImpacts = 6
)

// CompactEvents returns the events for a person to read: a run of
// consecutive conduction events of one part (a ring turning the body diode
// on and off) with at least CompactRepeat conductions becomes one event,
// "switch body diode conducts 12 times between 151.2 ms and 152.9 ms", at
// the first start. Other events are kept as they are. The full list stays
// in Result.Events (and in --json).
func CompactEvents(evs []Event) []Event {
	var out []Event
	for k := 0; k < len(evs); {
		e := evs[k]
		if e.Kind == EventImpact {
			j := k
			for j < len(evs) && evs[j].Kind == EventImpact && evs[j].Part == e.Part {
				j++
			}
			if j-k < CompactImpacts {
				out = append(out, evs[k:j]...)
			} else {
				out = append(out, Event{Time: e.Time, Part: e.Part, Kind: EventOther,
					What: fmt.Sprintf("%d %s impacts between %s and %s, from %.3g to %.3g m/s", j-k, e.Part, formatMillis(e.Time),
						formatMillis(evs[j-1].Time), e.Speed, evs[j-1].Speed)})
			}
			k = j
			continue
		}
		if e.Kind != EventConductionStart {
			out = append(out, e)
			k++
			continue
		}
		// The run of this part's starts and ends only.
		j, starts := k, 0
		for j < len(evs) && evs[j].Part == e.Part && evs[j].Kind != EventOther {
			if evs[j].Kind == EventConductionStart {
				starts++
			}
			j++
		}
		if starts < CompactRepeat {
			out = append(out, evs[k:j]...)
			k = j
			continue
		}
		last := evs[j-1].Time
		out = append(out, Event{Time: e.Time, Part: e.Part, Kind: EventOther,
			What: fmt.Sprintf("%s conducts %d times between %s and %s", e.Part, starts, formatMillis(e.Time), formatMillis(last))})
		k = j
	}
	return out
}

// formatMillis writes a time in ms with 4 decimals, as the event list.
func formatMillis(t float64) string { return fmt.Sprintf("%.4f ms", t*1e3) }

// StorageMetrics are the figures of a capacitor-discharge drive's storage
// capacitor (sim_storage.go). Voltages are the capacitor's own (behind its
// ESR), V; energies J.
type StorageMetrics struct {
	Fitted bool
	// ChargeVoltage: the capacitor's voltage at the start of the run.
	ChargeVoltage float64
	// VoltageAtTurnOff: at the de-energize command (the residual after the
	// pulse); the charge voltage when the run never de-energized.
	VoltageAtTurnOff float64
	// FinalVoltage: at the end of the run.
	FinalVoltage float64
	// MinVoltage: the lowest over the run (sampled like the peaks: at
	// events and three points of each step).
	MinVoltage float64
	// PulseEnergy: ½·C·(V0² − V_off²), taken from the capacitor up to the
	// de-energize command; RunEnergy: ½·C·(V0² − V_end²) over the whole
	// run (the net of what the charging resistor put back). Negative:
	// the capacitor gained energy.
	PulseEnergy, RunEnergy float64
	// RechargeTarget: (1 − recharge fraction) · ChargeVoltage.
	RechargeTarget float64
	// Recharge: from the end of the run, the time the charging resistor
	// takes to bring the capacitor from FinalVoltage back to
	// RechargeTarget with the coil drawing nothing (0 when it is there
	// already). Not Happened: it cannot (NoRecharge says why).
	Recharge   Interval
	NoRecharge string
}

// Relatch is a re-latch during a reverse pulse: Time (s, run time) of the
// seat impact and Current (A) in the coil then.
type Relatch struct {
	Happened      bool
	Time, Current float64
}
