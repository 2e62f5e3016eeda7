package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"coilkick"
)

// si formats v (in unit) with an engineering prefix and 3 significant
// digits: si(0.00763, "s") = "7.63 ms".
func si(v float64, unit string) string {
	if v == 0 {
		return "0 " + unit
	}
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return "n/a"
	}
	prefixes := []struct {
		p string
		f float64
	}{{"G", 1e9}, {"M", 1e6}, {"k", 1e3}, {"", 1}, {"m", 1e-3}, {"µ", 1e-6}, {"n", 1e-9}, {"p", 1e-12}}
	a := math.Abs(v)
	if a < 1e-12 {
		return strconv.FormatFloat(v, 'e', 2, 64) + " " + unit
	}
	for _, p := range prefixes {
		if a >= p.f*0.9995 || p.p == "p" {
			return strconv.FormatFloat(v/p.f, 'g', 3, 64) + " " + p.p + unit
		}
	}
	return strconv.FormatFloat(v, 'g', 3, 64) + " " + unit
}

func interval(iv coilkick.Interval, missing string) string {
	if !iv.Happened {
		return missing
	}
	return si(iv.Seconds, "s")
}

// summary prints the text summary of a run: figures in sections, each
// check beside its figure, each note once (beside its figure, or under
// "Notes" when no printed row carries it).
type summary struct {
	b       *bufio.Writer
	checks  map[string]coilkick.Check
	notes   map[string][]coilkick.Note
	printed map[string]bool // figures whose notes were printed
}

func newSummary(b *bufio.Writer, as *coilkick.Assessment) *summary {
	s := &summary{b: b, checks: map[string]coilkick.Check{}, notes: map[string][]coilkick.Note{}, printed: map[string]bool{}}
	for _, c := range as.Checks {
		s.checks[c.Name] = c
	}
	for _, n := range as.Notes {
		s.notes[n.Figure] = append(s.notes[n.Figure], n)
	}
	return s
}

// checkText is the verdict part of a row: the limit and pass/FAIL, or n/a.
func checkText(c coilkick.Check) string {
	if c.NotApplicable != "" {
		return c.NotApplicable
	}
	verdict := "pass"
	if !c.Pass {
		verdict = "FAIL"
	}
	if c.Min && c.Limit == 0 {
		return verdict // a yes/no requirement
	}
	kind, op := "rating", "<="
	if c.Unit == "s" || c.Min {
		kind = "required"
	}
	if c.Min {
		op = ">="
	}
	lim := si(c.Limit, c.Unit)
	if c.Unit == "" {
		lim = strconv.FormatFloat(c.Limit, 'g', 3, 64)
	}
	return fmt.Sprintf("%s %s %-10s %s", kind, op, lim, verdict)
}

// row prints a figure, its check and its notes.
func (s *summary) row(name, value string) {
	line := fmt.Sprintf("  %-29s %-14s", name, value)
	if c, ok := s.checks[name]; ok {
		line += " " + checkText(c)
	}
	fmt.Fprintln(s.b, strings.TrimRight(line, " "))
	s.notesOf(name)
}

// notesOf prints the notes of a figure, once.
func (s *summary) notesOf(name string) {
	if s.printed[name] {
		return
	}
	s.printed[name] = true
	for _, n := range s.notes[name] {
		fmt.Fprintf(s.b, "    %s: %s\n", strings.ToUpper(n.Level), n.Text)
	}
}

