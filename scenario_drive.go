package coilkick

import (
	"fmt"
	"strings"
)

// driveModes are the values of drive.mode.
var driveModes = []string{DriveConstant, DrivePWM, DrivePeakHold, DriveBoostHold, DrivePulses}

// Modes that take a soft-landing brake (drive.brake at, brake for).
var brakeModes = []string{DriveConstant, DrivePWM}

// Modes that chop (their off-times decay slowly or fast).
var choppedModes = []string{DrivePWM, DrivePeakHold}

// driveSection is how the driver drives the coil while energized
// (DriveSpec); each key applies to the modes it lists (only).
var driveSection = &sectionSpec{path: "drive", keys: []*keySpec{
	{name: "mode", kind: keyText, example: DrivePeakHold, doc: strings.Join(driveModes, " | ")},
	{name: "frequency", rng: newRange(Frequency, "1 Hz to 10 MHz", ""), need: needWhere, example: "20 kHz",
		only: choppedModes, doc: "peak and hold: with fixed-frequency regulation only"},
	{name: "duty", rng: newRange(Dimensionless, "above 0 to 1", "fraction of the period"), example: "0.4",
		only: []string{DrivePWM}, doc: "fraction of the period"},
	{name: "peak current", rng: newRange(Current, "1 µA to 1 kA", ""), example: "1.5 A", only: []string{DrivePeakHold},
		doc: "at least hold current"},
	{name: "peak time", rng: newRange(Time, "1 µs to 60 min", ""), example: "30 ms", only: []string{DrivePeakHold},
		doc: "from energize"},
	{name: "hold current", rng: newRange(Current, "1 µA to 1 kA", ""), example: "0.4 A", only: []string{DrivePeakHold}},
	{name: "regulation", kind: keyText, example: "fixed frequency", only: []string{DrivePeakHold},
		doc: "fixed frequency (with frequency) or hysteresis (with band)"},
	{name: "band", rng: newRange(Current, "1 µA to 1 kA", ""), need: needWhere, example: "40 mA", only: []string{DrivePeakHold},
		doc: "hysteresis: the full band width, below twice the hold current"},
	{name: "decay", kind: keyText, need: optional, defText: "slow", example: "slow", only: choppedModes,
		doc: "slow: off-times recirculate through a diode across the coil; fast: through the suppression part"},
	{name: "recirculation drop", rng: newRange(Voltage, "0 V to 10 V", ""), need: needWhere, example: "0.7 V",
		only: choppedModes, doc: "slow decay: the recirculation path's drop"},
	{name: "recirculation resistance", rng: newRange(Resistance, "0 ohm to 1 kohm", ""), need: optional, defText: "0 ohm",
		example: "0.1 ohm", only: choppedModes, doc: "slow decay"},
	{name: "boost voltage", rng: newRange(Voltage, "100 mV to 1 kV", ""), example: "48 V", only: []string{DriveBoostHold},
		doc: "> supply.voltage"},
	{name: "boost time", rng: newRange(Time, "1 µs to 60 min", ""), example: "10 ms", only: []string{DriveBoostHold},
		doc: "the supply is raised that long"},
	{name: "brake at", rng: newRange(Time, "1 µs to 60 min", ""), need: whenGiven, example: "4 ms", only: brakeModes,
		doc: "soft landing (with brake for): the switch turns off this long after energize; `coilkick land` finds it"},
	{name: "brake for", rng: newRange(Time, "1 µs to 60 min", ""), need: needWhere, example: "2 ms", only: brakeModes,
		doc: "soft landing (with brake at): the switch stays off this long (constant: the current decays through the suppression part; pwm: as in its off-times), then the drive goes on; brake at + brake for before de-energize"},
	{name: "latch pulse", rng: newRange(Time, "1 µs to 60 min", ""), example: "20 ms", only: []string{DrivePulses},
		doc: "forward polarity (the current that adds to a permanent magnet's flux), full voltage from timing.energize at for this long; it sets the de-energize time (no timing.de-energize at)"},
	{name: "release at", rng: newRange(Time, "0 s to 60 min", ""), need: whenGiven, example: "221 ms", only: []string{DrivePulses},
		doc: "with release pulse: the run time the reverse pulse starts, at or after the latch pulse's end; needs suppression.type: reverse drive (the H-bridge)"},
	{name: "release pulse", rng: newRange(Time, "1 µs to 10 s", ""), need: needWhere, example: "5 ms", only: []string{DrivePulses},
		doc: "with release at: reverse polarity, −(supply + 2 bridge drops) across the coil this long; before timing.end"},
}}

