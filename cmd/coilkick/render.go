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

func printSummary(w io.Writer, path string, md *coilkick.Model, res *coilkick.Result, as *coilkick.Assessment) {
	m := &res.Metrics
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick: %s\n", md.Name)
	fmt.Fprintf(b, "scenario: %s\n", path)
	fmt.Fprintf(b, "supply %s, coil %s at %.0f degC, suppression: %s\n\n",
		si(md.Drive.Supply.Voltage, "V"), si(md.CoilResistance(), "ohm"), md.Temperature-273.15, md.Drive.Suppressor.Kind)

	checks := map[string]coilkick.Check{}
	for _, c := range as.Checks {
		checks[c.Name] = c
	}
	notes := map[string][]coilkick.Note{}
	for _, n := range as.Notes {
		notes[n.Figure] = append(notes[n.Figure], n)
	}
	row := func(name, value string) {
		line := fmt.Sprintf("  %-29s %-14s", name, value)
		if c, ok := checks[name]; ok {
			verdict := "pass"
			if !c.Pass {
				verdict = "FAIL"
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
			if c.Min && c.Limit == 0 {
				line += " " + verdict // a yes/no requirement
			} else {
				line += fmt.Sprintf(" %s %s %-10s %s", kind, op, lim, verdict)
			}
		}
		fmt.Fprintln(b, strings.TrimRight(line, " "))
		for _, n := range notes[name] {
			fmt.Fprintf(b, "    %s: %s\n", strings.ToUpper(n.Level), n.Text)
		}
	}
	fmt.Fprintln(b, "Pull-in")
	row("motion delay", interval(m.MotionDelay, "did not move"))
	row("pull-in time", interval(m.PullIn, "did not pull in"))
	if m.PullIn.Happened {
		row("seat impact speed", fmt.Sprintf("%.3g m/s", m.SeatImpactSpeed))
		row("bounces", strconv.Itoa(m.Bounces))
		row("current at seating", si(m.CurrentAtSeating, "A"))
	}
	row("peak current", si(m.PeakCurrent, "A"))
	if h := m.Hold; h.Measured {
		fmt.Fprintf(b, "Hold (%v drive; window %s to %s)\n", md.Control.Mode, si(h.Start, "s"), si(h.End, "s"))
		row("hold current mean", si(h.MeanCurrent, "A"))
		row("hold current ripple", fmt.Sprintf("%s (%s to %s)", si(h.Ripple, "A"), si(h.MinCurrent, "A"), si(h.MaxCurrent, "A")))
		if md.Control.Chops() {
			row("chopping frequency", si(h.ChoppingFrequency, "Hz"))
		}
		row("coil power in hold", fmt.Sprintf("%s (full voltage: %s)", si(h.CoilPower, "W"), si(h.FullVoltageCoilPower, "W")))
		row("switch conduction power", si(h.SwitchConductionPower, "W"))
		if h.DiodePower > 0 {
			row("recirculation diode power", si(h.DiodePower, "W"))
		}
		if h.SwitchingPower > 0 {
			row("switching power (estimate)", si(h.SwitchingPower, "W"))
		}
		row("supply current mean", si(h.SupplyMeanCurrent, "A"))
		margin := "not seated"
		if h.ForceMargin > 0 {
			margin = fmt.Sprintf("%.2f", h.ForceMargin)
		}
		row("hold force margin", margin)
		row("stays seated while energized", map[bool]string{true: "yes", false: "NO"}[!m.DroppedOutEnergized])
		for _, n := range notes["chopping frequency"] {
			fmt.Fprintf(b, "    %s: %s\n", strings.ToUpper(n.Level), n.Text)
		}
	}
	fmt.Fprintln(b, "Supply")
	row("peak supply current", si(m.PeakSupplyCurrent, "A"))
	row("lowest rail voltage", si(m.MinRailVoltage, "V"))
	row("highest rail voltage", si(m.MaxRailVoltage, "V"))
	if m.EnergyReturned > 0 {
		row("energy returned to supply", si(m.EnergyReturned, "J"))
	}
	fmt.Fprintln(b, "Release")
	row("current at turn-off", si(m.CurrentAtTurnOff, "A"))
	if m.PullIn.Happened {
		row("release time", interval(m.Release, "did not release"))
		row("drop time", interval(m.Drop, "did not return"))
	}
	row(fmt.Sprintf("current decay (to %g %%)", 100*coilkick.DecayFraction), interval(m.CurrentDecay, "did not decay"))
	row("clamp conduction", interval(m.ClampConduction, "still conducting"))
	fmt.Fprintln(b, "Switch and suppression")
	row("peak switch voltage", si(m.PeakSwitchVoltage, "V"))
	row("lowest switch voltage", si(m.MinSwitchVoltage, "V"))
	row("peak clamp current", si(m.PeakClampCurrent, "A"))
	row("clamp energy", si(m.ClampEnergy, "J"))
	row("avalanche energy", si(m.AvalancheEnergy, "J"))
	fmt.Fprintln(b, "Energy balance (whole run)")
	row("supply", si(m.SupplyEnergy, "J"))
	row("coil resistance", si(m.CoilLoss, "J"))
	if m.SourceLoss > 0 {
		row("source resistance", si(m.SourceLoss, "J"))
	}
	row("switch", si(m.SwitchLoss, "J"))
	row("suppression", si(m.ClampEnergy, "J"))
	if m.DiodeLoss > 0 {
		row("recirculation / bridge diodes", si(m.DiodeLoss, "J"))
	}
	row("mechanical work", si(m.MechanicalWork, "J"))
	if m.EddyLoss > 0 {
		row("eddy currents", si(m.EddyLoss, "J"))
	}
	row("stored change", si(m.StoredChange, "J"))
	row("energy residual", fmt.Sprintf("%.2g of supply", m.EnergyResidualRel()))
	if m.SwitchingLossEstimate > 0 {
		row("switching loss (estimate)", si(m.SwitchingLossEstimate, "J")+", from edge times, outside the balance")
	}
	fmt.Fprintln(b, "\nEvents")
	for _, e := range res.Events {
		fmt.Fprintf(b, "  %10.4f ms  %s\n", e.Time*1e3, e.What)
	}
	fmt.Fprintf(b, "\nSolver: %s, %d steps (%d rejected), %d events, %d evaluations\n",
		res.Stats.Method, res.Stats.Steps, res.Stats.Rejected, res.Stats.Events, res.Stats.Evaluations)
	if general := notes[""]; len(general) > 0 {
		fmt.Fprintln(b, "\nNotes")
		for _, n := range general {
			fmt.Fprintf(b, "  %s: %s\n", strings.ToUpper(n.Level), n.Text)
		}
	}
	failed := 0
	for _, c := range as.Checks {
		if !c.Pass {
			failed++
		}
	}
	if len(as.Checks) > 0 {
		fmt.Fprintf(b, "\nChecks: %d of %d pass\n", len(as.Checks)-failed, len(as.Checks))
	}
}

func writeCSV(w io.Writer, tr *coilkick.Trace) error {
	b := bufio.NewWriter(w)
	fmt.Fprintln(b, "time_s,current_A,coil_voltage_V,switch_voltage_V,gap_m,velocity_m_per_s,magnetic_force_N,passive_force_N,winding_temperature_K")
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', 10, 64) }
	for k := range tr.Time {
		fmt.Fprintf(b, "%s,%s,%s,%s,%s,%s,%s,%s,%s\n", f(tr.Time[k]), f(tr.Current[k]), f(tr.CoilVoltage[k]),
			f(tr.SwitchVoltage[k]), f(tr.Gap[k]), f(tr.Velocity[k]), f(tr.MagneticForce[k]), f(tr.PassiveForce[k]), f(tr.WindingTemperature[k]))
	}
	return b.Flush()
}

// jsonSummary is the --json document. Quantities are in SI units named in
// the keys; a time that did not happen is null.
type jsonSummary struct {
	Scenario string               `json:"scenario"`
	Source   string               `json:"source"`
	Metrics  jsonMetrics          `json:"metrics"`
	Checks   []jsonCheck          `json:"checks"`
	Notes    []coilkickNote       `json:"notes"`
	Events   []jsonEvent          `json:"events"`
	Solver   coilkick.SolverStats `json:"solver"`
	Failed   bool                 `json:"failed"`
}

type coilkickNote struct {
	Figure string `json:"figure"`
	Level  string `json:"level"`
	Text   string `json:"text"`
}

type jsonEvent struct {
	Time float64 `json:"time_s"`
	What string  `json:"what"`
}

type jsonCheck struct {
	Name  string   `json:"name"`
	Unit  string   `json:"unit"`
	Value *float64 `json:"value"`
	Limit float64  `json:"limit"`
	Pass  bool     `json:"pass"`
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
	DroppedOut        bool              `json:"dropped_out_while_energized"`
	SupplyEnergy      float64           `json:"supply_energy_J"`
	CoilLoss          float64           `json:"coil_loss_J"`
	SourceLoss        float64           `json:"source_loss_J"`
	SwitchLoss        float64           `json:"switch_loss_J"`
	MechanicalWork    float64           `json:"mechanical_work_J"`
	EddyLoss          float64           `json:"eddy_loss_J"`
	StoredChange      float64           `json:"stored_energy_change_J"`
	EnergyResidual    float64           `json:"energy_residual_J"`
	DiodeLoss         float64           `json:"diode_loss_J"`
	EnergyReturned    float64           `json:"energy_returned_J"`
	SwitchingLoss     float64           `json:"switching_loss_estimate_J"`
	PeakSupplyCurrent float64           `json:"peak_supply_current_A"`
	MinRailVoltage    float64           `json:"lowest_rail_voltage_V"`
	MaxRailVoltage    float64           `json:"highest_rail_voltage_V"`
	Hold              *jsonHold         `json:"hold"`
}

type jsonHold struct {
	Start                float64 `json:"window_start_s"`
	End                  float64 `json:"window_end_s"`
	MeanCurrent          float64 `json:"mean_current_A"`
	MinCurrent           float64 `json:"min_current_A"`
	MaxCurrent           float64 `json:"max_current_A"`
	Ripple               float64 `json:"ripple_A"`
	ChoppingFrequency    float64 `json:"chopping_frequency_Hz"`
	CoilPower            float64 `json:"coil_power_W"`
	FullVoltageCoilPower float64 `json:"full_voltage_coil_power_W"`
	SwitchConduction     float64 `json:"switch_conduction_power_W"`
	DiodePower           float64 `json:"diode_power_W"`
	SwitchingPower       float64 `json:"switching_power_estimate_W"`
	SupplyMeanCurrent    float64 `json:"supply_mean_current_A"`
	SupplyPower          float64 `json:"supply_power_W"`
	ForceMargin          float64 `json:"force_margin"`
}

func writeJSON(w io.Writer, md *coilkick.Model, res *coilkick.Result, as *coilkick.Assessment) error {
	m := &res.Metrics
	doc := jsonSummary{
		Scenario: md.Name, Source: md.Source, Solver: res.Stats, Failed: as.Failed(),
		Metrics: jsonMetrics{
			MotionDelay: m.MotionDelay, PullIn: m.PullIn, SeatImpactSpeed: m.SeatImpactSpeed, Bounces: m.Bounces,
			CurrentAtSeating: m.CurrentAtSeating, PeakCurrent: m.PeakCurrent, CurrentAtTurnOff: m.CurrentAtTurnOff,
			Release: m.Release, Drop: m.Drop, CurrentDecay: m.CurrentDecay, ClampConduction: m.ClampConduction,
			PeakSwitchVoltage: m.PeakSwitchVoltage, MinSwitchVoltage: m.MinSwitchVoltage, PeakClampCurrent: m.PeakClampCurrent,
			ClampEnergy: m.ClampEnergy, AvalancheEnergy: m.AvalancheEnergy, DroppedOut: m.DroppedOutEnergized,
			SupplyEnergy: m.SupplyEnergy, CoilLoss: m.CoilLoss, SourceLoss: m.SourceLoss, SwitchLoss: m.SwitchLoss,
			MechanicalWork: m.MechanicalWork, EddyLoss: m.EddyLoss, StoredChange: m.StoredChange, EnergyResidual: m.EnergyResidual,
		},
		Checks: []jsonCheck{}, Notes: []coilkickNote{}, Events: []jsonEvent{},
	}
	doc.Metrics.DiodeLoss, doc.Metrics.EnergyReturned, doc.Metrics.SwitchingLoss = m.DiodeLoss, m.EnergyReturned, m.SwitchingLossEstimate
	doc.Metrics.PeakSupplyCurrent, doc.Metrics.MinRailVoltage, doc.Metrics.MaxRailVoltage = m.PeakSupplyCurrent, m.MinRailVoltage, m.MaxRailVoltage
	if h := m.Hold; h.Measured {
		doc.Metrics.Hold = &jsonHold{h.Start, h.End, h.MeanCurrent, h.MinCurrent, h.MaxCurrent, h.Ripple, h.ChoppingFrequency,
			h.CoilPower, h.FullVoltageCoilPower, h.SwitchConductionPower, h.DiodePower, h.SwitchingPower,
			h.SupplyMeanCurrent, h.SupplyPower, h.ForceMargin}
	}
	for _, c := range as.Checks {
		jc := jsonCheck{Name: c.Name, Unit: c.Unit, Limit: c.Limit, Pass: c.Pass}
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
		doc.Events = append(doc.Events, jsonEvent{e.Time, e.What})
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(doc)
}