func printSummary(w io.Writer, path string, md *coilkick.Model, res *coilkick.Result, as *coilkick.Assessment) {
	m := &res.Metrics
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick: %s\n", md.Name)
	fmt.Fprintf(b, "scenario: %s\n", path)
	fmt.Fprintf(b, "supply %s, coil %s at %.0f degC, suppression: %s\n\n",
		si(md.Drive.Supply.Voltage, "V"), si(md.CoilResistance(), "ohm"), md.Temperature-273.15, md.Drive.Suppressor.Kind)
	s := newSummary(b, as)
	s.pullIn(m)
	s.hold(md, m)
	s.supply(m)
	s.storage(m.Storage)
	s.release(m)
	s.stress(m)
	s.balance(m)
	fmt.Fprintln(b, "\nEvents")
	for _, e := range coilkick.CompactEvents(res.Events) {
		fmt.Fprintf(b, "  %10.4f ms  %s\n", e.Time*1e3, e.What)
	}
	fmt.Fprintf(b, "\nSolver: %s, %d steps (%d rejected), %d events, %d evaluations",
		res.Stats.Method, res.Stats.Steps, res.Stats.Rejected, res.Stats.Events, res.Stats.Evaluations)
	if n := res.Stats.PeriodsRepeated; n > 0 {
		fmt.Fprintf(b, ", %d periods of the steady hold repeated", n)
	}
	fmt.Fprintln(b)
	if n := res.Trace.Thinned; n > 0 {
		fmt.Fprintf(b, "Trace: thinned %d times to stay within %d rows (the rows of the lowest and highest current are kept; the figures above do not depend on it)\n", n, coilkick.MaxTraceRows)
	}
	// Notes not printed beside a figure, and the general ones.
	var rest []coilkick.Note
	for _, n := range as.Notes {
		if !s.printed[n.Figure] || n.Figure == "" {
			rest = append(rest, n)
		}
	}
	if len(rest) > 0 {
		fmt.Fprintln(b, "\nNotes")
		for _, n := range rest {
			fmt.Fprintf(b, "  %s: %s\n", strings.ToUpper(n.Level), n.Text)
		}
	}
	if len(as.Checks) > 0 {
		na := as.NotApplicableCount()
		applicable := len(as.Checks) - na
		fmt.Fprintf(b, "\nChecks: %d of %d pass", applicable-as.FailedCount(), applicable)
		if na > 0 {
			fmt.Fprintf(b, ", %d not applicable", na)
		}
		fmt.Fprintln(b)
	}
}

func (s *summary) pullIn(m *coilkick.Metrics) {
	fmt.Fprintln(s.b, "Pull-in")
	s.row("motion delay", interval(m.MotionDelay, "did not move"))
	s.row("pull-in time", interval(m.PullIn, "did not pull in"))
	if m.PullIn.Happened {
		s.row("seat impact speed", fmt.Sprintf("%.3g m/s", m.SeatImpactSpeed))
		s.row("bounces", strconv.Itoa(m.Bounces))
		s.row("current at seating", si(m.CurrentAtSeating, "A"))
	}
	s.row("peak current", si(m.PeakCurrent, "A"))
	s.brake(m.Brake)
}

// brake prints the soft-landing brake interval (nothing without one).
func (s *summary) brake(b coilkick.BrakeMetrics) {
	if !b.Happened {
		return
	}
	end := "de-energize (no end)"
	if b.Ended {
		end = si(b.End, "s")
	}
	s.row("brake (switch off)", fmt.Sprintf("%s to %s after energize", si(b.Start, "s"), end))
	s.row("current at brake start", fmt.Sprintf("%s (gap %.3g mm, %.3g m/s toward the seat)", si(b.CurrentAtStart, "A"), 1e3*b.GapAtStart, b.SpeedAtStart))
	if b.Ended {
		s.row("current at brake end", si(b.CurrentAtEnd, "A"))
	}
}

