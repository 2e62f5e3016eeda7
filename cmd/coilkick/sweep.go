package main

import (
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/cmd/coilkick/plot"
)

// sweepCommand is the sweep study: the scenario over a grid of key values.
func sweepCommand(stdout io.Writer) *cli.Command {
	return &cli.Command{
		Name:      "sweep",
		Usage:     "run the scenario over a grid of values of its keys, in parallel",
		ArgsUsage: "SCENARIO.yaml --vary KEY=FROM:TO:STEPS [--vary ...]",
		Flags: []cli.Flag{
			&cli.StringSliceFlag{Name: "vary", Usage: "a scenario key and its values: KEY=FROM:TO:STEPS (\"supply.voltage=18 V:30 V:13\") or KEY=V1,V2,... (\"plunger.mass=5 g,8 g\"); repeat for a grid"},
			&cli.StringFlag{Name: "csv", Usage: "write one row per point to `FILE` (CSV; - for standard output instead of the table)"},
			&cli.StringFlag{Name: "json", Usage: "write the points to `FILE` (JSON; - for standard output instead of the table)"},
			&cli.IntFlag{Name: "workers", Usage: "parallel simulations, 0 for all cores, at most 256", DefaultText: "all cores"},
			&cli.StringFlag{Name: "plot", Usage: "plot a figure versus the first key, one line per value of the second, to `FILE`"},
			&cli.StringFlag{Name: "figure", Value: "pull-in", Usage: "figure to plot: " + strings.Join(sweepFigureNames, ", ")},
		},
		Action: func(c *cli.Context) error { return cmdSweep(c, stdout) },
	}
}

// isTerminal reports whether w is a character device (a terminal).
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

// sweepFigureNames are the figures --figure accepts.
var sweepFigureNames = []string{"pull-in", "release", "drop", "peak current", "hold current", "switch voltage", "clamp energy"}

// cmdSweep runs the sweep. Exit status (README, "sweep"): 1 for a bad flag,
// when no point ran, or when a valid point could not be simulated; else 2
// when a rating or requirement fails at a point that ran; else 0. Points
// whose values break a rule of the scenario are marked invalid in their
// row and do not change the status by themselves.
func cmdSweep(c *cli.Context, w io.Writer) error {
	path, err := oneFile(c)
	if err != nil {
		return err
	}
	vs, err := parseVaries(c)
	if err != nil {
		return err
	}
	var xs []float64
	if c.String("plot") != "" && len(vs) > 0 {
		if xs, err = sweepAxis(vs[0]); err != nil {
			return err
		}
	}
	sw, err := coilkick.NewSweeper(path)
	if err != nil {
		return err
	}
	// Bad keys are the flag's error, found before any point runs.
	if err := sw.Check(vs); err != nil {
		return err
	}
	pts := sw.Sweep(vs, c.Int("workers"), progressBar(c.App.ErrWriter))
	text := !toStdout(c, "json", "csv")
	if text {
		writeSweepTable(w, vs, pts)
	}
	n := countPoints(pts)
	if n.invalid > 0 && text {
		fmt.Fprintf(w, "\n%d of %d points invalid: their values break a rule of the scenario (reason in the row).\n", n.invalid, len(pts))
	}
	if err := writeSweepOutputs(c, w, path, vs, xs, pts, n); err != nil {
		return err
	}
	switch {
	case n.ran == 0:
		return fmt.Errorf("no point of the sweep ran: %d invalid, %d could not be simulated (reasons in the rows)", n.invalid, n.notSimulated)
	case n.notSimulated > 0:
		return fmt.Errorf("%d of %d points could not be simulated (reasons in the rows)", n.notSimulated, len(pts))
	case n.failing > 0:
		return errFailing
	}
	return nil
}

// progressBar draws the sweep's progress on errw when it is a terminal;
// nil otherwise.
func progressBar(errw io.Writer) func(done, total int) {
	if !isTerminal(errw) {
		return nil
	}
	return func(done, total int) {
		const width = 40
		n := width * done / total
		fmt.Fprintf(errw, "\r[%s%s] %d/%d", strings.Repeat("#", n), strings.Repeat(".", width-n), done, total)
		if done == total {
			fmt.Fprintln(errw)
		}
	}
}

