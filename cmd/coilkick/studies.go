package main

import (
	"bufio"
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/circuit"
	"coilkick/cmd/coilkick/plot"
)

// studyCommands are the design-study commands.
func studyCommands(stdout io.Writer) []*cli.Command {
	return []*cli.Command{
		fitCommand(stdout),
		sweepCommand(stdout),
		{
			Name:      "corners",
			Usage:     "worst case over the scenario's tolerances (and an optional Monte Carlo yield)",
			ArgsUsage: "SCENARIO.yaml",
			Flags: []cli.Flag{
				&cli.IntFlag{Name: "samples", Usage: "Monte Carlo samples for a yield estimate (0: none)"},
				&cli.Uint64Flag{Name: "seed", Value: 1, Usage: "Monte Carlo seed"},
			},
			Action: func(c *cli.Context) error { return cmdCorners(c, stdout) },
		},
		{
			Name:      "clamps",
			Usage:     "compare suppression options for the scenario's actuation and recommend one",
			ArgsUsage: "SCENARIO.yaml",
			Flags: []cli.Flag{
				&cli.StringFlag{Name: "plot", Usage: "plot release time versus peak switch voltage, one point per option, to `FILE`"},
			},
			Action: func(c *cli.Context) error { return cmdClamps(c, stdout) },
		},
		{
			Name:      "solve",
			Usage:     "solve for the lowest supply that pulls in, the lowest hold, and the lowest clamp voltage that meets the release time",
			ArgsUsage: "SCENARIO.yaml",
			Flags: []cli.Flag{
				&cli.Float64Flag{Name: "margin", Value: 1.2, Usage: "holding force margin the hold must keep"},
			},
			Action: func(c *cli.Context) error { return cmdSolve(c, stdout) },
		},
	}
}

func interval2(iv coilkick.Interval) string { return interval(iv, "never") }

func cmdCorners(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	if md.Tolerances == (coilkick.Tolerances{}) {
		return fmt.Errorf("%s: corners needs a tolerances section (supply, coil resistance, spring, load, ambient, hot winding)", path)
	}
	res, err := coilkick.Corners(md, md.Tolerances, c.Int("samples"), c.Uint64("seed"))
	if err != nil {
		return err
	}
	b := bufio.NewWriter(w)
	defer b.Flush()
	tol := md.Tolerances
	fmt.Fprintf(b, "coilkick corners: %s\nscenario: %s\n%d corners; winding %.0f degC (cold) and %.0f degC (hot)\n\n", md.Name, path,
		len(res.Corners), tol.ColdWinding(md)-273.15, tol.HotCorner(md)-273.15)
	failed := false
	for _, ch := range res.Checks {
		failed = failed || !ch.Pass
		printCornerCheck(b, ch, len(res.Corners))
	}
	if res.Samples > 0 {
		fmt.Fprintf(b, "\nMonte Carlo: %d samples (seed %d), uniform within the tolerances: yield %.1f %% (95 %% Wilson score interval %.1f %% to %.1f %%)\n",
			res.Samples, res.Seed, 100*res.Yield, 100*res.YieldLow, 100*res.YieldHigh)
		if n := res.FailingCorners(); n > 0 && res.Yield == 1 {
			fmt.Fprintf(b, "  %d of %d corners fail although every sample passed: the failures lie at the extremes of the tolerances, which uniform sampling rarely reaches; the yield says how often, the corners say that it can happen.\n",
				n, len(res.Corners))
		}
	}
	if failed {
		return errFailing
	}
	return nil
}

// printCornerCheck prints the worst case of one check.
func printCornerCheck(b io.Writer, ch coilkick.CornerCheck, corners int) {
	verdict := "pass"
	if !ch.Pass {
		verdict = "FAIL"
	}
	yesNo := ch.Min && ch.Limit == 0
	worst := "did not happen"
	switch {
	case ch.Corner == "":
		worst = "n/a"
	case yesNo:
		worst = map[bool]string{true: "yes", false: "no"}[ch.Worst != 0]
	case ch.Happened:
		worst = si(ch.Worst, ch.Unit)
		if ch.Unit == "" {
			worst = strconv.FormatFloat(ch.Worst, 'g', 3, 64)
		}
	}
	lim := ""
	switch {
	case yesNo:
	case ch.Min:
		lim = ">= " + strconv.FormatFloat(ch.Limit, 'g', 3, 64)
	default:
		lim = "<= " + si(ch.Limit, ch.Unit)
	}
	fmt.Fprintf(b, "  %-30s worst %-14s %-12s %s\n", ch.Name, worst, lim, verdict)
	if ch.Corner != "" && (!yesNo || !ch.Pass) {
		at := ch.Corner
		if ch.Tied > 0 {
			at += fmt.Sprintf(" (and %d more corners with the same value)", ch.Tied)
		}
		fmt.Fprintf(b, "      at: %s\n", at)
	}
	if n := len(ch.Failing); n > 0 && n < corners {
		fmt.Fprintf(b, "      fails at %d of %d corners\n", n, corners)
	}
	if ch.NotApplicable > 0 {
		fmt.Fprintf(b, "      not applicable at %d of %d corners (did not pull in or dropped out)\n", ch.NotApplicable, corners)
	}
}

