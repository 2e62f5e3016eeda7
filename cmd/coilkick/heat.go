package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/cmd/coilkick/plot"
)

func cmdHeat(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	if md.Thermal == nil || md.Duty == nil {
		return fmt.Errorf("%s: a heat study needs a thermal section (ambient and the network) and a duty section (on time, period)", path)
	}
	res, err := coilkick.Heat(md, *md.Duty)
	if err != nil {
		return err
	}
	csvFile, jsonFile := c.String("csv"), c.String("json")
	outs := newOutputs(w)
	if csvFile != "" {
		outs.add(csvFile, func(out io.Writer) error { return writeHeatCSV(out, res) })
	}
	if jsonFile != "" {
		doc := newHeatDoc(path, md, res)
		outs.add(jsonFile, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("plot"); f != "" {
		if err := outs.addFigure(f, plot.HeatHistory("Winding temperature — "+md.Name, plotHistory(res))); err != nil {
			return err
		}
	}
	if err := outs.commit(); err != nil {
		return err
	}
	if toStdout(c, "csv", "json") {
		return heatVerdict(res)
	}
	failed := printHeat(w, path, md, res)
	if csvFile != "" {
		fmt.Fprintf(w, "CSV %s: %s.\n", csvFile, historyText(res))
	}
	if failed {
		return errFailing
	}
	return nil
}

// heatVerdict is the exit status of a study without its printout.
func heatVerdict(r *coilkick.HeatResult) error {
	if (r.Limit > 0 && r.Peak > r.Limit) || !r.HotPullIn.Happened || (r.LowSupply > 0 && !r.HotPullInLow.Happened) {
		return errFailing
	}
	return nil
}

// durationText writes a duration of the heat study as engineers read
// it: below 100 s in seconds (si: "1.25 s", "12.2 ms"), below 3 h in
// minutes, from 3 h in hours (the units of the history plot's time axis);
// minutes and hours with one decimal below 10 and whole from 10 ("5.3
// min", "25 min", "130 min", "3.5 h", "8 h", "72 h"). Never kiloseconds.
func durationText(s float64) string {
	whole := func(v float64) string {
		if v < 9.95 {
			return strings.TrimSuffix(strconv.FormatFloat(v, 'f', 1, 64), ".0")
		}
		return strconv.FormatFloat(v, 'f', 0, 64)
	}
	switch {
	case math.IsNaN(s) || math.IsInf(s, 0):
		return "n/a"
	case s < 100:
		return si(s, "s")
	case s < 179.5*60:
		return whole(s/60) + " min"
	default:
		return whole(s/3600) + " h"
	}
}

// steadyText is the state of the winding at the end of the study, and
// steadyRows the rows that say when the periodic steady state is reached
// (coilkick.HeatResult defines it): one definition for both, so the
// heading and the rows cannot disagree.
func steadyText(r *coilkick.HeatResult) string {
	end := durationText(float64(r.Cycles) * r.Pattern.CycleTime())
	switch {
	case r.Steady && r.Pattern.Duration == 0:
		return "periodic steady state"
	case r.Steady:
		return "after " + end + ", in the periodic steady state"
	default:
		return "after " + end + ", not yet steady"
	}
}

func steadyRows(r *coilkick.HeatResult, temp func(float64) string) []steadyRow {
	name := fmt.Sprintf("steady (peak within %g K) after", coilkick.SteadyTol)
	switch {
	case r.SteadyAfter == 0:
		why := fmt.Sprintf("not found: the winding passes %s (thermal runaway)", temp(coilkick.RunawayTemperature))
		if r.Peak <= coilkick.RunawayTemperature {
			why = "not found within the cycles stepped"
		}
		return []steadyRow{{"steady_state", "periodic steady state", why}}
	case r.Steady:
		return []steadyRow{{"steady_after", name, durationText(r.SteadyAfter)}}
	default:
		return []steadyRow{{"steady_after", name, durationText(r.SteadyAfter) + ", after the end of the study"},
			{"steady_peak", "peak in the periodic steady state", fmt.Sprintf("%s (%+.2f K from the end of the study)", temp(r.SteadyPeak), r.SteadyPeak-r.Peak)}}
	}
}

// steadyRow is a row of steadyRows: a key for the report, name, value.
type steadyRow struct{ key, name, value string }

// historyText says what the CSV history holds.
func historyText(r *coilkick.HeatResult) string {
	n := len(r.History)
	if r.HistoryStride <= 1 {
		return fmt.Sprintf("%d rows, one per cycle", n)
	}
	return fmt.Sprintf("%d rows, every %d cycles and the last (a study of more than %d cycles is thinned)", n, r.HistoryStride, coilkick.MaxHistory)
}

// plotHistory returns the study with its history thinned to about 2000
// cycles for drawing (the study's last cycle kept); the CSV has them all.
func plotHistory(r *coilkick.HeatResult) *coilkick.HeatResult {
	const points = 2000
	n := len(r.History)
	if n <= points {
		return r
	}
	cp := *r
	step := (n + points - 1) / points
	cp.History = nil
	for k := 0; k < n; k += step {
		cp.History = append(cp.History, r.History[k])
	}
	if last := r.History[n-1]; cp.History[len(cp.History)-1] != last {
		cp.History = append(cp.History, last)
	}
	return &cp
}

func degC(k float64) string { return strconv.FormatFloat(k-273.15, 'f', 1, 64) + " degC" }

func printHeat(w io.Writer, path string, md *coilkick.Model, r *coilkick.HeatResult) (failed bool) {
	b := bufio.NewWriter(w)
	defer b.Flush()
	p := r.Pattern
	fmt.Fprintf(b, "coilkick heat: %s\nscenario: %s\n", md.Name, path)
	if len(p.Segments) > 0 {
		var parts []string
		for _, sg := range p.Segments {
			state := "off"
			if sg.On {
				state = "on"
			}
			parts = append(parts, durationText(sg.Duration)+" "+state)
		}
		fmt.Fprintf(b, "duty: cycle of %s repeated (%s; relative on-time %.1f %%), ambient %s\n\n", strings.Join(parts, ", "), durationText(p.CycleTime()), 100*p.RelativeOnTime(), degC(r.Ambient))
	} else {
		fmt.Fprintf(b, "duty: %s on every %s (relative on-time %.1f %%), ambient %s\n\n", durationText(p.OnTime), durationText(p.Period), 100*p.RelativeOnTime(), degC(r.Ambient))
	}
	row := func(name, value string) { fmt.Fprintf(b, "  %-38s %s\n", name, value) }
	fmt.Fprintf(b, "Winding temperature (%s)\n", steadyText(r))
	row("peak", degC(r.Peak))
	row("mean", degC(r.Mean))
	row("valley", degC(r.Valley))
	row("ripple", fmt.Sprintf("%.2f K", r.Ripple))
	for _, sr := range steadyRows(r, degC) {
		row(sr.name, sr.value)
	}
	row("coil resistance at the peak", si(r.HotResistance, "ohm"))
	if r.Limit > 0 {
		verdict := "pass"
		if r.Peak > r.Limit {
			verdict, failed = "FAIL", true
		}
		row("insulation class "+r.Class+" (IEC 60085)", fmt.Sprintf("limit %s, margin %.1f K  %s", degC(r.Limit), r.Limit-r.Peak, verdict))
		held := "never reaches the limit"
		if r.HeldToLimit.Happened {
			held = "reaches the limit after " + durationText(r.HeldToLimit.Seconds)
		}
		row("held on continuously", fmt.Sprintf("%s (steady %s)", held, degC(r.HeldSteady)))
		row("largest relative on-time within class", fmt.Sprintf("%.1f %%", 100*r.MaxRelativeOnTime))
	}
	fmt.Fprintln(b, "Hot coil")
	pull := func(iv coilkick.Interval) string {
		if !iv.Happened {
			failed = true
			return "did not pull in  FAIL"
		}
		return durationText(iv.Seconds)
	}
	row("pull-in, hot, nominal supply", pull(r.HotPullIn))
	if r.LowSupply > 0 {
		row(fmt.Sprintf("pull-in, hot, low supply %s", si(r.LowSupply, "V")), pull(r.HotPullInLow))
	}
	if r.LowestPullInSupply > 0 {
		row("lowest supply that pulls in, hot", si(r.LowestPullInSupply, "V"))
	} else {
		row("lowest supply that pulls in, hot", "none up to the nominal supply")
	}
	if len(r.Notes) > 0 {
		fmt.Fprintln(b)
	}
	for _, n := range r.Notes {
		fmt.Fprintf(b, "  %s: %s\n", strings.ToUpper(n.Level), n.Text)
	}
	fmt.Fprintf(b, "\nMethod: %d cycles stepped with the exact thermal solution; %d electrical simulations (5 K grid).\n", r.Cycles, r.Simulations)
	fmt.Fprintln(b, "INFO: model estimates; confirm with a temperature-rise test (resistance method) on the real part, and follow local codes.")
	return failed
}

// writeHeatCSV writes the history: one row per cycle of the study (see
// coilkick.HeatResult.History for the thinning of very long studies),
// temperatures in °C.
func writeHeatCSV(w io.Writer, r *coilkick.HeatResult) error {
	if len(r.History) == 0 {
		return errors.New("no history")
	}
	rows := make([][]string, len(r.History))
	for k, h := range r.History {
		rows[k] = []string{strconv.Itoa(h.Cycle), num(h.Time), num(toDegC(h.Peak)), num(toDegC(h.Valley))}
	}
	return writeCSVRows(w, []string{"cycle", "time_s", "peak_winding_degC", "valley_winding_degC"}, rows)
}

// heatDoc is the --json document of heat (README "Machine-readable
// output"): temperatures in °C, temperature differences in K, null for
// what did not happen or does not apply.
type heatDoc struct {
	jsonHeader
	Duty    heatDuty `json:"duty"`
	Ambient float64  `json:"ambient_degC"`
	// The last cycle of the study.
	Peak   float64 `json:"winding_peak_degC"`
	Mean   float64 `json:"winding_mean_degC"`
	Valley float64 `json:"winding_valley_degC"`
	Ripple float64 `json:"winding_ripple_K"`
	Cycles int     `json:"cycles"`
	Steady bool    `json:"steady"`
	// Steady state: null when not found (runaway, or not within the
	// cycles stepped).
	SteadyPeak    *float64       `json:"steady_peak_degC"`
	SteadyAfter   *float64       `json:"steady_after_s"`
	SteadyTol     float64        `json:"steady_tolerance_K"`
	Runaway       bool           `json:"thermal_runaway"`
	HotResistance float64        `json:"resistance_at_peak_ohm"`
	HeldSteady    float64        `json:"held_on_steady_degC"`
	Insulation    *heatClass     `json:"insulation"` // null without an insulation class
	HotCoil       heatHotCoil    `json:"hot_coil"`
	Notes         []coilkickNote `json:"notes"`
	Simulations   int            `json:"simulations"`
	Failed        bool           `json:"failed"`
	History       heatHistory    `json:"history"`
}

type heatDuty struct {
	OnTime         *float64      `json:"on_time_s"` // null for a pattern of segments
	Period         *float64      `json:"period_s"`
	Segments       []heatSegment `json:"segments"` // the cycle, also for on time and period
	CycleTime      float64       `json:"cycle_time_s"`
	RelativeOnTime float64       `json:"relative_on_time"`
	Duration       *float64      `json:"duration_s"` // null: until the periodic steady state
}

type heatSegment struct {
	On       bool    `json:"on"`
	Duration float64 `json:"duration_s"`
}

type heatClass struct {
	Class             string   `json:"class"`
	Limit             float64  `json:"limit_degC"`
	Margin            float64  `json:"margin_K"`
	Pass              bool     `json:"pass"`
	HeldToLimit       *float64 `json:"held_on_time_to_limit_s"` // null: never reaches it
	MaxRelativeOnTime float64  `json:"largest_relative_on_time"`
}

type heatHotCoil struct {
	PullIn             *float64 `json:"pull_in_time_s"` // null: does not pull in
	LowSupply          *float64 `json:"low_supply_V"`   // null: no low supply given
	PullInLow          *float64 `json:"pull_in_time_low_supply_s"`
	LowestPullInSupply *float64 `json:"lowest_pull_in_supply_V"` // null: not even the nominal supply
}

// heatHistory holds the CSV's columns.
type heatHistory struct {
	Stride int       `json:"stride_cycles"`
	Cycle  []int     `json:"cycle"`
	Time   []float64 `json:"time_s"`
	Peak   []float64 `json:"peak_winding_degC"`
	Valley []float64 `json:"valley_winding_degC"`
}

func newHeatDoc(path string, md *coilkick.Model, r *coilkick.HeatResult) *heatDoc {
	p := r.Pattern
	d := &heatDoc{jsonHeader: newHeader("heat", md, path), Ambient: toDegC(r.Ambient),
		Peak: toDegC(r.Peak), Mean: toDegC(r.Mean), Valley: toDegC(r.Valley), Ripple: r.Ripple,
		Cycles: r.Cycles, Steady: r.Steady, SteadyTol: coilkick.SteadyTol,
		Runaway:       r.SteadyAfter == 0 && r.Peak > coilkick.RunawayTemperature,
		HotResistance: r.HotResistance, HeldSteady: toDegC(r.HeldSteady),
		Notes: []coilkickNote{}, Simulations: r.Simulations, Failed: heatVerdict(r) != nil}
	d.Duty = heatDuty{CycleTime: p.CycleTime(), RelativeOnTime: p.RelativeOnTime(), Duration: optional(p.Duration, p.Duration > 0)}
	if len(p.Segments) > 0 {
		for _, sg := range p.Segments {
			d.Duty.Segments = append(d.Duty.Segments, heatSegment{sg.On, sg.Duration})
		}
	} else {
		d.Duty.OnTime, d.Duty.Period = optional(p.OnTime, true), optional(p.Period, true)
		d.Duty.Segments = []heatSegment{{true, p.OnTime}, {false, p.Period - p.OnTime}}
	}
	if r.SteadyAfter > 0 {
		d.SteadyPeak, d.SteadyAfter = optional(toDegC(r.SteadyPeak), true), optional(r.SteadyAfter, true)
	}
	if r.Limit > 0 {
		d.Insulation = &heatClass{Class: r.Class, Limit: toDegC(r.Limit), Margin: r.Limit - r.Peak, Pass: r.Peak <= r.Limit,
			HeldToLimit: seconds(r.HeldToLimit), MaxRelativeOnTime: r.MaxRelativeOnTime}
	}
	d.HotCoil = heatHotCoil{PullIn: seconds(r.HotPullIn), LowSupply: optional(r.LowSupply, r.LowSupply > 0),
		LowestPullInSupply: optional(r.LowestPullInSupply, r.LowestPullInSupply > 0)}
	if r.LowSupply > 0 {
		d.HotCoil.PullInLow = seconds(r.HotPullInLow)
	}
	for _, n := range r.Notes {
		d.Notes = append(d.Notes, coilkickNote{n.Figure, n.Level, n.Text})
	}
	h := heatHistory{Stride: max(r.HistoryStride, 1), Cycle: make([]int, len(r.History)), Time: make([]float64, len(r.History)),
		Peak: make([]float64, len(r.History)), Valley: make([]float64, len(r.History))}
	for k, pt := range r.History {
		h.Cycle[k], h.Time[k], h.Peak[k], h.Valley[k] = pt.Cycle, pt.Time, toDegC(pt.Peak), toDegC(pt.Valley)
	}
	d.History = h
	return d
}
