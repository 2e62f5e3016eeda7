package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/cmd/coilkick/plot"
)

func fitCommand(stdout io.Writer) *cli.Command {
	names := []string{}
	for _, p := range coilkick.FitParams() {
		names = append(names, string(p))
	}
	return &cli.Command{
		Name:      "fit",
		Usage:     "calibrate scenario parameters to a measured current trace",
		ArgsUsage: "SCENARIO.yaml --trace scope.csv [-o fitted.yaml]",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "trace", Usage: "measured trace `FILE` (CSV: \"time (ms), current (mA)\"[, \"voltage (V)\"], or the CSV of coilkick run --csv)", Required: true},
			&cli.StringFlag{Name: "params", Value: "resistance,closed inductance,open inductance",
				Usage: "comma-separated parameters to fit: " + strings.Join(names, ", ")},
			&cli.StringFlag{Name: "output", Aliases: []string{"o"}, Usage: "write the fitted scenario to `FILE`"},
			&cli.StringFlag{Name: "csv", Usage: "write measured and simulated current to `FILE`"},
			&cli.StringFlag{Name: "plot", Usage: "write the overlay of measured and simulated current to `FILE` (.png or .svg)"},
			&cli.BoolFlag{Name: "keep-failed", Usage: "write the outputs (-o, --csv, --plot) even when the fit fails (exit status still 1)"},
		},
		Action: func(c *cli.Context) error { return cmdFit(c, stdout) },
	}
}

func cmdFit(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	var params []coilkick.FitParam
	for _, p := range strings.Split(c.String("params"), ",") {
		p = strings.TrimSpace(p)
		ok := false
		for _, q := range coilkick.FitParams() {
			if string(q) == p {
				params, ok = append(params, q), true
			}
		}
		if !ok {
			return fmt.Errorf("--params: unknown parameter %q", p)
		}
	}
	tr, err := coilkick.LoadTrace(c.String("trace"))
	if err != nil {
		return err
	}
	fr, err := coilkick.Fit(md, tr, params)
	failed := errors.Is(err, coilkick.ErrFitFailed)
	if err != nil && !failed {
		return fmt.Errorf("fit of %s to %s: %w", path, tr.Source, trimPrefix(err))
	}
	b := bufio.NewWriter(w)
	defer b.Flush()
	ev := fr.Events
	fmt.Fprintf(b, "coilkick fit: %s\nscenario: %s\ntrace: %s (%d samples, offset %s, noise %s rms)\n",
		md.Name, path, tr.Source, len(tr.Time), si(ev.Offset, "A"), si(ev.Noise, "A"))
	if tr.Repeated > 0 {
		fmt.Fprintf(b, "  %d rows at a repeated time (one on each side of an event) dropped; the first of each kept\n", tr.Repeated)
	}
	fmt.Fprintln(b, "\nEvents in the trace")
	fmt.Fprintf(b, "  energize                 %s ± %s\n", si(ev.Energize, "s"), si(ev.EnergizeErr, "s"))
	if ev.HasDip {
		fmt.Fprintf(b, "  current peak before dip  %s at %s\n", si(ev.PeakI, "A"), si(ev.Peak, "s"))
		fmt.Fprintf(b, "  dip minimum (seated)     %s at %s ± %s  (pull-in %s after energize)\n", si(ev.SeatI, "A"), si(ev.Seat, "s"), si(ev.SeatErr, "s"), si(ev.Seat-ev.Energize, "s"))
	} else {
		fmt.Fprintln(b, "  no pull-in dip (the plunger did not move, or moved too little to show)")
	}
	if ev.DecayEnd > 0 {
		fmt.Fprintf(b, "  decay ends               %s ± %s\n", si(ev.DecayEnd, "s"), si(ev.DecayEndErr, "s"))
	}
	if failed {
		fmt.Fprintln(b, "\nFIT FAILED: the values below are not a calibration")
	}
	fmt.Fprintln(b, "\nFitted parameters (± 1σ; sensitivity: RMS error rise for +1 %)")
	for _, v := range fr.Values {
		fmt.Fprintf(b, "  %-18s %10s -> %10s %-6s ± %s   sensitivity %s\n", v.Param, finite(v.Start/v.DisplayScale, "%.5g"), finite(v.Value/v.DisplayScale, "%.5g"),
			v.Unit, stdErrText(v.StdErr/v.DisplayScale), finite(v.Sensitivity, "%.3g"))
	}
	fmt.Fprintf(b, "  %-18s %s (fitted with the parameters)\n", "baseline offset", siPM(fr.Offset, fr.OffsetErr, "A"))
	fmt.Fprintf(b, "  %-18s %s (trace time + this = model time)\n", "time alignment", siPM(fr.Shift, fr.ShiftErr, "s"))
	fmt.Fprintf(b, "Uncertainty: %s.\n", coilkick.FitUncertaintyMethod)
	fmt.Fprintf(b, "  residual σ %s over %d samples, lag-1 autocorrelation %.3f (variance × %.3g)\n", si(fr.ResidualSD, "A"), fr.Points, fr.Autocorrelation, fr.Inflation)
	if fr.FloorUsed {
		fmt.Fprintf(b, "  the residual is below the model's accuracy: σ floored at %s (%g of the peak current)\n", si(fr.NoiseFloor, "A"), coilkick.FitNoiseFloor)
	}
	for _, w := range fr.Warnings {
		fmt.Fprintf(b, "  WARNING: %s\n", w)
	}
	fmt.Fprintf(b, "\nRMS current error: %s before, %s after (trace noise %s); %d simulations\n", si(fr.RMSStart, "A"), si(fr.RMS, "A"), si(fr.Noise, "A"), fr.Evaluations)
	fmt.Fprintf(b, "Residual check: RMS error %.3g × the noise reference %s (a fit fails above %d ×; the reference is the largest of the noise before energizing, the sample-to-sample noise, the rounding noise of the trace's resolution and the σ floor)\n",
		fr.RMS/fr.NoiseRef, si(fr.NoiseRef, "A"), coilkick.FitResidualLimit)
	if fr.SeatModel.Happened && ev.HasDip {
		fmt.Fprintf(b, "Pull-in: fitted model %s, trace dip %s after energize\n", si(fr.SeatModel.Seconds, "s"), si(ev.Seat-ev.Energize, "s"))
	}
	if failed {
		fmt.Fprintln(b, "\nFIT FAILED:")
		for _, f := range fr.Failure {
			fmt.Fprintf(b, "  - %s\n", f)
		}
		if !c.Bool("keep-failed") {
			if c.String("output") != "" || c.String("csv") != "" || c.String("plot") != "" {
				fmt.Fprintln(b, "No output file written (--keep-failed writes them, for a look at the overlay).")
			}
			b.Flush()
			return fmt.Errorf("fit of %s: %v", path, err)
		}
	}
	// The outputs, written together (all or none) through temporary
	// files; the command line was checked before the fit (checkArgs: not
	// onto an input, links followed; plot extension; writable folder).
	outs := newOutputs(b)
	if out := c.String("output"); out != "" {
		data, err := coilkick.WriteFitted(path, fr)
		if err != nil {
			return err
		}
		outs.add(out, func(o io.Writer) error { _, err := o.Write(data); return err })
	}
	if f := c.String("csv"); f != "" {
		outs.add(f, func(out io.Writer) error {
			bw := bufio.NewWriter(out)
			fmt.Fprintln(bw, "time_s,measured_A,simulated_A")
			for k := range fr.Time {
				fmt.Fprintf(bw, "%g,%g,%g\n", fr.Time[k], fr.Measured[k], fr.Simulated[k])
			}
			return bw.Flush()
		})
	}
	if f := c.String("plot"); f != "" {
		if err := outs.addFigure(f, fitFigure(md, fr)); err != nil {
			return err
		}
	}
	if err := outs.commit(); err != nil {
		return err
	}
	if out := c.String("output"); out != "" && out != "-" {
		fmt.Fprintf(b, "Fitted scenario written to %s\n", out)
	}
	if failed {
		b.Flush()
		return fmt.Errorf("fit of %s (outputs kept as asked, --keep-failed): %v", path, err)
	}
	return nil
}

