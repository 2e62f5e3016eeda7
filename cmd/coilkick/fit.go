package main

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
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
	f, err := os.Open(c.String("trace"))
	if err != nil {
		return err
	}
	tr, err := coilkick.ReadTraceCSV(f, c.String("trace"))
	f.Close()
	if err != nil {
		return err
	}
	fr, err := coilkick.Fit(md, tr, params)
	if err != nil {
		return err
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
	fmt.Fprintln(b, "\nFitted parameters (± 1σ; sensitivity: RMS error rise for +1 %)")
	for _, v := range fr.Values {
		fmt.Fprintf(b, "  %-18s %10.5g -> %10.5g %-6s ± %s   sensitivity %.3g\n", v.Param, v.Start/v.DisplayScale, v.Value/v.DisplayScale,
			v.Unit, stdErrText(v.StdErr/v.DisplayScale), v.Sensitivity)
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
	if fr.SeatModel.Happened && ev.HasDip {
		fmt.Fprintf(b, "Pull-in: fitted model %s, trace dip %s after energize\n", si(fr.SeatModel.Seconds, "s"), si(ev.Seat-ev.Energize, "s"))
	}
	if out := c.String("output"); out != "" {
		data, err := coilkick.WriteFitted(path, fr)
		if err != nil {
			return err
		}
		if err := writeFile(out, b, func(o io.Writer) error { _, err := o.Write(data); return err }); err != nil {
			return err
		}
		fmt.Fprintf(b, "Fitted scenario written to %s\n", out)
	}
	if f := c.String("csv"); f != "" {
		if err := writeFile(f, b, func(out io.Writer) error {
			bw := bufio.NewWriter(out)
			fmt.Fprintln(bw, "time_s,measured_A,simulated_A")
			for k := range fr.Time {
				fmt.Fprintf(bw, "%g,%g,%g\n", fr.Time[k], fr.Measured[k], fr.Simulated[k])
			}
			return bw.Flush()
		}); err != nil {
			return err
		}
	}
	if f := c.String("plot"); f != "" {
		if err := plotFit(f, md, fr); err != nil {
			return err
		}
	}
	return nil
}

// stdErrText prints a standard error, or says that the trace does not
// determine the parameter.
func stdErrText(v float64) string {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return "(not determined by the trace)"
	}
	return fmt.Sprintf("%.2g", v)
}

// siPM prints a value ± its standard error; a value below a hundredth of
// its error prints as 0 (round-off, not information).
func siPM(v, e float64, unit string) string {
	if math.IsInf(e, 0) || math.IsNaN(e) {
		return si(v, unit) + " ± (not determined by the trace)"
	}
	if math.Abs(v) < e/100 {
		v = 0
	}
	return si(v, unit) + " ± " + si(e, unit)
}

// plotFit writes the overlay of measured and fitted current (mA versus ms).
func plotFit(file string, md *coilkick.Model, fr *coilkick.FitResult) error {
	ms := make([]float64, len(fr.Time))
	meas := make([]float64, len(fr.Time))
	sim := make([]float64, len(fr.Time))
	for k := range fr.Time {
		ms[k] = fr.Time[k] * 1e3
		meas[k] = fr.Measured[k] * 1e3
		sim[k] = fr.Simulated[k] * 1e3
	}
	fig := plot.Lines("Measured and fitted coil current — "+md.Name, "time (ms, model time base)", "coil current (mA)", ms,
		[]plot.Series{{Label: "measured (offset removed)", Ys: meas}, {Label: "fitted model", Ys: sim}})
	return fig.Save(file) // atomic (outfile.Write)
}
