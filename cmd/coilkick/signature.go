package main

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/circuit"
	"coilkick/cmd/coilkick/plot"
)

// signatureCommand is `coilkick signature`: the end-of-stroke dip as the
// driver's firmware sees it, at every corner, and detection settings.
func signatureCommand(stdout io.Writer) *cli.Command {
	return &cli.Command{
		Name:      "signature",
		Usage:     "the end-of-stroke dip through the driver's current sense at every corner, and detection settings",
		ArgsUsage: "SCENARIO.yaml",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "bandwidth", Usage: "−3 dB frequency of the current-sense filter, with its unit (\"2 kHz\"; 0 Hz: none)", DefaultText: "the scenario's sense.bandwidth"},
			&cli.StringFlag{Name: "sample-rate", Usage: "ADC sampling rate, with its unit (\"10 kHz\")", DefaultText: "the scenario's sense.sample rate"},
			&cli.StringFlag{Name: "resolution", Usage: "ADC step (one LSB), with its unit (\"0.49 mA\"; 0 A: none)", DefaultText: "the scenario's sense.resolution"},
			&cli.StringFlag{Name: "noise", Usage: "rms noise of each reading, with its unit (\"3 mA\"; 0 A: none)", DefaultText: "the scenario's sense.noise"},
			&cli.Uint64Flag{Name: "seed", Usage: "seed of the noise", DefaultText: "the scenario's sense.seed, else 1"},
			&cli.StringFlag{Name: "plot", Usage: "plot the sensed current with the dip, the threshold and the window to `FILE` (.png or .svg)"},
			&cli.StringFlag{Name: "json", Usage: "write the sense chain, every point and the settings to `FILE` (JSON; - for standard output instead of the table)"},
			&cli.StringFlag{Name: "csv", Usage: "write one row per point to `FILE` (CSV; - for standard output instead of the table)"},
		},
		Action: func(c *cli.Context) error { return cmdSignature(c, stdout) },
	}
}

// senseChain is the scenario's sense section with the flags' overrides.
func senseChain(c *cli.Context, path string, md *coilkick.Model) (coilkick.SenseChain, error) {
	sc := coilkick.SenseChain{Seed: 1}
	if md.Sense != nil {
		sc = *md.Sense
	}
	for _, f := range []struct {
		flag, key string
		dst       *float64
	}{{"bandwidth", "bandwidth", &sc.Bandwidth}, {"sample-rate", "sample rate", &sc.SampleRate},
		{"resolution", "resolution", &sc.Resolution}, {"noise", "noise", &sc.Noise}} {
		if !c.IsSet(f.flag) {
			continue
		}
		v, err := coilkick.ParseSenseValue(f.key, c.String(f.flag))
		if err != nil {
			return sc, fmt.Errorf("--%s %s", f.flag, err)
		}
		*f.dst = v
	}
	if c.IsSet("seed") {
		sc.Seed = c.Uint64("seed")
	}
	if sc.SampleRate == 0 {
		return sc, fmt.Errorf("%s: signature needs the driver's current sense: a sense section (sample rate, bandwidth, resolution, noise) or at least --sample-rate", path)
	}
	return sc, nil
}

