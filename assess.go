package coilkick

import (
	"fmt"
	"math"

	"coilkick/circuit"
)

// Check is one rating or requirement compared with the run's figure.
type Check struct {
	Name  string  // e.g. "pull-in time"
	Unit  string  // SI unit of Value and Limit
	Value float64 // the run's figure (meaningless when !Happened)
	Limit float64 // the scenario's maximum
	// Happened is false when the figure does not exist (the plunger never
	// pulled in, say); such a check fails.
	Happened bool
	Pass     bool
	// Min: the limit is a minimum (a margin), not a maximum.
	Min bool
	// NotApplicable, when not empty, says why the check does not apply to
	// this run (release time after a drop-out during the hold, say); such a
	// check neither passes nor fails (Pass is false, Failed ignores it).
	NotApplicable string
}

// LimitRelTol is the comparison rule for limits: a figure within this
// fraction of its limit counts as equal to it (a maximum passes, a minimum
// passes). The integrator reproduces closed forms to 1e-6 relative at its
// default tolerance (sim_ref_test.go), so the model does not resolve
// differences below that; a clamp at exactly the rating computed as
// 60.00000003 V must not fail.
const LimitRelTol = 1e-6

// WithinMax reports whether value does not exceed the maximum limit under
// the LimitRelTol rule.
func WithinMax(value, limit float64) bool {
	return value <= limit+LimitRelTol*math.Abs(limit)
}

// AtLeast reports whether value reaches the minimum limit under the
// LimitRelTol rule.
func AtLeast(value, limit float64) bool {
	return value >= limit-LimitRelTol*math.Abs(limit)
}

