package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/cmd/coilkick/plot"
)

// reportCommands are the plotting and report commands.
func reportCommands(stdout io.Writer) []*cli.Command {
	return []*cli.Command{{
		Name:      "report",
		Usage:     "simulate one actuation and write a self-contained HTML report (figures, checks, notes, plots)",
		ArgsUsage: "SCENARIO.yaml",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "output", Aliases: []string{"o"}, Usage: "write the report to `FILE` (- for standard output)", Required: true},
			&cli.Float64Flag{Name: "tolerance", Usage: "relative tolerance of the integrator, 1e-12 to 1e-3", DefaultText: "the scenario's, else 1e-8"},
		},
		Action: func(c *cli.Context) error { return cmdReport(c, stdout) },
	}}
}

func waveformFigure(path string, md *coilkick.Model, res *coilkick.Result) *plot.Figure {
	return plot.Waveform(&res.Trace, plot.EventMarkers(res.Events), plot.WaveformOptions{
		Title:    displayName(path, md),
		Subtitle: runLine(md, res),
	})
}

// displayName is the scenario's name, or its file name when it has none.
func displayName(path string, md *coilkick.Model) string {
	if md.Name != "" {
		return md.Name
	}
	return filepath.Base(path)
}

// runLine is a one-line description of the drive for a figure's subtitle.
func runLine(md *coilkick.Model, res *coilkick.Result) string {
	s := fmt.Sprintf("supply %s · coil %s at %.0f °C · %v drive · suppression: %v",
		si(md.Drive.Supply.Voltage, "V"), si(md.CoilResistance(), "Ω"), md.Temperature-273.15, md.DriveName(), md.Drive.Suppressor.Kind)
	if md.Thermal != nil {
		// The trace has no temperature; say where the winding ended.
		s += fmt.Sprintf(" · winding %.1f °C at the end", res.Metrics.FinalWindingTemperature-273.15)
	}
	return s
}

func cmdReport(c *cli.Context, w io.Writer) error {
	sim, err := loadScenario(c)
	if err != nil {
		return err
	}
	if err := sim.simulate(c); err != nil {
		return err
	}
	rep, failed, err := buildReport(sim)
	if err != nil {
		return err
	}
	if err := writeFile(c.String("output"), w, func(out io.Writer) error { return plot.WriteHTML(out, rep) }); err != nil {
		return err
	}
	if failed {
		return errFailing
	}
	return nil
}

// figureRow names a metric of the JSON summary for the report.
type figureRow struct {
	key, name string
}