func cmdSignature(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	sc, err := senseChain(c, path, md)
	if err != nil {
		return err
	}
	sig, err := coilkick.EndOfStroke(md, sc)
	if err != nil {
		return err
	}
	outs := newOutputs(w)
	if f := c.String("json"); f != "" {
		doc := signatureJSON(newHeader("signature", md, path), sig)
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("csv"); f != "" {
		keys := signatureRecord(sig, &coilkick.SignaturePoint{}).keys()
		outs.add(f, func(out io.Writer) error { return writeRecordsCSV(out, keys, signatureRecords(sig)) })
	}
	if f := c.String("plot"); f != "" {
		if err := outs.addFigure(f, plot.Signature("End-of-stroke signature — "+md.Name, signaturePlot(sig))); err != nil {
			return err
		}
	}
	if err := outs.commit(); err != nil {
		return err
	}
	if !toStdout(c, "json", "csv") {
		printSignature(w, path, md, sig)
	}
	if sig.Failed() {
		return errFailing
	}
	return nil
}

// senseText describes the sense chain in one line.
func senseText(sig *coilkick.Signature) string {
	sc := sig.Sense
	parts := []string{"no filter"}
	if sc.Bandwidth > 0 {
		parts[0] = fmt.Sprintf("first-order filter at %s (τ = %s)", si(sc.Bandwidth, "Hz"), si(1/(2*math.Pi*sc.Bandwidth), "s"))
	}
	parts = append(parts, "sampled at "+si(sc.SampleRate, "Hz"))
	if sc.Resolution > 0 {
		parts = append(parts, "step "+si(sc.Resolution, "A"))
	}
	if sc.Noise > 0 {
		parts = append(parts, fmt.Sprintf("noise %s rms (seed %d)", si(sc.Noise, "A"), sc.Seed))
	}
	return strings.Join(parts, ", ")
}

// noiseText says what the margins are taken against.
func noiseText(sig *coilkick.Signature) string {
	switch {
	case sig.NoiseRMS == 0:
		return "no noise and no quantisation: no margin is given"
	case sig.FromLSB:
		return fmt.Sprintf("margin = depth ÷ the quantisation noise LSB/√12 = %s (no noise stated)", si(sig.NoiseRMS, "A"))
	}
	return fmt.Sprintf("margin = depth ÷ the noise rms %s", si(sig.NoiseRMS, "A"))
}

// printSignature prints the study as text.
func printSignature(w io.Writer, path string, md *coilkick.Model, sig *coilkick.Signature) {
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick signature: %s\nscenario: %s\nsense: %s\n", md.Name, path, senseText(sig))
	fmt.Fprintf(b, "readings: %s from the energize command (10 × the nominal pull-in at most, within the energized time and a peak phase the plunger seats in); %s\n",
		si(sig.Window, "s"), noiseText(sig))
	if sig.NominalOnly {
		fmt.Fprintf(b, "no tolerances section: the nominal point only\n")
	} else {
		fmt.Fprintf(b, "%d points: the nominal and %d corners of the tolerances (winding temperatures fixed)\n", len(sig.Points), len(sig.Points)-1)
	}
	fmt.Fprintln(b)
	printSignatureTable(b, sig)
	fmt.Fprintln(b)
	printDetection(b, sig)
	if sig.Chop != nil {
		printChop(b, sig.Chop, sig.Points[0].Moving.PulledIn, md.Control.Mode == circuit.PeakHold)
	}
	if need := sig.Sense.MinMargin; need > 0 {
		if sig.Failed() {
			fmt.Fprintf(b, "\nRequirement (margin ≥ %.3g and a detection setting): FAIL\n", need)
			for _, f := range sig.Failures {
				fmt.Fprintf(b, "  %s\n", f)
			}
		} else {
			fmt.Fprintf(b, "\nRequirement (margin ≥ %.3g and a detection setting): pass\n", need)
		}
	}
}

// ms and mA write a time (s) and a current (A) for the table.
func ms(v float64) string { return fmt.Sprintf("%.2f", 1e3*v) }
func mA(v float64) string { return fmt.Sprintf("%.1f", 1e3*v) }

// printSignatureTable prints one row per point.
func printSignatureTable(b io.Writer, sig *coilkick.Signature) {
	wl := len("point")
	for _, p := range sig.Points {
		wl = max(wl, len(p.Corner.Label))
	}
	const row = "%-*s %7s %7s %7s %7s %7s %7s %8s %7s %8s %8s %8s\n"
	fmt.Fprintf(b, row, wl, "point", "seat", "max", "", "min", "", "depth", "min−seat", "margin", "blocked", "detected", "")
	fmt.Fprintf(b, row, wl, "", "ms", "ms", "mA", "ms", "mA", "mA", "ms", "", "fall mA", "ms", "blocked")
	for _, p := range sig.Points {
		m := p.Moving
		seat, off := "none", "-"
		if m.PulledIn {
			seat = ms(m.PullIn)
			if m.Dip.Depth > 0 {
				off = fmt.Sprintf("%+.2f", 1e3*(m.Dip.MinTime-m.PullIn))
			}
		}
		margin := "-"
		if sig.NoiseRMS > 0 {
			margin = fmt.Sprintf("%.1f", m.Margin)
		}
		det, bdet := "-", "-"
		if sig.Detection.Found {
			det, bdet = "none", "none"
			if m.Detected {
				det = ms(m.DetectTime)
			}
			if p.Blocked.Detected {
				bdet = ms(p.Blocked.DetectTime)
			}
		}
		fmt.Fprintf(b, row, wl, p.Corner.Label, seat, ms(m.Dip.MaxTime), mA(m.Dip.MaxCurrent), ms(m.Dip.MinTime), mA(m.Dip.MinCurrent),
			mA(m.Dip.Depth), off, margin, mA(p.Blocked.Dip.Depth), det, bdet)
	}
	fmt.Fprintln(b, "(times from the energize command; max and min: the dip, the deepest fall of the readings below their running")
	fmt.Fprintln(b, " maximum; blocked fall: the same on the plunger held at its rest stop, which has no dip; detected: with the settings below)")
}

// printDetection prints the recommended settings, or why there are none.
func printDetection(b io.Writer, sig *coilkick.Signature) {
	d := sig.Detection
	if !d.Found {
		fmt.Fprintf(b, "Detection: no setting works: %s.\n", d.Why)
		return
	}
	fmt.Fprintf(b, "Detection: a fall of at least %s mA below the running maximum of the readings, looked for from %s to %s ms after the energize command,\n",
		mA(d.Threshold), ms(d.From), ms(d.To))
	switch n := len(sig.Points) - len(d.Unseated); {
	case len(sig.Points) == 1:
		fmt.Fprintf(b, "  detects the seat at the nominal point and nothing on the blocked plunger.\n")
	case len(d.Unseated) == 0:
		fmt.Fprintf(b, "  detects the seat at all %d points and nothing on the blocked plunger at any.\n", n)
	default:
		fmt.Fprintf(b, "  detects the seat at the %d points where the plunger seats, and nothing on the blocked plunger at any.\n", n)
	}
	for _, p := range sig.Points {
		if !p.Moving.PulledIn {
			what := "the settings detect nothing there, so the firmware rightly reports a stuck plunger"
			if p.Moving.Detected {
				what = fmt.Sprintf("yet the settings detect a seat at %s ms: a false detection", ms(p.Moving.DetectTime))
			}
			fmt.Fprintf(b, "  At %s the plunger does not reach the seat within the readings' window; %s.\n", p.Corner.Label, what)
		}
	}
	fmt.Fprintf(b, "  Shallowest dip %s mA (%s); deepest fall of a blocked plunger in the window %s mA (%s); 3 × the noise (%s mA) kept on each side.\n",
		mA(d.SmallestDip), d.SmallestAt, mA(d.LargestFalse), d.LargestFalseAt, mA(d.NoiseAllowance))
	fmt.Fprintf(b, "  Rule: window from the earliest to the latest minimum, widened by 10 %% of the latest and two readings; threshold halfway (common practice, no source).\n")
	if sig.NominalOnly {
		fmt.Fprintf(b, "  These hold for the nominal point only: a tolerances section gives a threshold and window that hold over the spread.\n")
	}
}

// printChop prints what a chopped drive leaves of the seat (seated: the
// nominal point seats in the window; peakHold: the drive regulates the
// current, else it is a voltage PWM).
func printChop(b io.Writer, cs *coilkick.ChopSignature, seated, peakHold bool) {
	fmt.Fprintln(b)
	switch {
	case !seated:
		fmt.Fprintln(b, "Chopped drive: the plunger does not seat at the nominal point within the readings' window; the pulses over the window:")
	case cs.FirstOff == 0:
		fmt.Fprintln(b, "Chopped drive: the switch does not chop within the readings' window; the dip is that of a constant voltage.")
		return
	case cs.Masked:
		fmt.Fprintf(b, "Chopped drive: the current regulation starts at %s ms, before the seat: it holds the current at its threshold while the plunger moves, and MASKS the dip (not deeper than the blocked plunger's fall by 2 × 3 × the noise).\n", ms(cs.FirstOff))
	case cs.Regulated:
		fmt.Fprintf(b, "Chopped drive: the current regulation starts at %s ms, before the seat, but the back-EMF still pulls the sensed current down: the dip is not masked.\n", ms(cs.FirstOff))
	case !peakHold:
		fmt.Fprintln(b, "Chopped drive: a voltage PWM sets the mean voltage, not the current: the back-EMF dip stays in the mean current the filter passes (not masked).")
	default:
		fmt.Fprintf(b, "Chopped drive: the current regulation first switches off at %s ms, after the seat: the dip is not masked.\n", ms(cs.FirstOff))
	}
	fmt.Fprintln(b, "  What the chopping shows (the simulated coil current; the rise slope falls at the seat, where the inductance rises):")
	tw := tabwriter.NewWriter(b, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "\tswitch-on pulses\tpulses per second\tmean on-time\tmean rise slope\t")
	for _, r := range []struct {
		name string
		f    coilkick.ChopFigures
	}{{"before the seat", cs.Before}, {"after the seat", cs.After}} {
		if !seated && r.name == "after the seat" {
			continue
		}
		if r.f.Cycles == 0 {
			fmt.Fprintf(tw, "  %s\t0\t-\t-\t-\t\n", r.name)
			continue
		}
		fmt.Fprintf(tw, "  %s\t%d\t%s\t%s\t%s\t\n", r.name, r.f.Cycles, si(r.f.Frequency, "Hz"), si(r.f.OnTime, "s"), si(r.f.RiseSlope, "A/s"))
	}
	tw.Flush()
	if cs.Before.Cycles > 0 && cs.After.Cycles > 0 && cs.Before.RiseSlope > 0 {
		fmt.Fprintf(b, "  The rise slope falls to %.2f × at the seat; the on-time changes %.2f ×.\n",
			cs.After.RiseSlope/cs.Before.RiseSlope, cs.After.OnTime/cs.Before.OnTime)
	}
}

// signaturePlot is the figure's data: the nominal point's readings (and
// the corners'), its dip, the threshold and the window (ms, mA).
func signaturePlot(sig *coilkick.Signature) plot.SignatureData {
	dt := 1 / sig.Sense.SampleRate
	nom := sig.Points[0]
	d := plot.SignatureData{Seat: math.NaN(), Threshold: math.NaN(), From: math.NaN(), To: math.NaN()}
	n := len(nom.Moving.Samples)
	if last := latestSeat(sig); last > 0 {
		n = min(n, int(3*last/dt)+1) // up to three times the latest seat
	}
	for k := 0; k < n; k++ {
		d.Times = append(d.Times, 1e3*float64(k)*dt)
	}
	d.Nominal = scaledCopy(nom.Moving.Samples[:n], 1e3)
	d.Blocked = scaledCopy(nom.Blocked.Samples[:n], 1e3)
	for _, p := range sig.Points[1:] {
		d.Corners = append(d.Corners, scaledCopy(p.Moving.Samples[:n], 1e3))
	}
	dip := nom.Moving.Dip
	d.Max = [2]float64{1e3 * dip.MaxTime, 1e3 * dip.MaxCurrent}
	d.Min = [2]float64{1e3 * dip.MinTime, 1e3 * dip.MinCurrent}
	if nom.Moving.PulledIn {
		d.Seat = 1e3 * nom.Moving.PullIn
	}
	if det := sig.Detection; det.Found {
		d.Threshold = 1e3 * (dip.MaxCurrent - det.Threshold)
		d.From, d.To = 1e3*det.From, 1e3*det.To
	}
	return d
}

// latestSeat returns the latest seat instant of the points (s after
// energize; 0 when none seats).
func latestSeat(sig *coilkick.Signature) float64 {
	last := 0.0
	for _, p := range sig.Points {
		if p.Moving.PulledIn {
			last = math.Max(last, p.Moving.PullIn)
		}
	}
	return last
}

// scaledCopy returns v × f.
func scaledCopy(v []float64, f float64) []float64 {
	out := make([]float64, len(v))
	for k, x := range v {
		out[k] = x * f
	}
	return out
}

// signatureReport adds the end-of-stroke signature to the report (the
// scenario has a sense section): the figure, with the detection settings
// and the requirement's verdict as its caption.
func signatureReport(rep *plot.Report, path string, md *coilkick.Model) error {
	sig, err := coilkick.EndOfStroke(md, *md.Sense)
	if err != nil {
		return err
	}
	d := sig.Detection
	caption := "Sense: " + senseText(sig) + ". "
	if d.Found {
		caption += fmt.Sprintf("Detection: a fall of at least %s mA below the running maximum, looked for from %s to %s ms after energize, detects the seat at the %d points where the plunger seats and nothing on the blocked plunger (shallowest dip %s mA at %s).",
			mA(d.Threshold), ms(d.From), ms(d.To), len(sig.Points)-len(d.Unseated), mA(d.SmallestDip), d.SmallestAt)
	} else {
		caption += "Detection: no setting works: " + d.Why + "."
	}
	if len(d.Unseated) > 0 {
		caption += " Not seated: " + strings.Join(d.Unseated, "; ") + "."
	}
	if sig.Chop != nil && sig.Chop.Masked {
		caption += " The current regulation masks the dip."
	}
	if sig.Failed() {
		rep.Failed = true
		rep.Verdict += "; the end-of-stroke signature requirement FAILS"
		caption += " Requirement FAILS: " + strings.Join(sig.Failures, "; ") + "."
	}
	rep.Figures = append(rep.Figures, plot.ReportFigure{ID: "signature", Heading: "End-of-stroke signature",
		Caption: caption + " (coilkick signature " + path + " gives the table.)",
		Figure:  plot.Signature("End-of-stroke signature — "+md.Name, signaturePlot(sig))})
	return nil
}
