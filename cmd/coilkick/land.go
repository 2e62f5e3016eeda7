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

// maxLandEvaluations caps --evaluations: each evaluation is one run per
// corner and one at the nominal point (33 on a full set of tolerances).
const maxLandEvaluations = 5000

// landCommand is `coilkick land`: the brake of a constant drive that lands
// the plunger softly with every corner still within a pull-in cap.
func landCommand(stdout io.Writer) *cli.Command {
	return &cli.Command{
		Name:      "land",
		Usage:     "find the brake (switch off for a while before the seat) that lands the plunger softly, every tolerance corner still pulling in within a cap",
		ArgsUsage: "SCENARIO.yaml",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "pull-in-cap", Usage: "the pull-in time no corner may exceed, with its unit (\"25 ms\")", DefaultText: "the scenario's ratings.pull-in time"},
			&cli.StringFlag{Name: "timing-margin", Usage: "the constraints must also hold with either time of the brake moved this much earlier or later, with its unit (\"20 us\"); about 5 times the work", DefaultText: "0 s, at the brake only"},
			&cli.IntFlag{Name: "evaluations", Value: coilkick.DefaultLandEvaluations, Usage: "the optimiser's budget of evaluations (each simulates every corner), 1 to 5000"},
			&cli.StringFlag{Name: "plot", Usage: "plot gap and velocity versus time at the nominal point, before and after, to `FILE` (.png or .svg)"},
			&cli.StringFlag{Name: "json", Usage: "write the profile, the runs before and after and the search to `FILE` (JSON; - for standard output instead of the table)"},
			&cli.StringFlag{Name: "csv", Usage: "write one row per run (the nominal point, then each corner) to `FILE` (CSV; - for standard output instead of the table)"},
		},
		Action: func(c *cli.Context) error { return cmdLand(c, stdout) },
	}
}

// landOptions reads the flags.
func landOptions(c *cli.Context) (coilkick.LandOptions, error) {
	opt := coilkick.LandOptions{MaxEvaluations: c.Int("evaluations")}
	if n := opt.MaxEvaluations; n < 1 || n > maxLandEvaluations {
		return opt, fmt.Errorf("--evaluations %d: must be from 1 to %d", n, maxLandEvaluations)
	}
	if c.IsSet("timing-margin") {
		s := c.String("timing-margin")
		v, err := coilkick.ParseQuantity(s, coilkick.Time)
		if err != nil || !(v >= 0) || v > 1 {
			return opt, fmt.Errorf("--timing-margin %q: expected a time from 0 s to 1 s such as \"20 us\"", s)
		}
		opt.TimingMargin = v
	}
	if c.IsSet("pull-in-cap") {
		s := c.String("pull-in-cap")
		v, err := coilkick.ParseQuantity(s, coilkick.Time)
		if err != nil {
			return opt, fmt.Errorf("--pull-in-cap %q: %v; expected a time such as \"25 ms\"", s, err)
		}
		if !(v > 0) || math.IsInf(v, 0) || v > 3600 {
			return opt, fmt.Errorf("--pull-in-cap %q: expected a time above 0 s, up to 60 min", s)
		}
		opt.PullInCap = v
	}
	return opt, nil
}