func (s *summary) hold(md *coilkick.Model, m *coilkick.Metrics) {
	h := m.Hold
	if !h.Measured {
		if m.PullIn.Happened {
			s.dropOut(m)
		}
		return
	}
	fmt.Fprintf(s.b, "Hold (%v drive; window %s to %s)\n", md.DriveName(), si(h.Start, "s"), si(h.End, "s"))
	s.row("hold current mean", si(h.MeanCurrent, "A"))
	if h.Chopped {
		s.row("hold current ripple", fmt.Sprintf("%s (%s to %s)", si(h.Ripple, "A"), si(h.MinCurrent, "A"), si(h.MaxCurrent, "A")))
		s.row("chopping frequency", si(h.ChoppingFrequency, "Hz"))
	} else {
		text := fmt.Sprintf("%s, settled (within %g %% of V/R = %s)", si(h.EndCurrent, "A"), 100*coilkick.SettleFraction, si(h.SteadyCurrent, "A"))
		switch {
		case m.Storage.Fitted:
			// V/R through the charging path: no useful reference.
			text = si(h.EndCurrent, "A") + " (from the storage capacitor)"
		case !h.Settled:
			text = fmt.Sprintf("%s, not settled (%.3g %% of V/R = %s)", si(h.EndCurrent, "A"), 100*h.EndCurrent/h.SteadyCurrent, si(h.SteadyCurrent, "A"))
		}
		s.row("hold current at end", text)
	}
	s.row("coil power in hold", fmt.Sprintf("%s (full voltage: %s)", si(h.CoilPower, "W"), si(h.FullVoltageCoilPower, "W")))
	s.row("switch conduction power", si(h.SwitchConductionPower, "W"))
	if h.DiodePower > 0 {
		s.row("recirculation diode power", si(h.DiodePower, "W"))
	}
	if h.ClampPower > 0 {
		s.row("clamp power while chopping", si(h.ClampPower, "W"))
	}
	if h.AvalanchePower > 0 {
		s.row("avalanche power while chopping", si(h.AvalanchePower, "W"))
	}
	if h.SwitchingPower > 0 {
		s.row("switching power (estimate)", si(h.SwitchingPower, "W"))
	}
	s.row("supply current mean", si(h.SupplyMeanCurrent, "A"))
	if m.PullIn.Happened {
		s.row("hold force margin", fmt.Sprintf("%.2f", h.ForceMargin))
		s.dropOut(m)
	}
}

// dropOut prints whether the plunger stayed seated, and the drop-out.
func (s *summary) dropOut(m *coilkick.Metrics) {
	d := m.DropOut
	if !d.Happened {
		s.row("stays seated while energized", "yes")
		return
	}
	s.row("stays seated while energized", "NO")
	fmt.Fprintf(s.b, "  %-29s %s after energize, at %s\n", "drop-out", si(d.Time, "s"), si(d.Current, "A"))
	fmt.Fprintf(s.b, "  %-29s pull %.3g N against spring + load %.3g N\n", "  force balance at the seat", d.Pull, d.Passive)
}

func (s *summary) supply(m *coilkick.Metrics) {
	fmt.Fprintln(s.b, "Supply")
	s.row("peak supply current", si(m.PeakSupplyCurrent, "A"))
	s.row("lowest rail voltage", si(m.MinRailVoltage, "V"))
	s.row("highest rail voltage", si(m.MaxRailVoltage, "V"))
	if m.EnergyReturned > 0 {
		s.row("energy returned to supply", si(m.EnergyReturned, "J"))
	}
}

// storage prints a capacitor-discharge drive's storage capacitor figures.
func (s *summary) storage(st coilkick.StorageMetrics) {
	if !st.Fitted {
		return
	}
	fmt.Fprintln(s.b, "Storage capacitor")
	s.row("charge voltage", si(st.ChargeVoltage, "V"))
	s.row("voltage at turn-off", si(st.VoltageAtTurnOff, "V"))
	s.row("voltage at end of run", si(st.FinalVoltage, "V"))
	s.row("lowest capacitor voltage", si(st.MinVoltage, "V"))
	s.row("energy taken in the pulse", si(st.PulseEnergy, "J"))
	s.row("energy taken over the run", si(st.RunEnergy, "J"))
	if st.Recharge.Happened {
		s.row("recharge after the run", fmt.Sprintf("%s to %s (within %.3g %% of the charge voltage)",
			si(st.Recharge.Seconds, "s"), si(st.RechargeTarget, "V"), 100*(1-st.RechargeTarget/st.ChargeVoltage)))
	} else {
		s.row("recharge after the run", st.NoRecharge)
	}
}

