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
			&cli.StringFlag{Name: "csv", Usage: "write the overlay (time, measured and model current, residual) to `FILE` (- for standard output)"},
			&cli.StringFlag{Name: "json", Usage: "write the fit's figures (events, parameters with σ, residuals, failure reasons) to `FILE` (- for standard output)"},
			&cli.StringFlag{Name: "plot", Usage: "write the overlay of measured and simulated current to `FILE` (.png or .svg)"},
			&cli.BoolFlag{Name: "keep-failed", Usage: "write the outputs (-o, --csv, --json, --plot) even when the fit fails (exit status still 1)"},
		},
		Action: func(c *cli.Context) error { return cmdFit(c, stdout) },
	}
}

// cmdFit fits the scenario's parameters to the trace, prints the fit and
// writes the outputs (all or none). A failed fit (coilkick.ErrFitFailed)
// prints its reasons and writes nothing unless --keep-failed; its status
// is 1 either way.
func cmdFit(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	params, err := parseFitParams(c.String("params"))
	if err != nil {
		return err
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
	// With -o -, --json - or --csv - standard output carries that document
	// alone: the report is not printed (a failed fit's reasons are in the
	// error message).
	text := w
	if toStdout(c, fitStdoutFlags...) {
		text = io.Discard
	}
	b := bufio.NewWriter(text)
	defer b.Flush()
	printFit(b, path, md, tr, fr, failed)
	if failed && !c.Bool("keep-failed") {
		if c.String("output") != "" || c.String("csv") != "" || c.String("json") != "" || c.String("plot") != "" {
			fmt.Fprintln(b, "No output file written (--keep-failed writes them, for a look at the overlay).")
		}
		b.Flush()
		return fmt.Errorf("fit of %s: %v", path, err)
	}
	if err := writeFitOutputs(c, b, w, path, md, tr, fr); err != nil {
		return err
	}
	if failed {
		b.Flush()
		return fmt.Errorf("fit of %s (outputs kept as asked, --keep-failed): %v", path, err)
	}
	return nil
}

// fitStdoutFlags are fit's outputs that may be standard output ("-").
var fitStdoutFlags = []string{"output", "json", "csv"}

// parseFitParams reads --params: comma-separated names of
// coilkick.FitParams.
func parseFitParams(list string) ([]coilkick.FitParam, error) {
	var params []coilkick.FitParam
	for _, p := range strings.Split(list, ",") {
		p = strings.TrimSpace(p)
		ok := false
		for _, q := range coilkick.FitParams() {
			if string(q) == p {
				params, ok = append(params, q), true
			}
		}
		if !ok {
			return nil, fmt.Errorf("--params: unknown parameter %q", p)
		}
	}
	return params, nil
}

// printFit prints the fit: the trace and its events, the fitted
// parameters with their σ, the residual and, for a failed fit, why.
func printFit(b io.Writer, path string, md *coilkick.Model, tr *coilkick.MeasuredTrace, fr *coilkick.FitResult, failed bool) {
	ev := fr.Events
	fmt.Fprintf(b, "coilkick fit: %s\nscenario: %s\ntrace: %s (%d samples, offset %s, noise %s rms)\n",
		md.Name, path, tr.Source, len(tr.Time), si(ev.Offset, "A"), si(ev.Noise, "A"))
	if tr.Repeated > 0 {
		fmt.Fprintf(b, "  %d rows at a repeated time (one on each side of an event) dropped; the first of each kept\n", tr.Repeated)
	}
	printTraceEvents(b, fr)
	if failed {
		fmt.Fprintln(b, "\nFIT FAILED: the values below are not a calibration")
	}
	printFitParameters(b, fr)
	fmt.Fprintf(b, "\nRMS current error: %s before, %s after (trace noise %s); %d simulations\n", si(fr.RMSStart, "A"), si(fr.RMS, "A"), si(fr.Noise, "A"), fr.Evaluations)
	fmt.Fprintf(b, "Residual check: RMS error %.3g × the noise reference %s (a fit fails above %d ×; the reference is the largest of the noise before energizing, the sample-to-sample noise, the rounding noise of the trace's resolution and the σ floor)\n",
		fr.RMS/fr.NoiseRef, si(fr.NoiseRef, "A"), coilkick.FitResidualLimit)
	if on, _, _ := fitEnergize(fr); fr.SeatModel.Happened && ev.HasDip {
		fmt.Fprintf(b, "Pull-in: fitted model %s, trace dip %s after energize (fitted alignment)\n", si(fr.SeatModel.Seconds, "s"), si(ev.Seat-on, "s"))
	}
	if failed {
		fmt.Fprintln(b, "\nFIT FAILED:")
		for _, f := range fr.Failure {
			fmt.Fprintf(b, "  - %s\n", f)
		}
	}
}

// fitEnergize is the energize instant in trace time that the fit used
// (the model's energize time less the fitted alignment) with its 1σ, or
// the event detector's when the fit left no finite alignment (fitted
// false).
func fitEnergize(fr *coilkick.FitResult) (t, sigma float64, fitted bool) {
	if !math.IsNaN(fr.Energize) && !math.IsInf(fr.Energize, 0) {
		return fr.Energize, fr.EnergizeErr, true
	}
	return fr.Events.Energize, fr.Events.EnergizeErr, false
}

// printTraceEvents prints the events found in the trace, in trace time:
// the energize instant the fit used (the fitted alignment; the edge
// detector's estimate, where the alignment search started, only when it
// lies more than 3 of its σ away), the pull-in dip with the pull-in time
// from that instant, the end of the decay.
func printTraceEvents(b io.Writer, fr *coilkick.FitResult) {
	ev := fr.Events
	on, sigma, fitted := fitEnergize(fr)
	fmt.Fprintln(b, "\nEvents in the trace")
	if fitted {
		fmt.Fprintf(b, "  energize (fitted)        %s ± %s\n", si(on, "s"), stdErrSI(sigma, "s"))
		if math.Abs(ev.Energize-on) > 3*ev.EnergizeErr {
			fmt.Fprintf(b, "    (the edge detector found %s ± %s, where the alignment search started: a disturbance before the edge?)\n",
				si(ev.Energize, "s"), si(ev.EnergizeErr, "s"))
		}
	} else {
		fmt.Fprintf(b, "  energize (edge detector) %s ± %s (no fitted alignment)\n", si(on, "s"), si(sigma, "s"))
	}
	if ev.HasDip {
		fmt.Fprintf(b, "  current peak before dip  %s at %s\n", si(ev.PeakI, "A"), si(ev.Peak, "s"))
		fmt.Fprintf(b, "  dip minimum (seated)     %s at %s ± %s  (pull-in %s after energize)\n", si(ev.SeatI, "A"), si(ev.Seat, "s"), si(ev.SeatErr, "s"), si(ev.Seat-on, "s"))
	} else {
		fmt.Fprintln(b, "  no pull-in dip (the plunger did not move, or moved too little to show)")
	}
	if ev.DecayEnd > 0 {
		fmt.Fprintf(b, "  decay ends               %s ± %s\n", si(ev.DecayEnd, "s"), si(ev.DecayEndErr, "s"))
	}
}

// printFitParameters prints the fitted parameters, the nuisance
// parameters and how their σ was found.
func printFitParameters(b io.Writer, fr *coilkick.FitResult) {
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
}

// writeFitOutputs writes the fit's outputs together (all or none, through
// temporary files; the command line was checked before the fit by
// checkArgs: not onto an input, links followed; plot extension; writable
// folder). Standard output ("-") is stdout, the text b otherwise.
func writeFitOutputs(c *cli.Context, b *bufio.Writer, stdout io.Writer, path string, md *coilkick.Model, tr *coilkick.MeasuredTrace, fr *coilkick.FitResult) error {
	outs := newOutputs(b)
	if toStdout(c, fitStdoutFlags...) {
		b.Flush()
		outs = newOutputs(stdout)
	}
	if out := c.String("output"); out != "" {
		data, err := coilkick.WriteFitted(path, fr)
		if err != nil {
			return err
		}
		outs.add(out, func(o io.Writer) error { _, err := o.Write(data); return err })
	}
	if f := c.String("csv"); f != "" {
		outs.add(f, func(out io.Writer) error { return writeFitCSV(out, fr) })
	}
	if f := c.String("json"); f != "" {
		doc := newFitDoc(path, md, tr, fr)
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
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

// stdErrSI prints a standard error with its unit, or says that the trace
// does not determine it.
func stdErrSI(v float64, unit string) string {
	if math.IsInf(v, 0) || math.IsNaN(v) || !(v > 0) {
		return "(not determined by the trace)"
	}
	return si(v, unit)
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

// writeFitCSV writes the overlay on the fit grid: the model's time base
// (trace time + alignment), the measured current (baseline offset
// removed), the model's current and their difference.
func writeFitCSV(w io.Writer, fr *coilkick.FitResult) error {
	rows := make([][]string, len(fr.Time))
	for k := range fr.Time {
		rows[k] = []string{num(fr.Time[k]), num(fr.Measured[k]), num(fr.Simulated[k]), num(fr.Measured[k] - fr.Simulated[k])}
	}
	return writeCSVRows(w, []string{"time_s", "measured_current_A", "model_current_A", "residual_A"}, rows)
}

// fitSIUnits are the SI units of the fit parameters' values in --json.
var fitSIUnits = map[coilkick.FitParam]string{
	coilkick.FitResistance: "ohm", coilkick.FitClosedInductance: "H", coilkick.FitOpenInductance: "H",
	coilkick.FitPreload: "N", coilkick.FitMass: "kg", coilkick.FitDamping: "N*s/m",
}

// fitDoc is the --json document of fit (README "Machine-readable
// output"). A figure a failed fit left without a finite value is null.
type fitDoc struct {
	jsonHeader
	Trace             fitTrace       `json:"trace"`
	Events            fitEvents      `json:"events"`
	Parameters        []fitParameter `json:"parameters"`
	Offset            *float64       `json:"baseline_offset_A"` // fitted
	OffsetErr         *float64       `json:"baseline_offset_std_error_A"`
	Shift             *float64       `json:"time_alignment_s"`
	ShiftErr          *float64       `json:"time_alignment_std_error_s"`
	UncertaintyMethod string         `json:"uncertainty_method"`
	Residual          fitResidual    `json:"residual"`
	ModelPullIn       *float64       `json:"model_pull_in_time_s"`
	Simulations       int            `json:"simulations"`
	Warnings          []string       `json:"warnings"`
	Failed            bool           `json:"failed"`
	Failure           []string       `json:"failure"`
}

type fitTrace struct {
	Source   string `json:"source"`
	Samples  int    `json:"samples"`
	Repeated int    `json:"repeated_rows_dropped"`
	Points   int    `json:"points_compared"`
}

type fitEvents struct {
	Step   *float64 `json:"sample_step_s"`
	Offset *float64 `json:"pre_energize_offset_A"`
	Noise  *float64 `json:"pre_energize_noise_A"`
	// The energize instant the fit used (the fitted alignment), and the
	// edge detector's estimate where the alignment search started.
	Energize            *float64 `json:"energize_s"`
	EnergizeErr         *float64 `json:"energize_std_error_s"`
	DetectedEnergize    *float64 `json:"detected_energize_s"`
	DetectedEnergizeErr *float64 `json:"detected_energize_std_error_s"`
	// The pull-in dip: null when none was found.
	PeakBeforeDip *float64 `json:"peak_before_dip_s"`
	PeakCurrent   *float64 `json:"peak_before_dip_current_A"`
	Seat          *float64 `json:"seated_s"`
	SeatCurrent   *float64 `json:"seated_current_A"`
	SeatErr       *float64 `json:"seated_std_error_s"`
	PullIn        *float64 `json:"pull_in_time_s"`
	TurnOff       *float64 `json:"turn_off_s"`
	DecayEnd      *float64 `json:"decay_end_s"`
	DecayEndErr   *float64 `json:"decay_end_std_error_s"`
}

// fitParameter: values in the SI unit named by unit; std_error null when
// the trace does not determine the parameter.
type fitParameter struct {
	Name        string   `json:"name"`
	Unit        string   `json:"unit"`
	Start       *float64 `json:"start"`
	Value       *float64 `json:"value"`
	StdErr      *float64 `json:"std_error"`
	Sensitivity *float64 `json:"sensitivity"` // relative RMS-error rise for +1 %
}

type fitResidual struct {
	RMSStart        *float64 `json:"rms_error_start_A"`
	RMS             *float64 `json:"rms_error_A"`
	Noise           *float64 `json:"baseline_noise_A"`
	DiffNoise       *float64 `json:"sample_to_sample_noise_A"`
	Quantum         *float64 `json:"resolution_A"`
	NoiseFloor      *float64 `json:"noise_floor_A"`
	NoiseRef        *float64 `json:"noise_reference_A"`
	Ratio           *float64 `json:"rms_to_noise_ratio"`
	Limit           float64  `json:"rms_to_noise_limit"`
	SD              *float64 `json:"standard_deviation_A"`
	FloorUsed       bool     `json:"floor_used"`
	Autocorrelation *float64 `json:"lag1_autocorrelation"`
	Inflation       *float64 `json:"variance_inflation"`
}

// fin is v, or nil when it is not a finite number.
func fin(v float64) *float64 {
	return optional(v, !math.IsNaN(v) && !math.IsInf(v, 0))
}

// positive is v when it is a finite number above 0, else nil (a σ the
// trace does not determine, an instant not found).
func positive(v float64) *float64 { return optional(v, v > 0 && !math.IsInf(v, 0)) }

func newFitDoc(path string, md *coilkick.Model, tr *coilkick.MeasuredTrace, fr *coilkick.FitResult) *fitDoc {
	d := &fitDoc{jsonHeader: newHeader("fit", md, path),
		Trace:  fitTrace{Source: tr.Source, Samples: len(tr.Time), Repeated: tr.Repeated, Points: fr.Points},
		Offset: fin(fr.Offset), OffsetErr: positive(fr.OffsetErr), Shift: fin(fr.Shift), ShiftErr: positive(fr.ShiftErr),
		UncertaintyMethod: coilkick.FitUncertaintyMethod, ModelPullIn: seconds(fr.SeatModel), Simulations: fr.Evaluations,
		Parameters: []fitParameter{}, Warnings: append([]string{}, fr.Warnings...), Failed: fr.Failed(),
		Failure: append([]string{}, fr.Failure...),
		Residual: fitResidual{RMSStart: fin(fr.RMSStart), RMS: fin(fr.RMS), Noise: fin(fr.Noise), DiffNoise: positive(fr.DiffNoise),
			Quantum: positive(fr.Quantum), NoiseFloor: fin(fr.NoiseFloor), NoiseRef: fin(fr.NoiseRef),
			Ratio: fin(fr.RMS / fr.NoiseRef), Limit: coilkick.FitResidualLimit, SD: fin(fr.ResidualSD), FloorUsed: fr.FloorUsed,
			Autocorrelation: fin(fr.Autocorrelation), Inflation: fin(fr.Inflation)},
	}
	for _, v := range fr.Values {
		d.Parameters = append(d.Parameters, fitParameter{Name: string(v.Param), Unit: fitSIUnits[v.Param],
			Start: fin(v.Start), Value: fin(v.Value), StdErr: positive(v.StdErr), Sensitivity: fin(v.Sensitivity)})
	}
	if ev := fr.Events; ev != nil {
		on, sigma, _ := fitEnergize(fr)
		d.Events = fitEvents{Step: positive(ev.Step), Offset: fin(ev.Offset), Noise: fin(ev.Noise),
			Energize: fin(on), EnergizeErr: positive(sigma),
			DetectedEnergize: fin(ev.Energize), DetectedEnergizeErr: positive(ev.EnergizeErr),
			TurnOff: optional(ev.TurnOff, ev.TurnOff > 0), DecayEnd: optional(ev.DecayEnd, ev.DecayEnd > 0)}
		if ev.HasDip {
			d.Events.PeakBeforeDip, d.Events.PeakCurrent = fin(ev.Peak), fin(ev.PeakI)
			d.Events.Seat, d.Events.SeatCurrent, d.Events.SeatErr = fin(ev.Seat), fin(ev.SeatI), positive(ev.SeatErr)
			d.Events.PullIn = fin(ev.Seat - on)
		}
		if ev.DecayEnd > 0 {
			d.Events.DecayEndErr = positive(ev.DecayEndErr)
		}
	}
	return d
}