func cmdClamps(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	cmp, err := coilkick.CompareClamps(md)
	if err != nil {
		return err
	}
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick clamps: %s\nscenario: %s\nswitch rating %s, derated to %.0f %%: %s\n", md.Name, path,
		si(cmp.SwitchRating, "V"), 100*coilkick.ClampDerating, si(coilkick.ClampDerating*cmp.SwitchRating, "V"))
	if cmp.Rate > 0 {
		fmt.Fprintf(b, "operating pattern: %.3g operations/s, relative on-time %.3g %%\n", cmp.Rate, 100*cmp.OnFraction)
	}
	fmt.Fprintln(b)
	printClampTable(b, md, cmp)
	if f := c.String("plot"); f != "" {
		if err := plotClamps(f, md, cmp); err != nil {
			return err
		}
	}
	if cmp.DropOut != "" {
		fmt.Fprintf(b, "\nNo recommendation: %s whatever the clamp. Fix the hold (coilkick solve) before choosing a clamp.\n", cmp.DropOut)
		return errFailing
	}
	if cmp.Recommended < 0 {
		fmt.Fprintln(b, "\nNo practical option meets the release requirement within the derated switch rating.")
		return errFailing
	}
	r := cmp.Options[cmp.Recommended]
	fmt.Fprintf(b, "\nRecommended: %s (least switch stress that meets the requirement; within %.0f %% of the least, the lower energy per operation wins; reverse drive needs an H-bridge and is shown for comparison only).\n", r.Name, 100*coilkick.ClampStressBand)
	fmt.Fprintf(b, "Part ratings needed: peak current %s, energy per turn-off pulse %s", si(cmp.PartPeakCurrent, "A"), si(cmp.PartEnergy, "J"))
	if cmp.PartChopPower > 0 {
		fmt.Fprintf(b, ", %s while held chopping", si(cmp.PartChopPower, "W"))
	}
	if cmp.Rate > 0 {
		fmt.Fprintf(b, ", average power %s at the operating pattern", si(cmp.PartPower, "W"))
	}
	fmt.Fprintln(b, "; choose parts with margin over these (derating per your practice).")
	fmt.Fprintf(b, "Assumptions: added diodes drop %.1f V; RC snubber sized so I0·√(L/C) stays within the derated rating, R = √(L/C), capacitor at most %.3g µF (common practice, no source).\n",
		coilkick.AssumedDiodeDrop, coilkick.MaxSnubberCapacitance*1e6)
	return nil
}

// printClampTable prints one row per option; every row has every cell.
// The chopping-power column appears only when some part dissipates while
// chopping, the average-power column only with an operating pattern.
func printClampTable(b io.Writer, md *coilkick.Model, cmp *coilkick.ClampComparison) {
	chop := false
	for _, o := range cmp.Options {
		chop = chop || o.ChopPower > 0
	}
	req := "meets release"
	if md.Limits.MaxRelease > 0 {
		req = "release <= " + si(md.Limits.MaxRelease, "s")
	}
	head := []string{"option", "release time", "drop time", "peak switch V", "turn-off energy"}
	if chop {
		head = append(head, "chopping power")
	}
	if cmp.Rate > 0 {
		head = append(head, "average power")
	}
	head = append(head, req, "within "+si(coilkick.ClampDerating*cmp.SwitchRating, "V"), "remark")
	rows := [][]string{head}
	yes := map[bool]string{true: "yes", false: "no"}
	for k, o := range cmp.Options {
		if o.Err != "" {
			row := []string{o.Name}
			for len(row) < len(head)-1 {
				row = append(row, "-")
			}
			rows = append(rows, append(row, "error: "+o.Err))
			continue
		}
		release, drop := interval2(o.Release), interval2(o.Drop)
		remark := ""
		switch {
		case o.DropOut != "":
			release, drop, remark = "n/a", "n/a", "drops out while energized"
		case o.Impractical != "":
			remark = "impractical: " + o.Impractical
		case o.Suppressor.Kind == circuit.Bridge:
			remark = "needs an H-bridge (comparison only)"
		}
		if k == cmp.Recommended {
			remark = "<- recommended"
		}
		row := []string{o.Name, release, drop, si(o.PeakSwitchVoltage, "V"), si(o.ClampEnergy, "J")}
		if chop {
			row = append(row, si(o.ChopPower, "W"))
		}
		if cmp.Rate > 0 {
			row = append(row, si(o.ClampPower, "W"))
		}
		rows = append(rows, append(row, yes[o.MeetsRelease], yes[o.WithinRating], remark))
	}
	writeTable(b, rows)
	if !md.Control.FastDecay && md.Control.Chops() {
		fmt.Fprintln(b, "Slow decay: the chopping off-times recirculate through the driver's own path, not through these parts; if a freewheel diode across the coil is that path, it also carries the hold's recirculation power (see coilkick run).")
	}
}