func (s *summary) release(m *coilkick.Metrics) {
	fmt.Fprintln(s.b, "Release")
	s.row("current at turn-off", si(m.CurrentAtTurnOff, "A"))
	if m.PullIn.Happened {
		if na := m.ReleaseNotApplicable(); na != "" {
			for _, name := range []string{"release time", "drop time"} {
				if _, ok := s.checks[name]; ok {
					s.row(name, "-")
				} else {
					s.row(name, "-              "+na)
				}
			}
		} else {
			s.row("release time", interval(m.Release, "did not release"))
			s.row("drop time", interval(m.Drop, "did not return"))
		}
	}
	s.row(fmt.Sprintf("current decay (to %g %%)", 100*coilkick.DecayFraction), interval(m.CurrentDecay, "did not decay"))
	s.row("clamp conduction", interval(m.ClampConduction, "still conducting"))
	s.reversePulse(m)
}

// reversePulse prints an H-bridge's reverse (release) pulse figures: its
// start, the release measured from it, the most negative current and any
// re-latch during it.
func (s *summary) reversePulse(m *coilkick.Metrics) {
	if !m.ReverseStart.Happened {
		return
	}
	s.row("reverse pulse starts at", si(m.ReverseStart.Seconds, "s")+" (run time)")
	if m.SeatedAtTurnOff && m.ReleaseNotApplicable() == "" {
		s.row("release after its start", interval(m.ReleaseAfterReverse, "did not release"))
	}
	s.row("lowest (reverse) current", si(m.LowestCurrent, "A"))
	if m.Relatch.Happened {
		s.row("re-latched during the pulse", fmt.Sprintf("at %s, %s", si(m.Relatch.Time, "s"), si(m.Relatch.Current, "A")))
	} else {
		s.row("re-latched during the pulse", "no")
	}
}

func (s *summary) stress(m *coilkick.Metrics) {
	fmt.Fprintln(s.b, "Switch and suppression")
	s.row("peak switch voltage", si(m.PeakSwitchVoltage, "V"))
	s.row("lowest switch voltage", si(m.MinSwitchVoltage, "V"))
	s.row("peak clamp current", si(m.PeakClampCurrent, "A"))
	s.row("clamp energy", si(m.ClampEnergy, "J"))
	if m.ChopClampEnergy > 0 {
		s.row("clamp energy while chopping", si(m.ChopClampEnergy, "J"))
	}
	s.row("avalanche energy", si(m.AvalancheEnergy, "J"))
	if m.ChopAvalancheEnergy > 0 {
		s.row("avalanche while chopping", si(m.ChopAvalancheEnergy, "J"))
	}
}

func (s *summary) balance(m *coilkick.Metrics) {
	fmt.Fprintln(s.b, "Energy balance (whole run)")
	s.row("supply", si(m.SupplyEnergy, "J"))
	s.row("coil resistance", si(m.CoilLoss, "J"))
	switch {
	case m.Storage.Fitted:
		s.row("source, charging, ESR", si(m.SourceLoss, "J"))
	case m.SourceLoss > 0:
		s.row("source resistance", si(m.SourceLoss, "J"))
	}
	s.row("switch", si(m.SwitchLoss, "J"))
	s.row("suppression", si(m.SuppressionLoss, "J"))
	if m.DiodeLoss > 0 {
		s.row("recirculation / bridge diodes", si(m.DiodeLoss, "J"))
	}
	s.row("mechanical work", si(m.MechanicalWork, "J"))
	if m.EddyLoss > 0 {
		s.row("eddy currents", si(m.EddyLoss, "J"))
	}
	if m.CoreLoss > 0 {
		s.row("core loss", si(m.CoreLoss, "J"))
	}
	s.row("stored change", si(m.StoredChange, "J"))
	// the residual is a fraction of the largest energy that flowed
	// (EnergyFlow): the supply's in the usual run, not when a capacitor or
	// the stored energy gave more than the supply
	of := "of the largest flow"
	if !m.Storage.Fitted && math.Abs(m.SupplyEnergy) == m.EnergyFlow() {
		of = "of supply"
	}
	s.row("energy residual", fmt.Sprintf("%.2g %s", m.EnergyResidualRel(), of))
	if m.SwitchingLossEstimate > 0 {
		s.row("switching loss (estimate)", si(m.SwitchingLossEstimate, "J")+", from edge times, outside the balance")
	}
}