// sweepCounts counts a sweep's points: those that ran (and of them, those
// failing a rating or requirement), those invalid, and the valid ones that
// could not be simulated.
type sweepCounts struct{ ran, failing, invalid, notSimulated int }

func countPoints(pts []coilkick.SweepPoint) sweepCounts {
	var n sweepCounts
	for _, p := range pts {
		switch {
		case p.Figures != nil:
			n.ran++
			if p.Figures.Failed {
				n.failing++
			}
		case p.Invalid != "":
			n.invalid++
		default:
			n.notSimulated++
		}
	}
	return n
}

// writeSweepOutputs writes --csv, --json and --plot (a plot only when a
// point ran) together.
func writeSweepOutputs(c *cli.Context, w io.Writer, path string, vs []coilkick.Vary, xs []float64, pts []coilkick.SweepPoint, n sweepCounts) error {
	sc, err := sweepScenario(path)
	if err != nil {
		return err
	}
	cols := sweepColumns(vs)
	outs := newOutputs(w)
	if f := c.String("csv"); f != "" {
		keys := sweepRecords(cols, []coilkick.SweepPoint{{}})[0].keys()
		outs.add(f, func(out io.Writer) error { return writeRecordsCSV(out, keys, sweepRecords(cols, pts)) })
	}
	if f := c.String("json"); f != "" {
		doc := sweepDoc{jsonHeader: jsonHeader{Version: version(), Command: "sweep", Scenario: sc.Name, Source: path},
			Keys: cols, Points: sweepRecords(cols, pts), Run: n.ran, Invalid: n.invalid, NotSimulated: n.notSimulated, Failing: n.failing}
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("plot"); f != "" && n.ran > 0 {
		if err := outs.addFigure(f, sweepPlot(c.String("figure"), xs, vs, pts, sc.Limits)); err != nil {
			return err
		}
	}
	return outs.commit()
}

// writeSweepTable prints one row per point. A point without figures fills
// the figure cells with "-" and gives its reason in the last column, so the
// columns stay aligned.
func writeSweepTable(w io.Writer, vs []coilkick.Vary, pts []coilkick.SweepPoint) {
	header := []string{}
	for _, v := range vs {
		header = append(header, v.Key)
	}
	figures := []string{"pull-in", "release", "drop", "peak current", "hold current", "peak switch V", "clamp energy", "avalanche energy"}
	header = append(append(header, figures...), "checks")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, strings.Join(header, "\t"))
	for _, p := range pts {
		row := append([]string{}, p.Values...)
		if f := p.Figures; f != nil {
			verdict := "pass"
			if f.Failed {
				verdict = "FAIL"
			}
			release, drop := interval2(f.Release), interval2(f.Drop)
			if f.DroppedOut {
				verdict += " (drops out while energized)"
				if !f.Release.Happened {
					release, drop = "n/a", "n/a"
				}
			}
			hold := "n/a" // no hold window: the peak phase outlasts the energized time
			if f.HoldMeasured {
				hold = si(f.HoldCurrent, "A")
			}
			row = append(row, interval2(f.PullIn), release, drop, si(f.PeakCurrent, "A"),
				hold, si(f.PeakSwitchVoltage, "V"), si(f.ClampEnergy, "J"), si(f.AvalancheEnergy, "J"), verdict)
		} else {
			for range figures {
				row = append(row, "-")
			}
			if p.Invalid != "" {
				row = append(row, "invalid: "+p.Invalid)
			} else {
				row = append(row, "error: "+p.Err)
			}
		}
		fmt.Fprintln(tw, strings.Join(row, "\t"))
	}
	tw.Flush()
}

// sweepAxis reads the first key's values as numbers for the plot's x axis.
func sweepAxis(v coilkick.Vary) ([]float64, error) {
	xs := make([]float64, len(v.Values))
	for k, s := range v.Values {
		f := strings.Fields(s)
		x, err := strconv.ParseFloat(strings.Join(f[:min(1, len(f))], ""), 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, fmt.Errorf("--plot needs numeric values of %s (the first --vary); %q is not a number with a unit", v.Key, s)
		}
		xs[k] = x
	}
	return xs, nil
}