// reportGroups lay out the JSON summary's metrics (keys as in --json;
// "hold." for the hold object) under the headings of the text summary,
// with its names. A metric missing here still appears, under "Other
// figures".
var reportGroups = []struct {
	name string
	rows []figureRow
}{
	{"Pull-in", []figureRow{
		{"motion_delay_s", "motion delay"}, {"pull_in_time_s", "pull-in time"},
		{"seat_impact_speed_m_per_s", "seat impact speed"}, {"bounces", "bounces"},
		{"current_at_seating_A", "current at seating"}, {"peak_current_A", "peak current"},
		{"dropped_out_while_energized", "dropped out while energized"},
		{"drop_out.time_after_energize_s", "drop-out after energize"}, {"drop_out.current_A", "current at drop-out"},
		{"drop_out.pull_at_seat_N", "pull at the seat at drop-out"}, {"drop_out.spring_and_load_at_seat_N", "spring + load at the seat"},
		{"drop_out.in_hold", "drop-out in the hold"},
		{"brake.start_after_energize_s", "brake: switch off after energize"}, {"brake.end_after_energize_s", "brake: switch on again after energize"},
		{"brake.current_at_start_A", "current at the brake's start"}, {"brake.current_at_end_A", "current at the brake's end"},
		{"brake.gap_at_start_m", "gap at the brake's start"}, {"brake.speed_at_start_m_per_s", "speed at the brake's start"},
	}},
	{"Hold", []figureRow{
		{"hold.window_start_s", "hold window start"}, {"hold.window_end_s", "hold window end"},
		{"hold.mean_current_A", "hold current mean"}, {"hold.min_current_A", "hold current min"},
		{"hold.max_current_A", "hold current max"}, {"hold.ripple_A", "hold current ripple"},
		{"hold.chopping_frequency_Hz", "chopping frequency"}, {"hold.end_current_A", "hold current at end"},
		{"hold.steady_current_A", "steady current V/R"}, {"hold.settled", "settled (within 1 % of V/R)"},
		{"hold.chopped", "chopped drive"}, {"hold.coil_power_W", "coil power in hold"},
		{"hold.full_voltage_coil_power_W", "coil power at full voltage"},
		{"hold.switch_conduction_power_W", "switch conduction power"}, {"hold.diode_power_W", "recirculation diode power"},
		{"hold.clamp_power_W", "clamp power while chopping"}, {"hold.avalanche_power_W", "avalanche power while chopping"},
		{"hold.switching_power_estimate_W", "switching power (estimate)"}, {"hold.supply_mean_current_A", "supply current mean"},
		{"hold.supply_power_W", "supply power mean"}, {"hold.force_margin", "hold force margin"},
	}},
	{"Supply", []figureRow{
		{"peak_supply_current_A", "peak supply current"}, {"lowest_rail_voltage_V", "lowest rail voltage"}, {"highest_rail_voltage_V", "highest rail voltage"},
		{"energy_returned_J", "energy returned to supply"},
	}},
	{"Storage capacitor", []figureRow{
		{"storage_capacitor.charge_voltage_V", "charge voltage"}, {"storage_capacitor.voltage_at_turn_off_V", "voltage at turn-off"},
		{"storage_capacitor.final_voltage_V", "voltage at end of run"}, {"storage_capacitor.lowest_voltage_V", "lowest capacitor voltage"},
		{"storage_capacitor.pulse_energy_J", "energy taken in the pulse"}, {"storage_capacitor.run_energy_J", "energy taken over the run"},
		{"storage_capacitor.recharge_target_V", "recharge target"}, {"storage_capacitor.recharge_time_s", "recharge after the run"},
		{"storage_capacitor.recharge_not_possible", "recharge after the run"},
	}},
	{"Release", []figureRow{
		{"current_at_turn_off_A", "current at turn-off"}, {"seated_at_turn_off", "seated at turn-off"},
		{"release_time_s", "release time"}, {"drop_time_s", "drop time"},
		{"current_decay_time_s", fmt.Sprintf("current decay (to %g %%)", 100*coilkick.DecayFraction)},
		{"clamp_conduction_time_s", "clamp conduction"},
		{"reverse_pulse.start_s", "reverse pulse starts at (run time)"}, {"reverse_pulse.release_after_start_s", "release after its start"},
		{"reverse_pulse.lowest_current_A", "lowest (reverse) current"}, {"reverse_pulse.relatched", "re-latched during the pulse"},
		{"reverse_pulse.relatch_time_s", "re-latch (run time)"}, {"reverse_pulse.relatch_current_A", "current at re-latch"},
	}},
	{"Switch and suppression", []figureRow{
		{"peak_switch_voltage_V", "peak switch voltage"}, {"lowest_switch_voltage_V", "lowest switch voltage"},
		{"peak_clamp_current_A", "peak clamp current"}, {"clamp_energy_J", "clamp energy"},
		{"chopping_clamp_energy_J", "clamp energy while chopping"}, {"avalanche_energy_J", "avalanche energy"},
		{"chopping_avalanche_energy_J", "avalanche while chopping"},
	}},
	{"Energy balance (whole run)", []figureRow{
		{"supply_energy_J", "supply"}, {"coil_loss_J", "coil resistance"}, {"source_loss_J", "source resistance"},
		{"switch_loss_J", "switch"}, {"suppression_loss_J", "suppression"}, {"diode_loss_J", "recirculation / bridge diodes"}, {"mechanical_work_J", "mechanical work"},
		{"eddy_loss_J", "eddy currents"}, {"core_loss_J", "core loss"}, {"stored_energy_change_J", "stored change"}, {"energy_residual_J", "energy residual"},
		{"switching_loss_estimate_J", "switching loss (estimate, outside the balance)"},
	}},
}