func writeCSV(w io.Writer, tr *coilkick.Trace) error {
	b := bufio.NewWriter(w)
	fmt.Fprintln(b, "time_s,current_A,coil_voltage_V,switch_voltage_V,gap_m,velocity_m_per_s,magnetic_force_N,passive_force_N,winding_temperature_degC")
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', 10, 64) }
	for k := range tr.Time {
		fmt.Fprintf(b, "%s,%s,%s,%s,%s,%s,%s,%s,%s\n", f(tr.Time[k]), f(tr.Current[k]), f(tr.CoilVoltage[k]),
			f(tr.SwitchVoltage[k]), f(tr.Gap[k]), f(tr.Velocity[k]), f(tr.MagneticForce[k]), f(tr.PassiveForce[k]), f(toDegC(tr.WindingTemperature[k])))
	}
	return b.Flush()
}

// jsonSummary is the --json document. Quantities are in SI units named in
// the keys; a time that did not happen is null.
type jsonSummary struct {
	jsonHeader
	Metrics jsonMetrics    `json:"metrics"`
	Checks  []jsonCheck    `json:"checks"`
	Notes   []coilkickNote `json:"notes"`
	Events  []jsonEvent    `json:"events"`
	Solver  jsonSolver     `json:"solver"`
	Failed  bool           `json:"failed"`
}

// jsonSolver is the integrator's work.
type jsonSolver struct {
	Method          string `json:"method"`
	Steps           int    `json:"steps"`
	Rejected        int    `json:"rejected_steps"`
	StiffSteps      int    `json:"implicit_steps"`
	Events          int    `json:"events"`
	Evaluations     int    `json:"evaluations"`
	PeriodsRepeated int    `json:"periods_repeated"`
}

func newJSONSolver(s coilkick.SolverStats) jsonSolver {
	return jsonSolver{Method: s.Method, Steps: s.Steps, Rejected: s.Rejected, StiffSteps: s.StiffSteps, Events: s.Events,
		Evaluations: s.Evaluations, PeriodsRepeated: s.PeriodsRepeated}
}

type coilkickNote struct {
	Figure string `json:"figure"`
	Level  string `json:"level"`
	Text   string `json:"text"`
}

type jsonEvent struct {
	Time float64 `json:"time_s"`
	What string  `json:"what"`
	Part string  `json:"part,omitempty"` // the part of a conduction event
}

type jsonCheck struct {
	Name  string   `json:"name"`
	Unit  string   `json:"unit"`
	Value *float64 `json:"value"`
	Limit float64  `json:"limit"`
	Pass  bool     `json:"pass"`
	// NotApplicable: why the check does not apply (null when it does).
	NotApplicable *string `json:"not_applicable"`
}

