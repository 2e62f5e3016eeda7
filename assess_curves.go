package coilkick

import (
	"fmt"

	"coilkick/magnet"
)

// CurveData describes a magnet given as force curves: what the model was
// built from, what it assumed and where it extrapolates.
type CurveData struct {
	File        string
	Currents    []float64 // A, the curves' currents, ascending
	Voltages    []float64 // V, when the curves were given at voltages; nil otherwise
	Temperature float64   // K, the coil's temperature for voltages; 0 otherwise
	// The curves' data span in gap (m), against the stroke.
	DataGapMin, DataGapMax float64
	SeatedGap, RestGap     float64
	// LCR readings (H, Hz; 0 when not given).
	OpenInductance, OpenFrequency     float64
	ClosedInductance, ClosedFrequency float64
	// CurveClosedInductance (H) is the model's inductance at the seated gap
	// at zero current, from the curves.
	CurveClosedInductance float64
	// Smooth: λ between the curves' currents is the smooth spline (else
	// piecewise linear; magnet.CurveModel).
	Smooth bool
}

// newCurveData collects the description of a force-curve magnet.
func newCurveData(s *Scenario, cm *magnet.CurveModel, f *forceCurveFile) *CurveData {
	m := s.Magnet
	d := &CurveData{File: m.CurvesFile, Currents: cm.Currents(), SeatedGap: s.Plunger.SeatedGap, RestGap: s.Plunger.RestGap,
		OpenInductance: m.OpenInductance, OpenFrequency: m.OpenFrequency,
		ClosedInductance: m.ClosedInductance, ClosedFrequency: m.ClosedFrequency,
		CurveClosedInductance: cm.SmallSignalInductance(s.Plunger.SeatedGap), Smooth: cm.Smooth()}
	if f.voltage {
		d.Voltages, d.Temperature = append([]float64(nil), f.volts...), m.CurveTemperature
	}
	d.DataGapMin, d.DataGapMax = cm.DataGaps()
	return d
}

// lcrFarTol is the relative difference between the closed-gap LCR reading
// and the curves' value above which the note explains it (common
// practice, no source: LCR readings and data-sheet curves agree to a few
// per cent at best).
const lcrFarTol = 0.05

// Notes says what the model assumed, where it extrapolates, and how the
// closed-gap LCR reading compares with the curves.
func (d *CurveData) Notes() []string {
	top := d.Currents[len(d.Currents)-1]
	notes := []string{fmt.Sprintf("anchored at the open gap by the measured %s, taken as linear there (W' = ½·L·i²)", inductanceText(d.OpenInductance, d.OpenFrequency))}
	if len(d.Currents) == 1 {
		notes = append(notes, fmt.Sprintf("one curve: the magnet is taken as linear at every current (no saturation), L(x) = L_open + 2·∫F/i² dx at %.3g A", d.Currents[0]))
	} else {
		how := "a smooth spline through the curves' co-energy"
		if !d.Smooth {
			how = "piecewise linear in the current (the curves saturate too sharply between their currents for a smooth spline to keep the flux rising; the current's slope shows corners at the curves' currents: a curve between them smooths it)"
		}
		notes = append(notes, fmt.Sprintf("%d curves, %.3g A to %.3g A: saturation as the curves show it; the flux linkage between them is %s; below %.3g A interpolated toward zero current", len(d.Currents), d.Currents[0], top, how, d.Currents[0]))
	}
	if d.Voltages != nil {
		notes = append(notes, fmt.Sprintf("curves given at voltages; currents = V/R at the coil's %.4g degC", d.Temperature-273.15))
	}
	notes = append(notes, fmt.Sprintf("extrapolates above %.3g A (the highest curve): there the flux rises at the open-gap inductance, as in saturated iron", top))
	if d.DataGapMin > d.SeatedGap*(1+1e-9) {
		notes = append(notes, fmt.Sprintf("extrapolates below %.4g mm of gap (the curves start there; the stroke from %.4g mm): the force is held at the curves' first value", d.DataGapMin*1e3, d.SeatedGap*1e3))
	}
	if d.DataGapMax < d.RestGap*(1-1e-9) {
		notes = append(notes, fmt.Sprintf("extrapolates above %.4g mm of gap (the curves end there; the stroke to %.4g mm): the force is held at the curves' last value", d.DataGapMax*1e3, d.RestGap*1e3))
	}
	if d.ClosedInductance > 0 {
		notes = append(notes, d.lcrNote())
	}
	return notes
}

