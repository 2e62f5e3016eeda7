package main

import (
	"encoding/csv"
	"encoding/json"
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
			&cli.StringFlag{Name: "csv", Usage: "write the results to `FILE` (CSV)"},
			&cli.StringFlag{Name: "json", Usage: "write the results to `FILE` (JSON)"},
			&cli.IntFlag{Name: "workers", Usage: "parallel simulations (default: all cores)"},
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
	var progress func(done, total int)
	if errw := c.App.ErrWriter; isTerminal(errw) {
		progress = func(done, total int) {
			const width = 40
			n := width * done / total
			fmt.Fprintf(errw, "\r[%s%s] %d/%d", strings.Repeat("#", n), strings.Repeat(".", width-n), done, total)
			if done == total {
				fmt.Fprintln(errw)
			}
		}
	}
	pts := sw.Sweep(vs, c.Int("workers"), progress)
	writeSweepTable(w, vs, pts)

	var ran, invalid, failedSim, failing int
	for _, p := range pts {
		switch {
		case p.Figures != nil:
			ran++
			if p.Figures.Failed {
				failing++
			}
		case p.Invalid != "":
			invalid++
		default:
			failedSim++
		}
	}
	if invalid > 0 {
		fmt.Fprintf(w, "\n%d of %d points invalid: their values break a rule of the scenario (reason in the row).\n", invalid, len(pts))
	}
	outs := newOutputs(w)
	if f := c.String("csv"); f != "" {
		outs.add(f, func(out io.Writer) error { return writeSweepCSV(out, vs, pts) })
	}
	if f := c.String("json"); f != "" {
		outs.add(f, func(out io.Writer) error {
			enc := json.NewEncoder(out)
			enc.SetIndent("", "  ")
			return enc.Encode(pts)
		})
	}
	if f := c.String("plot"); f != "" && ran > 0 {
		if err := outs.addFigure(f, sweepPlot(c.String("figure"), xs, vs, pts)); err != nil {
			return err
		}
	}
	if err := outs.commit(); err != nil {
		return err
	}
	switch {
	case ran == 0:
		return fmt.Errorf("no point of the sweep ran: %d invalid, %d could not be simulated (reasons in the rows)", invalid, failedSim)
	case failedSim > 0:
		return fmt.Errorf("%d of %d points could not be simulated (reasons in the rows)", failedSim, len(pts))
	case failing > 0:
		return errFailing
	}
	return nil
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
			row = append(row, interval2(f.PullIn), release, drop, si(f.PeakCurrent, "A"),
				si(f.HoldCurrent, "A"), si(f.PeakSwitchVoltage, "V"), si(f.ClampEnergy, "J"), si(f.AvalancheEnergy, "J"), verdict)
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
		return f.HoldCurrent, "hold current (A)", true
	case "switch voltage":
		return f.PeakSwitchVoltage, "peak switch voltage (V)", true
	case "clamp energy":
		return f.ClampEnergy * 1e3, "clamp energy (mJ)", true
	}
	return 0, "", false
}

// sweepPlot draws a figure versus the first key (xs), one line per value
// of the other keys; points without figures are gaps in their line.
func sweepPlot(figure string, xs []float64, vs []coilkick.Vary, pts []coilkick.SweepPoint) *plot.Figure {
	nx := len(xs)
	xLabel := vs[0].Key
	if f := strings.Fields(vs[0].Values[0]); len(f) > 1 {
		xLabel += " (" + strings.Join(f[1:], " ") + ")"
	}
	inner := len(pts) / nx
	_, yLabel, _ := sweepFigure(figure, coilkick.SweepFigures{})
	var series []plot.Series
	for j := 0; j < inner; j++ {
		ys := make([]float64, nx)
		label := "all"
		for k := 0; k < nx; k++ {
			p := pts[k*inner+j]
			ys[k] = math.NaN() // a gap: no figures at this point
			if p.Figures != nil {
				ys[k], _, _ = sweepFigure(figure, *p.Figures)
			}
			if len(p.Values) > 1 {
				label = strings.Join(p.Values[1:], ", ")
			}
		}
		series = append(series, plot.Series{Label: label, Ys: ys})
	}
	return plot.Lines(yLabel+" versus "+vs[0].Key, xLabel, yLabel, xs, series)
}

// writeSweepCSV writes one row per point; a point without figures has
// empty figure cells, "failed" true and its reason under "invalid" or
// "error".
func writeSweepCSV(w io.Writer, vs []coilkick.Vary, pts []coilkick.SweepPoint) error {
	cw := csv.NewWriter(w)
	var h []string
	for _, v := range vs {
		h = append(h, v.Key)
	}
	h = append(h, "pull_in_time_s", "release_time_s", "drop_time_s", "peak_current_A", "hold_current_A",
		"peak_switch_voltage_V", "clamp_energy_J", "avalanche_energy_J", "failed", "dropped_out", "invalid", "error")
	cw.Write(h)
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', 10, 64) }
	iv := func(x coilkick.Interval) string {
		if !x.Happened {
			return ""
		}
		return num(x.Seconds)
	}
	for _, p := range pts {
		row := append([]string{}, p.Values...)
		if f := p.Figures; f != nil {
			row = append(row, iv(f.PullIn), iv(f.Release), iv(f.Drop), num(f.PeakCurrent), num(f.HoldCurrent),
				num(f.PeakSwitchVoltage), num(f.ClampEnergy), num(f.AvalancheEnergy), strconv.FormatBool(f.Failed),
				strconv.FormatBool(f.DroppedOut))
		} else {
			row = append(row, "", "", "", "", "", "", "", "", "true", "") // no figures (never zeros), failed
		}
		cw.Write(append(row, p.Invalid, p.Err))
	}
	cw.Flush()
	return cw.Error()
}