type jsonMetrics struct {
	MotionDelay       coilkick.Interval `json:"motion_delay_s"`
	PullIn            coilkick.Interval `json:"pull_in_time_s"`
	SeatImpactSpeed   float64           `json:"seat_impact_speed_m_per_s"`
	Bounces           int               `json:"bounces"`
	CurrentAtSeating  float64           `json:"current_at_seating_A"`
	PeakCurrent       float64           `json:"peak_current_A"`
	CurrentAtTurnOff  float64           `json:"current_at_turn_off_A"`
	Release           coilkick.Interval `json:"release_time_s"`
	Drop              coilkick.Interval `json:"drop_time_s"`
	CurrentDecay      coilkick.Interval `json:"current_decay_time_s"`
	ClampConduction   coilkick.Interval `json:"clamp_conduction_time_s"`
	PeakSwitchVoltage float64           `json:"peak_switch_voltage_V"`
	MinSwitchVoltage  float64           `json:"lowest_switch_voltage_V"`
	PeakClampCurrent  float64           `json:"peak_clamp_current_A"`
	ClampEnergy       float64           `json:"clamp_energy_J"`
	AvalancheEnergy   float64           `json:"avalanche_energy_J"`
	ChopClampEnergy   float64           `json:"chopping_clamp_energy_J"`
	ChopAvalanche     float64           `json:"chopping_avalanche_energy_J"`
	DroppedOut        bool              `json:"dropped_out_while_energized"`
	DropOut           *jsonDropOut      `json:"drop_out"`
	SeatedAtTurnOff   bool              `json:"seated_at_turn_off"`
	ReleaseNA         *string           `json:"release_not_applicable"`
	SuppressionLoss   float64           `json:"suppression_loss_J"`
	SupplyEnergy      float64           `json:"supply_energy_J"`
	CoilLoss          float64           `json:"coil_loss_J"`
	SourceLoss        float64           `json:"source_loss_J"`
	SwitchLoss        float64           `json:"switch_loss_J"`
	MechanicalWork    float64           `json:"mechanical_work_J"`
	EddyLoss          float64           `json:"eddy_loss_J"`
	CoreLoss          float64           `json:"core_loss_J"`
	StoredChange      float64           `json:"stored_energy_change_J"`
	EnergyResidual    float64           `json:"energy_residual_J"`
	DiodeLoss         float64           `json:"diode_loss_J"`
	EnergyReturned    float64           `json:"energy_returned_J"`
	SwitchingLoss     float64           `json:"switching_loss_estimate_J"`
	PeakSupplyCurrent float64           `json:"peak_supply_current_A"`
	MinRailVoltage    float64           `json:"lowest_rail_voltage_V"`
	MaxRailVoltage    float64           `json:"highest_rail_voltage_V"`
	Hold              *jsonHold         `json:"hold"`
	Brake             *jsonBrake        `json:"brake"`
	Storage           *jsonStorage      `json:"storage_capacitor"`
	Reverse           *jsonReverse      `json:"reverse_pulse"`
}

// jsonReverse is an H-bridge's reverse (release) pulse (null without one).
type jsonReverse struct {
	Start         float64  `json:"start_s"` // run time
	ReleaseAfter  *float64 `json:"release_after_start_s"`
	LowestCurrent float64  `json:"lowest_current_A"`
	Relatched     bool     `json:"relatched"`
	RelatchTime   *float64 `json:"relatch_time_s"` // run time; null: none
	RelatchAt     *float64 `json:"relatch_current_A"`
}

// newJSONReverse returns the reverse pulse's figures (nil without one).
func newJSONReverse(m *coilkick.Metrics) *jsonReverse {
	if !m.ReverseStart.Happened {
		return nil
	}
	rl := m.Relatch
	return &jsonReverse{Start: m.ReverseStart.Seconds, ReleaseAfter: seconds(m.ReleaseAfterReverse), LowestCurrent: m.LowestCurrent,
		Relatched: rl.Happened, RelatchTime: optional(rl.Time, rl.Happened), RelatchAt: optional(rl.Current, rl.Happened)}
}

// jsonStorage is a capacitor-discharge drive's storage capacitor (null
// without one).
type jsonStorage struct {
	ChargeVoltage    float64  `json:"charge_voltage_V"`
	VoltageAtTurnOff float64  `json:"voltage_at_turn_off_V"`
	FinalVoltage     float64  `json:"final_voltage_V"`
	MinVoltage       float64  `json:"lowest_voltage_V"`
	PulseEnergy      float64  `json:"pulse_energy_J"`
	RunEnergy        float64  `json:"run_energy_J"`
	RechargeTarget   float64  `json:"recharge_target_V"`
	RechargeTime     *float64 `json:"recharge_time_s"`       // null: cannot recharge
	NoRecharge       *string  `json:"recharge_not_possible"` // why, else null
}