func cmdLand(c *cli.Context, w io.Writer) error {
	opt, err := landOptions(c)
	if err != nil {
		return err
	}
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	res, err := coilkick.Land(md, opt)
	if err != nil {
		return fmt.Errorf("%s: %s", path, strings.TrimPrefix(err.Error(), "coilkick: "))
	}
	outs := newOutputs(w)
	if f := c.String("json"); f != "" {
		doc := landJSON(newHeader("land", md, path), res)
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("csv"); f != "" {
		rows := landRecords(res)
		outs.add(f, func(out io.Writer) error { return writeRecordsCSV(out, rows[0].keys(), rows) })
	}
	if f := c.String("plot"); f != "" {
		fig, err := landPlot(md, res)
		if err != nil {
			return err
		}
		if err := outs.addFigure(f, fig); err != nil {
			return err
		}
	}
	if err := outs.commit(); err != nil {
		return err
	}
	if !toStdout(c, "json", "csv") {
		printLand(w, path, md, res)
	}
	if !res.Feasible {
		return errFailing
	}
	return nil
}

// landBrake describes a profile: "none" or "at 6.137 ms for 1.494 ms".
func landBrake(p coilkick.LandProfile) string {
	if p.BrakeFor == 0 {
		return "none"
	}
	return fmt.Sprintf("at %.4g ms for %.4g ms", 1e3*p.BrakeAt, 1e3*p.BrakeFor)
}

// printLand prints the study as tables.
func printLand(w io.Writer, path string, md *coilkick.Model, res *coilkick.LandResult) {
	b := bufio.NewWriter(w)
	defer b.Flush()
	capFrom := "--pull-in-cap"
	if res.CapFromRequirement {
		capFrom = "ratings.pull-in time"
	}
	where := fmt.Sprintf("the nominal point and %d corners of the tolerances", len(res.Corners))
	if res.NominalOnly {
		where = "the nominal point only (the scenario has no tolerances)"
	}
	fmt.Fprintf(b, "coilkick land: %s\nscenario: %s\npull-in cap %s (%s) at %s\n", md.Name, path, si(res.Cap, "s"), capFrom, where)
	if res.TimingMargin > 0 {
		fmt.Fprintf(b, "timing margin %s: every run must also meet the constraints with either time of the brake moved that much\n", si(res.TimingMargin, "s"))
	}
	through := "the " + md.Drive.Suppressor.Kind.String()
	switch md.Drive.Suppressor.Kind {
	case circuit.None:
		through = "the switch's avalanche: no suppression part, so every brake is an avalanche pulse"
	case circuit.Bridge:
		through = "the bridge's diodes, back to the supply"
	}
	if md.Control.Mode == circuit.PWM {
		fmt.Fprintf(b, "brake: the PWM from energize, the switch held off at 'brake at' for 'brake for' (the current decays as in the PWM's off-times), then the PWM again\n\n")
	} else {
		fmt.Fprintf(b, "brake: full voltage from energize, the switch off at 'brake at' for 'brake for' (the current through %s), then full voltage\n\n", through)
	}
	if res.CornersAfter == nil {
		fmt.Fprintf(b, "Nominal point (the scenario's drive): brake %s, seat impact %s, pull-in %s, every run seated within the cap: %s\n",
			landBrake(res.Before), landSpeed(res.NominalBefore), landPullIn(res.NominalBefore), yesNo(res.BeforeFeasible))
		printLandVerdict(b, res)
		printLandSearch(b, res)
		return
	}
	tw := tabwriter.NewWriter(b, 0, 0, 2, ' ', 0)
	nb, na := res.NominalBefore, res.NominalAfter
	fmt.Fprintln(tw, "Nominal point\tbefore (the scenario's drive)\tafter")
	fmt.Fprintf(tw, "  brake\t%s\t%s\n", landBrake(res.Before), landBrake(res.After))
	fmt.Fprintf(tw, "  seat impact speed\t%s\t%s\n", landSpeed(nb), landSpeed(na))
	fmt.Fprintf(tw, "  impact energy (½·m·v²)\t%s\t%s\n", landEnergy(nb), landEnergy(na))
	fmt.Fprintf(tw, "  bounces\t%d\t%d\n", nb.Bounces, na.Bounces)
	fmt.Fprintf(tw, "  pull-in time\t%s\t%s\n", interval2(nb.PullIn), interval2(na.PullIn))
	if len(res.Corners) > 0 {
		fmt.Fprintf(tw, "  slowest corner's pull-in\t%s\t%s\n", landSlowest(res.CornersBefore), landSlowest(res.CornersAfter))
		fmt.Fprintf(tw, "  fastest corner's impact\t%s\t%s\n", landFastest(res.CornersBefore), landFastest(res.CornersAfter))
	}
	fmt.Fprintf(tw, "  every run seated within the cap\t%s\t%s\n", yesNo(res.BeforeFeasible), yesNo(res.Feasible))
	tw.Flush()
	if nb.ImpactSpeed > 0 && na.ImpactSpeed > 0 && res.After != res.Before {
		fmt.Fprintf(b, "  impact speed %.3g times lower, impact energy %.3g times lower\n", nb.ImpactSpeed/na.ImpactSpeed,
			nb.ImpactEnergy/na.ImpactEnergy)
	}
	if len(res.Corners) > 0 && res.CornersAfter != nil {
		printLandCorners(b, res)
	}
	printLandVerdict(b, res)
	printLandSearch(b, res)
}

// printLandSearch prints how the profile was searched.
func printLandSearch(b io.Writer, res *coilkick.LandResult) {
	fmt.Fprintf(b, "\nSearch: %s; brake at %s to %s, brake for %s to %s (from the unbraked pull-in %s); %d evaluations, %d simulations, %.2f s\n",
		res.Method, si(res.AtMin, "s"), si(res.AtMax, "s"), si(res.ForMin, "s"), si(res.ForMax, "s"), si(res.UnbrakedPullIn, "s"),
		res.Evaluations, res.Simulations, res.Elapsed.Seconds())
}

// printLandCorners prints each corner's pull-in, impact speed and bounces
// before and after.
func printLandCorners(b io.Writer, res *coilkick.LandResult) {
	fmt.Fprintln(b, "\nCorners (before → after)")
	tw := tabwriter.NewWriter(b, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  corner\tpull-in time\timpact speed\tbounces\t")
	for k, c := range res.Corners {
		bf, af := res.CornersBefore[k], res.CornersAfter[k]
		mark := ""
		if !af.Meets(res.Cap) {
			mark = "FAIL"
		}
		fmt.Fprintf(tw, "  %s\t%s → %s\t%s → %s\t%d → %d\t%s\n", c.Label, landPullIn(bf), landPullIn(af),
			landSpeed(bf), landSpeed(af), bf.Bounces, af.Bounces, mark)
	}
	tw.Flush()
	softer := 0
	for k := range res.Corners {
		if bf, af := res.CornersBefore[k], res.CornersAfter[k]; af.PullIn.Happened && af.ImpactSpeed < 0.95*bf.ImpactSpeed {
			softer++
		}
	}
	fmt.Fprintf(b, "  %d of %d corners land at least 5 %% softer; the others seat before the brake, or fall back during it and pull in\n"+
		"  again at full speed (a brake at a fixed time fits the motion's timing at some corners only).\n", softer, len(res.Corners))
}

// printLandVerdict prints the profile to paste, or why there is none.
func printLandVerdict(b io.Writer, res *coilkick.LandResult) {
	switch {
	case res.Feasible && res.After == res.Before:
		fmt.Fprintln(b, "\nNo brake found that lands the nominal point softer and keeps every run seated within the cap: keep the drive as it is.")
	case res.Feasible:
		fmt.Fprintf(b, "\nThe brake, in the scenario's keys (paste into the file):\n\n%s", indent(res.After.YAML(res.Mode), "  "))
		if res.After.BrakeFor > 0 && res.After.BrakeFor == res.ForMax {
			fmt.Fprintln(b, "\n  The brake's length is at its upper bound (the unbraked pull-in time).")
		}
		printLandMargins(b, res.Margins)
	case res.BeforeFeasible:
		fmt.Fprintln(b, "\nFAIL: no brake found that keeps every run seated within the cap.")
	default:
		var failing []string
		for k, c := range res.CornersBefore {
			if !c.Meets(res.Cap) {
				failing = append(failing, res.Corners[k].Label+": "+landPullIn(c))
			}
		}
		if !res.NominalBefore.Meets(res.Cap) {
			failing = append([]string{"nominal point: " + landPullIn(res.NominalBefore)}, failing...)
		}
		fmt.Fprintf(b, "\nFAIL: the scenario's drive already misses the cap (or does not seat) at %d run(s), and a brake only slows the pull-in:\n"+
			"raise the cap or the drive. For example %s.\n", len(failing), failing[0])
	}
}

// printLandMargins prints how far each time may move before a run fails.
func printLandMargins(b io.Writer, m *coilkick.LandMargins) {
	if m == nil {
		return
	}
	show := func(iv coilkick.Interval) string {
		if !iv.Happened {
			return "no limit (" + si(iv.Seconds, "s") + " searched)"
		}
		return si(iv.Seconds, "s")
	}
	fmt.Fprintf(b, "\n  Margins (each time moved alone until a run misses the cap, does not seat or drops out):\n"+
		"    brake at: %s earlier, %s later; brake for: %s shorter, %s longer\n",
		show(m.AtEarlier), show(m.AtLater), show(m.ForShorter), show(m.ForLonger))
	small := false
	for _, iv := range []coilkick.Interval{m.AtEarlier, m.AtLater, m.ForShorter, m.ForLonger} {
		small = small || (iv.Happened && iv.Seconds < landSmallMargin)
	}
	if small {
		fmt.Fprintf(b, "  CAUTION: a margin below %s: the optimum sits where a constraint starts to bind (a corner that\n"+
			"  seats before the brake and drops out during it, or one at the cap); a driver's timer, its supply and\n"+
			"  the part's spread move the brake more than that. Ask for room with --timing-margin (e.g. \"20 us\")\n"+
			"  and confirm the brake on the bench.\n", si(landSmallMargin, "s"))
	}
}

// landSmallMargin (s): a brake that moves less than this before a run
// fails is flagged (a microcontroller timer and its interrupt latency
// are of the order of 10 µs; common practice, no source).
const landSmallMargin = 10e-6

// indent prefixes every line of s.
func indent(s, prefix string) string {
	lines := strings.SplitAfter(s, "\n")
	for k, l := range lines {
		if l != "" {
			lines[k] = prefix + l
		}
	}
	return strings.Join(lines, "")
}

func yesNo(ok bool) string { return map[bool]string{true: "yes", false: "no"}[ok] }

// landSpeed, landEnergy, landPullIn: a run's figures, "did not seat" when
// it did not (a drop-out is said after the pull-in).
func landSpeed(r coilkick.LandRun) string {
	if !r.PullIn.Happened {
		return "did not seat"
	}
	return fmt.Sprintf("%.3g m/s", r.ImpactSpeed)
}

func landEnergy(r coilkick.LandRun) string {
	if !r.PullIn.Happened {
		return "did not seat"
	}
	return si(r.ImpactEnergy, "J")
}

func landPullIn(r coilkick.LandRun) string {
	s := interval(r.PullIn, "did not seat")
	if r.DroppedOut {
		s += " (drops out)"
	}
	return s
}

// landSlowest is the longest pull-in over the runs ("a corner did not
// seat" when one did not).
func landSlowest(runs []coilkick.LandRun) string {
	worst := 0.0
	for _, r := range runs {
		if !r.PullIn.Happened {
			return "a corner did not seat"
		}
		worst = math.Max(worst, r.PullIn.Seconds)
	}
	return si(worst, "s")
}

// landFastest is the highest impact speed over the runs.
func landFastest(runs []coilkick.LandRun) string {
	v := 0.0
	for _, r := range runs {
		v = math.Max(v, r.ImpactSpeed)
	}
	return fmt.Sprintf("%.3g m/s", v)
}

// landPlot draws gap and velocity at the nominal point, before and after.
func landPlot(md *coilkick.Model, res *coilkick.LandResult) (*plot.Figure, error) {
	before, after, err := coilkick.LandTraces(md, res)
	if err != nil {
		return nil, err
	}
	end := 0.0
	for _, r := range []coilkick.LandRun{res.NominalBefore, res.NominalAfter} {
		if r.PullIn.Happened {
			end = math.Max(end, r.PullIn.Seconds)
		}
	}
	if end == 0 {
		end = res.Cap
	}
	run := func(label string, r *coilkick.Result) plot.LandingRun {
		return plot.LandingRun{Label: label, Time: r.Trace.Time, Gap: r.Trace.Gap, Velocity: r.Trace.Velocity}
	}
	return plot.Landing(plot.LandingData{Title: md.Name + ": landing at the nominal point",
		Energize: md.Timing.EnergizeAt, End: md.Timing.EnergizeAt + 1.6*end,
		Before:  run("before: "+landBrake(res.Before)+fmt.Sprintf(", %.3g m/s", res.NominalBefore.ImpactSpeed), before),
		After:   run("after: brake "+landBrake(res.After)+fmt.Sprintf(", %.3g m/s", res.NominalAfter.ImpactSpeed), after),
		BrakeAt: res.After.BrakeAt, BrakeFor: res.After.BrakeFor}), nil
}

// landingReportFigure is the report's soft-landing figure for a scenario
// whose drive has a brake: the landing at the nominal point without the
// brake and with it (the scenario's), as land --plot draws it.
func landingReportFigure(md *coilkick.Model) (plot.ReportFigure, error) {
	res := &coilkick.LandResult{After: coilkick.LandProfile{BrakeAt: md.Control.BrakeAt, BrakeFor: md.Control.BrakeFor}}
	before, after, err := coilkick.LandTraces(md, res)
	if err != nil {
		return plot.ReportFigure{}, err
	}
	mb, ma := before.Metrics, after.Metrics
	run := func(label string, r *coilkick.Result) plot.LandingRun {
		return plot.LandingRun{Label: label, Time: r.Trace.Time, Gap: r.Trace.Gap, Velocity: r.Trace.Velocity}
	}
	end := math.Max(mb.PullIn.Seconds, ma.PullIn.Seconds)
	if end == 0 {
		end = md.Timing.DeenergizeAt - md.Timing.EnergizeAt
	}
	speed := func(m coilkick.Metrics) string {
		if !m.PullIn.Happened {
			return "does not seat"
		}
		return fmt.Sprintf("%.3g m/s", m.SeatImpactSpeed)
	}
	fig := plot.Landing(plot.LandingData{Title: md.Name + ": landing at the nominal point",
		Energize: md.Timing.EnergizeAt, End: md.Timing.EnergizeAt + 1.6*end,
		Before: run("without the brake, "+speed(mb), before), After: run("with the brake "+landBrake(res.After)+", "+speed(ma), after),
		BrakeAt: res.After.BrakeAt, BrakeFor: res.After.BrakeFor})
	caption := fmt.Sprintf("The drive's brake (drive.brake at, drive.brake for: the switch off %s) against the same drive without it: "+
		"seat impact %s instead of %s, pull-in %s instead of %s. `coilkick land` searches the brake against the tolerance corners.",
		landBrake(res.After), speed(ma), speed(mb), interval2(ma.PullIn), interval2(mb.PullIn))
	return plot.ReportFigure{ID: "landing", Heading: "Soft landing", Caption: caption, Figure: fig}, nil
}