// writeTable prints rows as aligned columns (two spaces apart), without
// trailing blanks.
func writeTable(w io.Writer, rows [][]string) {
	var buf strings.Builder
	tw := tabwriter.NewWriter(&buf, 0, 0, 2, ' ', 0)
	for _, r := range rows {
		fmt.Fprintln(tw, strings.Join(r, "\t"))
	}
	tw.Flush()
	for _, line := range strings.Split(strings.TrimRight(buf.String(), "\n"), "\n") {
		fmt.Fprintln(w, strings.TrimRight(line, " "))
	}
}

// plotClamps draws release time against peak switch voltage, a point per
// option that released.
func plotClamps(file string, md *coilkick.Model, cmp *coilkick.ClampComparison) error {
	var pts []plot.LabelledPoint
	var zeners []int
	for k, o := range cmp.Options {
		if o.Err == "" && o.Release.Happened && o.Suppressor.Kind == circuit.DiodeZener {
			zeners = append(zeners, k)
		}
	}
	for k, o := range cmp.Options {
		if o.Err != "" || !o.Release.Happened {
			continue
		}
		label := o.Name
		switch o.Suppressor.Kind {
		case circuit.DiodeZener:
			// Label the first, the last and every sixth Zener only.
			label = ""
			for n, z := range zeners {
				if z == k && (n == 0 || n == len(zeners)-1 || n%6 == 0) {
					label = strings.TrimPrefix(o.Name, "diode + ")
				}
			}
		case circuit.Snubber:
			label = "RC snubber"
			if o.Impractical != "" {
				label += " (impractical)"
			}
		}
		if k == cmp.Recommended {
			label += " (recommended)"
		}
		pts = append(pts, plot.LabelledPoint{X: o.PeakSwitchVoltage, Y: o.Release.Seconds * 1e3, Label: label})
	}
	return plot.LabelledScatter("Suppression options — "+md.Name, "peak switch voltage (V)", "release time (ms)", pts).Save(file)
}

func cmdSolve(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick solve: %s\nscenario: %s\n", md.Name, path)
	margin, from := 1.2, "default"
	switch {
	case c.IsSet("margin"):
		margin, from = c.Float64("margin"), "--margin"
	case md.Limits.MinHoldMargin > 0:
		margin, from = md.Limits.MinHoldMargin, "the scenario's ratings.hold force margin"
	}
	fmt.Fprintf(b, "hold force margin %.3g (%s)\n\n", margin, from)
	var errs, unmet int
	show := func(s coilkick.Solution, err error) {
		if err != nil {
			errs++
			fmt.Fprintf(b, "  %-58s error: %v\n", s.What, err)
			return
		}
		fmt.Fprintf(b, "  %-58s %s\n", s.What, solutionText(s))
		if s.Blocked != "" || !s.Found {
			unmet++
		}
	}
	show(coilkick.LowestSupply(md, 0))
	if hot := md.Tolerances.HotWinding; hot > 0 {
		show(coilkick.LowestSupply(md, hot))
	}
	show(coilkick.LowestHold(md, margin))
	switch k := md.Drive.Suppressor.Kind; {
	case md.Limits.MaxRelease == 0:
	case k != circuit.DiodeZener && k != circuit.TVS && k != circuit.SwitchClamp:
		fmt.Fprintf(b, "  %-58s not asked: the scenario's %v has no clamp voltage (coilkick clamps compares parts)\n", "lowest clamp voltage meeting the release requirement", k)
	default:
		s, err := coilkick.LowestClamp(md)
		if s.What == "" {
			s.What = "lowest clamp voltage"
		}
		show(s, err)
	}
	switch {
	case errs > 0:
		b.Flush()
		return fmt.Errorf("solve: %d of the answers failed with an error", errs)
	case unmet > 0:
		fmt.Fprintf(b, "\n%d answer(s) found no setting that meets the requirement.\n", unmet)
		return errFailing
	}
	return nil
}

// solutionText writes a solve-for answer: the value, or why there is none,
// with the searched range.
func solutionText(s coilkick.Solution) string {
	val := func(x float64) string {
		if s.Unit == "" {
			return strconv.FormatFloat(x, 'f', 3, 64)
		}
		return si(x, s.Unit)
	}
	var t string
	switch {
	case s.Blocked != "":
		t = "not applicable: " + s.Blocked
	case s.AlreadyMet != "":
		t = s.AlreadyMet
	case s.Found:
		t = val(s.Value)
	default:
		t = fmt.Sprintf("none in the searched range %s to %s", val(s.Lo), val(s.Hi))
	}
	if s.Note != "" && s.Blocked == "" {
		t += "  (" + s.Note + ")"
	}
	return t
}