// checkFigure is the metric each check of the assessment concerns.
var checkFigure = map[string]string{
	"pull-in time": "pull_in_time_s", "release time": "release_time_s", "drop time": "drop_time_s",
	"peak switch voltage": "peak_switch_voltage_V", "avalanche energy": "avalanche_energy_J",
	"clamp energy": "clamp_energy_J", "peak clamp current": "peak_clamp_current_A",
	"hold force margin": "hold.force_margin", "stays seated while energized": "dropped_out_while_energized",
}

// noteFigure maps the figure a note names to a metric key when the names
// differ from the report's row names.
var noteFigure = map[string]string{"energy residual": "energy_residual_J"}

// missingText is what a time that did not happen (null in JSON) reads as.
var missingText = map[string]string{
	"motion_delay_s": "did not move", "pull_in_time_s": "did not pull in", "release_time_s": "did not release",
	"drop_time_s": "did not return", "current_decay_time_s": "did not decay", "clamp_conduction_time_s": "still conducting",
}

// absentWhenNull reports a metric whose null means "does not apply to
// this run" (the ripple of a constant-voltage hold, say) rather than a
// time that did not happen: its row is left out of the report.
func absentWhenNull(key string) bool {
	_, words := missingText[key[strings.LastIndex(key, ".")+1:]]
	return !words
}

// figureText formats a metric of the JSON summary for the report, by its
// key's unit suffix, with si() as in the text summary: "_s" seconds, "_A",
// "_V", "_J", "_W", "_Hz", "_N", "_m"; "_m_per_s" as %.3g m/s; a plain number with 3
// significant digits (whole numbers in full); booleans yes/no; null (a time
// that did not happen) as words.
func figureText(key string, v any) string {
	switch x := v.(type) {
	case nil:
		if t, ok := missingText[key[strings.LastIndex(key, ".")+1:]]; ok {
			return t
		}
		return "n/a"
	case bool:
		if x {
			return "yes"
		}
		return "no"
	case float64:
		if strings.HasSuffix(key, "_m_per_s") {
			return fmt.Sprintf("%.3g m/s", x)
		}
		for _, u := range []string{"s", "A", "V", "J", "W", "Hz", "N", "m"} {
			if strings.HasSuffix(key, "_"+u) {
				return si(x, u)
			}
		}
		if x == math.Trunc(x) && math.Abs(x) < 1e9 {
			return strconv.FormatFloat(x, 'f', 0, 64)
		}
		return strconv.FormatFloat(x, 'g', 3, 64)
	}
	return fmt.Sprint(v)
}

// flattenMetrics returns the metrics object of a JSON summary as key →
// value, the hold's keys prefixed "hold." (absent when not measured).
func flattenMetrics(raw map[string]any) map[string]any {
	out := map[string]any{}
	for k, v := range raw {
		if obj, ok := v.(map[string]any); ok {
			for k2, v2 := range obj {
				out[k+"."+k2] = v2
			}
			continue
		}
		if v == nil && (k == "hold" || k == "drop_out" || k == "release_not_applicable") {
			continue // absent: not measured, none, applicable
		}
		out[k] = v
	}
	return out
}

// requirementText describes a check's limit as the text summary does.
func requirementText(c jsonCheck, min bool) string {
	if c.Name == "stays seated while energized" {
		return "required: stays seated"
	}
	kind, op := "rating", "≤"
	if c.Unit == "s" || min {
		kind = "required"
	}
	if min {
		op = "≥"
	}
	lim := si(c.Limit, c.Unit)
	if c.Unit == "" {
		lim = strconv.FormatFloat(c.Limit, 'g', 3, 64)
	}
	return kind + " " + op + " " + lim
}