// sweepFigure picks a figure of a point (SI) and its axis label.
func sweepFigure(name string, f coilkick.SweepFigures) (float64, string, bool) {
	iv := func(x coilkick.Interval) float64 {
		if !x.Happened {
			return math.NaN() // a gap in the line: it did not happen
		}
		return x.Seconds * 1e3
	}
	switch name {
	case "pull-in":
		return iv(f.PullIn), "pull-in time (ms)", true
	case "release":
		return iv(f.Release), "release time (ms)", true
	case "drop":
		return iv(f.Drop), "drop time (ms)", true
	case "peak current":
		return f.PeakCurrent, "peak current (A)", true
	case "hold current":
		if !f.HoldMeasured {
			return math.NaN(), "hold current (A)", true // a gap in the line: not measured
		}
		return f.HoldCurrent, "hold current (A)", true
	case "switch voltage":
		return f.PeakSwitchVoltage, "peak switch voltage (V)", true
	case "clamp energy":
		return f.ClampEnergy * 1e3, "clamp energy (mJ)", true
	}
	return 0, "", false
}

// sweepLimits maps a --figure to the scenario's limit on it: its key and
// its value (SI; 0: none given).
func sweepLimit(figure string, lim coilkick.LimitsSpec) (key string, value float64) {
	switch figure {
	case "pull-in":
		return "ratings.pull-in time", lim.MaxPullIn
	case "release":
		return "ratings.release time", lim.MaxRelease
	case "drop":
		return "ratings.drop time", lim.MaxDrop
	case "switch voltage":
		return "ratings.switch voltage", lim.SwitchVoltage
	case "clamp energy":
		return "ratings.clamp energy", lim.ClampEnergy
	}
	return "", 0
}

// sweepPlot draws a figure versus the first key (xs), one line per value
// of the other keys (named in the legend), the scenario's limit on the
// figure as a dashed line, failed points crossed, and points without the
// figure (it did not happen, the point was invalid or not simulated) as
// markers at the top.
func sweepPlot(figure string, xs []float64, vs []coilkick.Vary, pts []coilkick.SweepPoint, lim coilkick.LimitsSpec) *plot.Figure {
	nx := len(xs)
	xLabel := vs[0].Key
	if f := strings.Fields(vs[0].Values[0]); len(f) > 1 {
		xLabel += " (" + strings.Join(f[1:], " ") + ")"
	}
	inner := len(pts) / nx
	_, yLabel, _ := sweepFigure(figure, coilkick.SweepFigures{})
	ch := plot.SweepChart{Title: yLabel + " versus " + vs[0].Key, XLabel: xLabel, YLabel: yLabel, Xs: xs,
		FailedLabel:  "point fails a rating or requirement",
		MissingLabel: "no value (did not happen, invalid or not simulated)"}
	if len(vs) > 1 {
		var keys []string
		for _, v := range vs[1:] {
			keys = append(keys, v.Key)
		}
		ch.KeyName = strings.Join(keys, ", ")
	}
	for j := 0; j < inner; j++ {
		s := plot.StudySeries{Ys: make([]float64, nx), Failed: make([]bool, nx)}
		for k := 0; k < nx; k++ {
			p := pts[k*inner+j]
			s.Ys[k] = math.NaN() // no figures at this point
			if p.Figures != nil {
				s.Ys[k], _, _ = sweepFigure(figure, *p.Figures)
			}
			s.Failed[k] = p.Failed
			if len(p.Values) > 1 {
				s.Label = strings.Join(p.Values[1:], ", ")
			}
		}
		ch.Series = append(ch.Series, s)
	}
	if key, value := sweepLimit(figure, lim); key != "" {
		swept := false
		for _, v := range vs {
			swept = swept || v.Key == key
		}
		switch {
		case swept:
			ch.Notes = append(ch.Notes, "limit not drawn: "+key+" is swept")
		case value > 0:
			y := sweepFigureScale(figure) * value
			unit := strings.TrimSuffix(yLabel[strings.LastIndex(yLabel, "(")+1:], ")")
			ch.Limits = append(ch.Limits, plot.Reference{Value: y,
				Label: fmt.Sprintf("limit: %s %s %s", key, strconv.FormatFloat(y, 'g', 4, 64), unit)})
		}
	}
	return plot.SweepLines(ch)
}