// loadDrive reads the optional drive section (default: constant drive).
func (l *scenarioLoader) loadDrive(sec *yamlSection) {
	d := &l.s.Drive
	d.Mode = DriveConstant
	if sec == nil {
		return
	}
	mode, ok := l.scalar(sec, "mode", true, "one of: "+strings.Join(driveModes, ", "))
	if !ok {
		return
	}
	if !containsKey(driveModes, mode) {
		l.errf("drive.mode", "unknown drive mode %q; expected one of: %s", mode, strings.Join(driveModes, ", "))
		return
	}
	d.Mode = mode
	l.refuseOthers(sec, mode, func(applies []string) string {
		return fmt.Sprintf("does not apply to drive mode %q (its keys: %s)", mode, strings.Join(append([]string{"mode"}, applies...), ", "))
	})
	switch mode {
	case DriveConstant:
		l.loadBrake(sec)
	case DrivePWM:
		l.read(sec, "frequency", &d.Frequency)
		l.read(sec, "duty", &d.Duty)
		l.loadDecay(sec)
		l.loadBrake(sec)
	case DrivePeakHold:
		l.read(sec, "peak current", &d.PeakCurrent)
		l.read(sec, "peak time", &d.PeakTime)
		l.read(sec, "hold current", &d.HoldCurrent)
		l.exceed("drive.peak current", d.PeakCurrent, "drive.hold current", d.HoldCurrent, true)
		l.loadRegulation(sec)
		l.loadDecay(sec)
	case DriveBoostHold:
		l.read(sec, "boost voltage", &d.BoostVoltage)
		l.read(sec, "boost time", &d.BoostTime)
		l.exceed("drive.boost voltage", d.BoostVoltage, "supply.voltage", l.s.Supply.Voltage, false)
	case DrivePulses:
		l.loadPulses(sec)
	}
}

// loadPulses reads an H-bridge's pulses: the latch pulse, and the release
// pulse with its start (both or neither). The reverse pulse is then the
// drive's, not the suppression section's.
func (l *scenarioLoader) loadPulses(sec *yamlSection) {
	d := &l.s.Drive
	l.read(sec, "latch pulse", &d.LatchPulse)
	if !sec.has("release at") && !sec.has("release pulse") {
		return
	}
	if !sec.has("release at") {
		l.errf("drive.release pulse", "needs drive.release at (the run time the reverse pulse starts), with a unit")
		return
	}
	l.read(sec, "release at", &d.ReleaseAt)
	l.read(sec, "release pulse", &d.ReleasePulse)
	sp := &l.s.Suppression
	switch {
	case sp.Kind != "" && sp.Kind != SuppressBridge:
		l.errf("drive.release pulse", "a release pulse of reverse polarity needs suppression.type: reverse drive (an H-bridge); the suppression is %q", sp.Kind)
	case sp.ReversePulse > 0 || sp.ReverseDelay > 0:
		l.errf("drive.release pulse", "the reverse pulse is given twice: with drive.mode pulses remove suppression.reverse pulse and reverse pulse delay")
	}
}

// checkPulses sets the de-energize time of a pulses drive (the latch
// pulse's end; timing.de-energize at is refused) and checks the release
// pulse against the latch pulse and the run's end.
func (l *scenarioLoader) checkPulses(sec *yamlSection) {
	d, t := &l.s.Drive, &l.s.Timing
	if sec.has("de-energize at") {
		l.errf("timing.de-energize at", "with drive.mode pulses the de-energize time is the latch pulse's end (timing.energize at + drive.latch pulse): remove this key")
		return
	}
	if !l.ok["drive.latch pulse"] || !l.ok["timing.energize at"] {
		return
	}
	t.DeenergizeAt = t.EnergizeAt + d.LatchPulse
	l.ok["timing.de-energize at"] = true
	l.text["timing.de-energize at"] = fmt.Sprintf("%.6g s (energize at + latch pulse)", t.DeenergizeAt)
	if !l.ok["drive.release at"] || !l.ok["drive.release pulse"] {
		return
	}
	if d.ReleaseAt < t.DeenergizeAt*(1-LimitRelTol) {
		l.errf("drive.release at", "%s is before the latch pulse ends (%.6g s); expected at or after it", l.show("drive.release at"), t.DeenergizeAt)
	}
	if l.ok["timing.end"] && !(d.ReleaseAt+d.ReleasePulse < t.End) {
		l.errf("drive.release pulse", "the release pulse (%s from %s) ends at or after timing.end %s", l.show("drive.release pulse"), l.show("drive.release at"), l.showAt("timing.end"))
	}
}