// buildReport assembles the report from the same JSON document that
// "run --json" writes, so that both show the same figures; failed when a
// check of the run or the duty-cycle heating study fails.
func buildReport(sim *simulation) (*plot.Report, bool, error) {
	path, md := sim.path, sim.md
	doc, err := readSummary(sim)
	if err != nil {
		return nil, false, err
	}
	rep := &plot.Report{Title: displayName(path, md), Source: path, Summary: scenarioSummary(md, sim.sc)}
	rep.Groups = newReportRows(doc, sim.as.Checks).groups()
	rep.Verdict, rep.Failed = verdict(doc.Checks), doc.Failed
	// Safety notes: every note of the run (plot.WriteHTML orders them,
	// cautions first, with the heating study's).
	for _, n := range doc.Notes {
		rep.Notes = append(rep.Notes, plot.ReportNote{Figure: n.Figure, Level: n.Level, Text: n.Text})
	}
	for _, e := range coilkick.CompactEvents(sim.res.Events) { // the full list is in --json
		rep.Events = append(rep.Events, plot.ReportEvent{Time: fmt.Sprintf("%.4f ms", e.Time*1e3), What: e.What})
	}
	magnet, err := magnetReportFigure(md)
	if err != nil {
		return nil, false, err
	}
	rep.Figures = []plot.ReportFigure{waveformReportFigure(path, md, sim.res), magnet}
	if md.Thermal != nil && md.Duty != nil {
		hr, err := coilkick.Heat(md, *md.Duty)
		if err != nil {
			return nil, false, err
		}
		hs, hotFail := heatSection(hr)
		rep.Heat = hs
		if hotFail {
			rep.Failed = true
			rep.Verdict += "; the duty-cycle heating study FAILS"
		}
	}
	if md.Control.Brakes() {
		fig, err := landingReportFigure(md)
		if err != nil {
			return nil, false, err
		}
		rep.Figures = append(rep.Figures, fig)
	}
	if md.Sense != nil {
		if err := signatureReport(rep, path, md); err != nil {
			return nil, false, err
		}
	}
	rep.Footer = reportFooter(doc.Solver)
	return rep, rep.Failed, nil
}

// runSummary is the run's --json summary read back: the summary's own
// types, but the metrics as a generic object (an Interval reads back as a
// number or null), so that every metric is shown.
type runSummary struct {
	Metrics map[string]any `json:"metrics"`
	Checks  []jsonCheck    `json:"checks"`
	Notes   []coilkickNote `json:"notes"`
	Events  []jsonEvent    `json:"events"`
	Solver  jsonSolver     `json:"solver"`
	Failed  bool           `json:"failed"`
}

// readSummary writes the run's --json summary (writeJSON) and reads it
// back.
func readSummary(sim *simulation) (*runSummary, error) {
	var buf bytes.Buffer
	if err := writeJSON(&buf, sim.md, sim.res, &sim.as); err != nil {
		return nil, err
	}
	var doc runSummary
	if err := json.Unmarshal(buf.Bytes(), &doc); err != nil {
		return nil, err
	}
	return &doc, nil
}

// reportRows lays out the summary's metrics as the report's rows: each
// with its value, its caution mark (a caution note names it) and its
// check; used records the metrics shown.
type reportRows struct {
	metrics   map[string]any
	checkOf   map[string]jsonCheck // metric key → the check of that figure
	unmatched []jsonCheck          // checks without a metric shown
	minCheck  map[string]bool      // check name → its limit is a minimum
	caution   map[string]bool
	used      map[string]bool
}

func newReportRows(doc *runSummary, checks []coilkick.Check) *reportRows {
	r := &reportRows{metrics: flattenMetrics(doc.Metrics), checkOf: map[string]jsonCheck{}, minCheck: map[string]bool{},
		caution: cautionKeys(doc.Notes), used: map[string]bool{"release_not_applicable": true}} // shown as the release and drop values
	for _, c := range checks {
		r.minCheck[c.Name] = c.Min
	}
	for _, c := range doc.Checks {
		if k, ok := checkFigure[c.Name]; ok {
			if _, shown := r.metrics[k]; shown {
				r.checkOf[k] = c
				continue
			}
		}
		r.unmatched = append(r.unmatched, c)
	}
	return r
}

// cautionKeys are the metrics that a note of level caution names.
func cautionKeys(notes []coilkickNote) map[string]bool {
	keyOf := map[string]string{}
	for _, g := range reportGroups {
		for _, r := range g.rows {
			keyOf[r.name] = r.key
		}
	}
	caution := map[string]bool{}
	for _, n := range notes {
		if n.Level != "caution" {
			continue
		}
		if k, ok := noteFigure[n.Figure]; ok {
			caution[k] = true
		} else if k, ok := keyOf[n.Figure]; ok {
			caution[k] = true
		}
	}
	return caution
}