// sweepFigureScale is the factor from SI to the unit sweepFigure plots the
// figure in (ms, mJ).
func sweepFigureScale(figure string) float64 {
	switch figure {
	case "pull-in", "release", "drop", "clamp energy":
		return 1e3
	}
	return 1
}

// sweepScenario reads the scenario's name and limits (for the JSON header
// and the plot's limit line).
func sweepScenario(path string) (*coilkick.Scenario, error) {
	data, err := coilkick.ReadInput(path, "scenario file", coilkick.MaxScenarioBytes)
	if err != nil {
		return nil, err
	}
	return coilkick.Parse(data, path)
}

// sweepDoc is the sweep's --json document.
type sweepDoc struct {
	jsonHeader
	Keys         []sweepColumn `json:"keys"`
	Points       []record      `json:"points"`
	Run          int           `json:"points_run"`
	Invalid      int           `json:"points_invalid"`
	NotSimulated int           `json:"points_not_simulated"`
	Failing      int           `json:"points_failing"`
}

// sweepColumn is a swept key in the machine-readable output.
type sweepColumn struct {
	Key string `json:"key"` // as given to --vary: "supply.voltage"
	// Column is its key in each point and its CSV column: the key's words
	// joined by underscores, with the unit: "supply_voltage_V".
	Column string `json:"column"`
	// Unit is the SI unit of its numbers (degC when every value was
	// written in degC), "" for plain numbers and for text.
	Unit string `json:"unit"`
	// Text: the values are not quantities of one kind (file names, say)
	// and are given as written.
	Text bool               `json:"text"`
	nums map[string]float64 // each value as written → in Unit, when !Text
}

// sweepUnits are the dimensions a swept value may have, with the SI unit
// its column's key ends in.
var sweepUnits = []struct {
	dim  coilkick.Dim
	unit string
}{
	{coilkick.Dimensionless, ""}, {coilkick.Voltage, "V"}, {coilkick.Current, "A"}, {coilkick.Resistance, "ohm"},
	{coilkick.Inductance, "H"}, {coilkick.Capacitance, "F"}, {coilkick.FluxLinkage, "Wb"}, {coilkick.FluxDensity, "T"},
	{coilkick.Frequency, "Hz"}, {coilkick.Length, "m"}, {coilkick.Area, "m2"}, {coilkick.Mass, "kg"}, {coilkick.Time, "s"},
	{coilkick.Velocity, "m_per_s"}, {coilkick.Force, "N"}, {coilkick.ForcePerLength, "N_per_m"},
	{coilkick.Damping, "N_s_per_m"}, {coilkick.Pressure, "Pa"}, {coilkick.Energy, "J"}, {coilkick.Power, "W"},
	{coilkick.Temperature, "K"}, {coilkick.PerKelvin, "per_K"},
	{coilkick.HeatCapacity, "J_per_K"}, {coilkick.ThermalResistance, "K_per_W"}, {coilkick.HeatTransfer, "W_per_m2_K"},
}

// sweepColumns names the swept keys' columns and reads their values as
// numbers in SI (°C for temperatures written in degC): a key whose values
// are all quantities of one kind is a numeric column with the unit in its
// name; any other is text, as written. Two keys that would share a name
// are told apart by a number before the unit.
func sweepColumns(vs []coilkick.Vary) []sweepColumn {
	var cols []sweepColumn
	used := map[string]bool{}
	for _, v := range vs {
		c := sweepColumn{Key: v.Key, Text: true}
		if unit, nums, ok := quantityValues(v.Values); ok {
			c.Unit, c.Text, c.nums = unit, false, map[string]float64{}
			for k, x := range nums {
				c.nums[v.Values[k]] = x
			}
		}
		base := keyWords(v.Key)
		name := withUnit(base, c.Unit)
		for n := 2; used[name]; n++ {
			name = withUnit(fmt.Sprintf("%s_%d", base, n), c.Unit)
		}
		used[name] = true
		c.Column = name
		cols = append(cols, c)
	}
	return cols
}