// loadBrake reads the soft-landing brake of a constant or PWM drive: both
// keys or neither.
func (l *scenarioLoader) loadBrake(sec *yamlSection) {
	d := &l.s.Drive
	if !sec.has("brake at") && !sec.has("brake for") {
		return
	}
	l.read(sec, "brake at", &d.BrakeAt)
	if !sec.has("brake at") {
		l.errf("drive.brake for", "needs drive.brake at (the time after energize when the switch turns off), with a unit")
		return
	}
	l.read(sec, "brake for", &d.BrakeFor)
}

// checkBrake checks that a brake ends before the de-energize command.
func (l *scenarioLoader) checkBrake() {
	d, t := &l.s.Drive, &l.s.Timing
	if !l.ok["drive.brake at"] || !l.ok["drive.brake for"] || !l.ok["timing.energize at"] || !l.ok["timing.de-energize at"] {
		return
	}
	if window := t.DeenergizeAt - t.EnergizeAt; !(d.BrakeAt+d.BrakeFor < window) {
		l.errf("drive.brake for", "the brake (%s + %s) ends at or after de-energize (%.4g s after energize); expected brake at + brake for below it",
			l.show("drive.brake at"), l.show("drive.brake for"), window)
	}
}

// loadRegulation reads how a peak-and-hold drive regulates the hold
// current: within a hysteresis band, or chopping at a fixed frequency.
func (l *scenarioLoader) loadRegulation(sec *yamlSection) {
	d := &l.s.Drive
	reg, ok := l.scalar(sec, "regulation", true, `"hysteresis" or "fixed frequency"`)
	switch {
	case !ok:
	case reg == "hysteresis":
		d.Regulation = reg
		l.read(sec, "band", &d.Band)
		l.refuse(sec, "applies to fixed-frequency regulation only", "frequency")
		if d.Band >= 2*d.HoldCurrent && d.HoldCurrent > 0 {
			l.errf("drive.band", "%q must be below twice the hold current", l.text["drive.band"])
		}
	case reg == "fixed frequency":
		d.Regulation = reg
		l.read(sec, "frequency", &d.Frequency)
		l.refuse(sec, "applies to hysteresis regulation only", "band")
	default:
		l.errf("drive.regulation", "%q: expected \"hysteresis\" or \"fixed frequency\"", reg)
	}
}

// loadDecay reads how a chopped drive's off-times decay: slowly through
// the recirculation path (its drop and resistance), or fast through the
// suppression part.
func (l *scenarioLoader) loadDecay(sec *yamlSection) {
	d := &l.s.Drive
	text, ok := l.scalar(sec, "decay", false, `"slow" or "fast"`)
	switch {
	case !ok && !sec.has("decay"):
		d.Decay = "slow"
	case text == "slow" || text == "fast":
		d.Decay = text
	case ok:
		l.errf("drive.decay", "%q: expected \"slow\" (through the recirculation path) or \"fast\" (through the suppression part)", text)
	}
	if d.Decay == "slow" {
		l.read(sec, "recirculation drop", &d.RecirculationDrop)
		l.read(sec, "recirculation resistance", &d.RecirculationResistance)
	} else {
		l.refuse(sec, "applies to slow decay only", "recirculation drop", "recirculation resistance")
	}
}

// checkFrequency checks that a PWM or fixed-frequency chopping frequency
// gives at least one whole period while it applies: the energized time
// (de-energize at − energize at), less the peak time of a peak-and-hold
// drive. A slower one never completes a period, and its hold figures would
// mean nothing.
func (l *scenarioLoader) checkFrequency() {
	d, t := &l.s.Drive, &l.s.Timing
	if !l.ok["drive.frequency"] || !l.ok["timing.energize at"] || !l.ok["timing.de-energize at"] || !(t.DeenergizeAt > t.EnergizeAt) {
		return
	}
	window := t.DeenergizeAt - t.EnergizeAt
	what := "the drive is energized (timing.de-energize at − timing.energize at)"
	if d.Mode == DrivePeakHold {
		if !l.ok["drive.peak time"] || !(window > d.PeakTime) {
			return // no hold: the peak phase lasts until de-energize
		}
		window -= d.PeakTime
		what = "the hold lasts (timing.de-energize at − timing.energize at − drive.peak time)"
	}
	if d.Frequency*window < 1 {
		l.errf("drive.frequency", "%s gives less than one period in the %.4g s %s; expected a frequency of at least %.4g Hz",
			l.show("drive.frequency"), window, what, 1/window)
	}
}