func boolFigure(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// Note is a safety caution or a warning attached to a figure.
type Note struct {
	Figure string // the metric it concerns ("" for the run as a whole)
	Level  string // "caution" (can hurt someone or destroy a part), "warning" or "info"
	Text   string
}

// Thresholds used by the safety notes.
const (
	// KickCautionVoltage: a turn-off kick above this is flagged as hazardous
	// to touch (the 50 V figure commonly used for extra-low-voltage
	// touch safety; common practice, no source).
	KickCautionVoltage = 50.0 // V
	// HotSurfaceCaution: winding temperatures above this are flagged as a
	// burn risk (common practice, no source).
	HotSurfaceCaution = 333.15 // K (60 °C)
	// ResidualWarning: an energy-balance residual above this fraction of the
	// largest energy that flowed is flagged as a numerical problem (a run
	// above ResidualLimit fails).
	ResidualWarning = 1e-6
	// AudibleLimit: chopping below this frequency is flagged as audible
	// (common practice, no source).
	AudibleLimit = 20e3 // Hz
)

// Assessment holds the checks and notes of a run.
type Assessment struct {
	Checks []Check
	Notes  []Note
}

// Failed reports whether any applicable check failed.
func (a *Assessment) Failed() bool {
	return a.FailedCount() > 0
}

// FailedCount returns the number of applicable checks that fail.
func (a *Assessment) FailedCount() int {
	n := 0
	for _, c := range a.Checks {
		if !c.Pass && c.NotApplicable == "" {
			n++
		}
	}
	return n
}

// NotApplicableCount returns the number of checks that do not apply.
func (a *Assessment) NotApplicableCount() int {
	n := 0
	for _, c := range a.Checks {
		if c.NotApplicable != "" {
			n++
		}
	}
	return n
}

// Assess compares a run with the model's ratings and requirements and
// writes the safety notes.
func (md *Model) Assess(res *Result) Assessment {
	var a Assessment
	m := &res.Metrics
	a.Checks = md.checks(m)
	note := func(fig, level, format string, args ...any) {
		a.Notes = append(a.Notes, Note{Figure: fig, Level: level, Text: fmt.Sprintf(format, args...)})
	}
	md.driveNotes(m, note)
	md.reverseNotes(m, note)
	storageNotes(m, note)
	if c := md.Curves; c != nil {
		c.runNotes(m, note)
	}
	if d := m.DropOut; d.Happened {
		note("stays seated while energized", "warning", "%s", md.dropOutText(d))
	}
	if hot := math.Max(md.Temperature, m.FinalWindingTemperature); hot > HotSurfaceCaution {
		note("", "caution", "the winding runs at %.0f degC: its surface may be hot enough to burn", hot-273.15)
	}
	if r := m.EnergyResidualRel(); r > ResidualWarning {
		note("energy residual", "warning", "the energy balance leaves %.2g of the largest energy that flowed unexplained: tighten the solver tolerance", r)
	}
	note("", "info", "these are model estimates from the data in the scenario; confirm on the bench, and follow local electrical codes and licensed practice for wiring, insulation and protection")
	return a
}

// checks compares the run's metrics with the ratings and requirements
// that are set.
func (md *Model) checks(m *Metrics) []Check {
	var checks []Check
	lim := md.Limits
	maxCheck := func(name, unit string, value, limit float64, happened bool) {
		if limit <= 0 {
			return
		}
		checks = append(checks, Check{Name: name, Unit: unit, Value: value, Limit: limit,
			Happened: happened, Pass: happened && WithinMax(value, limit)})
	}
	na := m.ReleaseNotApplicable()
	timeCheck := func(name string, iv Interval, limit float64) {
		if limit > 0 && na != "" {
			checks = append(checks, Check{Name: name, Unit: "s", Limit: limit, NotApplicable: na})
			return
		}
		maxCheck(name, "s", iv.Seconds, limit, iv.Happened)
	}
	maxCheck("pull-in time", "s", m.PullIn.Seconds, lim.MaxPullIn, m.PullIn.Happened)
	timeCheck("release time", m.Release, lim.MaxRelease)
	timeCheck("drop time", m.Drop, lim.MaxDrop)
	maxCheck("peak switch voltage", "V", m.PeakSwitchVoltage, lim.SwitchVoltage, true)
	maxCheck("avalanche energy", "J", m.AvalancheEnergy, lim.AvalancheEnergy, true)
	maxCheck("clamp energy", "J", m.ClampEnergy, lim.ClampEnergy, true)
	maxCheck("peak clamp current", "A", m.PeakClampCurrent, lim.ClampCurrent, true)
	if lim.MinHoldMargin > 0 {
		checks = append(checks, Check{Name: "hold force margin", Unit: "", Value: m.Hold.ForceMargin, Limit: lim.MinHoldMargin,
			Happened: m.Hold.Measured, Min: true,
			Pass: m.Hold.Measured && AtLeast(m.Hold.ForceMargin, lim.MinHoldMargin)})
	}
	if m.PullIn.Happened {
		// A plunger that drops out while energized fails whatever the ratings.
		checks = append(checks, Check{Name: "stays seated while energized", Happened: true,
			Value: boolFigure(!m.DropOut.Happened), Min: true, Pass: !m.DropOut.Happened})
	}
	return checks
}

// releaseHolder says what holds a plunger that did not release: a
// permanent magnet whose pull at the seat with no current beats the spring
// and load, else residual flux or a weak spring.
func (md *Model) releaseHolder() string {
	p := md.Plunger
	if zeroCurrentFlux(md.Magnet, p.GapMin) != 0 {
		if hold, passive := md.Magnet.Force(0, p.GapMin), p.PassiveForce(p.GapMin, 0); hold > passive {
			return fmt.Sprintf("the permanent magnet holds it seated with no current, %.3g N against %.3g N spring + load: "+
				"a latching magnet releases only with a reverse pulse", hold, passive)
		}
	}
	return "residual flux or a weak spring holds it"
}

// driveNotes writes the notes on the motion, the turn-off, the
// suppression and the chopping.
func (md *Model) driveNotes(m *Metrics, note func(fig, level, format string, args ...any)) {
	lim := md.Limits
	if !m.PullIn.Happened {
		note("pull-in time", "warning", "the plunger did not pull in: the magnetic force never overcame the spring and load before the run ended")
	} else if m.ReleaseNotApplicable() == "" && !m.Release.Happened {
		note("release time", "warning", "the plunger did not release before the run ended (%s)", md.releaseHolder())
	}
	if m.PeakSwitchVoltage > KickCautionVoltage {
		note("peak switch voltage", "caution", "the switch node kicks to %.0f V at turn-off: above %.0f V, treat the coil terminals and switch node as hazardous to touch, and use probes and insulation rated for it", m.PeakSwitchVoltage, KickCautionVoltage)
	}
	sw := md.Drive.Switch
	if m.AvalancheEnergy > 0 {
		note("avalanche energy", "caution", "the switch reached its breakdown voltage (%.0f V) and absorbed %s in avalanche: check its single-pulse and repetitive avalanche ratings at the operating rate and temperature", sw.BreakdownVoltage, formatEnergy(m.AvalancheEnergy))
	}
	if m.EnergyReturned > 0 && !m.Storage.Fitted {
		note("energy returned to supply", "caution", "the reverse drive returns %s to the supply at each turn-off (rail peak %.1f V): a supply that cannot sink current, or a small bulk capacitor, will rise; check what else hangs on that rail", formatEnergy(m.EnergyReturned), m.MaxRailVoltage)
	}
	if md.Drive.HasSwitchCap() && md.CoreLossResistance == 0 && md.EddyResistance == 0 && md.Drive.Suppressor.Kind != circuit.Snubber {
		note("lowest switch voltage", "info", "the switch and winding capacitance ring with the coil once the suppression stops conducting, and nothing but the coil resistance damps the ring: a real coil's core loss ends it within a few cycles, the model's lasts longer (give coil.core loss resistance, from the ring's decay on a scope, to damp it)")
	}
	if md.Drive.Suppressor.Kind == circuit.None {
		note("peak switch voltage", "caution", "no suppression part is fitted: every turn-off dumps the coil's stored energy into the switch; a clamp or freewheel path is the usual practice")
	}
	if lim.SwitchVoltage > 0 && !WithinMax(m.PeakSwitchVoltage, 0.8*lim.SwitchVoltage) && WithinMax(m.PeakSwitchVoltage, lim.SwitchVoltage) {
		note("peak switch voltage", "warning", "the switch voltage peak is within 20 %% of its rating (common derating practice, no source)")
	}
	if h := m.Hold; h.Measured && h.Chopped && h.ChoppingFrequency > 0 && !AtLeast(h.ChoppingFrequency, AudibleLimit) {
		note("chopping frequency", "warning", "the driver chops at %.3g kHz, inside the audible range (below %.0f kHz, common practice, no source): the coil may whine", h.ChoppingFrequency/1e3, AudibleLimit/1e3)
	}
}

// reverseNotes warns of what a reverse pulse does to a latching magnet: a
// reverse current beyond the magnet's stated demagnetising current (its
// knee), and a re-latch in the other direction during the pulse.
func (md *Model) reverseNotes(m *Metrics, note func(fig, level, format string, args ...any)) {
	if k := md.DemagCurrent; k > 0 && !WithinMax(-m.LowestCurrent, k) {
		note("lowest current", "warning", "the coil current reaches %s, beyond the magnet's demagnetising current −%s (magnet.gap law.demagnetising current): "+
			"the reverse field passes the magnet's knee and may weaken it for good; shorten the reverse pulse or lower its voltage", formatCurrent(m.LowestCurrent), formatCurrent(k))
	}
	if rl := m.Relatch; rl.Happened {
		note("release time", "warning", "the plunger released during the reverse pulse but seated again at %s, with %s in the coil while the pulse was still on: "+
			"past the magnet's equivalent current i_m the pull grows again as (i + i_m)² and latches it the other way; shorten the reverse pulse (or lower its voltage) so that it ends before the plunger can return",
			formatDuration(rl.Time), formatCurrent(rl.Current))
	}
}

// dropOutText describes a drop-out while energized and what to change.
func (md *Model) dropOutText(d DropOut) string {
	phase := "while energized, before the hold"
	if d.InHold {
		phase = "during the hold"
	}
	advice := "raise the hold current or duty"
	if md.Control.Mode == circuit.Constant {
		advice = "the coil's pull at the supply voltage is too weak: raise the supply or the ampere-turns, or lower the spring or load"
	}
	text := fmt.Sprintf("the plunger drops out %s, %s after energize, at %s: the pull at the seated gap (%.3g N) fell to the spring + load there (%.3g N), so a current below this does not hold it",
		phase, formatDuration(d.Time), formatCurrent(d.Current), d.Pull, d.Passive)
	if k := md.Limits.MinHoldMargin; k > 0 {
		if ih, ok := seatHoldingCurrent(md, k); ok {
			text += fmt.Sprintf("; the hold force margin %.3g needs %s", k, formatCurrent(ih))
		}
	}
	return text + "; " + advice
}

// formatCurrent writes a current in A or mA.
func formatCurrent(a float64) string {
	if math.Abs(a) >= 1 {
		return fmt.Sprintf("%.3g A", a)
	}
	return fmt.Sprintf("%.3g mA", a*1e3)
}

// formatDuration writes a time in s, ms or µs.
func formatDuration(t float64) string {
	switch a := math.Abs(t); {
	case a >= 1:
		return fmt.Sprintf("%.4g s", t)
	case a >= 1e-3:
		return fmt.Sprintf("%.4g ms", t*1e3)
	default:
		return fmt.Sprintf("%.3g µs", t*1e6)
	}
}

// formatEnergy writes an energy with a convenient prefix.
func formatEnergy(j float64) string {
	switch a := math.Abs(j); {
	case a >= 1:
		return fmt.Sprintf("%.3g J", j)
	case a >= 1e-3:
		return fmt.Sprintf("%.3g mJ", j*1e3)
	default:
		return fmt.Sprintf("%.3g µJ", j*1e6)
	}
}