func withUnit(base, unit string) string {
	if unit == "" {
		return base
	}
	return base + "_" + unit
}

// keyWords turns a scenario key path into lower-case words joined by
// underscores: "plunger.spring preload" → "plunger_spring_preload",
// "ratings.pull-in time" → "ratings_pull_in_time".
func keyWords(key string) string {
	var b strings.Builder
	gap := false
	for _, r := range strings.ToLower(key) {
		if (r >= 'a' && r <= 'z') || (r >= '0' && r <= '9') {
			if gap && b.Len() > 0 {
				b.WriteByte('_')
			}
			b.WriteRune(r)
			gap = false
			continue
		}
		gap = true
	}
	s := b.String()
	if s == "" || s[0] < 'a' || s[0] > 'z' {
		s = "key_" + s
	}
	return strings.TrimSuffix(s, "_")
}

// quantityValues reads values as quantities of one dimension, in SI (in
// °C when every value is written in degC or °C); ok is false when they are
// not all quantities of one dimension.
func quantityValues(values []string) (unit string, nums []float64, ok bool) {
	for _, u := range sweepUnits {
		nums = make([]float64, len(values))
		celsius := true
		for k, s := range values {
			x, err := coilkick.ParseQuantity(s, u.dim)
			if err != nil {
				nums = nil
				break
			}
			nums[k] = x
			t := strings.TrimSpace(s)
			celsius = celsius && (strings.HasSuffix(t, "degC") || strings.HasSuffix(t, "°C"))
		}
		if nums == nil {
			continue
		}
		if u.dim == coilkick.Temperature && celsius {
			for k := range nums {
				nums[k] = toDegC(nums[k])
			}
			return "degC", nums, true
		}
		return u.unit, nums, true
	}
	return "", nil, false
}

// sweepRecords are the points in the machine-readable form: the swept
// values, then the figures (null without figures, or for a time that did
// not happen), failed, and the reason of an invalid or failed point.
func sweepRecords(cols []sweepColumn, pts []coilkick.SweepPoint) []record {
	out := make([]record, 0, len(pts))
	for _, p := range pts {
		var r record
		for k, c := range cols {
			var v any
			if k < len(p.Values) {
				v = p.Values[k]
				if !c.Text {
					v = c.number(p.Values[k])
				}
			}
			r = append(r, field{c.Column, v})
		}
		var pullIn, release, drop, peak, hold, vsw, clamp, avalanche, droppedOut any
		if f := p.Figures; f != nil {
			pullIn, release, drop = seconds(f.PullIn), seconds(f.Release), seconds(f.Drop)
			peak, hold, vsw = f.PeakCurrent, optional(f.HoldCurrent, f.HoldMeasured), f.PeakSwitchVoltage
			clamp, avalanche, droppedOut = f.ClampEnergy, f.AvalancheEnergy, f.DroppedOut
		}
		r = append(r, field{"pull_in_time_s", pullIn}, field{"release_time_s", release}, field{"drop_time_s", drop},
			field{"peak_current_A", peak}, field{"hold_current_A", hold}, field{"peak_switch_voltage_V", vsw},
			field{"clamp_energy_J", clamp}, field{"avalanche_energy_J", avalanche}, field{"dropped_out", droppedOut},
			field{"failed", p.Failed}, field{"invalid", text(p.Invalid)}, field{"error", text(p.Err)})
		out = append(out, r)
	}
	return out
}

// number returns the value written as s in the column's unit (nil when s
// is not one of the key's values, which does not happen).
func (c sweepColumn) number(s string) any {
	if x, ok := c.nums[s]; ok {
		return x
	}
	return nil
}