// newJSONStorage returns the storage capacitor's figures (nil without one).
func newJSONStorage(st coilkick.StorageMetrics) *jsonStorage {
	if !st.Fitted {
		return nil
	}
	j := &jsonStorage{ChargeVoltage: st.ChargeVoltage, VoltageAtTurnOff: st.VoltageAtTurnOff, FinalVoltage: st.FinalVoltage,
		MinVoltage: st.MinVoltage, PulseEnergy: st.PulseEnergy, RunEnergy: st.RunEnergy, RechargeTarget: st.RechargeTarget,
		RechargeTime: optional(st.Recharge.Seconds, st.Recharge.Happened)}
	if !st.Recharge.Happened {
		why := st.NoRecharge
		j.NoRecharge = &why
	}
	return j
}

// jsonBrake is the soft-landing brake interval (null without one).
type jsonBrake struct {
	Start          float64  `json:"start_after_energize_s"`
	End            *float64 `json:"end_after_energize_s"` // null: de-energized first
	CurrentAtStart float64  `json:"current_at_start_A"`
	CurrentAtEnd   *float64 `json:"current_at_end_A"`
	GapAtStart     float64  `json:"gap_at_start_m"`
	SpeedAtStart   float64  `json:"speed_at_start_m_per_s"`
}

// jsonDropOut is the drop-out while energized (null when none).
type jsonDropOut struct {
	Time    float64 `json:"time_after_energize_s"`
	InHold  bool    `json:"in_hold"`
	Current float64 `json:"current_A"`
	Pull    float64 `json:"pull_at_seat_N"`
	Passive float64 `json:"spring_and_load_at_seat_N"`
}

// jsonHold: ripple and chopping frequency are null for a constant-voltage
// hold; the steady current and settled flag are null for a chopped one.
type jsonHold struct {
	Start                float64  `json:"window_start_s"`
	End                  float64  `json:"window_end_s"`
	Chopped              bool     `json:"chopped"`
	MeanCurrent          float64  `json:"mean_current_A"`
	MinCurrent           float64  `json:"min_current_A"`
	MaxCurrent           float64  `json:"max_current_A"`
	EndCurrent           float64  `json:"end_current_A"`
	Ripple               *float64 `json:"ripple_A"`
	ChoppingFrequency    *float64 `json:"chopping_frequency_Hz"`
	SteadyCurrent        *float64 `json:"steady_current_A"`
	Settled              *bool    `json:"settled"`
	CoilPower            float64  `json:"coil_power_W"`
	FullVoltageCoilPower float64  `json:"full_voltage_coil_power_W"`
	SwitchConduction     float64  `json:"switch_conduction_power_W"`
	DiodePower           float64  `json:"diode_power_W"`
	ClampPower           float64  `json:"clamp_power_W"`
	AvalanchePower       float64  `json:"avalanche_power_W"`
	SwitchingPower       float64  `json:"switching_power_estimate_W"`
	SupplyMeanCurrent    float64  `json:"supply_mean_current_A"`
	SupplyPower          float64  `json:"supply_power_W"`
	ForceMargin          float64  `json:"force_margin"`
}

func newJSONHold(h coilkick.HoldMetrics) *jsonHold {
	j := &jsonHold{Start: h.Start, End: h.End, Chopped: h.Chopped, MeanCurrent: h.MeanCurrent, MinCurrent: h.MinCurrent,
		MaxCurrent: h.MaxCurrent, EndCurrent: h.EndCurrent, CoilPower: h.CoilPower, FullVoltageCoilPower: h.FullVoltageCoilPower,
		SwitchConduction: h.SwitchConductionPower, DiodePower: h.DiodePower, ClampPower: h.ClampPower,
		AvalanchePower: h.AvalanchePower, SwitchingPower: h.SwitchingPower, SupplyMeanCurrent: h.SupplyMeanCurrent,
		SupplyPower: h.SupplyPower, ForceMargin: h.ForceMargin}
	if h.Chopped {
		ripple, f := h.Ripple, h.ChoppingFrequency
		j.Ripple, j.ChoppingFrequency = &ripple, &f
	} else {
		steady, settled := h.SteadyCurrent, h.Settled
		j.SteadyCurrent, j.Settled = &steady, &settled
	}
	return j
}