// row is the report's row of a metric.
func (r *reportRows) row(key, name string) plot.Row {
	r.used[key] = true
	row := plot.Row{Key: key, Name: name, Value: figureText(key, r.metrics[key]), Caution: r.caution[key]}
	na, _ := r.metrics["release_not_applicable"].(string)
	if na != "" && (key == "release_time_s" || key == "drop_time_s") {
		row.Value = na
	}
	if c, ok := r.checkOf[key]; ok {
		row.Checked, row.Pass, row.Requirement = true, c.Pass, requirementText(c, r.minCheck[c.Name])
		if c.NotApplicable != nil {
			row.Checked, row.Requirement = false, requirementText(c, r.minCheck[c.Name])+" (not applicable)"
		}
	}
	return row
}

// groups are the rows under reportGroups' headings, then the metrics and
// checks no heading names.
func (r *reportRows) groups() []plot.Group {
	var out []plot.Group
	for _, g := range reportGroups {
		grp := plot.Group{Name: g.name}
		for _, fr := range g.rows {
			v, ok := r.metrics[fr.key]
			if ok && (v != nil || !absentWhenNull(fr.key)) {
				grp.Rows = append(grp.Rows, r.row(fr.key, fr.name))
			} else if ok {
				r.used[fr.key] = true
			}
		}
		if len(grp.Rows) > 0 {
			out = append(out, grp)
		}
	}
	if other := r.other(); len(other.Rows) > 0 {
		out = append(out, other)
	}
	return out
}

// other is the group of the metrics not shown under a heading, by key,
// and the checks without a metric shown.
func (r *reportRows) other() plot.Group {
	var rest []string
	for k := range r.metrics {
		if !r.used[k] {
			rest = append(rest, k)
		}
	}
	sort.Strings(rest)
	grp := plot.Group{Name: "Other figures and checks"}
	for _, k := range rest {
		grp.Rows = append(grp.Rows, r.row(k, strings.ReplaceAll(k, "_", " ")))
	}
	for _, c := range r.unmatched {
		v := "did not happen"
		if c.Value != nil {
			v = si(*c.Value, c.Unit)
		}
		grp.Rows = append(grp.Rows, plot.Row{Key: "check:" + c.Name, Name: c.Name, Value: v,
			Requirement: requirementText(c, r.minCheck[c.Name]), Checked: true, Pass: c.Pass})
	}
	return grp
}

// verdict sums up the checks: none, all pass, or the names of those that
// fail (a check that does not apply neither passes nor fails).
func verdict(checks []jsonCheck) string {
	var failedNames []string
	for _, c := range checks {
		if !c.Pass && c.NotApplicable == nil {
			failedNames = append(failedNames, c.Name)
		}
	}
	switch {
	case len(checks) == 0:
		return "no ratings or requirements given"
	case len(failedNames) == 0:
		return fmt.Sprintf("all %d checks pass", len(checks))
	default:
		return fmt.Sprintf("%d of %d checks FAIL: %s", len(failedNames), len(checks), strings.Join(failedNames, ", "))
	}
}

// waveformReportFigure is the report's waveform figure with its caption.
func waveformReportFigure(path string, md *coilkick.Model, res *coilkick.Result) plot.ReportFigure {
	return plot.ReportFigure{ID: "waveforms", Heading: "Waveforms",
		Caption: "Coil current, coil and switch voltage, air gap, and the forces on the plunger over the run; " +
			"dashed lines mark energize, the plunger leaving the rest stop (moves), the first seat impact (seated), " +
			"de-energize and the plunger leaving the seat (released). Fast chopping is drawn as its envelope.",
		Figure: waveformFigure(path, md, res)}
}

