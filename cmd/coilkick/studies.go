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
	fmt.Fprintf(b, "coilkick corners: %s\nscenario: %s\n%d corners\n\n", md.Name, path, len(res.Corners))
	failed := false
	for _, ch := range res.Checks {
		verdict := "pass"
		if !ch.Pass {
			verdict, failed = "FAIL", true
		}
		worst := "did not happen"
		switch {
		case ch.Min && ch.Limit == 0:
			worst = map[bool]string{true: "yes", false: "no"}[ch.Worst != 0]
		case ch.Happened:
			worst = si(ch.Worst, ch.Unit)
			if ch.Unit == "" {
				worst = strconv.FormatFloat(ch.Worst, 'g', 3, 64)
			}
		}
		lim := ""
		switch {
		case ch.Min && ch.Limit == 0:
		case ch.Min:
			lim = ">= " + strconv.FormatFloat(ch.Limit, 'g', 3, 64)
		default:
			lim = "<= " + si(ch.Limit, ch.Unit)
		}
		fmt.Fprintf(b, "  %-30s worst %-14s %-12s %s\n      at: %s\n", ch.Name, worst, lim, verdict, ch.Corner)
		if len(ch.Failing) > 0 && len(ch.Failing) < len(res.Corners) {
			fmt.Fprintf(b, "      fails at %d of %d corners\n", len(ch.Failing), len(res.Corners))
		}
	}
	if res.Samples > 0 {
		fmt.Fprintf(b, "\nMonte Carlo: %d samples (seed %d), uniform within the tolerances: yield %.1f %%\n", res.Samples, res.Seed, 100*res.Yield)
	}
	if failed {
		return errFailing
	}
	return nil
}

func cmdClamps(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	rate := 0.0
	if md.Duty != nil {
		rate = 1 / md.Duty.CycleTime() // one operation per cycle
	}
	cmp, err := coilkick.CompareClamps(md, rate)
	if err != nil {
		return err
	}
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick clamps: %s\nscenario: %s\nswitch rating %s, derated to %.0f %%: %s\n\n", md.Name, path,
		si(cmp.SwitchRating, "V"), 100*coilkick.ClampDerating, si(coilkick.ClampDerating*cmp.SwitchRating, "V"))
	tw := tabwriter.NewWriter(b, 0, 0, 2, ' ', 0)
	req := "release"
	if md.Limits.MaxRelease > 0 {
		req = "release <= " + si(md.Limits.MaxRelease, "s")
	}
	fmt.Fprintf(tw, "option\trelease\tdrop\tpeak switch V\tclamp energy\tclamp power\t%s\twithin rating\n", req)
	yes := map[bool]string{true: "yes", false: "no"}
	for k, o := range cmp.Options {
		mark := ""
		if k == cmp.Recommended {
			mark = "  <- recommended"
		}
		if o.Err != "" {
			fmt.Fprintf(tw, "%s\terror: %s\n", o.Name, o.Err)
			continue
		}
		power := "n/a (no duty)"
		if cmp.Rate > 0 {
			power = si(o.ClampPower, "W")
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s%s\n", o.Name, interval2(o.Release), interval2(o.Drop), si(o.PeakSwitchVoltage, "V"),
			si(o.ClampEnergy, "J"), power, yes[o.MeetsRelease], yes[o.WithinRating], mark)
	}
	tw.Flush()
	if f := c.String("plot"); f != "" {
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
			}
			if k == cmp.Recommended {
				label += " (recommended)"
			}
			pts = append(pts, plot.LabelledPoint{X: o.PeakSwitchVoltage, Y: o.Release.Seconds * 1e3, Label: label})
		}
		if err := plot.LabelledScatter("Suppression options — "+md.Name, "peak switch voltage (V)", "release time (ms)", pts).Save(f); err != nil {
			return err
		}
	}
	if cmp.Recommended < 0 {
		fmt.Fprintln(b, "\nNo option meets the release requirement within the derated switch rating.")
		return errFailing
	}
	r := cmp.Options[cmp.Recommended]
	fmt.Fprintf(b, "\nRecommended: %s (least switch stress that meets the requirement; within %.0f %% of the least, the lower clamp energy wins; reverse drive needs an H-bridge and is shown for comparison only).\n", r.Name, 100*coilkick.ClampStressBand)
	fmt.Fprintf(b, "Part ratings needed: peak current %s, energy per pulse %s", si(cmp.PartPeakCurrent, "A"), si(cmp.PartEnergy, "J"))
	if cmp.Rate > 0 {
		fmt.Fprintf(b, ", average power %s at %.3g operations/s", si(cmp.PartPower, "W"), cmp.Rate)
	}
	fmt.Fprintln(b, "; choose parts with margin over these (derating per your practice).")
	fmt.Fprintf(b, "Assumptions: added diodes drop %.1f V; RC snubber sized so I0·√(L/C) stays within the derated rating, R = √(L/C) (common practice, no source).\n", coilkick.AssumedDiodeDrop)
	return nil
}

func cmdSolve(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick solve: %s\nscenario: %s\n\n", md.Name, path)
	show := func(s coilkick.Solution, err error) {
		if err != nil {
			fmt.Fprintf(b, "  %s: %v\n", s.What, err)
			return
		}
		v := "none in the searched range"
		if s.Found {
			v = si(s.Value, s.Unit)
			if s.Unit == "" {
				v = strconv.FormatFloat(s.Value, 'f', 3, 64)
			}
		}
		fmt.Fprintf(b, "  %-58s %s", s.What, v)
		if s.Note != "" {
			fmt.Fprintf(b, "  (%s)", s.Note)
		}
		fmt.Fprintln(b)
	}
	show(coilkick.LowestSupply(md, 0))
	hot := md.Tolerances.HotWinding
	if hot > 0 {
		show(coilkick.LowestSupply(md, hot))
	}
	show(coilkick.LowestHold(md, c.Float64("margin")))
	if md.Limits.MaxRelease > 0 {
		if s, err := coilkick.LowestClamp(md); err == nil || s.What != "" {
			show(s, err)
		} else {
			fmt.Fprintf(b, "  lowest clamp voltage: %v\n", err)
		}
	}
	return nil
}