// finite formats v, or "n/a" when it is not a finite number (a failed
// fit's parameter that ran off): never NaN or Inf in the output.
func finite(v float64, format string) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	return fmt.Sprintf(format, v)
}

// trimPrefix drops the library's "coilkick: " prefix, which the command
// adds itself.
func trimPrefix(err error) error {
	if s, ok := strings.CutPrefix(err.Error(), "coilkick: "); ok {
		return errors.New(s)
	}
	return err
}

// stdErrText prints a standard error, or says that the trace does not
// determine the parameter; never "0".
func stdErrText(v float64) string {
	if math.IsInf(v, 0) || math.IsNaN(v) || !(v > 0) {
		return "(not determined by the trace)"
	}
	return fmt.Sprintf("%.2g", v)
}

// siPM prints a value ± its standard error; a value below a hundredth of
// its error prints as 0 (round-off, not information).
func siPM(v, e float64, unit string) string {
	if math.IsInf(e, 0) || math.IsNaN(e) || !(e > 0) {
		return si(v, unit) + " ± (not determined by the trace)"
	}
	if math.Abs(v) < e/100 {
		v = 0
	}
	return si(v, unit) + " ± " + si(e, unit)
}

// fitFigure is the overlay of measured and fitted current (mA versus ms).
func fitFigure(md *coilkick.Model, fr *coilkick.FitResult) *plot.Figure {
	ms := make([]float64, len(fr.Time))
	meas := make([]float64, len(fr.Time))
	sim := make([]float64, len(fr.Time))
	for k := range fr.Time {
		ms[k] = fr.Time[k] * 1e3
		meas[k] = fr.Measured[k] * 1e3
		sim[k] = fr.Simulated[k] * 1e3
	}
	title := "Measured and fitted coil current — " + md.Name
	if fr.Failed() {
		title = "FAILED fit: measured and model current — " + md.Name
	}
	return plot.Lines(title, "time (ms, model time base)", "coil current (mA)", ms,
		[]plot.Series{{Label: "measured (offset removed)", Ys: meas}, {Label: "fitted model", Ys: sim}})
}