// magnetReportFigure is the report's figure of the pull versus the air gap
// at 0.25 to 1.5 × the rated current, with the spring and load.
func magnetReportFigure(md *coilkick.Model) (plot.ReportFigure, error) {
	ms := md.MagnetSummary()
	curves, err := md.ForceCurves(ratedFamily(ms.RatedCurrent), 41)
	if err != nil {
		return plot.ReportFigure{}, err
	}
	var passive []float64
	if len(curves) > 0 {
		for _, x := range curves[0].Gap {
			passive = append(passive, md.Plunger.PassiveForce(x, 0))
		}
	}
	return plot.ReportFigure{ID: "magnet", Heading: "Magnet: pull versus air gap",
		Caption: fmt.Sprintf("Magnetic pull over the stroke at 0.25 to 1.5 × the rated current (%s = supply ÷ coil resistance at %.0f °C), "+
			"against the spring and load (dashed). The plunger pulls in where the pull at the rest gap exceeds the dashed line.",
			si(ms.RatedCurrent, "A"), md.Temperature-273.15),
		Figure: plot.ForceVsGap("Pull versus air gap, one line per coil current", curves, passive)}, nil
}

// reportFooter is the report's last lines: the solver's effort, the
// rounding, and the reminder that these are model estimates.
func reportFooter(s jsonSolver) []string {
	return []string{
		fmt.Sprintf("Solver: %s, %d steps (%d rejected), %d events, %d evaluations.",
			s.Method, s.Steps, s.Rejected, s.Events, s.Evaluations),
		"Figures are rounded to 3 significant digits as in the text summary; coilkick run --json gives them in full.",
		"coilkick's results are model estimates from the data in the scenario. The cautions are reminders, not a safety assessment: " +
			"confirm on the bench, and follow local electrical codes and licensed practice for wiring, insulation and protection.",
	}
}

func celsius(k float64) string { return strconv.FormatFloat(k-273.15, 'f', 1, 64) + " °C" }

// heatSection lays out a duty-cycle study as printHeat does (durations
// by durationText, the steady state by steadyText and steadyRows); failed
// when the class limit is exceeded or the hot coil does not pull in. The
// study's notes go to the report's safety box, not into its text.
func heatSection(r *coilkick.HeatResult) (*plot.HeatSection, bool) {
	p := r.Pattern
	failed := false
	temp := plot.Group{Name: "Winding temperature (" + steadyText(r) + ")"}
	add := func(g *plot.Group, key, name, value string) *plot.Row {
		g.Rows = append(g.Rows, plot.Row{Key: "heat." + key, Name: name, Value: value})
		return &g.Rows[len(g.Rows)-1]
	}
	peak := add(&temp, "peak", "peak", celsius(r.Peak))
	for _, n := range r.Notes {
		peak.Caution = peak.Caution || n.Level == "caution" // the study's cautions concern its peak
	}
	add(&temp, "mean", "mean", celsius(r.Mean))
	add(&temp, "valley", "valley", celsius(r.Valley))
	add(&temp, "ripple", "ripple", fmt.Sprintf("%.2f K", r.Ripple))
	for _, sr := range steadyRows(r, celsius) {
		add(&temp, sr.key, sr.name, sr.value)
	}
	add(&temp, "hot_resistance", "coil resistance at the peak", si(r.HotResistance, "Ω"))
	if r.Limit > 0 {
		row := add(&temp, "class_margin", "insulation class "+r.Class+" (IEC 60085) margin", fmt.Sprintf("%.1f K", r.Limit-r.Peak))
		row.Checked, row.Pass, row.Requirement = true, r.Peak <= r.Limit, "peak ≤ "+celsius(r.Limit)
		failed = failed || !row.Pass
		held := "never reaches the limit"
		if r.HeldToLimit.Happened {
			held = "limit after " + durationText(r.HeldToLimit.Seconds)
		}
		add(&temp, "held_on", "held on continuously", fmt.Sprintf("%s (steady %s)", held, celsius(r.HeldSteady)))
		add(&temp, "max_relative_on_time", "largest relative on-time within class", fmt.Sprintf("%.1f %%", 100*r.MaxRelativeOnTime))
	}
	hot := plot.Group{Name: "Hot coil"}
	pull := func(key, name string, iv coilkick.Interval) {
		row := add(&hot, key, name, "did not pull in")
		row.Checked, row.Requirement, row.Pass = true, "required: pulls in", iv.Happened
		if iv.Happened {
			row.Value = durationText(iv.Seconds)
		}
		failed = failed || !iv.Happened
	}
	pull("hot_pull_in", "pull-in, hot, nominal supply", r.HotPullIn)
	if r.LowSupply > 0 {
		pull("hot_pull_in_low", "pull-in, hot, low supply "+si(r.LowSupply, "V"), r.HotPullInLow)
	}
	lowest := "none up to the nominal supply"
	if r.LowestPullInSupply > 0 {
		lowest = si(r.LowestPullInSupply, "V")
	}
	add(&hot, "lowest_pull_in_supply", "lowest supply that pulls in, hot", lowest)

	intro := fmt.Sprintf("%s on per %s cycle (relative on-time %.1f %%), ambient %s; %d cycles (%s) stepped with the exact thermal solution, %d electrical simulations.",
		durationText(p.OnTotal()), durationText(p.CycleTime()), 100*p.RelativeOnTime(), celsius(r.Ambient), r.Cycles, durationText(float64(r.Cycles)*p.CycleTime()), r.Simulations)
	var notes []plot.ReportNote
	for _, n := range r.Notes {
		notes = append(notes, plot.ReportNote{Figure: n.Figure, Level: n.Level, Text: n.Text})
	}
	return &plot.HeatSection{Intro: intro, Groups: []plot.Group{temp, hot}, Notes: notes, Figure: plot.ReportFigure{
		ID: "heat-history", Heading: "Duty-cycle temperature history",
		Caption: "Winding temperature at the end of each on-time (peak) and of each cycle (valley).",
		Figure:  plot.HeatHistory("Winding temperature over the duty cycle", plotHistory(r)),
	}}, failed
}