func writeJSON(w io.Writer, md *coilkick.Model, res *coilkick.Result, as *coilkick.Assessment) error {
	m := &res.Metrics
	doc := jsonSummary{
		jsonHeader: newHeader("run", md, md.Source), Solver: newJSONSolver(res.Stats), Failed: as.Failed(),
		Metrics: jsonMetrics{
			MotionDelay: m.MotionDelay, PullIn: m.PullIn, SeatImpactSpeed: m.SeatImpactSpeed, Bounces: m.Bounces,
			CurrentAtSeating: m.CurrentAtSeating, PeakCurrent: m.PeakCurrent, CurrentAtTurnOff: m.CurrentAtTurnOff,
			Release: m.Release, Drop: m.Drop, CurrentDecay: m.CurrentDecay, ClampConduction: m.ClampConduction,
			PeakSwitchVoltage: m.PeakSwitchVoltage, MinSwitchVoltage: m.MinSwitchVoltage, PeakClampCurrent: m.PeakClampCurrent,
			ClampEnergy: m.ClampEnergy, AvalancheEnergy: m.AvalancheEnergy, DroppedOut: m.DropOut.Happened,
			ChopClampEnergy: m.ChopClampEnergy, ChopAvalanche: m.ChopAvalancheEnergy, SeatedAtTurnOff: m.SeatedAtTurnOff,
			SuppressionLoss: m.SuppressionLoss,
			SupplyEnergy:    m.SupplyEnergy, CoilLoss: m.CoilLoss, SourceLoss: m.SourceLoss, SwitchLoss: m.SwitchLoss,
			MechanicalWork: m.MechanicalWork, EddyLoss: m.EddyLoss, CoreLoss: m.CoreLoss, StoredChange: m.StoredChange, EnergyResidual: m.EnergyResidual,
		},
		Checks: []jsonCheck{}, Notes: []coilkickNote{}, Events: []jsonEvent{},
	}
	doc.Metrics.DiodeLoss, doc.Metrics.EnergyReturned, doc.Metrics.SwitchingLoss = m.DiodeLoss, m.EnergyReturned, m.SwitchingLossEstimate
	doc.Metrics.PeakSupplyCurrent, doc.Metrics.MinRailVoltage, doc.Metrics.MaxRailVoltage = m.PeakSupplyCurrent, m.MinRailVoltage, m.MaxRailVoltage
	if h := m.Hold; h.Measured {
		doc.Metrics.Hold = newJSONHold(h)
	}
	if b := m.Brake; b.Happened {
		doc.Metrics.Brake = &jsonBrake{Start: b.Start, End: optional(b.End, b.Ended), CurrentAtStart: b.CurrentAtStart,
			CurrentAtEnd: optional(b.CurrentAtEnd, b.Ended), GapAtStart: b.GapAtStart, SpeedAtStart: b.SpeedAtStart}
	}
	doc.Metrics.Storage = newJSONStorage(m.Storage)
	doc.Metrics.Reverse = newJSONReverse(m)
	if d := m.DropOut; d.Happened {
		doc.Metrics.DropOut = &jsonDropOut{Time: d.Time, InHold: d.InHold, Current: d.Current, Pull: d.Pull, Passive: d.Passive}
	}
	if na := m.ReleaseNotApplicable(); na != "" {
		doc.Metrics.ReleaseNA = &na
	}
	for _, c := range as.Checks {
		jc := jsonCheck{Name: c.Name, Unit: c.Unit, Limit: c.Limit, Pass: c.Pass}
		if c.NotApplicable != "" {
			na := c.NotApplicable
			jc.NotApplicable = &na
		}
		if c.Happened {
			v := c.Value
			jc.Value = &v
		}
		doc.Checks = append(doc.Checks, jc)
	}
	for _, n := range as.Notes {
		doc.Notes = append(doc.Notes, coilkickNote{n.Figure, n.Level, n.Text})
	}
	for _, e := range res.Events {
		doc.Events = append(doc.Events, jsonEvent{e.Time, e.What, e.Part})
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(doc)
}