// curveRangeFactor is how far below the lowest curve's current a run's
// peak current may stay before a warning asks for the curves' current
// unit (common practice, no source: data sheets give curves near the
// rated current, a factor of a few either way).
const curveRangeFactor = 5

// runNotes adds to a run's notes where it used the force-curve model
// outside its data: currents above the highest curve, a peak current far
// below the lowest (a unit mistake in the file?), gaps the curves do not
// cover.
func (d *CurveData) runNotes(m *Metrics, note func(fig, level, format string, args ...any)) {
	low, top := d.Currents[0], d.Currents[len(d.Currents)-1]
	switch {
	case m.PeakCurrent > top*(1+LimitRelTol):
		note("peak current", "info", "the magnet comes from force curves up to %.3g A; this run reaches %.3g A, where the model extrapolates (flux rising at the open-gap inductance, as in saturated iron): the pull there is an estimate; add a curve at that current", top, m.PeakCurrent)
	case m.PeakCurrent*curveRangeFactor < low:
		note("peak current", "warning", "this run's peak current %.3g A is below 1/%d of the lowest force curve's %.3g A: the pull comes from interpolating toward zero current; check the unit of the curves' current (or voltage) column", m.PeakCurrent, curveRangeFactor, low)
	}
	if d.DataGapMin > d.SeatedGap*(1+1e-9) || d.DataGapMax < d.RestGap*(1-1e-9) {
		note("", "info", "the force curves cover gaps %.4g–%.4g mm of the stroke's %.4g–%.4g mm: outside them the force is held at the curves' end values", d.DataGapMin*1e3, d.DataGapMax*1e3, d.SeatedGap*1e3, d.RestGap*1e3)
	}
}

// inductanceText is "95 mH (LCR at 1 kHz)".
func inductanceText(l, f float64) string {
	s := henry(l)
	switch {
	case f >= 1e3:
		s += fmt.Sprintf(" (LCR at %.4g kHz)", f/1e3)
	case f > 0:
		s += fmt.Sprintf(" (LCR at %.4g Hz)", f)
	}
	return s
}

// henry is an inductance for the notes: "196 mH", "1.26 H".
func henry(l float64) string {
	if l >= 1 {
		return fmt.Sprintf("%.3g H", l)
	}
	return fmt.Sprintf("%.3g mH", l*1e3)
}

// lcrNote compares the closed-gap LCR reading with the curves' value.
func (d *CurveData) lcrNote() string {
	r := d.ClosedInductance / d.CurveClosedInductance
	head := fmt.Sprintf("closed-gap reading %s against %s from the curves (%+.0f %%)", inductanceText(d.ClosedInductance, d.ClosedFrequency), henry(d.CurveClosedInductance), 100*(r-1))
	switch {
	case r < 1-lcrFarTol:
		return head + ": a reading below the curves' value is what eddy currents in solid iron do at the LCR's test frequency (the AC flux stays near the surface, so the reading is below the DC inductance); the model uses the curves, and a time constant L/R taken from the reading would be too short"
	case r > 1+lcrFarTol:
		return head + ": a reading above the curves' value means the curves give too little pull at the small gaps (taken hot, at a different stroke origin, or the lowest curve already saturated at the seat), or the seated gap is smaller than stated; check the stroke origin and the seated gap"
	}
	return head + ": they agree"
}