// storageText describes a capacitor-discharge drive's storage capacitor
// ("" for none).
func storageText(st *coilkick.StorageSpec) string {
	if st == nil {
		return ""
	}
	text := fmt.Sprintf("storage capacitor %s, ESR %s", si(st.Capacitance, "F"), si(st.ESR, "Ω"))
	if st.ChargeVoltage > 0 {
		text += ", charged to " + si(st.ChargeVoltage, "V")
	}
	if st.ChargingResistance > 0 {
		return text + ", charging resistor " + si(st.ChargingResistance, "Ω")
	}
	return text + ", no charging path"
}

// scenarioSummary describes the scenario in a few labelled lines.
func scenarioSummary(md *coilkick.Model, sc *coilkick.Scenario) []plot.Item {
	var out []plot.Item
	add := func(label, value string) { out = append(out, plot.Item{Label: label, Value: value}) }
	join, opt := joinNonEmpty, optText
	sp := sc.Supply
	add("supply", join(si(sp.Voltage, "V"), opt(sp.SourceResistance, "source resistance %s", si(sp.SourceResistance, "Ω")),
		opt(sp.BulkCapacitance, "bulk capacitor %s", si(sp.BulkCapacitance, "F")), storageText(sp.Storage),
		opt(sp.LowVoltage, "lowest in tolerance %s", si(sp.LowVoltage, "V"))))
	coil := fmt.Sprintf("%s at %.0f °C", si(md.CoilResistance(), "Ω"), md.Temperature-273.15)
	if md.Temperature != 293.15 {
		coil += fmt.Sprintf(" (%s at 20 °C)", si(md.Coil.ResistanceAt(293.15), "Ω"))
	}
	if md.Coil.Turns > 0 {
		coil += fmt.Sprintf(", %.0f turns", md.Coil.Turns)
	}
	if md.CoilBuild != nil {
		coil += ", from bobbin and wire"
	}
	add("coil", coil)
	mg := sc.Magnet
	magnet := mg.Kind
	switch mg.Kind {
	case coilkick.MagnetGapLaw:
		magnet = fmt.Sprintf("gap law: %s seated, %s at rest", si(mg.ClosedInductance, "H"), si(mg.OpenInductance, "H"))
	case coilkick.MagnetTable:
		magnet = "flux-linkage table " + filepath.Base(mg.TableFile)
	case coilkick.MagnetGeom:
		magnet = "plunger magnet from its dimensions (lumped magnetic circuit)"
	case coilkick.MagnetCurves:
		magnet = fmt.Sprintf("force curves %s (%d), anchored at %s measured at the rest gap", filepath.Base(mg.CurvesFile), len(md.Curves.Currents), si(mg.OpenInductance, "H"))
	}
	add("magnet", join(magnet, opt(mg.EddyResistance, "eddy currents as %s shorted turn", si(mg.EddyResistance, "Ω"))))
	pl := sc.Plunger
	add("plunger", join(fmt.Sprintf("%.3g g, air gap %.3g mm at rest, %.3g mm seated", pl.Mass*1e3, pl.RestGap*1e3, pl.SeatedGap*1e3),
		fmt.Sprintf("spring %.3g N preload, %.3g N/mm", pl.SpringPreload, pl.SpringRate*1e-3),
		opt(pl.Pressure, "pressure %s", si(pl.Pressure, "Pa")), opt(pl.ConstantLoad, "load %s", si(pl.ConstantLoad, "N"))))
	sw := sc.Switch
	add("switch", join(fmt.Sprintf("low side, %s on", si(sw.OnResistance, "Ω")), fmt.Sprintf("breakdown %s", si(sw.BreakdownVoltage, "V")),
		opt(sw.OutputCapacitance, "%s output capacitance", si(sw.OutputCapacitance, "F"))))
	su := sc.Suppression
	add("suppression", join(su.Kind, opt(su.ForwardDrop, "forward drop %s", si(su.ForwardDrop, "V")),
		opt(su.ZenerVoltage, "Zener %s", si(su.ZenerVoltage, "V")), opt(su.ClampVoltage, "clamp %s", si(su.ClampVoltage, "V")),
		opt(su.Resistance, "resistance %s", si(su.Resistance, "Ω")), opt(su.Capacitance, "%s", si(su.Capacitance, "F")),
		opt(su.ReversePulse, "reverse pulse %s", si(su.ReversePulse, "s"))))
	add("drive", driveText(md, sc.Drive))
	tm := sc.Timing
	add("timing", fmt.Sprintf("energize at %s, de-energize at %s, end %s", si(tm.EnergizeAt, "s"), si(tm.DeenergizeAt, "s"), si(tm.End, "s")))
	if th := sc.Thermal; th != nil {
		add("thermal", join(fmt.Sprintf("ambient %s", celsius(th.Ambient)), opt(boolFloat(th.Class != ""), "insulation class %s", th.Class)))
	}
	if pat := md.Duty; pat != nil {
		add("duty", fmt.Sprintf("%s on per %s cycle", durationText(pat.OnTotal()), durationText(pat.CycleTime())))
	}
	return out
}

