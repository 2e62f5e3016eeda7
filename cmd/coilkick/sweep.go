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
			&cli.StringSliceFlag{Name: "vary", Usage: "a scenario key and its values: \"supply.voltage=18 V:30 V:13\" or \"plunger.mass=5 g,8 g\" (repeat for a grid)"},
			&cli.StringFlag{Name: "csv", Usage: "write the results to `FILE` (CSV)"},
			&cli.StringFlag{Name: "json", Usage: "write the results to `FILE` (JSON)"},
			&cli.IntFlag{Name: "workers", Usage: "parallel simulations (default: all cores)"},
			&cli.StringFlag{Name: "plot", Usage: "plot a figure versus the first key, one line per value of the second, to `FILE`"},
			&cli.StringFlag{Name: "figure", Value: "pull-in", Usage: "figure to plot: pull-in, release, drop, peak current, hold current, switch voltage, clamp energy"},
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

func cmdSweep(c *cli.Context, w io.Writer) error {
	path, err := oneFile(c)
	if err != nil {
		return err
	}
	var vs []coilkick.Vary
	for _, spec := range c.StringSlice("vary") {
		v, err := coilkick.ParseVary(spec)
		if err != nil {
			return err
		}
		vs = append(vs, v)
	}
	if len(vs) == 0 {
		return fmt.Errorf("sweep needs at least one --vary KEY=FROM:TO:STEPS")
	}
	sw, err := coilkick.NewSweeper(path)
	if err != nil {
		return err
	}
	// Check the first point before running them all: a bad key fails at once.
	if _, err := sw.Model(vs, coilkick.Points(vs)[0]); err != nil {
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
	header := []string{}
	for _, v := range vs {
		header = append(header, v.Key)
	}
	header = append(header, "pull-in", "release", "drop", "peak current", "hold current", "peak switch V", "clamp energy", "avalanche energy", "checks")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, strings.Join(header, "\t"))
	failed := false
	for _, p := range pts {
		row := append([]string{}, p.Values...)
		if p.Err != "" {
			row = append(row, "error: "+p.Err)
			failed = true
		} else {
			f := p.Figures
			verdict := "pass"
			if f.Failed {
				verdict, failed = "FAIL", true
			}
			row = append(row, interval2(f.PullIn), interval2(f.Release), interval2(f.Drop), si(f.PeakCurrent, "A"),
				si(f.HoldCurrent, "A"), si(f.PeakSwitchVoltage, "V"), si(f.ClampEnergy, "J"), si(f.AvalancheEnergy, "J"), verdict)
		}
		fmt.Fprintln(tw, strings.Join(row, "\t"))
	}
	tw.Flush()
	if f := c.String("csv"); f != "" {
		if err := writeFile(f, w, func(out io.Writer) error { return writeSweepCSV(out, vs, pts) }); err != nil {
			return err
		}
	}
	if f := c.String("json"); f != "" {
		if err := writeFile(f, w, func(out io.Writer) error {
			enc := json.NewEncoder(out)
			enc.SetIndent("", "  ")
			return enc.Encode(pts)
		}); err != nil {
			return err
		}
	}
	if f := c.String("plot"); f != "" {
		if err := plotSweep(f, c.String("figure"), vs, pts); err != nil {
			return err
		}
	}
	if failed {
		return errFailing
	}
	return nil
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

func plotSweep(file, figure string, vs []coilkick.Vary, pts []coilkick.SweepPoint) error {
	if _, _, ok := sweepFigure(figure, coilkick.SweepFigures{}); !ok {
		return fmt.Errorf("--figure %q: unknown figure", figure)
	}
	nx := len(vs[0].Values)
	xs := make([]float64, nx)
	for k, v := range vs[0].Values {
		x, err := strconv.ParseFloat(strings.Fields(v)[0], 64)
		if err != nil {
			return fmt.Errorf("--plot needs numeric values of %s: %v", vs[0].Key, err)
		}
		xs[k] = x
	}
	xLabel := vs[0].Key
	if f := strings.Fields(vs[0].Values[0]); len(f) > 1 {
		xLabel += " (" + strings.Join(f[1:], " ") + ")"
	}
	inner := 1
	for _, v := range vs[1:] {
		inner *= len(v.Values)
	}
	var series []plot.Series
	var yLabel string
	for j := 0; j < inner; j++ {
		ys := make([]float64, nx)
		label := "all"
		for k := 0; k < nx; k++ {
			p := pts[k*inner+j]
			y, l, _ := sweepFigure(figure, p.Figures)
			if p.Err != "" {
				y = math.NaN()
			}
			ys[k], yLabel = y, l
			if len(p.Values) > 1 {
				label = strings.Join(p.Values[1:], ", ")
			}
		}
		series = append(series, plot.Series{Label: label, Ys: ys})
	}
	return plot.Lines(yLabel+" versus "+vs[0].Key, xLabel, yLabel, xs, series).Save(file)
}

func writeSweepCSV(w io.Writer, vs []coilkick.Vary, pts []coilkick.SweepPoint) error {
	cw := csv.NewWriter(w)
	var h []string
	for _, v := range vs {
		h = append(h, v.Key)
	}
	h = append(h, "pull_in_time_s", "release_time_s", "drop_time_s", "peak_current_A", "hold_current_A",
		"peak_switch_voltage_V", "clamp_energy_J", "avalanche_energy_J", "failed", "error")
	cw.Write(h)
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', 10, 64) }
	iv := func(x coilkick.Interval) string {
		if !x.Happened {
			return ""
		}
		return num(x.Seconds)
	}
	for _, p := range pts {
		f := p.Figures
		row := append(append([]string{}, p.Values...), iv(f.PullIn), iv(f.Release), iv(f.Drop), num(f.PeakCurrent),
			num(f.HoldCurrent), num(f.PeakSwitchVoltage), num(f.ClampEnergy), num(f.AvalancheEnergy),
			strconv.FormatBool(f.Failed), p.Err)
		cw.Write(row)
	}
	cw.Flush()
	return cw.Error()
}