// joinNonEmpty joins the parts that are not empty with ", ".
func joinNonEmpty(parts ...string) string {
	var keep []string
	for _, p := range parts {
		if p != "" {
			keep = append(keep, p)
		}
	}
	return strings.Join(keep, ", ")
}

// optText formats args when v is not 0, else "".
func optText(v float64, format string, args ...any) string {
	if v == 0 {
		return ""
	}
	return fmt.Sprintf(format, args...)
}

// driveText describes the drive for the scenario summary.
func driveText(md *coilkick.Model, dr coilkick.DriveSpec) string {
	join, opt := joinNonEmpty, optText
	drive := md.DriveName()
	switch dr.Mode {
	case coilkick.DrivePulses:
		drive = join(drive, fmt.Sprintf("latch %s", si(dr.LatchPulse, "s")),
			opt(dr.ReleasePulse, "release %s at %s", si(dr.ReleasePulse, "s"), si(dr.ReleaseAt, "s")))
	case coilkick.DrivePWM:
		drive = join(drive, si(dr.Frequency, "Hz"), fmt.Sprintf("duty %.2g", dr.Duty))
	case coilkick.DrivePeakHold:
		drive = join(drive, fmt.Sprintf("%s for %s, hold %s", si(dr.PeakCurrent, "A"), si(dr.PeakTime, "s"), si(dr.HoldCurrent, "A")),
			dr.Regulation, opt(dr.Frequency, "%s", si(dr.Frequency, "Hz")), opt(boolFloat(dr.Decay != ""), "%s decay", dr.Decay))
	case coilkick.DriveBoostHold:
		drive = join(drive, fmt.Sprintf("%s for %s", si(dr.BoostVoltage, "V"), si(dr.BoostTime, "s")))
	}
	return drive
}

func boolFloat(b bool) float64 {
	if b {
		return 1
	}
	return 0
}
